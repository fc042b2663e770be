//! The `[compare]` table of a job script: `patchwise compare` over every
//! job's folder once all jobs are done.

use std::ffi::OsString;
use std::path::Path;

use clap::Parser;
use patchwise::batch::{CompareSpec, Job};

use crate::commands::compare::{self, Args as CompareArgs};
use crate::CliError;

/// `compare`'s defaults, from its own argument parser.
#[derive(Parser)]
struct CompareDefaults {
    #[command(flatten)]
    args: CompareArgs,
}

/// Run `patchwise compare DIR/<job>... --out OUT [--pair A B]` with the
/// defaults of `compare` and the batch's cache folder.
pub fn run_compare(
    spec: &CompareSpec,
    out: &Path,
    jobs: &[Job],
    cache: Option<&Path>,
) -> Result<(), CliError> {
    let mut argv: Vec<OsString> = vec!["compare".into()];
    argv.extend(jobs.iter().map(|j| out.join(&j.name).into_os_string()));
    argv.push("--out".into());
    argv.push(spec.out.clone().into_os_string());
    if let Some([a, b]) = &spec.pair {
        argv.extend(["--pair".into(), a.into(), b.into()]);
    }
    let mut args = CompareDefaults::try_parse_from(argv)
        .map_err(|e| CliError::bad_input(anyhow::anyhow!("[compare]: {e}")))?
        .args;
    args.cache = cache.map(Path::to_path_buf);
    compare::exec(args)
}
