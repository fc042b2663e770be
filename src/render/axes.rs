//! The shared look of the vector figures: colours, type sizes, a text-width estimate,
//! linear and logarithmic scales, axes with ticks, a title and a vertical colour bar.

use super::svg::{num, Attrs, Svg};
use super::ticks::{nice_ticks, Ticks};

/// Main text colour.
pub const INK: &str = "#1f2328";
/// Secondary text and axis colour.
pub const MUTED: &str = "#5b6470";
/// Grid lines.
pub const GRID: &str = "#e4e7eb";
/// The accent for bars and the first line of a chart (a calm blue).
pub const ACCENT: &str = "#2f6f9f";
/// The second line of a chart (a warm ochre, distinct from the accent in hue and lightness).
pub const ACCENT_2: &str = "#c0792b";
/// Tick labels and axis labels (px).
pub const FONT_SIZE: f64 = 12.0;
/// Titles (px).
pub const TITLE_SIZE: f64 = 15.0;

/// Estimated width (px) of `text` at `size` px in a sans-serif face: 0.6 em per
/// character, a little above the average advance of DejaVu Sans so labels do not
/// collide (common practice, no source).
pub fn text_width(text: &str, size: f64) -> f64 {
    text.chars().count() as f64 * 0.6 * size
}

/// `text` cut to at most `max_chars` characters, with an ellipsis when cut.
pub fn shorten(text: &str, max_chars: usize) -> String {
    if text.chars().count() <= max_chars {
        text.to_string()
    } else {
        let mut s: String = text.chars().take(max_chars.saturating_sub(1)).collect();
        s.push('…');
        s
    }
}

/// A map from data values to pixels along one axis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Scale {
    /// Data value at `start_px`.
    pub lo: f64,
    /// Data value at `end_px`.
    pub hi: f64,
    /// Pixel of `lo`.
    pub start_px: f64,
    /// Pixel of `hi`.
    pub end_px: f64,
    /// Logarithmic (base 10) instead of linear.
    pub log: bool,
}

impl Scale {
    /// The pixel of `value` (values ≤ 0 on a log scale go to the start).
    pub fn px(&self, value: f64) -> f64 {
        let (a, b, v) = if self.log {
            let floor = f64::MIN_POSITIVE;
            (
                self.lo.max(floor).log10(),
                self.hi.max(floor).log10(),
                value.max(floor).log10(),
            )
        } else {
            (self.lo, self.hi, value)
        };
        if b == a {
            return self.start_px;
        }
        self.start_px + (v - a) / (b - a) * (self.end_px - self.start_px)
    }
}

/// The chart title, left-aligned at (x, baseline y).
pub fn title(svg: &mut Svg, x: f64, y: f64, text: &str) {
    svg.text(
        x,
        y,
        text,
        &Attrs::new()
            .fill(INK)
            .set("font-size", num(TITLE_SIZE))
            .set("font-weight", "600"),
    );
}

/// Tick labels and short tick marks under a horizontal axis at `y`, grid lines up to
/// `grid_top`, and the axis label centred below.
pub fn bottom_axis(
    svg: &mut Svg,
    scale: &Scale,
    y: f64,
    grid_top: f64,
    ticks: &[(f64, String)],
    label: &str,
) {
    for (value, text) in ticks {
        let x = scale.px(*value);
        svg.line(x, grid_top, x, y, &Attrs::new().stroke(GRID, 1.0));
        svg.line(x, y, x, y + 4.0, &Attrs::new().stroke(MUTED, 1.0));
        svg.text(
            x,
            y + 17.0,
            text,
            &Attrs::new().fill(MUTED).set("text-anchor", "middle"),
        );
    }
    svg.line(
        scale.start_px,
        y,
        scale.end_px,
        y,
        &Attrs::new().stroke(MUTED, 1.0),
    );
    svg.text(
        (scale.start_px + scale.end_px) / 2.0,
        y + 36.0,
        label,
        &Attrs::new().fill(INK).set("text-anchor", "middle"),
    );
}

