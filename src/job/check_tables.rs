//! `check` of text tables and JSON: a matrix of numbers is told from a list
//! of labels, an electrodes file from a channel list, and our own outputs
//! (regions.csv, dipoles.csv, filter_gain.csv, a comparison's tables, the
//! batch summary, summary.json) are named as what they are.

use std::collections::BTreeSet;
use std::path::Path;

use super::error::{JobError, JobResult};
use crate::io::decoder_file::read_matrix;
use crate::io::{electrodes, table};

/// Our CSV outputs, known by their first columns, and what each is.
const OUR_TABLES: &[(&[&str], &str)] = &[
    (
        &["component", "region", "share", "share_low"],
        "region table of an attribution (regions.csv of `patchwise attribute`)",
    ),
    (
        &["component", "region", "mean_share"],
        "region table of a comparison (regions.csv of `patchwise compare`)",
    ),
    (
        &["component", "region", "mean_difference"],
        "paired table of a comparison (paired.csv of `patchwise compare --pair`)",
    ),
    (
        &["component", "subject_a", "subject_b"],
        "similarity table of a comparison (similarity.csv of `patchwise compare`)",
    ),
    (
        &["component", "region", "mean_gain"],
        "filter gain table (filter_gain.csv of `patchwise attribute`)",
    ),
    (
        &["job", "status", "input_hash"],
        "batch summary (batch-summary.csv of `patchwise batch`)",
    ),
];

/// Whether the header is one of dipoles.csv's (with or without `dipole`).
fn is_dipole_table(header: &[String]) -> bool {
    let has = |n: &str| header.iter().any(|h| h == n);
    header.first().is_some_and(|h| h == "component") && has("x_mm") && has("residual_variance")
}

/// The distinct values of column `name`, when the table has it.
fn distinct(t: &table::Table, name: &str) -> Option<usize> {
    let c = t.header.iter().position(|h| h == name)?;
    let values: BTreeSet<&str> = t
        .rows
        .iter()
        .filter_map(|r| r.fields.get(c).map(String::as_str))
        .collect();
    Some(values.len())
}

/// What one of our tables holds, counted.
fn our_table_line(path: &Path, t: &table::Table, what: &str) -> String {
    let mut counts = vec![format!("{} rows", t.rows.len())];
    if let Some(k) = distinct(t, "component") {
        counts.push(format!("{k} component(s)"));
    }
    if let Some(r) = distinct(t, "region") {
        counts.push(format!("{r} region(s)"));
    }
    format!("{}: {what}, {}", path.display(), counts.join(", "))
}

/// Whether every field of the first non-blank line parses as a number
/// (a matrix has no header).
fn starts_with_numbers(path: &Path) -> Result<bool, JobError> {
    let text = crate::io::input::read_input_string(path)
        .map_err(|e| JobError::input(format!("{}: {e}", path.display())))?;
    let first = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
    let fields: Vec<&str> = first
        .split([',', '\t', ';', ' '])
        .map(str::trim)
        .filter(|f| !f.is_empty())
        .collect();
    Ok(!fields.is_empty() && fields.iter().all(|f| f.parse::<f64>().is_ok()))
}

/// Check a .csv, .tsv or .txt file and say what it is: a numeric matrix,
/// one of our outputs, an electrodes file or a list of labels.
pub fn table_lines(path: &Path) -> Result<Vec<String>, JobError> {
    if starts_with_numbers(path)? {
        let (_, rows, cols) = read_matrix(path).input("reading the matrix")?;
        return Ok(vec![
            format!(
                "{}: numeric matrix, {rows} rows × {cols} columns, no header",
                path.display()
            ),
            format!(
                "  as patterns: {rows} channels × {cols} components; give the channel labels with --channels FILE (one a line)"
            ),
        ]);
    }
    let t = table::read_table(path).input("reading table")?;
    for (columns, what) in OUR_TABLES {
        if t.header.len() >= columns.len() && t.header.iter().zip(*columns).all(|(h, c)| h == c) {
            return Ok(vec![our_table_line(path, &t, what)]);
        }
    }
    if is_dipole_table(&t.header) {
        return Ok(vec![our_table_line(
            path,
            &t,
            "dipole table (dipoles.csv of `patchwise dipole`)",
        )]);
    }
    let has = |n: &str| t.header.iter().any(|h| h.eq_ignore_ascii_case(n));
    if has("x") || has("y") || has("z") {
        let m = electrodes::read_electrodes(path).input("reading electrodes")?;
        return Ok(vec![format!(
            "{}: electrodes file, {} electrodes (positions in mm): {}",
            path.display(),
            m.len(),
            m.labels.join(" ")
        )]);
    }
    if t.header.len() > 2 && !has("name") && !has("label") {
        return Ok(vec![format!(
            "{}: table with {} columns ({}) and {} rows; not a channel list (one label a line, or a BIDS channels.tsv), an electrodes file, a matrix of numbers, or one of our outputs",
            path.display(),
            t.header.len(),
            t.header.join(", "),
            t.rows.len()
        )]);
    }
    let ch = electrodes::read_channel_list(path).input("reading channel list")?;
    Ok(vec![format!(
        "{}: channel list, {} labels",
        path.display(),
        ch.len()
    )])
}

/// Check a .json file: summary.json of an attribution or a comparison, or
/// a batch job record; any other JSON is said to be none of ours.
pub fn json_lines(path: &Path) -> Result<Vec<String>, JobError> {
    let text = crate::io::input::read_input_string(path)
        .map_err(|e| JobError::input(format!("{}: {e}", path.display())))?;
    let value: serde_json::Value = serde_json::from_str(&text)
        .map_err(|e| JobError::input(format!("{}: not valid JSON ({e})", path.display())))?;
    let count = |key: &str| value.get(key).and_then(|v| v.as_array()).map(Vec::len);
    let software = value
        .get("software")
        .and_then(|v| v.as_str())
        .unwrap_or("unknown version");
    let line = if value.get("share_definition").is_some() {
        format!(
            "{}: summary of an attribution (summary.json of `patchwise attribute`, {software}), {} component(s), {} resamples",
            path.display(),
            count("components").unwrap_or(0),
            value.get("resamples").and_then(|v| v.as_u64()).unwrap_or(0)
        )
    } else if value.get("subjects").is_some() && value.get("null").is_some() {
        format!(
            "{}: summary of a comparison (summary.json of `patchwise compare`, {software}), {} subjects, {} component(s){}",
            path.display(),
            count("subjects").unwrap_or(0),
            count("components").unwrap_or(0),
            if value.get("paired").is_some_and(|p| !p.is_null()) {
                ", paired"
            } else {
                ""
            }
        )
    } else if value.get("input_hash").is_some() && value.get("options").is_some() {
        format!(
            "{}: job record of a batch run (job.json of `patchwise batch`)",
            path.display()
        )
    } else {
        format!(
            "{}: JSON, but none of patchwise's files (summary.json of attribute or compare, job.json of batch)",
            path.display()
        )
    };
    Ok(vec![line])
}
