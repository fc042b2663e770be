//! The report of a decoder with a time axis (docs/time_resolved.md): a
//! "Region × time" section per component (the leading regions as rows, time
//! as columns, shares on the diverging map since a share is signed, with a
//! colour bar, and the time ranges as a table), and which (component, time)
//! columns get a section of their own: those at the leading regions' peak
//! times, so the cortex view is drawn at each peak time instead of at every
//! time point.

use super::charts::{heatmap_svg, HeatmapOptions, HeatmapScale};
use super::page::ReportError;
use super::report_html::{fixed, Html};
use crate::io::result_file::ResultFile;

/// Per column, whether it gets a section: every column without a time
/// axis; with one, the columns at the leading regions' peak times (the
/// first column of a component without leading regions).
pub fn shown_columns(r: &ResultFile) -> Vec<bool> {
    let Some(t) = &r.time else {
        return vec![true; r.k];
    };
    let n_t = t.times.len();
    let mut shown = vec![false; r.k];
    for c in 0..t.n_components {
        let mut any = false;
        for g in t.ranges.iter().filter(|g| g.component == c) {
            if let Some(i) = t.times.iter().position(|&x| x == g.peak) {
                shown[c * n_t + i] = true;
                any = true;
            }
        }
        if !any && c * n_t < r.k {
            shown[c * n_t] = true;
        }
    }
    shown
}

/// The "Region × time" section (nothing without a time axis).
pub fn time_section(h: &mut Html, r: &ResultFile) -> Result<(), ReportError> {
    let Some(t) = &r.time else {
        return Ok(());
    };
    let n_t = t.times.len();
    let names = &r.attribution.region_names;
    h.raw("<section id=\"time\">\n");
    h.element("h2", "", "Region \u{00d7} time");
    for c in 0..t.n_components {
        let ranges: Vec<_> = t.ranges.iter().filter(|g| g.component == c).collect();
        let name = r
            .component_names
            .get(c * n_t)
            .map(|n| {
                n.rsplit_once(" @ ")
                    .map_or(n.as_str(), |(a, _)| a)
                    .to_string()
            })
            .unwrap_or_default();
        h.element("h3", "", &name);
        if ranges.is_empty() {
            h.element("p", "note", "no region holds a share over time");
            continue;
        }
        let mut values = Vec::with_capacity(ranges.len() * n_t);
        for g in &ranges {
            let at = (c * t.n_regions + g.region) * n_t;
            values.extend_from_slice(&t.share[at..at + n_t]);
        }
        let limit = values.iter().fold(1.0_f64, |m, v| m.max(v.abs()));
        let options = HeatmapOptions {
            title: format!("Share of the leading regions over time ({name})"),
            unit: "share".to_string(),
            row_labels: ranges
                .iter()
                .map(|g| names.get(g.region).cloned().unwrap_or_default())
                .collect(),
            column_labels: t
                .times
                .iter()
                .map(|x| format!("{:.0} ms", x * 1e3))
                .collect(),
            scale: Some(HeatmapScale::Diverging { limit }),
            cell_px: None,
        };
        let svg = heatmap_svg(&values, ranges.len(), n_t, &options)
            .map_err(|e| {
                ReportError::figure(&r.path, format!("the region x time map of {name}"), e)
            })?
            .svg;
        h.raw("<figure>").raw(&svg).raw("</figure>\n");
        h.raw("<table>\n");
        h.head_row(&[
            ("region", ""),
            ("onset (ms)", "num"),
            ("peak (ms)", "num"),
            ("offset (ms)", "num"),
            ("largest share", "num"),
            ("held in resamples", "num"),
        ]);
        h.raw("<tbody>\n");
        let ms = |v: f64, (lo, hi): (f64, f64)| {
            if lo.is_finite() {
                format!(
                    "{} [{}, {}]",
                    fixed(v * 1e3, 0),
                    fixed(lo * 1e3, 0),
                    fixed(hi * 1e3, 0)
                )
            } else {
                fixed(v * 1e3, 0)
            }
        };
        for g in &ranges {
            h.raw("<tr><td>")
                .text(names.get(g.region).map_or("", String::as_str))
                .raw("</td><td class=\"num\">")
                .text(&ms(g.onset, g.onset_interval))
                .raw("</td><td class=\"num\">")
                .text(&ms(g.peak, g.peak_interval))
                .raw("</td><td class=\"num\">")
                .text(&ms(g.offset, g.offset_interval))
                .raw("</td><td class=\"num\">")
                .text(&fixed(g.peak_share, 3))
                .raw("</td><td class=\"num\">")
                .text(&if g.held_frequency.is_finite() {
                    format!("{:.0} %", 100.0 * g.held_frequency)
                } else {
                    "n/a".to_string()
                })
                .raw("</td></tr>\n");
        }
        h.raw("</tbody></table>\n");
    }
    h.element(
        "p",
        "note",
        "Rows: the regions that lead at some time (largest share at least 20 %, and at the peak a \
         part of the fitted pattern at least as large as the noise of that time point). Onset and \
         offset: the run of time points around \
         the peak where the region holds at least half its largest share; in brackets the 95 % \
         range over the resamples. The sections below show the cortex at each leading region's \
         peak time.",
    );
    h.raw("</section>\n");
    Ok(())
}
