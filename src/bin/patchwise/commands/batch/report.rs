//! The end of a batch run: batch-summary.csv and the table of failures.

use std::path::{Path, PathBuf};

use patchwise::batch::Job;
use patchwise::io::table::{write_table, Delimiter};

use super::Failure;
use crate::CliError;
use patchwise::batch::MARKER_FILE as MARKER;

/// The summary's file name inside the output folder.
pub use patchwise::batch::SUMMARY_FILE as SUMMARY;

fn read_json(path: &Path) -> Result<serde_json::Value, CliError> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| CliError::compute(anyhow::anyhow!("{}: {e}", path.display())))?;
    serde_json::from_str(&text)
        .map_err(|e| CliError::compute(anyhow::anyhow!("{}: {e}", path.display())))
}

/// Write `out/batch-summary.csv` atomically: one row per job and component
/// (job, status: `ran` in this run or `reused` from an earlier one, input
/// hash, decoder, number of components, component, its top region and share,
/// explained variance, output folder).
pub fn write_summary(out: &Path, jobs: &[Job], ran: &[String]) -> Result<PathBuf, CliError> {
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
    let path = out.join(SUMMARY);
    write_table(&path, Delimiter::Comma, &header, &rows)
        .map_err(|e| CliError::compute(anyhow::anyhow!("writing {}: {e}", path.display())))?;
    Ok(path)
}

/// Print the failed jobs with their exit codes and messages.
pub fn print_failures(failures: &[Failure]) {
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
        let kind = if f.error.code == 2 {
            "2 (bad input)"
        } else {
            "1"
        };
        errln!("  {:<width$}  {kind}  {}", f.job, f.error);
    }
}
