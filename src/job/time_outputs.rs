//! The outputs of a decoder with a time axis (docs/result_files.md):
//! `regions_time.csv` (long format: component, region, time_s, share,
//! share_low, share_high; times in seconds, shares unitless),
//! `time_ranges.csv` (one row per leading region: onset, peak and offset in
//! seconds with their resampled 95 % ranges), summary.json's
//! `time_resolved` block, and the short region × time table of the terminal.

use std::path::Path;

use super::attribute::Attribution;
use super::error::{JobError, JobResult};
use crate::io::table::{write_table, Delimiter};
use crate::pipeline::TimeShares;

fn fmt(v: f64, digits: usize) -> String {
    crate::io::table::format_fixed(v, digits, "n/a")
}

/// The component names of a time-resolved attribution: the column names
/// without their ` @ … ms` suffix, one per component.
fn base_names(a: &Attribution, t: &TimeShares) -> Vec<String> {
    let n_t = t.times.len().max(1);
    (0..t.n_components)
        .map(|c| {
            let name = a.component_names.get(c * n_t).cloned().unwrap_or_default();
            match name.rfind(" @ ") {
                Some(i) => name[..i].to_string(),
                None => name,
            }
        })
        .collect()
}

/// Write regions_time.csv and time_ranges.csv into `dir` (nothing without
/// a time axis); `names` are the region names (`outputs::region_names`).
pub fn write_time_files(dir: &Path, a: &Attribution, names: &[String]) -> Result<(), JobError> {
    let Some(t) = &a.time else {
        return Ok(());
    };
    let n_t = t.times.len();
    let mut rows = Vec::with_capacity(t.share.len());
    for c in 0..t.n_components {
        for (r, region) in names.iter().enumerate().take(t.n_regions) {
            for (i, time) in t.times.iter().enumerate() {
                let at = (c * t.n_regions + r) * n_t + i;
                rows.push(vec![
                    c.to_string(),
                    region.clone(),
                    format!("{time:.6}"),
                    format!("{:.6}", t.share[at]),
                    fmt(t.share_low[at], 6),
                    fmt(t.share_high[at], 6),
                ]);
            }
        }
    }
    let header = [
        "component",
        "region",
        "time_s",
        "share",
        "share_low",
        "share_high",
    ];
    write_table(
        &dir.join("regions_time.csv"),
        Delimiter::Comma,
        &header,
        &rows,
    )
    .compute("writing regions_time.csv")?;
    let header = [
        "component",
        "region",
        "onset_s",
        "onset_low_s",
        "onset_high_s",
        "peak_s",
        "peak_low_s",
        "peak_high_s",
        "offset_s",
        "offset_low_s",
        "offset_high_s",
        "peak_share",
        "held_frequency",
    ];
    let rows: Vec<Vec<String>> = t
        .ranges
        .iter()
        .map(|g| {
            vec![
                g.component.to_string(),
                names.get(g.region).cloned().unwrap_or_default(),
                fmt(g.onset, 6),
                fmt(g.onset_interval.0, 6),
                fmt(g.onset_interval.1, 6),
                fmt(g.peak, 6),
                fmt(g.peak_interval.0, 6),
                fmt(g.peak_interval.1, 6),
                fmt(g.offset, 6),
                fmt(g.offset_interval.0, 6),
                fmt(g.offset_interval.1, 6),
                fmt(g.peak_share, 6),
                fmt(g.held_frequency, 4),
            ]
        })
        .collect();
    write_table(
        &dir.join("time_ranges.csv"),
        Delimiter::Comma,
        &header,
        &rows,
    )
    .compute("writing time_ranges.csv")
}

/// summary.json's `time_resolved` block (`None` without a time axis).
pub fn summary_block(a: &Attribution, names: &[String]) -> Option<serde_json::Value> {
    let t = a.time.as_ref()?;
    let base = base_names(a, t);
    let finite = |v: f64| v.is_finite().then_some(v);
    let ranges: Vec<serde_json::Value> = t
        .ranges
        .iter()
        .map(|g| {
            serde_json::json!({
                "component": g.component,
                "component_name": base.get(g.component),
                "region": names.get(g.region),
                "onset_s": g.onset, "peak_s": g.peak, "offset_s": g.offset,
                "onset_range_s": [finite(g.onset_interval.0), finite(g.onset_interval.1)],
                "peak_range_s": [finite(g.peak_interval.0), finite(g.peak_interval.1)],
                "offset_range_s": [finite(g.offset_interval.0), finite(g.offset_interval.1)],
                "peak_share": g.peak_share,
                "held_frequency": finite(g.held_frequency),
            })
        })
        .collect();
    Some(serde_json::json!({
        "components": base,
        "n_times": t.times.len(),
        "first_time_s": t.times.first(),
        "last_time_s": t.times.last(),
        "time_window_s": a.params.fit.time_window.unwrap_or(super::params::DEFAULT_TIME_WINDOW),
        "columns": "column c * n_times + t of the per-component arrays is component c at time index t",
        "time_ranges": ranges,
    }))
}

/// The short region × time table: per component its leading regions as
/// rows and up to `max_times` evenly spaced time points as columns, shares
/// in percent.
pub fn time_table_lines(
    a: &Attribution,
    names: &[String],
    max_regions: usize,
    max_times: usize,
) -> Vec<String> {
    let Some(t) = &a.time else {
        return Vec::new();
    };
    let base = base_names(a, t);
    let n_t = t.times.len();
    let shown = max_times.clamp(1, n_t.max(1));
    let columns: Vec<usize> = (0..shown)
        .map(|i| {
            if shown == 1 {
                0
            } else {
                (i * (n_t - 1) + (shown - 1) / 2) / (shown - 1)
            }
        })
        .collect();
    let mut lines = Vec::new();
    for c in 0..t.n_components {
        lines.push(String::new());
        lines.push(format!(
            "{} — region x time shares (%), {} time points from {:.0} to {:.0} ms",
            base.get(c).cloned().unwrap_or_default(),
            n_t,
            t.times.first().copied().unwrap_or(0.0) * 1e3,
            t.times.last().copied().unwrap_or(0.0) * 1e3
        ));
        let mut head = format!("  {:<24}", "region \\ time (ms)");
        for &i in &columns {
            head.push_str(&format!(" {:>5.0}", t.times[i] * 1e3));
        }
        head.push_str("   onset–offset (peak) ms");
        lines.push(head);
        for g in t
            .ranges
            .iter()
            .filter(|g| g.component == c)
            .take(max_regions)
        {
            let name = names.get(g.region).cloned().unwrap_or_default();
            let mut line = format!("  {:<24}", name.chars().take(24).collect::<String>());
            for &i in &columns {
                let v = t.share[(c * t.n_regions + g.region) * n_t + i];
                line.push_str(&format!(" {:>5}", fmt(100.0 * v, 0)));
            }
            line.push_str(&format!(
                "   {:.0}–{:.0} ({:.0})",
                g.onset * 1e3,
                g.offset * 1e3,
                g.peak * 1e3
            ));
            lines.push(line);
        }
    }
    lines.push(String::new());
    lines.push("onset–offset: the run of time points around the peak where the region's share is at least half its largest share (regions_time.csv, time_ranges.csv)".to_string());
    lines
}
