//! Charts as SVG: region shares with their intervals, the regularisation path, and
//! a labelled heatmap with a colour bar.

use super::axes::{
    bottom_axis, colour_bar, hex, labelled, shorten, side_axis, text_width, title, Scale, ACCENT,
    ACCENT_2, FONT_SIZE, GRID, INK, MUTED,
};
use super::figure_error::{check_finite, check_length, FigureError};
use super::image::Image;
use super::svg::{num, Attrs, Figure, Svg};
use super::ticks::{log_label, log_ticks, nice_ticks};

/// Smallest and largest figure side accepted (px).
const SIDE_RANGE: (u32, u32) = (160, 8000);
/// Longest label shown in full (characters); longer ones end in an ellipsis.
const LABEL_CHARS: usize = 36;
/// Outer margin (px).
const MARGIN: f64 = 16.0;
/// Baseline of the title (px from the top).
const TITLE_BASELINE: f64 = 26.0;

fn check_side(field: &'static str, value: u32) -> Result<(), FigureError> {
    if (SIDE_RANGE.0..=SIDE_RANGE.1).contains(&value) {
        Ok(())
    } else {
        Err(FigureError::BadOption {
            field,
            value: value.to_string(),
            expected: "a size from 160 to 8000 px",
        })
    }
}

/// One bar of the region-share chart.
#[derive(Debug, Clone, PartialEq)]
pub struct RegionBar {
    /// Region name.
    pub name: String,
    /// Share of the fitted pattern (fraction, usually in [0, 1]).
    pub share: f64,
    /// Interval [low, high] for the share (e.g. a bootstrap percentile interval).
    pub interval: Option<[f64; 2]>,
    /// How often the region was selected across resamples, in [0, 1].
    pub selection_frequency: Option<f64>,
}

/// Options of [`region_shares_svg`].
#[derive(Debug, Clone, PartialEq)]
pub struct RegionSharesOptions {
    /// Figure width (px); the height follows from the number of bars.
    pub width: u32,
    /// Title above the chart.
    pub title: String,
    /// Label of the share axis.
    pub axis_label: String,
    /// Show shares as percentages (× 100) on the axis.
    pub percent: bool,
}

impl Default for RegionSharesOptions {
    fn default() -> Self {
        Self {
            width: 640,
            title: "Region shares".to_string(),
            axis_label: "share of the fitted pattern (%)".to_string(),
            percent: true,
        }
    }
}

/// Row pitch and bar thickness of the region chart (px).
const ROW: f64 = 24.0;
const BAR: f64 = 14.0;

