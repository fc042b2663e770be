//! Writing an attribution: result.h5, regions.csv, summary.json, and the
//! terminal table of leading regions.

use std::path::{Path, PathBuf};

use patchwise::io::result_file::{write_result, ResultRecord, CAUTION};
use patchwise::io::table::{write_table, Delimiter};

use crate::commands::attribute::Attribution;

/// What a share is, for summary.json (the README and the report say the same).
pub const SHARE_DEFINITION: &str = "share of a region = the projection of its patches' part of the fitted pattern onto the whole fitted pattern, <D_g x_g, D x> / ||D x||^2, spread over regions by each patch's source amplitude; shares sum to 1 with the unassigned share; a negative share means the region's patches cancel part of the fitted pattern";
use crate::staging::Staging;
use crate::CliError;

/// One row of regions.csv.
pub struct RegionRow {
    /// Component index.
    pub component: usize,
    /// Region name.
    pub region: String,
    /// Share of the reconstruction.
    pub share: f64,
    /// Interval ends (NaN without resampling).
    pub low: f64,
    /// Interval ends (NaN without resampling).
    pub high: f64,
    /// Selection frequency (NaN without resampling).
    pub frequency: f64,
    /// Fraction of resamples in which the region leads (NaN without
    /// resampling).
    pub lead: f64,
    /// Peak of the source map inside the region (mm).
    pub peak_mm: [f64; 3],
}

/// The region names the attribution used: those of the source space when
/// the dictionary has profiles (else no region table).
fn region_names(a: &Attribution) -> Vec<String> {
    match (&a.dictionary.leadfield, &a.dictionary.profile) {
        (Some(l), Some(_)) => l.sources.region_names.clone(),
        _ => Vec::new(),
    }
}

/// Region rows per component, ordered by decreasing share.
pub fn region_rows(a: &Attribution) -> Vec<Vec<RegionRow>> {
    let names = region_names(a);
    let (regions, positions) = a
        .dictionary
        .leadfield
        .as_ref()
        .map(|l| (l.sources.region.clone(), l.sources.positions.clone()))
        .unwrap_or_default();
    let mut out = Vec::new();
    for (c, comp) in a.outcome.attribution.components.iter().enumerate() {
        let mut best = vec![(0.0f64, None::<usize>); names.len()];
        for (v, &val) in comp.source_map.iter().enumerate() {
            let r = regions[v];
            if r >= 0 && val.abs() > best[r as usize].0 {
                best[r as usize] = (val.abs(), Some(v));
            }
        }
        let mut rows: Vec<RegionRow> = names
            .iter()
            .enumerate()
            .map(|(r, name)| {
                let iv = a.outcome.resample.as_ref().map(|s| s.intervals[c][r]);
                RegionRow {
                    component: c,
                    region: name.clone(),
                    share: comp.region_share[r],
                    low: iv.map_or(f64::NAN, |i| i.low),
                    high: iv.map_or(f64::NAN, |i| i.high),
                    frequency: iv.map_or(f64::NAN, |i| i.selection_frequency),
                    lead: iv.map_or(f64::NAN, |i| i.lead_frequency),
                    peak_mm: best[r]
                        .1
                        .map_or([f64::NAN; 3], |v| positions[v].map(|x| x * 1e3)),
                }
            })
            .collect();
        rows.sort_by(|x, y| y.share.total_cmp(&x.share).then(x.region.cmp(&y.region)));
        out.push(rows);
    }
    out
}

fn fmt(v: f64, digits: usize) -> String {
    if v.is_finite() {
        format!("{v:.digits$}")
    } else {
        "n/a".to_string()
    }
}

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
                    ", peak at ({:.0}, {:.0}, {:.0}) mm",
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
        let leaders = patchwise::attribution::leaders(&lead);
        if !leaders.is_empty() && names.len() == lead.len() {
            let list: Vec<String> = leaders
                .iter()
                .take(3)
                .map(|&r| format!("{} {:.0} %", names[r], 100.0 * lead[r]))
                .collect();
            outln!("  leading region in the resamples: {}", list.join(", "));
        }
    }
}

