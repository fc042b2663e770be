//! Running a batch as a library call: the jobs of a script (or of one
//! shard) on worker threads, each job's folder staged with its marker and
//! committed whole, failures collected per job, and batch-summary.csv once
//! every job of the script is done. The `[compare]` step is the caller's
//! (it is `compare` over the job folders).

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc;
use std::time::{Duration, Instant};

use super::checks::{check_job_folder, check_outputs, clean_stale, is_done};
use super::{input_hash, load_script, Job, Script, Shard, MARKER_FILE as MARKER, SUMMARY_FILE};
use crate::io::staging::Staging;
use crate::io::table::{write_table, Delimiter};
use crate::job::attribute;
use crate::job::cache_folder::CacheOptions;
use crate::job::outputs::write_attribution_files;
use crate::job::report::write_report_as;
use crate::job::{JobError, JobObserver, JobResult};

/// What `batch` is asked.
#[derive(clap::Args, Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct BatchParams {
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
    /// The cache folder (lead fields, dictionaries, the [compare] smoothing kernel) or none.
    #[command(flatten)]
    #[serde(flatten)]
    pub cache: CacheOptions,
}

/// A job that did not finish.
pub struct JobFailure {
    /// The job's name.
    pub job: String,
    /// Its error.
    pub error: JobError,
}

/// What a batch run did.
pub struct BatchOutcome {
    /// The script as validated.
    pub script: Script,
    /// The shard run, if any.
    pub shard: Option<Shard>,
    /// Jobs run by this call (in order of completion).
    pub ran: Vec<String>,
    /// Jobs that failed.
    pub failures: Vec<JobFailure>,
    /// Jobs this call had to run.
    pub to_run: usize,
    /// Whether every job of the script is done (all shards).
    pub all_done: bool,
    /// batch-summary.csv, written when every job is done.
    pub summary: Option<PathBuf>,
}

impl BatchParams {
    /// The worker count and the shard, checked.
    pub fn validate(&self) -> Result<(usize, Option<Shard>), JobError> {
        let shard = match &self.shard {
            Some(s) => Some(s.parse::<Shard>().input("--shard")?),
            None => None,
        };
        let workers = match self.jobs {
            Some(0) => {
                return Err(JobError::input(
                    "--jobs 0: expected at least one job at a time",
                ))
            }
            Some(n) => n,
            None => std::thread::available_parallelism().map_or(1, |n| n.get()),
        };
        Ok((workers, shard))
    }
}

fn seconds(d: Duration) -> String {
    format!("{:.1} s", d.as_secs_f64())
}

/// Run the batch: read and check the script and every output before any
/// job runs, skip the jobs already done with the same inputs, run the rest
/// on `--jobs` threads (one line per finished job through `observer.line`,
/// progress as the stage "jobs"), and write batch-summary.csv when every
/// job of the script is done. Failed jobs do not stop the others; they are
/// in the outcome.
pub fn run_batch(
    params: &BatchParams,
    observer: &dyn JobObserver,
) -> Result<BatchOutcome, JobError> {
    let script = load_script(&params.script).input("reading the job script")?;
    let (workers, shard) = params.validate()?;
    let cache = params.cache.open()?;
    let hashes: Vec<String> = script
        .jobs
        .iter()
        .map(|j| input_hash(j).input("hashing the job's inputs"))
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
    let out = &params.out;
    check_outputs(
        out,
        &script.jobs,
        &mine_jobs,
        script.compare.as_ref().map(|c| c.out.as_path()),
    )
    .map_err(|e| e.context(script.path.display()))?;
    std::fs::create_dir_all(out).compute(format!("creating {}", out.display()))?;
    clean_stale(out);
    let (done, todo): (Vec<_>, Vec<_>) = mine
        .iter()
        .partition(|(job, hash)| is_done(out, &job.name, hash));
    observer.line(&format!(
        "batch {}: {} job{}{}, {} already done, {} to run, {} at a time",
        script.path.display(),
        mine.len(),
        if mine.len() == 1 { "" } else { "s" },
        shard.map_or(String::new(), |s| format!(
            " in shard {}/{}",
            s.index, s.count
        )),
        done.len(),
        todo.len(),
        workers.min(todo.len().max(1))
    ));
    observer.stage_start("jobs", todo.len());
    let (ran, failures) = run_all(&todo, params, cache.path(), workers, observer);
    observer.stage_end();
    let all_done = script
        .jobs
        .iter()
        .zip(&hashes)
        .all(|(job, hash)| is_done(out, &job.name, hash));
    let summary = if all_done {
        Some(write_summary(out, &script.jobs, &ran)?)
    } else {
        None
    };
    Ok(BatchOutcome {
        to_run: todo.len(),
        script,
        shard,
        ran,
        failures,
        all_done,
        summary,
    })
}