/// Horizontal bars of region shares in the order given (pass the leading regions of a
/// component), whiskers for the intervals and, when any bar has one, a column with the
/// selection frequency as a number and a dot whose opacity follows it. Bars carry
/// `class="bar"`; their widths are proportional to the shares.
///
/// Errors: no bars, a non-finite share or bound, an interval with low > high, a
/// selection frequency outside [0, 1], a width outside 160–8000 px.
pub fn region_shares_svg(
    bars: &[RegionBar],
    options: &RegionSharesOptions,
) -> Result<Figure, FigureError> {
    check_side("width", options.width)?;
    if bars.is_empty() {
        return Err(FigureError::Empty {
            field: "bars",
            required: 1,
        });
    }
    let shares: Vec<f64> = bars.iter().map(|b| b.share).collect();
    check_finite("bars.share", &shares)?;
    for (index, bar) in bars.iter().enumerate() {
        if let Some([low, high]) = bar.interval {
            check_finite("bars.interval", &[low, high]).map_err(|_| FigureError::NotFinite {
                field: "bars.interval",
                index,
                value: if low.is_finite() { high } else { low },
            })?;
            if low > high {
                return Err(FigureError::OutOfRange {
                    field: "bars.interval",
                    index,
                    value: low,
                    expected: "low <= high",
                });
            }
        }
        if let Some(f) = bar.selection_frequency {
            if !(0.0..=1.0).contains(&f) {
                return Err(FigureError::OutOfRange {
                    field: "bars.selection_frequency",
                    index,
                    value: f,
                    expected: "a frequency in [0, 1]",
                });
            }
        }
    }

    let factor = if options.percent { 100.0 } else { 1.0 };
    let (mut lo, mut hi) = (0.0f64, 0.0f64);
    for bar in bars {
        lo = lo.min(bar.share);
        hi = hi.max(bar.share);
        if let Some([low, high]) = bar.interval {
            lo = lo.min(low);
            hi = hi.max(high);
        }
    }
    if hi == lo {
        hi = lo + 1.0 / factor;
    }
    let ticks = nice_ticks(lo * factor, hi * factor, 5).ok_or(FigureError::BadOption {
        field: "bars",
        value: format!("[{lo}, {hi}]"),
        expected: "a finite range",
    })?;

    let width = f64::from(options.width);
    let names: Vec<String> = bars.iter().map(|b| shorten(&b.name, LABEL_CHARS)).collect();
    let label_width = names
        .iter()
        .map(|n| text_width(n, FONT_SIZE))
        .fold(0.0, f64::max)
        .min(0.4 * width);
    let with_frequency = bars.iter().any(|b| b.selection_frequency.is_some());
    let frequency_column = if with_frequency { 64.0 } else { 0.0 };
    let top = TITLE_BASELINE + if with_frequency { 30.0 } else { 18.0 };
    let x0 = MARGIN + label_width + 10.0;
    let x1 = width - MARGIN - frequency_column - 8.0;
    let axis_y = top + bars.len() as f64 * ROW + 6.0;
    let height = (axis_y + 50.0).ceil();
    let scale = Scale {
        lo: ticks.lo,
        hi: ticks.hi,
        start_px: x0,
        end_px: x1.max(x0 + 40.0),
        log: false,
    };

    let mut svg = Svg::new(options.width, height as u32);
    svg.rect(0.0, 0.0, width, height, &Attrs::new().fill("#ffffff"));
    title(&mut svg, MARGIN, TITLE_BASELINE, &options.title);
    bottom_axis(
        &mut svg,
        &scale,
        axis_y,
        top - 4.0,
        &labelled(&ticks),
        &options.axis_label,
    );
    if ticks.lo < 0.0 {
        let x = scale.px(0.0);
        svg.line(x, top - 4.0, x, axis_y, &Attrs::new().stroke(MUTED, 1.0));
    }
    if with_frequency {
        svg.text(
            width - MARGIN - frequency_column / 2.0,
            top - 8.0,
            "selected",
            &Attrs::new()
                .fill(MUTED)
                .set("text-anchor", "middle")
                .set("font-size", "11"),
        );
    }
    let zero = scale.px(0.0);
    for (i, (bar, name)) in bars.iter().zip(&names).enumerate() {
        let centre = top + (i as f64 + 0.5) * ROW;
        svg.text(
            x0 - 8.0,
            centre + 4.0,
            name,
            &Attrs::new().fill(INK).set("text-anchor", "end"),
        );
        let end = scale.px(bar.share * factor);
        svg.rect(
            zero.min(end),
            centre - BAR / 2.0,
            (end - zero).abs(),
            BAR,
            &Attrs::new().fill(ACCENT).class("bar").set("rx", "1.5"),
        );
        if let Some([low, high]) = bar.interval {
            let (a, b) = (scale.px(low * factor), scale.px(high * factor));
            let whisker = Attrs::new().stroke(INK, 1.25).class("whisker");
            svg.line(a, centre, b, centre, &whisker);
            svg.line(a, centre - 4.0, a, centre + 4.0, &whisker);
            svg.line(b, centre - 4.0, b, centre + 4.0, &whisker);
        }
        if let Some(f) = bar.selection_frequency {
            let cx = width - MARGIN - frequency_column + 10.0;
            svg.circle(
                cx,
                centre,
                4.5,
                &Attrs::new()
                    .fill(ACCENT)
                    .set("fill-opacity", num(0.12 + 0.88 * f))
                    .set("stroke", ACCENT)
                    .set("stroke-width", "0.75"),
            );
            svg.text(
                cx + 10.0,
                centre + 4.0,
                &format!("{f:.2}"),
                &Attrs::new().fill(MUTED).class("frequency"),
            );
        }
    }
    Ok(svg.finish())
}

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
    let top = TITLE_BASELINE + 34.0;
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
            top - 6.0,
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
            top + 6.0,
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