/// summary.json contents.
pub fn summary_json(a: &Attribution, rows: &[Vec<RegionRow>]) -> serde_json::Value {
    let o = &a.outcome;
    let mut comps = Vec::new();
    #[allow(clippy::needless_range_loop)]
    for c in 0..a.k {
        let block = o.blocks.iter().find(|b| b.components.contains(&c));
        let comp = &o.attribution.components[c];
        let top: Vec<serde_json::Value> = rows[c]
            .iter()
            .take(5)
            .map(|r| {
                serde_json::json!({
                    "region": r.region, "share": r.share,
                    "share_low": if r.low.is_finite() { Some(r.low) } else { None },
                    "share_high": if r.high.is_finite() { Some(r.high) } else { None },
                    "selection_frequency": if r.frequency.is_finite() { Some(r.frequency) } else { None },
                    "lead_frequency": if r.lead.is_finite() { Some(r.lead) } else { None },
                })
            })
            .collect();
        let peak_region = if comp.peak_region >= 0 {
            a.dictionary.leadfield.as_ref().and_then(|l| {
                l.sources
                    .region_names
                    .get(comp.peak_region as usize)
                    .cloned()
            })
        } else {
            None
        };
        let flags = patchwise::pipeline::component_flags(o, c);
        comps.push(serde_json::json!({
            "index": c,
            "name": a.component_names[c],
            "explained_variance": o.fit.explained_variance[c],
            "poorly_explained": patchwise::pipeline::is_poorly_explained(&flags),
            "flags": flags,
            "lambda_at_range_end": block.map(|b| b.at_range_end),
            "stopped_on_budget": block.map(|b| b.stop_reason.on_budget()),
            "noise_sd_lambda_rule": block.and_then(|b| b.noise_sd.is_finite().then_some(b.noise_sd)),
            "lambda": block.map(|b| b.lambda),
            "lambda_max": block.map(|b| b.lambda_max),
            "lambda_ratio": block.map(|b| b.lambda / b.lambda_max),
            "duality_gap_relative": block.map(|b| b.duality_gap),
            "iterations": block.map(|b| b.iterations),
            "active_patches": block.map(|b| b.n_active_groups),
            "peak_mm": comp.peak_position.map(|p| p.map(|x| x * 1e3)),
            "peak_region": peak_region,
            "unassigned_share": comp.unassigned_share,
            "noise_sd": o.resample.as_ref().map(|r| r.noise_sd[c]),
            "top_regions": top,
        }));
    }
    serde_json::json!({
        "caution": CAUTION,
        "software": format!("patchwise {}", env!("CARGO_PKG_VERSION")),
        "channels": a.labels.len(),
        "components": comps,
        "patterns_source": a.patterns_source,
        "whitened": a.whitened,
        "joint_fit": o.blocks.len() == 1 && a.k > 1,
        "resamples": o.resample.as_ref().map_or(0, |r| r.n_resamples),
        "resampled_fits_stopped_on_budget": o.resample.as_ref().map_or(0, |r| r.budget_stops),
        "lambda_rule": a.lambda_rule,
        "noise_level": a.noise_level,
        "share_definition": SHARE_DEFINITION,
        "atoms": a.dictionary.n_atoms,
        "hashes": a.hashes.iter().map(|(k, v)| (k.clone(), serde_json::Value::String(v.clone()))).collect::<serde_json::Map<_, _>>(),
        "notes": a.notes,
        "job": a.job.iter().map(|(k, v)| (k.clone(), serde_json::Value::String(v.clone()))).collect::<serde_json::Map<_, _>>(),
        "units": {"patterns": "as given (V for patterns from a forward model)", "positions": "mm"},
    })
}

/// Write result.h5, regions.csv and summary.json into `out` atomically and
/// print the table. Returns the folder.
pub fn write_outputs(out: &Path, a: &Attribution) -> Result<PathBuf, CliError> {
    let stage = Staging::new(out).map_err(CliError::compute)?;
    let rows = write_files(&stage, a)?;
    let dir = stage.commit()?;
    print_table(a, &rows, 6);
    outln!();
    outln!(
        "results in {} (result.h5, regions.csv, summary.json)",
        dir.display()
    );
    outln!("caution: {CAUTION}");
    Ok(dir)
}

/// Write result.h5, regions.csv and summary.json into a staging folder
/// (committed by the caller); returns the region rows.
pub fn write_files(stage: &Staging, a: &Attribution) -> Result<Vec<Vec<RegionRow>>, CliError> {
    let rows = region_rows(a);
    let names = region_names(a);
    let notes = serde_json::to_string(&a.notes).unwrap_or_default();
    let record = ResultRecord {
        hashes: &a.hashes,
        labels: &a.labels,
        patterns: &a.patterns,
        k: a.k,
        patterns_source: &a.patterns_source,
        component_names: &a.component_names,
        region_names: &names,
        outcome: &a.outcome,
        notes_json: &notes,
        reconstruction: &a.reconstruction,
        leadfield: a.dictionary.leadfield.as_ref(),
    };
    write_result(&stage.file("result.h5"), &record).map_err(CliError::compute)?;
    let header = [
        "component",
        "region",
        "share",
        "share_low",
        "share_high",
        "selection_frequency",
        "peak_x_mm",
        "peak_y_mm",
        "peak_z_mm",
        "component_name",
    ];
    let csv: Vec<Vec<String>> = rows
        .iter()
        .flatten()
        .map(|r| {
            vec![
                r.component.to_string(),
                r.region.clone(),
                format!("{:.6}", r.share),
                fmt(r.low, 6),
                fmt(r.high, 6),
                fmt(r.frequency, 4),
                fmt(r.peak_mm[0], 2),
                fmt(r.peak_mm[1], 2),
                fmt(r.peak_mm[2], 2),
                a.component_names
                    .get(r.component)
                    .cloned()
                    .unwrap_or_default(),
            ]
        })
        .collect();
    write_table(&stage.file("regions.csv"), Delimiter::Comma, &header, &csv)
        .map_err(CliError::compute)?;
    let summary = serde_json::to_string_pretty(&summary_json(a, &rows)).unwrap_or_default();
    patchwise::io::atomic::write_atomic(&stage.file("summary.json"), summary.as_bytes())
        .map_err(|e| CliError::compute(anyhow::anyhow!("writing summary.json: {e}")))?;
    Ok(rows)
}