/// Tick labels at a vertical axis at `x` (on the left when `left`, else on the right),
/// optional grid lines across to `grid_to`, and the axis label rotated along the axis,
/// `label_offset` px away from it.
#[allow(clippy::too_many_arguments)]
pub fn side_axis(
    svg: &mut Svg,
    scale: &Scale,
    x: f64,
    left: bool,
    grid_to: Option<f64>,
    ticks: &[(f64, String)],
    label: &str,
    label_offset: f64,
    colour: &str,
) {
    let sign = if left { -1.0 } else { 1.0 };
    for (value, text) in ticks {
        let y = scale.px(*value);
        if let Some(x2) = grid_to {
            svg.line(x, y, x2, y, &Attrs::new().stroke(GRID, 1.0));
        }
        svg.line(x, y, x + 4.0 * sign, y, &Attrs::new().stroke(MUTED, 1.0));
        svg.text(
            x + 7.0 * sign,
            y + 4.0,
            text,
            &Attrs::new()
                .fill(MUTED)
                .set("text-anchor", if left { "end" } else { "start" }),
        );
    }
    svg.line(
        x,
        scale.start_px,
        x,
        scale.end_px,
        &Attrs::new().stroke(MUTED, 1.0),
    );
    let lx = x + label_offset * sign;
    let ly = (scale.start_px + scale.end_px) / 2.0;
    svg.text(
        lx,
        ly,
        label,
        &Attrs::new().fill(colour).set("text-anchor", "middle").set(
            "transform",
            format!(
                "rotate({} {} {})",
                if left { -90 } else { 90 },
                num(lx),
                num(ly)
            ),
        ),
    );
}

/// Linear ticks paired with their labels.
pub fn labelled(ticks: &Ticks) -> Vec<(f64, String)> {
    ticks.values.iter().map(|&v| (v, ticks.label(v))).collect()
}

/// `#rrggbb` of an sRGB byte triple.
pub fn hex(rgb: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", rgb[0], rgb[1], rgb[2])
}

/// A vertical colour bar: `map(t)` for t from 0 (bottom, value `lo`) to 1 (top, `hi`),
/// drawn as 96 abutting slices in a thin frame, with nice-number ticks on the right and
/// `unit` above. Returns the width used right of `x` (bar, ticks and labels).
#[allow(clippy::too_many_arguments)]
pub fn colour_bar(
    svg: &mut Svg,
    x: f64,
    y: f64,
    width: f64,
    height: f64,
    lo: f64,
    hi: f64,
    map: &dyn Fn(f64) -> [u8; 3],
    unit: &str,
) -> f64 {
    const SLICES: usize = 96;
    let slice = height / SLICES as f64;
    for i in 0..SLICES {
        let t = (i as f64 + 0.5) / SLICES as f64;
        let top = y + height - (i + 1) as f64 * slice;
        // Each slice overlaps the next by half a pixel so no seam shows when scaled.
        svg.rect(
            x,
            top - 0.5,
            width,
            slice + 0.5,
            &Attrs::new().fill(&hex(map(t))),
        );
    }
    svg.rect(x, y, width, height, &Attrs::new().stroke(MUTED, 0.75));
    let scale = Scale {
        lo,
        hi,
        start_px: y + height,
        end_px: y,
        log: false,
    };
    let mut widest: f64 = 0.0;
    if let Some(ticks) = nice_ticks(lo, hi, 5) {
        for (value, text) in labelled(&ticks) {
            // Loose ticks can fall outside the bar; only those on it are drawn.
            if value < lo.min(hi) - 1e-12 * (hi - lo).abs()
                || value > lo.max(hi) + 1e-12 * (hi - lo).abs()
            {
                continue;
            }
            let ty = scale.px(value);
            svg.line(
                x + width,
                ty,
                x + width + 4.0,
                ty,
                &Attrs::new().stroke(MUTED, 1.0),
            );
            svg.text(x + width + 7.0, ty + 4.0, &text, &Attrs::new().fill(MUTED));
            widest = widest.max(text_width(&text, FONT_SIZE));
        }
    }
    svg.text(
        x,
        y - 8.0,
        unit,
        &Attrs::new().fill(INK).set("font-size", num(FONT_SIZE)),
    );
    (width + 7.0 + widest).max(text_width(unit, FONT_SIZE))
}