/// The colour scale of a heatmap.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum HeatmapScale {
    /// Sequential colours from `lo` (light) to `hi` (dark).
    Sequential {
        /// Value of the lightest colour.
        lo: f64,
        /// Value of the darkest colour.
        hi: f64,
    },
    /// Diverging colours, symmetric about 0, saturating at ±`limit`.
    Diverging {
        /// Magnitude of the most saturated colours (> 0).
        limit: f64,
    },
}

/// Options of [`heatmap_svg`].
#[derive(Debug, Clone, Default, PartialEq)]
pub struct HeatmapOptions {
    /// Title above the chart.
    pub title: String,
    /// The unit written above the colour bar (e.g. "share" or "r").
    pub unit: String,
    /// One label per row (or none).
    pub row_labels: Vec<String>,
    /// One label per column (or none).
    pub column_labels: Vec<String>,
    /// The colour scale; `None`: sequential over the data range when all values are
    /// ≥ 0, else diverging with the largest magnitude as limit.
    pub scale: Option<HeatmapScale>,
    /// Side of a cell (px); `None`: 560 px / the larger dimension, within 6–28 px.
    pub cell_px: Option<f64>,
}

/// Colour of a missing (NaN) cell.
const MISSING: [u8; 3] = [0xd9, 0xdd, 0xe2];

/// A heatmap of the row-major `n_rows` × `n_cols` matrix `values` with row labels on
/// the left, column labels below (turned by 45° when they do not fit under a cell), and
/// a colour bar on the right; colours from [`super::colormap::sequential`] or
/// [`super::colormap::diverging`]. NaN marks a missing cell (drawn in neutral grey).
/// Up to 2500 cells are drawn as rectangles (`class="cell"`); larger matrices as one
/// embedded PNG with one pixel per cell, scaled without smoothing.
///
/// Errors: an empty matrix, `values.len() != n_rows · n_cols`, labels of the wrong
/// number, an infinite value, a scale with lo ≥ hi or limit ≤ 0, a cell size outside
/// 2–200 px.
pub fn heatmap_svg(
    values: &[f64],
    n_rows: usize,
    n_cols: usize,
    options: &HeatmapOptions,
) -> Result<Figure, FigureError> {
    heatmap_with(
        values,
        n_rows,
        n_cols,
        options,
        super::colormap::diverging,
        super::colormap::sequential,
    )
}

/// Matrices with more cells than this become one embedded PNG.
const MAX_VECTOR_CELLS: usize = 2500;

