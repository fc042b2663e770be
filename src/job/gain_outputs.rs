//! The outputs of the filters' own reading beside the patterns, the
//! cortical gain of a decoder given as weights (computed by
//! `super::prepare::decoder_gain`): `filter_gain.csv` (one row per component and
//! region, by decreasing mean gain), the `filter_gain` block of
//! summary.json and the terminal line per component. `/filter_gain/*` of
//! result.h5 is written by `io::result_file`.
//!
//! Where it cannot be computed (patterns only, or a dictionary without a
//! lead field) the reason is kept in words; the run never fails for it.

use std::path::Path;

use super::attribute::Attribution;
use super::error::{JobError, JobResult};
use super::prepare::NEEDS_FILTERS;
use crate::attribution::{gain_agreement, FilterGain, GainAgreement};
use crate::io::table::{write_table, Delimiter};

/// What the gain is, for summary.json (the README and the report say the same).
pub const GAIN_DEFINITION: &str = "gain of filter c at source j = |w_c^T l_j| (free orientation: the 2-norm over x, y, z) with the weights and the lead field in the fit's reference: the filter's output per A*m of dipole moment at the source when the weights act on data in volts; normalised gain = gain / ||l_j||; region gain = area-weighted mean and maximum over the region's sources";

/// The agreement of component `c`'s region gain with its region shares.
pub fn agreement(a: &Attribution, gain: &FilterGain, c: usize) -> GainAgreement {
    let g = FilterGain::column(&gain.region_mean, gain.k, c);
    let share = &a.outcome.attribution.components[c].region_share;
    gain_agreement(&g, share)
}

/// The region names of the gain's rows: the source space's (those of
/// `/attribution/region_names` whenever the attribution has a region table).
fn gain_region_names(a: &Attribution) -> Vec<String> {
    a.dictionary
        .leadfield
        .as_ref()
        .map(|l| l.sources.region_names.clone())
        .unwrap_or_default()
}

fn names(a: &Attribution, regions: &[usize]) -> Vec<String> {
    let all = gain_region_names(a);
    regions
        .iter()
        .filter_map(|&r| all.get(r).cloned())
        .collect()
}

/// The terminal lines of component `c`: the regions of highest gain and,
/// when flagged, where the filter also listens; or why there is no gain.
pub fn gain_lines(a: &Attribution, c: usize) -> Vec<String> {
    let Some(gain) = &a.filter_gain else {
        // Weights without a lead field: say so once; patterns only are the
        // usual case and need no line (the report says the gain needs filters).
        return match &a.filter_gain_missing {
            Some(why) if c == 0 && why != NEEDS_FILTERS => vec![format!("  {why}")],
            _ => Vec::new(),
        };
    };
    let ag = agreement(a, gain, c);
    if ag.top_gain_regions.is_empty() {
        return vec!["  filter gain: zero everywhere (the weights of this component are zero or see no source)".to_string()];
    }
    let rho = ag
        .rank_correlation
        .map_or("n/a".to_string(), |r| format!("{r:.2}"));
    let mut lines = vec![format!(
        "  highest filter gain: {} (rank correlation with the shares {rho})",
        names(a, &ag.top_gain_regions).join(", ")
    )];
    if ag.listens_elsewhere {
        lines.push(format!(
            "  ! the filter also listens to {}, which carry little of the pattern",
            names(a, &ag.also_listens_to).join(", ")
        ));
    }
    lines
}

/// The `filter_gain` block of summary.json.
pub fn summary_block(a: &Attribution) -> serde_json::Value {
    let Some(gain) = &a.filter_gain else {
        return serde_json::json!({
            "computed": false,
            "reason": a.filter_gain_missing,
        });
    };
    let comps: Vec<serde_json::Value> = (0..a.k)
        .map(|c| {
            let ag = agreement(a, gain, c);
            serde_json::json!({
                "index": c,
                "name": a.component_names[c],
                "top_gain_regions": names(a, &ag.top_gain_regions),
                "rank_correlation_gain_share": ag.rank_correlation,
                "listens_elsewhere": ag.listens_elsewhere,
                "also_listens_to": names(a, &ag.also_listens_to),
            })
        })
        .collect();
    serde_json::json!({
        "computed": true,
        "definition": GAIN_DEFINITION,
        "free_orientation": gain.free_orientation,
        "units": {"gain": "filter output per A*m", "normalised_gain": "filter output per V (gain / ||l_j||, l_j in V/(A*m))"},
        "components": comps,
    })
}

/// Write `filter_gain.csv` into `dir` (nothing without a gain map): one row
/// per component and region by decreasing mean gain; `rank` from 1; the
/// component's name last, as in regions.csv.
pub fn write_gain_table(dir: &Path, a: &Attribution) -> Result<(), JobError> {
    let Some(gain) = &a.filter_gain else {
        return Ok(());
    };
    let all = gain_region_names(a);
    let k = gain.k;
    let mut rows = Vec::new();
    for c in 0..k {
        for (rank, r) in gain.regions_by_gain(c).into_iter().enumerate() {
            let at = r * k + c;
            rows.push(vec![
                c.to_string(),
                all.get(r).cloned().unwrap_or_default(),
                sci(gain.region_mean[at]),
                sci(gain.region_max[at]),
                sci(gain.region_normalised_mean[at]),
                (rank + 1).to_string(),
                a.component_names.get(c).cloned().unwrap_or_default(),
            ]);
        }
    }
    let header = [
        "component",
        "region",
        "mean_gain",
        "max_gain",
        "normalised_mean_gain",
        "rank",
        "component_name",
    ];
    write_table(
        &dir.join("filter_gain.csv"),
        Delimiter::Comma,
        &header,
        &rows,
    )
    .compute("writing filter_gain.csv")
}

/// Full precision in scientific notation (gains span many orders), `n/a`
/// when not finite.
fn sci(v: f64) -> String {
    if v.is_finite() {
        format!("{v:.9e}")
    } else {
        "n/a".to_string()
    }
}
