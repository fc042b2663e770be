//! `patchwise attribute`: which cortical regions does a decoder rely on?
//! Parse, check the output folder, run the library job, write, report.

use std::path::{Path, PathBuf};

use patchwise::job::cache_folder::CacheOptions;
use patchwise::job::{attribute, AttributeParams};

use crate::outputs::write_outputs;
use crate::progress::Console;
use crate::CliError;

/// Arguments of `patchwise attribute`.
#[derive(clap::Args, Debug, Clone)]
pub struct Args {
    #[command(flatten)]
    pub params: AttributeParams,
    #[command(flatten)]
    pub cache: CacheOptions,
    /// Output folder.
    #[arg(long)]
    pub out: PathBuf,
    /// Do not write report.html into the output folder.
    #[arg(long)]
    pub no_report: bool,
}

/// The input files and folders of an `attribute` run, as (what, path).
pub fn input_paths(args: &Args) -> Vec<(&'static str, PathBuf)> {
    let mut inputs = args.params.input_paths();
    if let Some(c) = args.cache.given_folder() {
        inputs.push(("cache folder", c.to_path_buf()));
    }
    inputs
}

/// Run `patchwise attribute`.
pub fn exec(args: Args) -> Result<(), CliError> {
    // The output folder is checked before anything is computed: it must be
    // new, empty or ours, and hold none of this run's inputs.
    patchwise::io::staging::check_output_folder(&args.out, "--out")?;
    let inputs = input_paths(&args);
    let inputs: Vec<(&str, &Path)> = inputs.iter().map(|(w, p)| (*w, p.as_path())).collect();
    patchwise::io::staging::refuse_replaced_inputs(&args.out, "--out", None, &inputs)?;
    let cache = args.cache.open()?;
    let result = attribute(&args.params, cache.path(), None, &Console::default())?;
    let dir = write_outputs(&args.out, &result)?;
    if !args.no_report {
        super::report::report_after_outputs(&dir, args.params.describe())?;
    }
    Ok(())
}