/// [`heatmap_svg`] with the colour maps given: the row-major `n_rows` × `n_cols` matrix `values` with row labels on
/// the left, column labels below (turned by 45° when they do not fit under a cell), and
/// a colour bar on the right. NaN marks a missing cell (drawn in neutral grey).
/// `diverging(t)` (t ∈ [−1, 1]) and `sequential(t)` (t ∈ [0, 1]) give the colours.
/// Cells carry `class="cell"`.
///
/// Errors: an empty matrix, `values.len() != n_rows · n_cols`, labels of the wrong
/// number, an infinite value, a scale with lo ≥ hi or limit ≤ 0, a cell size outside
/// 2–200 px.
pub(crate) fn heatmap_with(
    values: &[f64],
    n_rows: usize,
    n_cols: usize,
    options: &HeatmapOptions,
    diverging: fn(f64) -> [u8; 3],
    sequential: fn(f64) -> [u8; 3],
) -> Result<Figure, FigureError> {
    if n_rows == 0 || n_cols == 0 {
        return Err(FigureError::Empty {
            field: "values",
            required: 1,
        });
    }
    check_length("values", n_rows * n_cols, values.len())?;
    if !options.row_labels.is_empty() {
        check_length("row_labels", n_rows, options.row_labels.len())?;
    }
    if !options.column_labels.is_empty() {
        check_length("column_labels", n_cols, options.column_labels.len())?;
    }
    if let Some(index) = values.iter().position(|v| v.is_infinite()) {
        return Err(FigureError::NotFinite {
            field: "values",
            index,
            value: values[index],
        });
    }
    let present: Vec<f64> = values.iter().copied().filter(|v| !v.is_nan()).collect();
    let scale = match options.scale {
        Some(s) => s,
        None => {
            let lo = present.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = present.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            if present.is_empty() {
                HeatmapScale::Sequential { lo: 0.0, hi: 1.0 }
            } else if lo >= 0.0 {
                HeatmapScale::Sequential {
                    lo: 0.0,
                    hi: if hi > 0.0 { hi } else { 1.0 },
                }
            } else {
                HeatmapScale::Diverging {
                    limit: lo.abs().max(hi.abs()),
                }
            }
        }
    };
    let (bar_lo, bar_hi) = match scale {
        HeatmapScale::Sequential { lo, hi } => {
            if !(lo.is_finite() && hi.is_finite() && lo < hi) {
                return Err(FigureError::BadOption {
                    field: "scale",
                    value: format!("{scale:?}"),
                    expected: "finite lo < hi",
                });
            }
            (lo, hi)
        }
        HeatmapScale::Diverging { limit } => {
            if !(limit.is_finite() && limit > 0.0) {
                return Err(FigureError::BadOption {
                    field: "scale",
                    value: format!("{scale:?}"),
                    expected: "a finite limit > 0",
                });
            }
            (-limit, limit)
        }
    };
    let colour = |v: f64| -> [u8; 3] {
        if v.is_nan() {
            return MISSING;
        }
        let t = ((v - bar_lo) / (bar_hi - bar_lo)).clamp(0.0, 1.0);
        match scale {
            HeatmapScale::Sequential { .. } => sequential(t),
            HeatmapScale::Diverging { .. } => diverging(2.0 * t - 1.0),
        }
    };
    let cell = match options.cell_px {
        Some(c) if (2.0..=200.0).contains(&c) => c,
        Some(c) => {
            return Err(FigureError::BadOption {
                field: "cell_px",
                value: c.to_string(),
                expected: "a cell side from 2 to 200 px",
            })
        }
        None => (560.0 / n_rows.max(n_cols) as f64).clamp(6.0, 28.0),
    };

    let rows: Vec<String> = options
        .row_labels
        .iter()
        .map(|l| shorten(l, LABEL_CHARS))
        .collect();
    let cols: Vec<String> = options
        .column_labels
        .iter()
        .map(|l| shorten(l, LABEL_CHARS))
        .collect();
    let label_size = (cell * 0.75).clamp(7.0, FONT_SIZE);
    let row_width = rows
        .iter()
        .map(|l| text_width(l, label_size))
        .fold(0.0, f64::max);
    let col_width = cols
        .iter()
        .map(|l| text_width(l, label_size))
        .fold(0.0, f64::max);
    let rotate = col_width > cell - 2.0;
    let col_height = if cols.is_empty() {
        0.0
    } else if rotate {
        col_width * std::f64::consts::FRAC_1_SQRT_2 + label_size + 8.0
    } else {
        label_size + 10.0
    };
    // Turned column labels reach down and left of their cell by
    // col_width / sqrt 2: the grid starts far enough right for the first one.
    let turned_reach = if rotate {
        col_width * std::f64::consts::FRAC_1_SQRT_2 - 0.5 * cell
    } else {
        0.0
    };
    let grid_x =
        (MARGIN + row_width + if rows.is_empty() { 0.0 } else { 8.0 }).max(MARGIN + turned_reach);
    let grid_y = TITLE_BASELINE + 30.0;
    let grid_w = cell * n_cols as f64;
    let grid_h = cell * n_rows as f64;
    let bar_h = grid_h.clamp(120.0, 260.0);
    let bar_x = grid_x + grid_w + 24.0;
    let title_w = text_width(&options.title, 15.0) + 2.0 * MARGIN;
    // Width of the colour bar with its tick labels, estimated before drawing.
    let bar_extra = 14.0 + 7.0 + 7.0 * 0.6 * FONT_SIZE;
    let width = (bar_x + bar_extra + MARGIN).max(title_w).ceil();
    let height = (grid_y + grid_h.max(bar_h) + col_height + MARGIN).ceil();

    let mut svg = Svg::new(width as u32, height as u32);
    svg.rect(0.0, 0.0, width, height, &Attrs::new().fill("#ffffff"));
    title(&mut svg, MARGIN, TITLE_BASELINE, &options.title);
    let vector = n_rows * n_cols <= MAX_VECTOR_CELLS;
    if vector {
        for r in 0..n_rows {
            for c in 0..n_cols {
                svg.rect(
                    grid_x + c as f64 * cell,
                    grid_y + r as f64 * cell,
                    cell,
                    cell,
                    &Attrs::new()
                        .fill(&hex(colour(values[r * n_cols + c])))
                        .class("cell"),
                );
            }
        }
    } else {
        let side = |n: usize, field| {
            u32::try_from(n).map_err(|_| FigureError::BadOption {
                field,
                value: n.to_string(),
                expected: "at most 16384 cells along a side",
            })
        };
        let mut raster = Image::new(side(n_cols, "n_cols")?, side(n_rows, "n_rows")?, [0; 4])?;
        for (i, &v) in values.iter().enumerate() {
            let [r, g, b] = colour(v);
            raster.rgba[4 * i..4 * i + 4].copy_from_slice(&[r, g, b, 255]);
        }
        svg.image_png(
            grid_x,
            grid_y,
            grid_w,
            grid_h,
            &raster.encode_png()?,
            &Attrs::new()
                .set("preserveAspectRatio", "none")
                .set("style", "image-rendering:pixelated")
                .class("cells"),
        );
    }
    // Thin white lines between cells keep neighbours apart when cells are large.
    if vector && cell >= 10.0 {
        let white = Attrs::new().stroke("#ffffff", 1.0);
        for r in 1..n_rows {
            let y = grid_y + r as f64 * cell;
            svg.line(grid_x, y, grid_x + grid_w, y, &white);
        }
        for c in 1..n_cols {
            let x = grid_x + c as f64 * cell;
            svg.line(x, grid_y, x, grid_y + grid_h, &white);
        }
    }
    svg.rect(
        grid_x,
        grid_y,
        grid_w,
        grid_h,
        &Attrs::new().stroke(GRID, 1.0),
    );
    let size = num(label_size);
    for (r, label) in rows.iter().enumerate() {
        svg.text(
            grid_x - 6.0,
            grid_y + (r as f64 + 0.5) * cell + label_size * 0.35,
            label,
            &Attrs::new()
                .fill(INK)
                .set("text-anchor", "end")
                .set("font-size", &size),
        );
    }
    for (c, label) in cols.iter().enumerate() {
        let cx = grid_x + (c as f64 + 0.5) * cell;
        let y = grid_y + grid_h + label_size + 4.0;
        if rotate {
            svg.text(
                cx + label_size * 0.35,
                y - label_size * 0.5,
                label,
                &Attrs::new()
                    .fill(INK)
                    .set("text-anchor", "end")
                    .set("font-size", &size)
                    .set(
                        "transform",
                        format!(
                            "rotate(-45 {} {})",
                            num(cx + label_size * 0.35),
                            num(y - label_size * 0.5)
                        ),
                    ),
            );
        } else {
            svg.text(
                cx,
                y,
                label,
                &Attrs::new()
                    .fill(INK)
                    .set("text-anchor", "middle")
                    .set("font-size", &size),
            );
        }
    }
    let map = move |t: f64| match scale {
        HeatmapScale::Sequential { .. } => sequential(t),
        HeatmapScale::Diverging { .. } => diverging(2.0 * t - 1.0),
    };
    colour_bar(
        &mut svg,
        bar_x,
        grid_y + 14.0,
        14.0,
        bar_h - 14.0,
        bar_lo,
        bar_hi,
        &map,
        &options.unit,
    );
    Ok(svg.finish())
}