/// Run `todo` on `workers` threads; each finished job gives one line.
fn run_all(
    todo: &[(&Job, &str)],
    params: &BatchParams,
    cache: &Path,
    workers: usize,
    observer: &dyn JobObserver,
) -> (Vec<String>, Vec<JobFailure>) {
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
                let notes = JobNotes {
                    job: &job.name,
                    batch: observer,
                };
                let outcome = run_job_catching(job, hash, &params.out, cache, &notes);
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
                    observer.line(&format!("done    {} ({})", job.name, seconds(elapsed)));
                    ran.push(job.name.clone());
                }
                Err(error) => {
                    observer.line(&format!("FAILED  {}: {}", job.name, error.chain_text()));
                    failures.push(JobFailure {
                        job: job.name.clone(),
                        error,
                    });
                }
            }
            observer.stage_advance(1);
        }
    });
    (ran, failures)
}

/// A job's notes (a cache entry used or built, a warning) as the batch's
/// notes, each prefixed with the job's name, so that a shard's log says
/// which job built which cache entry; the job's progress is not shown (the
/// batch has its own).
struct JobNotes<'a> {
    job: &'a str,
    batch: &'a dyn JobObserver,
}

impl JobObserver for JobNotes<'_> {
    fn note(&self, message: &str) {
        self.batch.note(&format!("{}: {message}", self.job));
    }
}

/// Run one job and stage its folder: result files, then the marker, then
/// the rename that makes it visible (replacing an outdated folder).
fn run_job(
    job: &Job,
    hash: &str,
    out: &Path,
    cache: &Path,
    observer: &dyn JobObserver,
) -> Result<(), JobError> {
    let target = out.join(&job.name);
    let params = &job.params;
    let result = attribute(params, cache, None, observer)?;
    let stage = Staging::new(&target)?;
    write_attribution_files(stage.dir(), &result)?;
    if !job.no_report {
        // Inside the staged folder, before the marker: a job's folder has
        // its report exactly when `attribute` would have written one.
        write_report_as(
            stage.dir(),
            Some(&stage.file("report.html")),
            params.describe(),
            Some(&target),
        )?;
    }
    let marker = serde_json::json!({
        "job": job.name,
        "group": job.group,
        "status": "done",
        "input_hash": hash,
        "decoder": job.decoder.display().to_string(),
        "options": job.options_json(),
        "software": format!("patchwise {}", env!("CARGO_PKG_VERSION")),
    });
    let text = serde_json::to_string_pretty(&marker).unwrap_or_default();
    crate::io::atomic::write_atomic(&stage.file(MARKER), text.as_bytes())
        .compute(format!("writing {MARKER}"))?;
    // The commit swaps the folder in whole; an outdated folder is replaced
    // only when it is this job's (checked before the run, again here).
    check_job_folder(out, &job.name)?;
    stage.commit()?;
    Ok(())
}

/// [`run_job`], with a panic reported as this job's failure so that the
/// other jobs go on.
pub(crate) fn run_job_catching(
    job: &Job,
    hash: &str,
    out: &Path,
    cache: &Path,
    observer: &dyn JobObserver,
) -> Result<(), JobError> {
    catch_unwind(AssertUnwindSafe(|| {
        run_job(job, hash, out, cache, observer)
    }))
    .unwrap_or_else(|panic| {
        let message = panic
            .downcast_ref::<String>()
            .cloned()
            .or_else(|| panic.downcast_ref::<&str>().map(|s| s.to_string()))
            .unwrap_or_default();
        Err(JobError::compute(format!(
            "internal error (panic) in the job: {message}"
        )))
    })
}

fn read_json(path: &Path) -> Result<serde_json::Value, JobError> {
    let text = std::fs::read_to_string(path).compute(path.display())?;
    serde_json::from_str(&text).compute(path.display())
}

/// Write `out/batch-summary.csv` atomically: one row per job and component
/// (job, status: `ran` in this run or `reused` from an earlier one, input
/// hash, decoder, number of components, component, its top region and share,
/// explained variance, output folder).
pub fn write_summary(out: &Path, jobs: &[Job], ran: &[String]) -> Result<PathBuf, JobError> {
    let header = [
        "job",
        "status",
        "input_hash",
        "decoder",
        "components",
        "component",
        "top_region",
        "top_share",
        "explained_variance",
        "output",
    ];
    let mut rows = Vec::new();
    for job in jobs {
        let dir = out.join(&job.name);
        let marker = read_json(&dir.join(MARKER))?;
        let summary = read_json(&dir.join("summary.json"))?;
        let status = if ran.contains(&job.name) {
            "ran"
        } else {
            "reused"
        };
        let components = summary["components"]
            .as_array()
            .cloned()
            .unwrap_or_default();
        for c in &components {
            let top = &c["top_regions"][0];
            rows.push(vec![
                job.name.clone(),
                status.to_string(),
                marker["input_hash"]
                    .as_str()
                    .unwrap_or_default()
                    .to_string(),
                job.decoder.display().to_string(),
                components.len().to_string(),
                c["name"].as_str().unwrap_or_default().to_string(),
                top["region"].as_str().unwrap_or_default().to_string(),
                top["share"]
                    .as_f64()
                    .map_or(String::new(), |v| format!("{v:.6}")),
                c["explained_variance"]
                    .as_f64()
                    .map_or(String::new(), |v| format!("{v:.6}")),
                dir.display().to_string(),
            ]);
        }
    }
    let path = out.join(SUMMARY_FILE);
    write_table(&path, Delimiter::Comma, &header, &rows)
        .compute(format!("writing {}", path.display()))?;
    Ok(path)
}
