//! The report's "Equivalent dipoles" section: the single-dipole (or
//! symmetric-pair) fit of each component beside the patch attribution, with
//! the distance between the two answers.

use super::report_html::{escape, fixed, percent, scientific, Html};
use crate::io::result_file::{ResultDipoles, ResultFile};

/// Append the section when the result holds `/dipole`.
pub fn dipole_section(h: &mut Html, result: &ResultFile) {
    let Some(d) = &result.dipoles else {
        return;
    };
    h.raw("<section id=\"dipoles\">\n");
    h.element("h2", "", "Equivalent dipoles");
    // Nine columns: compact, headers that wrap, and a scroll box as the
    // last resort on a narrow screen, so the page itself never scrolls.
    h.raw("<div class=\"table-scroll\"><table class=\"compact\">\n");
    h.head_row(&[
        ("component", ""),
        ("#", "num"),
        ("x, y, z (mm)", "num"),
        ("|q| (A\u{00b7}m)", "num"),
        ("95\u{2009}% radius (mm)", "num"),
        ("nearest region", ""),
        ("to cortex (mm)", "num"),
        ("to patch peak (mm)", "num"),
        ("residual var.", "num"),
    ]);
    h.raw("<tbody>\n");
    for row in 0..d.component.len() {
        cells(h, result, d, row);
    }
    h.raw("</tbody></table></div>\n");
    let model = if d.model == "symmetric-pair" {
        "a pair of dipoles mirrored across the midline"
    } else {
        "one free dipole"
    };
    h.element(
        "p",
        "note",
        &format!(
            "Each component's pattern fitted by {model} in the same head (grid search, then \
             Levenberg\u{2013}Marquardt inside the inner sphere). Residual variance \
             \u{2016}y \u{2212} \u{0177}\u{2016}\u{00b2} / \u{2016}y\u{2016}\u{00b2} on the \
             average-referenced pattern: the part of the pattern the dipole model leaves \
             unexplained (the terminal compares it with --residual-cut, {} by default, a \
             convention, not a test). The distance to the patch peak compares this \
             answer with the patch attribution above: a large distance with a low residual \
             variance points to an extended or bilateral source that one dipole summarises \
             poorly. #: the dipole of the component (0, or 0 and 1 for a pair); x, y, z in \
             head coordinates (+x right ear, +y nose, +z up).",
            percent(crate::dipole::RESIDUAL_CUT, 0)
        ),
    );
    h.raw("</section>\n");
}

fn cells(h: &mut Html, result: &ResultFile, d: &ResultDipoles, row: usize) {
    let c = d.component[row] as usize;
    let name = result
        .component_names
        .get(c)
        .cloned()
        .unwrap_or_else(|| format!("component {c}"));
    let p = d.positions_mm[row];
    let q = d.moments[row];
    let q_norm = (q[0] * q[0] + q[1] * q[1] + q[2] * q[2]).sqrt();
    let peak = d
        .distance_to_patch_peak_mm
        .as_ref()
        .map_or(f64::NAN, |v| v[row]);
    let rv = d.residual_variance.get(c).copied().unwrap_or(f64::NAN);
    h.row(
        &[
            (escape(&name), ""),
            (d.dipole[row].to_string(), "num"),
            (
                format!(
                    "({}, {}, {})",
                    fixed(p[0], 1),
                    fixed(p[1], 1),
                    fixed(p[2], 1)
                ),
                "num",
            ),
            (scientific(q_norm, 2), "num"),
            (fixed(d.ci95_radius_mm[row], 1), "num"),
            (escape(&d.nearest_region[row]), ""),
            (fixed(d.distance_to_cortex_mm[row], 1), "num"),
            (fixed(peak, 1), "num"),
            (percent(rv, 1), "num"),
        ],
        true,
    );
}
