//! The file layouts of an attribution (design.md): result.h5 through
//! `io::result_file`, regions.csv (one row per component and region, by
//! decreasing share; shares unitless, peaks in mm), summary.json, and with
//! a decoder given as weights filter_gain.csv (`super::gain_outputs`).

use std::path::Path;

use super::attribute::Attribution;
use super::error::{JobError, JobResult};
use crate::io::result_file::{write_result, ResultRecord, CAUTION};
use crate::io::table::{write_table, Delimiter};

/// What a share is, for summary.json (the README and the report say the same).
pub const SHARE_DEFINITION: &str = "share of a region = the projection of its patches' part of the fitted pattern onto the whole fitted pattern, <D_g x_g, D x> / ||D x||^2, spread over regions by each patch's source amplitude; shares sum to 1 with the unassigned share; a negative share means the region's patches cancel part of the fitted pattern";

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
pub fn region_names(a: &Attribution) -> Vec<String> {
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

/// `v` with `digits` decimals, or `n/a` when not finite.
pub fn fmt(v: f64, digits: usize) -> String {
    crate::io::table::format_fixed(v, digits, "n/a")
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
        let flags = crate::pipeline::component_flags(o, c);
        comps.push(serde_json::json!({
            "index": c,
            "name": a.component_names[c],
            "explained_variance": o.fit.explained_variance[c],
            "poorly_explained": crate::pipeline::is_poorly_explained(&flags),
            "flags": flags,
            "lambda_at_range_end": block.map(|b| b.at_range_end),
            "stopped_on_budget": block.map(|b| b.stop_reason.on_budget()),
            "noise_sd_lambda_rule": block.and_then(|b| b.noise_sd.is_finite().then_some(b.noise_sd)),
            "lambda": block.map(|b| b.lambda),
            "lambda_max": block.map(|b| b.lambda_max),
            "lambda_ratio": block.map(|b| b.lambda / b.lambda_max),
            "duality_gap_relative": block.map(|b| b.duality_gap),
            "iterations": block.map(|b| b.iterations),
            "dictionary_passes": block.map(|b| b.dictionary_passes),
            "active_patches": block.map(|b| b.n_active_groups),
            "peak_mm": comp.peak_position.map(|p| p.map(|x| x * 1e3)),
            "peak_region": peak_region,
            "unassigned_share": comp.unassigned_share,
            "noise_sd": o.resample.as_ref().map(|r| r.noise_sd[c]),
            "leading_region": crate::attribution::leading_region(&comp.region_share)
                .and_then(|r| region_names(a).get(r).cloned()),
            "leader_probability": o.resample.as_ref().and_then(|r| {
                let p = r.leader_probability[c];
                p.is_finite().then_some(p)
            }),
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
        "resampling_dictionary_passes": o.resample.as_ref().map_or(0, |r| r.dictionary_passes),
        "resampled_fit_dictionary_passes": o.resample.as_ref().map(|r| r.fit_passes),
        "lambda_rule": a.lambda_rule,
        "noise_level": a.noise_level,
        "share_definition": SHARE_DEFINITION,
        "atoms": a.dictionary.n_atoms,
        "hashes": a.hashes.iter().map(|(k, v)| (k.clone(), serde_json::Value::String(v.clone()))).collect::<serde_json::Map<_, _>>(),
        "notes": a.notes,
        "job": a.params.describe().into_iter().map(|(k, v)| (k, serde_json::Value::String(v))).collect::<serde_json::Map<_, _>>(),
        "params": serde_json::to_value(&a.params).unwrap_or(serde_json::Value::Null),
        "units": {"patterns": "as given (V for patterns from a forward model)", "positions": "mm"},
        "filter_gain": super::gain_outputs::summary_block(a),
    })
}

/// Write result.h5, regions.csv and summary.json into `dir` (a staging
/// folder the caller commits by one rename); returns the region rows.
pub fn write_attribution_files(
    dir: &Path,
    a: &Attribution,
) -> Result<Vec<Vec<RegionRow>>, JobError> {
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
        filter_gain: a.filter_gain.as_ref(),
        time: a.time.as_ref(),
    };
    write_result(&dir.join("result.h5"), &record).compute("writing the result")?;
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
    write_table(&dir.join("regions.csv"), Delimiter::Comma, &header, &csv)
        .compute("writing the result")?;
    super::gain_outputs::write_gain_table(dir, a)?;
    super::time_outputs::write_time_files(dir, a, &names)?;
    let mut summary = summary_json(a, &rows);
    if let (Some(block), Some(map)) = (
        super::time_outputs::summary_block(a, &names),
        summary.as_object_mut(),
    ) {
        map.insert("time_resolved".to_string(), block);
    }
    let summary = serde_json::to_string_pretty(&summary).unwrap_or_default();
    crate::io::atomic::write_atomic(&dir.join("summary.json"), summary.as_bytes())
        .compute("writing summary.json")?;
    Ok(rows)
}
