//! `patchwise report`: one self-contained HTML page for a result folder
//! (result.h5) or a comparison folder (compare.h5).

use std::path::{Path, PathBuf};

pub use patchwise::job::report::{write_compare_report, write_report};

use crate::CliError;

/// Arguments of `patchwise report`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Result folder written by `attribute` or `demo` (holds result.h5;
    /// summary.json is used when present), or a comparison folder written
    /// by `compare` (holds compare.h5).
    pub result_dir: PathBuf,
    /// Output file (default: RESULT_DIR/report.html).
    #[arg(long)]
    pub out: Option<PathBuf>,
}

fn bad(message: String) -> CliError {
    CliError::bad_input(anyhow::anyhow!(message))
}

/// The report step of `attribute` and `demo`: the results are already
/// written, so any failure here is a failure while computing (exit 1) and
/// leaves them in place.
pub fn report_after_outputs(dir: &Path, job: Vec<(String, String)>) -> Result<(), CliError> {
    after_outputs(dir, "results", write_report(dir, None, job))
}

/// Say where the report went, or turn its failure into exit 1 with a note
/// that the `what` in `dir` are written.
fn after_outputs(
    dir: &Path,
    what: &str,
    written: Result<PathBuf, patchwise::job::JobError>,
) -> Result<(), CliError> {
    match written {
        Ok(path) => {
            outln!("report in {}", path.display());
            Ok(())
        }
        Err(e) => Err(CliError::compute(anyhow::Error::new(e).context(format!(
            "the {what} in {} are written, but the report failed",
            dir.display()
        )))),
    }
}

/// The report step of `compare`: the outputs are already written, so any
/// failure here exits 1 and leaves them in place.
pub fn compare_report_after_outputs(dir: &Path) -> Result<(), CliError> {
    after_outputs(dir, "comparison outputs", write_compare_report(dir, None))
}

/// Run `patchwise report`: a folder with result.h5 gets the result report,
/// one with compare.h5 the comparison report.
pub fn exec(args: Args) -> Result<(), CliError> {
    let dir = &args.result_dir;
    // The page goes to a file (never a folder or device) and never over
    // one of the files it is made from.
    let page = args.out.clone().unwrap_or_else(|| dir.join("report.html"));
    patchwise::io::staging::check_output_file(&page, "--out")?;
    let sources: Vec<PathBuf> = ["result.h5", "summary.json", "compare.h5"]
        .iter()
        .map(|f| dir.join(f))
        .collect();
    let inputs: Vec<(&str, &Path)> = sources.iter().map(|p| ("input", p.as_path())).collect();
    patchwise::io::staging::refuse_input_as_output(&page, "--out", &inputs)?;
    let is_result = dir.join("result.h5").is_file();
    let is_compare = dir.join("compare.h5").is_file();
    if dir.is_dir() && !is_result && !is_compare {
        return Err(bad(format!(
            "{} and {}: neither found (a result folder holds the result.h5 that `patchwise attribute` or `patchwise demo` writes, a comparison folder the compare.h5 that `patchwise compare` writes)",
            dir.join("result.h5").display(),
            dir.join("compare.h5").display()
        )));
    }
    let out = if is_compare && !is_result {
        write_compare_report(dir, args.out.as_deref())?
    } else {
        write_report(dir, args.out.as_deref(), Vec::new())?
    };
    outln!("report in {}", out.display());
    Ok(())
}
