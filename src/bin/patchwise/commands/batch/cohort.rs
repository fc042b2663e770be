//! The `[compare]` table of a job script: `patchwise compare` over every
//! job's folder once all jobs are done.

use std::path::{Path, PathBuf};

use patchwise::batch::{CompareSpec, Job};
use patchwise::job::cache_folder::CacheOptions;
use patchwise::job::CompareParams;

use crate::commands::compare;
use crate::CliError;

/// Compare every job's folder `out/<job>` into the table's `out`, with
/// `compare`'s defaults, the table's `pair` and the batch's cache folder.
pub fn run_compare(
    spec: &CompareSpec,
    out: &Path,
    jobs: &[Job],
    cache: &CacheOptions,
) -> Result<(), CliError> {
    let results: Vec<PathBuf> = jobs.iter().map(|j| out.join(&j.name)).collect();
    let params = CompareParams {
        pair: spec.pair.clone().map(Vec::from),
        ..CompareParams::default()
    };
    compare::run(&results, &params, &spec.out, cache, false)
}
