//! The terminal table of leading regions, and the staged writing of an
//! attribution's folder (the layouts are `patchwise::job::outputs`).

use std::path::{Path, PathBuf};

use patchwise::io::result_file::CAUTION;
use patchwise::job::outputs::{fmt, region_names, region_rows, write_attribution_files, RegionRow};
use patchwise::job::Attribution;

use crate::CliError;
use patchwise::io::staging::Staging;

/// Print the leading regions of each component.
pub fn print_table(a: &Attribution, rows: &[Vec<RegionRow>], top: usize) {
    let names = region_names(a);
    for (c, comp_rows) in rows.iter().enumerate() {
        let comp = &a.outcome.attribution.components[c];
        outln!();
        outln!(
            "{} — explained variance {:.1} %{}",
            a.component_names[c],
            100.0 * a.outcome.fit.explained_variance[c],
            comp.peak_position
                .map(|p| format!(
                    ", peak (largest |source|) at ({:.0}, {:.0}, {:.0}) mm",
                    p[0] * 1e3,
                    p[1] * 1e3,
                    p[2] * 1e3
                ))
                .unwrap_or_default()
        );
        for flag in patchwise::pipeline::component_flags(&a.outcome, c) {
            outln!("  ! {flag}");
        }
        outln!(
            "  {:<28} {:>7} {:>17} {:>9}",
            "region",
            "share",
            "95 % interval",
            "selected"
        );
        for r in comp_rows.iter().take(top) {
            if r.share.abs() < 0.005 && r.frequency.is_nan() {
                continue;
            }
            outln!(
                "  {:<28} {:>7} {:>17} {:>9}",
                r.region,
                fmt(r.share, 3),
                if r.low.is_finite() {
                    format!("[{:.3}, {:.3}]", r.low, r.high)
                } else {
                    "n/a".to_string()
                },
                if r.frequency.is_finite() {
                    format!("{:.0} %", 100.0 * r.frequency)
                } else {
                    "n/a".to_string()
                }
            );
        }
        // How sure the resamples are of the leading region: a near-tie
        // between two regions shows as support split between them.
        // Ties in region order, as in `compare` (one `leaders` serves both).
        let lead: Vec<f64> = a.outcome.resample.as_ref().map_or(Vec::new(), |s| {
            s.intervals[c].iter().map(|i| i.lead_frequency).collect()
        });
        for line in patchwise::job::gain_outputs::gain_lines(a, c) {
            outln!("{line}");
        }
        let leaders = patchwise::attribution::leaders(&lead);
        if !leaders.is_empty() && names.len() == lead.len() {
            let list: Vec<String> = leaders
                .iter()
                .take(3)
                .map(|&r| format!("{} {:.0} %", names[r], 100.0 * lead[r]))
                .collect();
            outln!("  leading region in the resamples: {}", list.join(", "));
        }
        if let Some(line) = leader_line(a, &names, c) {
            outln!("{line}");
        }
    }
    outln!();
    for line in legend(a) {
        outln!("{line}");
    }
}

/// The estimate's leader and the calibrated probability that it is the
/// truth's leader (None without resamples or without a leader).
fn leader_line(a: &Attribution, names: &[String], c: usize) -> Option<String> {
    let p = a.outcome.resample.as_ref()?.leader_probability[c];
    let r =
        patchwise::attribution::leading_region(&a.outcome.attribution.components[c].region_share)?;
    (p.is_finite() && r < names.len()).then(|| {
        format!(
            "  probability that {} truly leads: {:.2} (its lead frequency, calibrated on simulated cases)",
            names[r], p
        )
    })
}

