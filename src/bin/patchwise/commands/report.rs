//! `patchwise report`: one self-contained HTML page for a result folder
//! (result.h5) or a comparison folder (compare.h5).

use std::path::{Path, PathBuf};

use patchwise::io::compare_read::read_compare;
use patchwise::io::result_file::read_result;
use patchwise::render::compare_report::{build_compare_report, CompareReportOptions};
use patchwise::render::report::{build_report, ReportError, ReportOptions};

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

/// A report error as the command line reports it: inconsistent sizes in
/// the file are bad input (exit 2), a picture that fails is exit 1.
fn building(e: ReportError) -> CliError {
    match e {
        ReportError::Shape { .. } => CliError::bad_input(anyhow::Error::new(e)),
        other => CliError::compute(anyhow::Error::new(other).context("building the report")),
    }
}

/// Write the page atomically to `out` (default `dir`/report.html).
fn write_page(dir: &Path, out: Option<&Path>, html: &str) -> Result<PathBuf, CliError> {
    let out = out.map_or_else(|| dir.join("report.html"), Path::to_path_buf);
    patchwise::io::atomic::write_atomic(&out, html.as_bytes())
        .map_err(|e| CliError::compute(anyhow::anyhow!("writing {}: {e}", out.display())))?;
    Ok(out)
}

/// Read `dir`/result.h5 (and summary.json when present), build the page and
/// write it atomically to `out` (default `dir`/report.html). Bad or missing
/// input files exit 2; a failure to draw or write exits 1.
pub fn write_report(
    dir: &Path,
    out: Option<&Path>,
    job: Vec<(String, String)>,
) -> Result<PathBuf, CliError> {
    write_report_as(dir, out, job, None)
}

/// [`write_report`] for a folder still being staged: the page names
/// `shown` (the folder the result will have) instead of `dir`.
pub fn write_report_as(
    dir: &Path,
    out: Option<&Path>,
    job: Vec<(String, String)>,
    shown: Option<&Path>,
) -> Result<PathBuf, CliError> {
    if !dir.is_dir() {
        return Err(bad(format!(
            "{}: no such folder (expected a result folder written by `patchwise attribute` or `patchwise demo`)",
            dir.display()
        )));
    }
    let result_path = dir.join("result.h5");
    if !result_path.is_file() {
        return Err(bad(format!(
            "{}: not found (a result folder holds the result.h5 that `patchwise attribute` writes)",
            result_path.display()
        )));
    }
    let mut result = read_result(&result_path)
        .map_err(|e| CliError::bad_input(anyhow::Error::new(e).context("reading the result")))?;
    if let Some(shown) = shown {
        result.path = shown.join("result.h5");
    }
    let summary_path = dir.join("summary.json");
    let summary: Option<serde_json::Value> = if summary_path.is_file() {
        let text = std::fs::read_to_string(&summary_path)
            .map_err(|e| bad(format!("{}: {e}", summary_path.display())))?;
        Some(serde_json::from_str(&text).map_err(|e| {
            bad(format!(
                "{}: not valid JSON ({e}); remove it or rerun the attribution",
                summary_path.display()
            ))
        })?)
    } else {
        None
    };
    let options = ReportOptions {
        job,
        ..ReportOptions::default()
    };
    let html = build_report(&result, summary.as_ref(), &options).map_err(building)?;
    write_page(dir, out, &html)
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
    written: Result<PathBuf, CliError>,
) -> Result<(), CliError> {
    match written {
        Ok(path) => {
            outln!("report in {}", path.display());
            Ok(())
        }
        Err(e) => Err(CliError::compute(e.error.context(format!(
            "the {what} in {} are written, but the report failed",
            dir.display()
        )))),
    }
}

/// Read `dir`/compare.h5, build the comparison page and write it
/// atomically to `out` (default `dir`/report.html). A bad or missing
/// compare.h5 exits 2; a failure to draw or write exits 1.
pub fn write_compare_report(dir: &Path, out: Option<&Path>) -> Result<PathBuf, CliError> {
    let path = dir.join("compare.h5");
    if !path.is_file() {
        return Err(bad(format!(
            "{}: not found (a comparison folder holds the compare.h5 that `patchwise compare` writes)",
            path.display()
        )));
    }
    let file = read_compare(&path).map_err(|e| {
        CliError::bad_input(anyhow::Error::new(e).context("reading the comparison"))
    })?;
    let html = build_compare_report(&file, &CompareReportOptions::default()).map_err(building)?;
    write_page(dir, out, &html)
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
