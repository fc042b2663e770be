//! A labelled heatmap of a matrix with a colour bar.

use super::{LABEL_CHARS, MARGIN, TITLE_BASELINE};
use crate::render::axes::{colour_bar, hex, shorten, text_width, title, FONT_SIZE, GRID, INK};
use crate::render::figure_error::{check_length, FigureError};
use crate::render::image::Image;
use crate::render::svg::{num, Attrs, Figure, Svg};

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
/// a colour bar on the right; colours from [`crate::render::colormap::sequential`] or
/// [`crate::render::colormap::diverging`]. NaN marks a missing cell (drawn in neutral grey).
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
        crate::render::colormap::diverging,
        crate::render::colormap::sequential,
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