/// What the table's columns mean, under the tables.
fn legend(a: &Attribution) -> Vec<String> {
    let resamples = a.outcome.resample.as_ref().map_or(0, |r| r.n_resamples);
    let mut lines = vec![
        "share: the region's part of the fitted pattern (the shares and the unassigned share sum to 1)"
            .to_string(),
    ];
    if resamples > 0 {
        lines.push(format!(
            "95 % interval: of the share over {resamples} bootstrap resamples; selected: the percentage of resamples in which the region's share was \u{2265} {:.0} %",
            100.0 * patchwise::pipeline::SELECTION_THRESHOLD
        ));
    } else {
        lines.push("95 % interval and selected: n/a without resamples (--resamples 0)".to_string());
    }
    lines
}

/// Write result.h5, regions.csv and summary.json into `out` atomically and
/// print the table. Returns the folder.
pub fn write_outputs(out: &Path, a: &Attribution) -> Result<PathBuf, CliError> {
    write_outputs_with(out, a, &[])
}

/// [`write_outputs`], with `extra` files (name, bytes) in the same folder
/// (the demo's decoder).
pub fn write_outputs_with(
    out: &Path,
    a: &Attribution,
    extra: &[(&str, &[u8])],
) -> Result<PathBuf, CliError> {
    write_outputs_nested(out, a, extra, None)
}

/// An attribution written as a folder inside another's (the demo's
/// time-resolved decoder): the folder's name, the attribution, its extra
/// files.
pub type Nested<'a> = (&'a str, &'a Attribution, &'a [(&'a str, &'a [u8])]);

/// [`write_outputs_with`], plus a `nested` attribution in a subfolder,
/// committed together: the whole folder appears at once or not at all.
pub fn write_outputs_nested(
    out: &Path,
    a: &Attribution,
    extra: &[(&str, &[u8])],
    nested: Option<Nested<'_>>,
) -> Result<PathBuf, CliError> {
    let stage = Staging::new(out).map_err(CliError::compute)?;
    let rows = write_files(&stage, a)?;
    write_extra(stage.dir(), extra)?;
    if let Some((name, inner, inner_extra)) = nested {
        let dir = stage.file(name);
        std::fs::create_dir(&dir)
            .map_err(|e| CliError::compute(anyhow::anyhow!("creating {}: {e}", dir.display())))?;
        write_attribution_files(&dir, inner)?;
        write_extra(&dir, inner_extra)?;
    }
    let dir = stage.commit()?;
    print_outputs(&dir, a, &rows);
    if let Some((name, inner, _)) = nested {
        outln!();
        print_outputs(&dir.join(name), inner, &region_rows(inner));
    }
    outln!("caution: {CAUTION}");
    Ok(dir)
}

/// Write `extra` files (name, bytes) into `dir`, each atomically.
fn write_extra(dir: &Path, extra: &[(&str, &[u8])]) -> Result<(), CliError> {
    for (name, bytes) in extra {
        let path = dir.join(name);
        patchwise::io::atomic::write_atomic(&path, bytes)
            .map_err(|e| CliError::compute(anyhow::anyhow!("writing {}: {e}", path.display())))?;
    }
    Ok(())
}

/// The terminal's tables of a written attribution and the list of its files.
fn print_outputs(dir: &Path, a: &Attribution, rows: &[Vec<RegionRow>]) {
    if a.time.is_some() {
        // One column per (component, time): the region x time table instead.
        for line in patchwise::job::time_outputs::time_table_lines(a, &region_names(a), 5, 10) {
            outln!("{line}");
        }
    } else {
        print_table(a, rows, 6);
    }
    outln!();
    let mut gain_table = if a.filter_gain.is_some() {
        ", filter_gain.csv"
    } else {
        ""
    }
    .to_string();
    if a.time.is_some() {
        gain_table.push_str(", regions_time.csv, time_ranges.csv");
    }
    outln!(
        "results in {} (result.h5, regions.csv, summary.json{gain_table})",
        dir.display()
    );
}

/// Write the attribution's files into a staging folder (committed by the
/// caller); returns the region rows.
pub fn write_files(stage: &Staging, a: &Attribution) -> Result<Vec<Vec<RegionRow>>, CliError> {
    Ok(write_attribution_files(stage.dir(), a)?)
}
