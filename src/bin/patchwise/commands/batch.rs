//! `patchwise batch`: many attributions from a job script, run in parallel,
//! resumable after a kill, and split into shards for cluster array jobs.

mod cohort;
mod execute;
mod report;

use std::path::PathBuf;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use indicatif::ProgressBar;
use patchwise::batch::{input_hash, load_script, Job, Shard};

use crate::cli_error::OrExit;
use crate::progress::{set_quiet, terminal_bar};
use crate::CliError;

/// Arguments of `patchwise batch`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The job script (TOML: [defaults], [[job]] tables, optional [compare]; see docs/cluster.md).
    pub script: PathBuf,
    /// Output folder: one folder per job (as `attribute --out` writes it, plus job.json) and batch-summary.csv.
    #[arg(long)]
    pub out: PathBuf,
    /// Jobs run at once (default: the number of cores).
    #[arg(long)]
    pub jobs: Option<usize>,
    /// Run only shard I of N (1-based): with the jobs sorted by name, job j (0-based) is in shard (j mod N) + 1.
    #[arg(long)]
    pub shard: Option<String>,
    /// Cache folder for lead fields, dictionaries and the [compare] smoothing kernel (default: $PATCHWISE_CACHE, else the user cache folder).
    #[arg(long)]
    pub cache: Option<PathBuf>,
}

/// A job that did not finish.
pub struct Failure {
    /// The job's name.
    pub job: String,
    /// Its error.
    pub error: CliError,
}

/// Print a line above the progress bar (or plainly when there is none).
fn line(pb: &ProgressBar, text: String) {
    if pb.is_hidden() {
        outln!("{text}");
    } else {
        pb.println(text);
    }
}

fn seconds(d: Duration) -> String {
    format!("{:.1} s", d.as_secs_f64())
}

/// Run `todo` on `workers` threads; each finished job prints one line.
fn run_all(
    todo: &[(&Job, &str)],
    args: &Args,
    workers: usize,
    pb: &ProgressBar,
) -> (Vec<String>, Vec<Failure>) {
    let next = AtomicUsize::new(0);
    let (tx, rx) = mpsc::channel();
    let mut ran = Vec::new();
    let mut failures = Vec::new();
    std::thread::scope(|s| {
        for _ in 0..workers.min(todo.len()) {
            let tx = tx.clone();
            let next = &next;
            s.spawn(move || loop {
                let i = next.fetch_add(1, Ordering::Relaxed);
                let Some(&(job, hash)) = todo.get(i) else {
                    break;
                };
                let start = Instant::now();
                let outcome =
                    execute::run_job_catching(job, hash, &args.out, args.cache.as_deref());
                if tx.send((i, outcome, start.elapsed())).is_err() {
                    break;
                }
            });
        }
        drop(tx);
        for (i, outcome, elapsed) in rx {
            let job = todo[i].0;
            match outcome {
                Ok(()) => {
                    line(pb, format!("done    {} ({})", job.name, seconds(elapsed)));
                    ran.push(job.name.clone());
                }
                Err(error) => {
                    line(pb, format!("FAILED  {}: {error}", job.name));
                    failures.push(Failure {
                        job: job.name.clone(),
                        error,
                    });
                }
            }
            pb.inc(1);
        }
    });
    (ran, failures)
}

/// Run `patchwise batch`.
pub fn exec(args: Args) -> Result<(), CliError> {
    let script = load_script(&args.script).bad_input("reading the job script")?;
    let shard = match &args.shard {
        Some(s) => Some(s.parse::<Shard>().bad_input("--shard")?),
        None => None,
    };
    let workers = match args.jobs {
        Some(0) => {
            return Err(CliError::bad_input(anyhow::anyhow!(
                "--jobs 0: expected at least one job at a time"
            )))
        }
        Some(n) => n,
        None => std::thread::available_parallelism().map_or(1, |n| n.get()),
    };
    let hashes: Vec<String> = script
        .jobs
        .iter()
        .map(|j| input_hash(j).bad_input("hashing the job's inputs"))
        .collect::<Result<_, _>>()?;
    let mine: Vec<(&Job, &str)> = script
        .jobs
        .iter()
        .zip(&hashes)
        .enumerate()
        .filter(|(j, _)| shard.is_none_or(|s| s.contains(*j)))
        .map(|(_, (job, hash))| (job, hash.as_str()))
        .collect();
    let mine_jobs: Vec<&Job> = mine.iter().map(|(j, _)| *j).collect();
    execute::check_outputs(
        &args.out,
        &script.jobs,
        &mine_jobs,
        script.compare.as_ref().map(|c| c.out.as_path()),
    )
    .map_err(|e| CliError {
        code: e.code,
        error: e.error.context(format!("{}", script.path.display())),
    })?;
    std::fs::create_dir_all(&args.out)
        .map_err(|e| CliError::compute(anyhow::anyhow!("creating {}: {e}", args.out.display())))?;
    execute::clean_stale(&args.out);
    let (done, todo): (Vec<_>, Vec<_>) = mine
        .iter()
        .partition(|(job, hash)| execute::is_done(&args.out, &job.name, hash));
    outln!(
        "batch {}: {} jobs{}, {} already done, {} to run, {} at a time",
        script.path.display(),
        mine.len(),
        shard.map_or(String::new(), |s| format!(
            " in shard {}/{}",
            s.index, s.count
        )),
        done.len(),
        todo.len(),
        workers.min(todo.len().max(1))
    );
    let pb = terminal_bar(todo.len(), "jobs");
    set_quiet(true);
    let (ran, failures) = run_all(&todo, &args, workers, &pb);
    set_quiet(false);
    pb.finish_and_clear();

    let all_done = script
        .jobs
        .iter()
        .zip(&hashes)
        .all(|(job, hash)| execute::is_done(&args.out, &job.name, hash));
    if all_done {
        let path = report::write_summary(&args.out, &script.jobs, &ran)?;
        outln!("every job is done; summary in {}", path.display());
    } else if failures.is_empty() {
        outln!(
            "this run's jobs are done; others are missing, so no batch-summary.csv yet (rerun without --shard after all shards)"
        );
    }
    if !failures.is_empty() {
        report::print_failures(&failures);
        let code = if failures.iter().any(|f| f.error.code == 2) {
            2
        } else {
            1
        };
        return Err(CliError {
            code,
            error: anyhow::anyhow!("{} of {} jobs failed", failures.len(), todo.len()),
        });
    }
    if let Some(spec) = &script.compare {
        if !all_done {
            outln!("[compare] waits until every job is done");
        } else if shard.is_some() {
            outln!("[compare] runs in a plain rerun without --shard");
        } else {
            outln!(
                "every job is done; comparing them ([compare], line {})",
                spec.line
            );
            cohort::run_compare(spec, &args.out, &script.jobs, args.cache.as_deref()).map_err(
                |e| CliError {
                    code: e.code,
                    error: e.error.context(format!(
                        "{}:{}: the [compare] table",
                        script.path.display(),
                        spec.line
                    )),
                },
            )?;
        }
    }
    Ok(())
}
