//! The regularisation-path chart: explained variance and active patches
//! against λ / λ_max on a logarithmic axis.

use super::{check_side, MARGIN, TITLE_BASELINE};
use crate::render::axes::{
    bottom_axis, labelled, side_axis, text_width, title, Scale, ACCENT, ACCENT_2, FONT_SIZE, INK,
};
use crate::render::figure_error::FigureError;
use crate::render::svg::{Attrs, Figure, Svg};
use crate::render::ticks::{log_label, log_ticks, nice_ticks};

/// One point of the regularisation path.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PathSample {
    /// λ / λ_max, in (0, 1].
    pub ratio: f64,
    /// Explained variance of the fit (fraction, at most 1).
    pub explained_variance: f64,
    /// Number of patches (groups) with non-zero coefficients.
    pub active_patches: usize,
}

/// Options of [`regularisation_path_svg`].
#[derive(Debug, Clone, PartialEq)]
pub struct PathChartOptions {
    /// Figure width (px).
    pub width: u32,
    /// Figure height (px).
    pub height: u32,
    /// Title above the chart.
    pub title: String,
    /// The λ / λ_max chosen for the fit, marked by a dashed line.
    pub chosen_ratio: Option<f64>,
}

impl Default for PathChartOptions {
    fn default() -> Self {
        Self {
            width: 640,
            height: 360,
            title: "Regularisation path".to_string(),
            chosen_ratio: None,
        }
    }
}

