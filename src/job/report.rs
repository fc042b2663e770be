//! The HTML report of a result or comparison folder as a library call:
//! read result.h5 (and summary.json) or compare.h5, build the page
//! (`render`), write it atomically.

use std::path::{Path, PathBuf};

use super::describe::in_job_order;
use super::error::{ErrorKind, JobError, JobResult};
use crate::io::compare_read::read_compare;
use crate::io::result_file::read_result;
use crate::render::compare_report::{build_compare_report, CompareReportOptions};
use crate::render::report::{build_report, ReportError, ReportOptions};

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// A report error as a job error: the file was checked whole when read,
/// so what is left (a picture that fails) is a compute failure.
fn building(e: ReportError) -> JobError {
    JobError::wrap(ErrorKind::Compute, "building the report", e)
}

/// Write the page atomically to `out` (default `dir`/report.html).
fn write_page(dir: &Path, out: Option<&Path>, html: &str) -> Result<PathBuf, JobError> {
    let out = out.map_or_else(|| dir.join("report.html"), Path::to_path_buf);
    crate::io::atomic::write_atomic(&out, html.as_bytes())
        .compute(format!("writing {}", out.display()))?;
    Ok(out)
}

/// Read `dir`/result.h5 (and summary.json when present), build the page and
/// write it atomically to `out` (default `dir`/report.html). Bad or missing
/// input files are input errors; a failure to draw or write is a compute error.
pub fn write_report(
    dir: &Path,
    out: Option<&Path>,
    job: Vec<(String, String)>,
) -> Result<PathBuf, JobError> {
    write_report_as(dir, out, job, None)
}

/// [`write_report`] for a folder still being staged: the page names
/// `shown` (the folder the result will have) instead of `dir`.
pub fn write_report_as(
    dir: &Path,
    out: Option<&Path>,
    job: Vec<(String, String)>,
    shown: Option<&Path>,
) -> Result<PathBuf, JobError> {
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
    let mut result = read_result(&result_path).input("reading the result")?;
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
    // The job record of the run, or the one summary.json keeps, in one
    // fixed order: the page `report DIR` remakes is the page of the run.
    let job = if job.is_empty() {
        summary_job(summary.as_ref())
    } else {
        job
    };
    let options = ReportOptions {
        job: in_job_order(job),
        ..ReportOptions::default()
    };
    let html = build_report(&result, summary.as_ref(), &options).map_err(building)?;
    write_page(dir, out, &html)
}

/// summary.json's `job` object as (key, text) pairs.
fn summary_job(summary: Option<&serde_json::Value>) -> Vec<(String, String)> {
    summary
        .and_then(|s| s.get("job"))
        .and_then(|j| j.as_object())
        .map(|o| {
            o.iter()
                .map(|(k, v)| {
                    let text = v.as_str().map_or_else(|| v.to_string(), str::to_string);
                    (k.clone(), text)
                })
                .collect()
        })
        .unwrap_or_default()
}

/// Read `dir`/compare.h5, build the comparison page and write it
/// atomically to `out` (default `dir`/report.html). A bad or missing
/// compare.h5 is an input error; a failure to draw or write a compute error.
pub fn write_compare_report(dir: &Path, out: Option<&Path>) -> Result<PathBuf, JobError> {
    let path = dir.join("compare.h5");
    if !path.is_file() {
        return Err(bad(format!(
            "{}: not found (a comparison folder holds the compare.h5 that `patchwise compare` writes)",
            path.display()
        )));
    }
    let file = read_compare(&path).input("reading the comparison")?;
    let html = build_compare_report(&file, &CompareReportOptions::default()).map_err(building)?;
    write_page(dir, out, &html)
}
