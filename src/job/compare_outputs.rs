//! The file layouts of a comparison (docs/cohort.md): compare.h5,
//! regions.csv and similarity.csv through `io::compare_file`, paired.csv in
//! a paired comparison, and summary.json.

use std::path::Path;

use super::compare::Comparison;
use super::error::{JobError, JobResult};
use crate::io::compare_file::{
    summary_json, write_compare, write_paired_csv, write_regions_csv, write_similarity_csv,
};

/// Write compare.h5, regions.csv, similarity.csv, paired.csv (paired
/// comparisons only) and summary.json into `dir` (a staging folder the
/// caller commits by one rename); returns the names of the files written.
pub fn write_comparison_files(dir: &Path, c: &Comparison) -> Result<Vec<&'static str>, JobError> {
    let record = c.record();
    write_compare(&dir.join("compare.h5"), &record).compute("writing compare.h5")?;
    write_regions_csv(&dir.join("regions.csv"), &c.group).compute("writing regions.csv")?;
    write_similarity_csv(&dir.join("similarity.csv"), &c.group)
        .compute("writing similarity.csv")?;
    let mut written = vec!["compare.h5", "regions.csv", "similarity.csv"];
    if let Some((p, _, _)) = &c.paired {
        write_paired_csv(&dir.join("paired.csv"), p).compute("writing paired.csv")?;
        written.push("paired.csv");
    }
    let summary = serde_json::to_string_pretty(&summary_json(&record)).unwrap_or_default();
    crate::io::atomic::write_atomic(&dir.join("summary.json"), summary.as_bytes())
        .compute("writing summary.json")?;
    written.push("summary.json");
    Ok(written)
}
