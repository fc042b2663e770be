//! `patchwise batch`: many attributions from a job script, run in parallel,
//! resumable after a kill, and split into shards for cluster array jobs.
//! The runner is `patchwise::batch::run`; here: flags, the lines, the
//! failures table and the `[compare]` step.

mod cohort;

use patchwise::batch::run::{run_batch, BatchParams, JobFailure};
use patchwise::job::ErrorKind;

use crate::progress::Console;
use crate::CliError;

/// Arguments of `patchwise batch`.
#[derive(clap::Args, Debug)]
pub struct Args {
    #[command(flatten)]
    pub params: BatchParams,
}

/// Print the failed jobs with their exit codes and messages.
fn print_failures(failures: &[JobFailure]) {
    let width = failures
        .iter()
        .map(|f| f.job.len())
        .max()
        .unwrap_or(3)
        .max(3);
    errln!();
    errln!("{} failed job(s):", failures.len());
    errln!("  {:<width$}  exit  error", "job");
    for f in failures {
        let kind = if f.error.kind == ErrorKind::Input {
            "2 (bad input)"
        } else {
            "1"
        };
        errln!("  {:<width$}  {kind}  {}", f.job, f.error.chain_text());
    }
}

/// Run `patchwise batch`.
pub fn exec(args: Args) -> Result<(), CliError> {
    let params = &args.params;
    let outcome = run_batch(params, &Console::default())?;
    if let Some(path) = &outcome.summary {
        outln!("every job is done; summary in {}", path.display());
    } else if outcome.failures.is_empty() {
        outln!(
            "this run's jobs are done; others are missing, so no batch-summary.csv yet (rerun without --shard after all shards)"
        );
    }
    if !outcome.failures.is_empty() {
        print_failures(&outcome.failures);
        let code = if outcome
            .failures
            .iter()
            .any(|f| f.error.kind == ErrorKind::Input)
        {
            2
        } else {
            1
        };
        return Err(CliError {
            code,
            error: anyhow::anyhow!(
                "{} of {} job{} failed",
                outcome.failures.len(),
                outcome.to_run,
                if outcome.to_run == 1 { "" } else { "s" }
            ),
        });
    }
    let script = &outcome.script;
    if let Some(spec) = &script.compare {
        if !outcome.all_done {
            outln!("[compare] waits until every job is done");
        } else if outcome.shard.is_some() {
            outln!("[compare] runs in a plain rerun without --shard");
        } else {
            outln!(
                "every job is done; comparing them ([compare], line {})",
                spec.line
            );
            cohort::run_compare(spec, &params.out, &script.jobs, &params.cache).map_err(|e| {
                CliError {
                    code: e.code,
                    error: e.error.context(format!(
                        "{}:{}: the [compare] table",
                        script.path.display(),
                        spec.line
                    )),
                }
            })?;
        }
    }
    Ok(())
}