/// The regularisation path: λ / λ_max on a logarithmic x axis, explained variance (%)
/// on the left axis (line with dots, `class="explained"`), active patches on the right
/// axis (line with squares, `class="active"`), the chosen λ as a dashed vertical line.
/// Samples may come in any order; they are drawn by increasing ratio.
///
/// Errors: no samples, a ratio not finite and positive, a non-finite explained variance,
/// a chosen ratio not finite and positive, a size outside 160–8000 px.
pub fn regularisation_path_svg(
    samples: &[PathSample],
    options: &PathChartOptions,
) -> Result<Figure, FigureError> {
    check_side("width", options.width)?;
    check_side("height", options.height)?;
    if samples.is_empty() {
        return Err(FigureError::Empty {
            field: "samples",
            required: 1,
        });
    }
    for (index, s) in samples.iter().enumerate() {
        if !(s.ratio.is_finite() && s.ratio > 0.0) {
            return Err(FigureError::OutOfRange {
                field: "samples.ratio",
                index,
                value: s.ratio,
                expected: "a finite ratio > 0",
            });
        }
        if !s.explained_variance.is_finite() {
            return Err(FigureError::NotFinite {
                field: "samples.explained_variance",
                index,
                value: s.explained_variance,
            });
        }
    }
    if let Some(r) = options.chosen_ratio {
        if !(r.is_finite() && r > 0.0) {
            return Err(FigureError::BadOption {
                field: "chosen_ratio",
                value: r.to_string(),
                expected: "a finite ratio > 0",
            });
        }
    }
    let mut sorted = samples.to_vec();
    sorted.sort_by(|a, b| a.ratio.total_cmp(&b.ratio));

    let mut r_lo = sorted[0].ratio;
    let mut r_hi = sorted[sorted.len() - 1].ratio;
    if let Some(r) = options.chosen_ratio {
        r_lo = r_lo.min(r);
        r_hi = r_hi.max(r);
    }
    let x_ticks = log_ticks(r_lo, r_hi).unwrap_or_else(|| vec![r_lo, r_hi]);
    let ev_min = sorted
        .iter()
        .map(|s| s.explained_variance)
        .fold(0.0, f64::min);
    // Rounding leaves the empty fit at λ_max a hair below 0; that must not
    // stretch the axis down by a whole tick step.
    let ev_min = if ev_min > -1e-6 { 0.0 } else { ev_min };
    let ev_max = sorted
        .iter()
        .map(|s| s.explained_variance)
        .fold(ev_min, f64::max);
    let ev_ticks = nice_ticks(
        ev_min * 100.0,
        (ev_max * 100.0).max(ev_min * 100.0 + 1.0),
        5,
    )
    .ok_or(FigureError::Empty {
        field: "samples",
        required: 1,
    })?;
    let active_max = sorted.iter().map(|s| s.active_patches).max().unwrap_or(0);
    let active_ticks: Vec<(f64, String)> = if active_max < 4 {
        (0..=active_max.max(1))
            .map(|k| (k as f64, k.to_string()))
            .collect()
    } else {
        nice_ticks(0.0, active_max as f64, 5)
            .map(|t| labelled(&t))
            .unwrap_or_default()
    };
    let active_top = active_ticks.last().map_or(1.0, |t| t.0).max(1.0);

    let (width, height) = (f64::from(options.width), f64::from(options.height));
    let left = MARGIN + 58.0;
    let right = width - MARGIN - 58.0;
    // A band between the legend and the plot holds the chosen λ's label, so
    // the label never lies on a curve (explained variance reaches the top).
    let top = TITLE_BASELINE + 52.0;
    let bottom = height - 52.0;
    let x = Scale {
        lo: x_ticks[0],
        hi: x_ticks[x_ticks.len() - 1],
        start_px: left,
        end_px: right.max(left + 40.0),
        log: true,
    };
    let y_ev = Scale {
        lo: ev_ticks.lo,
        hi: ev_ticks.hi,
        start_px: bottom,
        end_px: top,
        log: false,
    };
    let y_active = Scale {
        lo: 0.0,
        hi: active_top,
        start_px: bottom,
        end_px: top,
        log: false,
    };

    let mut svg = Svg::new(options.width, options.height);
    svg.rect(0.0, 0.0, width, height, &Attrs::new().fill("#ffffff"));
    title(&mut svg, MARGIN, TITLE_BASELINE, &options.title);
    legend(&mut svg, MARGIN, TITLE_BASELINE + 20.0);
    let x_labels: Vec<(f64, String)> = x_ticks.iter().map(|&v| (v, log_label(v))).collect();
    bottom_axis(&mut svg, &x, bottom, top, &x_labels, "λ / λmax");
    side_axis(
        &mut svg,
        &y_ev,
        left,
        true,
        Some(right),
        &labelled(&ev_ticks),
        "explained variance (%)",
        46.0,
        ACCENT,
    );
    side_axis(
        &mut svg,
        &y_active,
        right,
        false,
        None,
        &active_ticks,
        "active patches",
        40.0,
        ACCENT_2,
    );

    let ev_points: Vec<(f64, f64)> = sorted
        .iter()
        .map(|s| (x.px(s.ratio), y_ev.px(s.explained_variance * 100.0)))
        .collect();
    let active_points: Vec<(f64, f64)> = sorted
        .iter()
        .map(|s| (x.px(s.ratio), y_active.px(s.active_patches as f64)))
        .collect();
    svg.polyline(
        &active_points,
        &Attrs::new()
            .stroke(ACCENT_2, 1.75)
            .class("active")
            .set("stroke-linejoin", "round"),
    );
    for &(px, py) in &active_points {
        svg.rect(
            px - 2.5,
            py - 2.5,
            5.0,
            5.0,
            &Attrs::new().fill("#ffffff").set("stroke", ACCENT_2),
        );
    }
    svg.polyline(
        &ev_points,
        &Attrs::new()
            .stroke(ACCENT, 2.0)
            .class("explained")
            .set("stroke-linejoin", "round"),
    );
    for &(px, py) in &ev_points {
        svg.circle(px, py, 2.75, &Attrs::new().fill(ACCENT));
    }
    if let Some(r) = options.chosen_ratio {
        let cx = x.px(r);
        svg.line(
            cx,
            top - 14.0,
            cx,
            bottom,
            &Attrs::new()
                .stroke(INK, 1.25)
                .set("stroke-dasharray", "5 4")
                .class("chosen"),
        );
        let text = format!("chosen λ/λmax = {}", format_ratio(r));
        let anchor = if cx > (left + right) / 2.0 {
            "end"
        } else {
            "start"
        };
        let dx = if anchor == "end" { -5.0 } else { 5.0 };
        svg.text(
            cx + dx,
            top - 6.0,
            &text,
            // A white halo keeps the label readable over grid lines.
            &Attrs::new()
                .fill(INK)
                .set("text-anchor", anchor)
                .set("stroke", "#ffffff")
                .set("stroke-width", "3")
                .set("paint-order", "stroke"),
        );
    }
    Ok(svg.finish())
}

/// A ratio with at most three significant digits and no trailing zeros.
fn format_ratio(r: f64) -> String {
    let digits = (2 - r.log10().floor() as i32).max(0) as usize;
    let mut s = format!("{:.*}", digits, r);
    if s.contains('.') {
        s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    s
}

/// The two-entry legend of the path chart.
fn legend(svg: &mut Svg, x: f64, y: f64) {
    svg.line(
        x,
        y - 4.0,
        x + 18.0,
        y - 4.0,
        &Attrs::new().stroke(ACCENT, 2.0),
    );
    svg.circle(x + 9.0, y - 4.0, 2.75, &Attrs::new().fill(ACCENT));
    svg.text(x + 24.0, y, "explained variance", &Attrs::new().fill(INK));
    let x2 = x + 24.0 + text_width("explained variance", FONT_SIZE) + 18.0;
    svg.line(
        x2,
        y - 4.0,
        x2 + 18.0,
        y - 4.0,
        &Attrs::new().stroke(ACCENT_2, 1.75),
    );
    svg.rect(
        x2 + 6.5,
        y - 6.5,
        5.0,
        5.0,
        &Attrs::new().fill("#ffffff").set("stroke", ACCENT_2),
    );
    svg.text(x2 + 24.0, y, "active patches", &Attrs::new().fill(INK));
}
