//! The filter-gain pictures of one component for the report: the gain of
//! the decoder's filter on the same cortex views as the pattern's source
//! map, with one sentence on what the difference means and the regions
//! where the filter also listens; or, without a gain map, why there is none.

use super::colormap::sequential;
use super::cortex_panel::{
    cortex_panel, gain_options, sequential_painted, GAIN_THRESHOLD, MARKS_NOTE, VIEW_DISPLAY,
};
use super::page::ReportError;
use super::report_figures::{relative_colour_bar, Figure, FigureGroup};
use crate::attribution::{gain_agreement, FilterGain, GainAgreement};
use crate::io::result_file::ResultFile;

/// Title of the group.
const TITLE: &str = "Where the filter listens: gain on the cortex";
/// What the difference between the two maps means, in one sentence.
pub const DIFFERENCE: &str =
    "The source map shows where the decoded signal comes from (the pattern); \
     the gain shows where a source would reach the filter's output, including places the filter \
     uses only to cancel noise, so regions of high gain and little share are what the filter \
     also listens to.";

/// The agreement of component `c`, when the result has a gain map.
pub fn component_agreement(r: &ResultFile, c: usize) -> Option<GainAgreement> {
    let g = r.filter_gain.as_ref()?;
    let n_reg = r.attribution.region_names.len();
    if g.region_mean.len() != n_reg * r.k || r.attribution.share.len() != n_reg * r.k {
        return None;
    }
    let gain = FilterGain::column(&g.region_mean, r.k, c);
    let share = FilterGain::column(&r.attribution.share, r.k, c);
    Some(gain_agreement(&gain, &share))
}

fn region_list(r: &ResultFile, regions: &[usize]) -> String {
    regions
        .iter()
        .filter_map(|&i| r.attribution.region_names.get(i).cloned())
        .collect::<Vec<_>>()
        .join(", ")
}

/// The words under the gain views of component `c`.
fn gain_note(r: &ResultFile, c: usize, largest: f64) -> String {
    let mut note = format!(
        "Gain |w\u{1d40} l| of the filter at each source relative to the largest, {largest:.3e} \
         (filter output per A\u{00b7}m); values below {:.0} % of the largest are left grey. {DIFFERENCE} {MARKS_NOTE}",
        100.0 * GAIN_THRESHOLD
    );
    if let Some(a) = component_agreement(r, c) {
        if !a.top_gain_regions.is_empty() {
            note.push_str(&format!(
                " Highest mean gain: {}.",
                region_list(r, &a.top_gain_regions)
            ));
        }
        if let Some(rho) = a.rank_correlation {
            note.push_str(&format!(
                " Rank correlation of region gain with region share: {rho:.2}."
            ));
        }
        if a.listens_elsewhere {
            note.push_str(&format!(
                " The filter also listens to {}, which carry little of the pattern.",
                region_list(r, &a.also_listens_to)
            ));
        }
    }
    note
}

/// Component `c`'s filter gain, one value per source (filter output per
/// A·m), and its largest value; `None` when the result holds no gain map or
/// no source mesh it fits; an error when a gain is not finite.
pub(crate) fn gain_map(r: &ResultFile, c: usize) -> Result<Option<(Vec<f64>, f64)>, ReportError> {
    let (Some(gain), Some(sources)) = (&r.filter_gain, &r.sources) else {
        return Ok(None);
    };
    if sources.triangles.is_empty() || gain.source.len() != sources.len() * r.k {
        return Ok(None);
    }
    let values = FilterGain::column(&gain.source, r.k, c);
    let largest = values.iter().fold(0.0f64, |m, &v| m.max(v));
    if !largest.is_finite() {
        return Err(ReportError::figure(
            &r.path,
            format!("the gain views of component {c}"),
            "the gain holds a value that is not finite",
        ));
    }
    Ok(Some((values, largest)))
}

/// The gain group of component `c`: seven cortex views and a colour bar, or
/// a group without pictures whose note says why there is no gain map.
pub fn gain_views(r: &ResultFile, c: usize) -> Result<Option<FigureGroup>, ReportError> {
    let without = |note: &str| {
        Ok(Some(FigureGroup {
            title: TITLE.to_string(),
            figures: Vec::new(),
            note: note.to_string(),
            layout: "row",
        }))
    };
    if r.filter_gain.is_none() {
        return if r.patterns_source == "patterns" {
            without(
                "The decoder was given as patterns: the gain of its filters needs the filters \
                 themselves (give the weights and the data covariance).",
            )
        } else {
            without("No gain map: the lead field was not at hand (a dictionary without /leadfield/gain).")
        };
    }
    let Some((values, largest)) = gain_map(r, c)? else {
        return Ok(None);
    };
    let Some(sources) = &r.sources else {
        return Ok(None);
    };
    if largest == 0.0 {
        return without("The filter's gain is zero everywhere (its weights are zero).");
    }
    let mesh = sources.mesh();
    let options = gain_options(&sources.region, largest);
    let what = || format!("the gain views of component {c}");
    let panel = cortex_panel(&mesh, &values, &options, sequential_painted)
        .map_err(|e| ReportError::figure(&r.path, what(), e))?;
    let mut figures: Vec<Figure> = panel
        .into_iter()
        .map(|v| Figure {
            markup: v.markup,
            caption: v.view.caption().to_string(),
        })
        .collect();
    figures.push(Figure {
        markup: relative_colour_bar(VIEW_DISPLAY.1, 0.0, &sequential),
        caption: String::new(),
    });
    Ok(Some(FigureGroup {
        title: TITLE.to_string(),
        figures,
        note: gain_note(r, c, largest),
        layout: "cortex",
    }))
}
