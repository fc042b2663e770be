//! One figure of a result at a chosen size, for a paper: the cortex views of
//! the source map or the filter gain, the scalp map of the pattern, the
//! share chart or the regularisation path; PNG at a chosen width and
//! resolution (dots per inch stored in the file), SVG where the figure is
//! vector; with a caption.
//!
//! The pictures come from the same makers as the report's (the cortex
//! panel, `topomap_svg`, the charts), fed by the same helpers
//! (`report_figures::{source_map, share_bars, path_samples}`), so an
//! exported figure shows what the report shows, at another size.

use super::charts::{
    region_shares_svg, regularisation_path_svg, PathChartOptions, RegionSharesOptions,
};
use super::colormap::{diverging, sequential};
use super::cortex::render_views;
use super::cortex_panel::{
    colour_bar_svg, gain_options, source_map_options, GAIN_THRESHOLD, REPORT_VIEWS,
    SOURCE_MAP_THRESHOLD,
};
use super::image::Image;
use super::page::{order_by, ReportError};
use super::report_figures::{path_samples, share_bars, source_map};
use super::report_gain::gain_map;
use super::svg::{Attrs, Svg};
use super::topomap::{topomap_png, topomap_svg, TopomapOptions};
use crate::io::result_file::ResultFile;

/// Raster pixels across an exported scalp map's SVG, at least (the width of
/// a 20 cm figure at 300 dpi).
const PRINT_RASTER_PX: u32 = 2400;

/// Which figure of a result.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FigureKind {
    /// The source map on seven cortex views (`cortex`).
    Cortex,
    /// The filter's gain on seven cortex views (`gain`).
    Gain,
    /// The pattern on the scalp (`scalp`).
    Scalp,
    /// The leading regions' shares with intervals (`shares`).
    Shares,
    /// The regularisation path (`path`).
    Path,
}

impl FigureKind {
    /// Every kind, in the order of the help text.
    pub const ALL: [FigureKind; 5] = [
        FigureKind::Cortex,
        FigureKind::Gain,
        FigureKind::Scalp,
        FigureKind::Shares,
        FigureKind::Path,
    ];

    /// The kind's name on the command line.
    pub fn name(self) -> &'static str {
        match self {
            FigureKind::Cortex => "cortex",
            FigureKind::Gain => "gain",
            FigureKind::Scalp => "scalp",
            FigureKind::Shares => "shares",
            FigureKind::Path => "path",
        }
    }

    /// The kind with this name, if any.
    pub fn from_name(name: &str) -> Option<FigureKind> {
        FigureKind::ALL.into_iter().find(|k| k.name() == name)
    }
}

/// The file format of an exported figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FigureFormat {
    /// A raster image with its resolution stored (pHYs).
    Png,
    /// A vector drawing (cortex views and scalp rasters embedded as PNG).
    Svg,
}

/// What to export.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FigureRequest {
    /// Which figure.
    pub kind: FigureKind,
    /// Component index (0-based).
    pub component: usize,
    /// Width of the whole figure in pixels (200 to 8000).
    pub width: u32,
    /// Resolution stored in a PNG, dots per inch (50 to 2400).
    pub dpi: f64,
    /// File format.
    pub format: FigureFormat,
}

/// An exported figure: the file's bytes, its size and a caption.
#[derive(Debug, Clone)]
pub struct ExportedFigure {
    /// PNG or SVG bytes.
    pub bytes: Vec<u8>,
    /// Width (px).
    pub width: u32,
    /// Height (px).
    pub height: u32,
    /// A caption in plain text (what is drawn, the scale, units).
    pub caption: String,
}

/// Regions in the exported share chart.
const SHARE_REGIONS: usize = 8;

fn unavailable(r: &ResultFile, what: String, why: &str) -> ReportError {
    ReportError::figure(&r.path, what, why)
}

/// Draw the figure `req` of the result `r`.
///
/// Errors: a component out of range, a size or resolution out of range, a
/// figure the result cannot draw (no source mesh, no gain, no electrode
/// positions, no path), a vector-only chart asked as PNG.
pub fn export_figure(r: &ResultFile, req: &FigureRequest) -> Result<ExportedFigure, ReportError> {
    let what = format!(
        "the {} figure of component {}",
        req.kind.name(),
        req.component + 1
    );
    if req.component >= r.k {
        return Err(unavailable(
            r,
            what,
            &format!("the result has {} component(s)", r.k),
        ));
    }
    if !(200..=8000).contains(&req.width) {
        return Err(unavailable(
            r,
            what,
            &format!("a width of {} px; expected 200 to 8000", req.width),
        ));
    }
    if !(req.dpi.is_finite() && (50.0..=2400.0).contains(&req.dpi)) {
        return Err(unavailable(
            r,
            what,
            &format!("{} dpi; expected 50 to 2400", req.dpi),
        ));
    }
    let name = r
        .component_names
        .get(req.component)
        .cloned()
        .unwrap_or_else(|| format!("component {}", req.component + 1));
    match req.kind {
        FigureKind::Cortex | FigureKind::Gain => cortex(r, req, &name, what),
        FigureKind::Scalp => scalp(r, req, &name, what),
        FigureKind::Shares | FigureKind::Path => chart(r, req, &name, what),
    }
}

/// The seven cortex views of the source map or gain.
fn cortex(
    r: &ResultFile,
    req: &FigureRequest,
    name: &str,
    what: String,
) -> Result<ExportedFigure, ReportError> {
    let c = req.component;
    let (values, largest, signed, unit) = if req.kind == FigureKind::Cortex {
        let Some((values, largest)) = source_map(r, c)? else {
            return Err(unavailable(
                r,
                what,
                "the result holds no source mesh or source map",
            ));
        };
        (values, largest, true, "A\u{00b7}m")
    } else {
        let Some((values, largest)) = gain_map(r, c)? else {
            return Err(unavailable(
                r,
                what,
                "the result holds no gain map for its source mesh (the decoder was given as patterns, or without a lead field)",
            ));
        };
        (values, largest, false, "filter output per A\u{00b7}m")
    };
    let Some(sources) = &r.sources else {
        return Err(unavailable(r, what, "the result holds no source mesh"));
    };
    if !(largest.is_finite() && largest > 0.0) {
        return Err(unavailable(r, what, "the map is zero everywhere"));
    }
    let mesh = sources.mesh();
    // Three views to a row, the colour bar (SVG) in a fourth, narrow column.
    let bar_width = if req.format == FigureFormat::Svg {
        90
    } else {
        0
    };
    let view_w = ((req.width - bar_width) / 3).max(60);
    let view_h = view_w * 7 / 10;
    let mut options = if signed {
        source_map_options(&sources.region, largest)
    } else {
        gain_options(&sources.region, largest)
    };
    options.width = view_w;
    options.height = view_h;
    let views = render_views(&mesh, &values, &REPORT_VIEWS, &options)
        .map_err(|e| ReportError::figure(&r.path, what.clone(), e))?;
    let caption = format!(
        "{name}: {} on the cortex (views: {}); colours relative to the largest value, {largest:.3e} {unit}{}; values below {:.0} % of it are left grey{}; lines: region borders. Letters at the view edges: A anterior, P posterior, L left, R right.",
        if signed {
            "source map (dipole moment along the outward normal)"
        } else {
            "filter gain |w\u{1d40} l|"
        },
        REPORT_VIEWS.map(|v| v.caption()).join("; "),
        if signed {
            " (orange positive, blue negative)"
        } else {
            ""
        },
        100.0 * if signed { SOURCE_MAP_THRESHOLD } else { GAIN_THRESHOLD },
        if signed {
            ", and a dark ring edges the coloured areas"
        } else {
            ""
        },
    );
    match req.format {
        FigureFormat::Png => {
            let images: Vec<&Image> = views.iter().map(|(_, i)| i).collect();
            let sheet = super::sheet::contact_sheet(&images, 3, 0, [255, 255, 255, 255])
                .map_err(|e| ReportError::figure(&r.path, what.clone(), e))?;
            let bytes = sheet
                .encode_png_dpi(req.dpi)
                .map_err(|e| ReportError::figure(&r.path, what, e))?;
            Ok(ExportedFigure {
                bytes,
                width: sheet.width,
                height: sheet.height,
                caption,
            })
        }
        FigureFormat::Svg => {
            let label = 18;
            let cell_h = view_h + label;
            let height = 3 * cell_h;
            let width = 3 * view_w + bar_width;
            let mut svg = Svg::new(width, height);
            svg.rect(
                0.0,
                0.0,
                f64::from(width),
                f64::from(height),
                &Attrs::new().fill("#ffffff"),
            );
            for (i, (view, image)) in views.iter().enumerate() {
                let x = f64::from((i as u32 % 3) * view_w);
                let y = f64::from((i as u32 / 3) * cell_h);
                let png = image
                    .encode_png()
                    .map_err(|e| ReportError::figure(&r.path, what.clone(), e))?;
                svg.image_png(
                    x,
                    y,
                    f64::from(view_w),
                    f64::from(view_h),
                    &png,
                    &Attrs::new(),
                );
                let [west, east, north, south] = view.edge_marks();
                let mid = y + f64::from(view_h) / 2.0;
                let mark = Attrs::new().fill("#5b6470").set("font-weight", "600");
                svg.text(x + 4.0, mid, west, &mark);
                svg.text(
                    x + f64::from(view_w) - 4.0,
                    mid,
                    east,
                    &mark.clone().set("text-anchor", "end"),
                );
                if north != "S" {
                    let cx = x + f64::from(view_w) / 2.0;
                    let centred = mark.clone().set("text-anchor", "middle");
                    svg.text(cx, y + 14.0, north, &centred);
                    svg.text(cx, y + f64::from(view_h) - 4.0, south, &centred);
                }
                svg.text(
                    x + 4.0,
                    y + f64::from(cell_h) - 4.0,
                    view.caption(),
                    &Attrs::new().fill("#5b6470"),
                );
            }
            let bar = if signed {
                colour_bar_svg(
                    cell_h * 2,
                    -1.0,
                    1.0,
                    &|t: f64| diverging(2.0 * t - 1.0),
                    "relative",
                )
            } else {
                colour_bar_svg(cell_h * 2, 0.0, 1.0, &sequential, "relative")
            };
            let mut text = svg.finish().svg;
            // The colour bar is its own <svg>, nested at the right.
            let nested = bar.replacen(
                "<svg ",
                &format!(
                    "<svg x=\"{}\" y=\"{}\" ",
                    3 * view_w,
                    f64::from(cell_h) / 2.0
                ),
                1,
            );
            if let Some(end) = text.rfind("</svg>") {
                text.insert_str(end, &nested);
            }
            Ok(ExportedFigure {
                bytes: text.into_bytes(),
                width,
                height,
                caption,
            })
        }
    }
}

/// The pattern on the scalp, relative to its largest |value|.
fn scalp(
    r: &ResultFile,
    req: &FigureRequest,
    name: &str,
    what: String,
) -> Result<ExportedFigure, ReportError> {
    let Some(positions) = &r.electrode_positions else {
        return Err(unavailable(
            r,
            what,
            "the result holds no electrode positions",
        ));
    };
    let n_ch = r.labels.len();
    let pattern: Vec<f64> = (0..n_ch)
        .map(|e| r.patterns[e * r.k + req.component])
        .collect();
    let largest = pattern.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if !(largest.is_finite() && largest > 0.0) {
        return Err(unavailable(r, what, "the pattern is zero or not finite"));
    }
    let relative: Vec<f64> = pattern.iter().map(|v| v / largest).collect();
    let options = TopomapOptions {
        size_px: req.width,
        title: name.to_string(),
        unit: "a.u.".to_string(),
        scale: Some(largest),
        limits: Some(1.0),
        // At least about 2400 raster pixels across the map whatever the
        // width (print at 300 dpi over 20 cm), at most 4 per CSS pixel.
        pixel_ratio: PRINT_RASTER_PX.div_ceil(req.width).clamp(1, 4),
        ..TopomapOptions::default()
    };
    let caption = format!(
        "{name}: the activation pattern on the scalp (after the average reference), relative to its largest |value|, {largest:.3e} (a colour-bar tick times this factor, written under the bar, is the value in the pattern's own unit: the data's unit per unit of the component's output for weights with a covariance); orange positive, blue negative; view from above, nose up; dots: electrodes; the outline marks where the map ends when electrodes lie below the level of Fpz, T7, Oz and T8 (dashed)."
    );
    let caption = match req.format {
        FigureFormat::Svg => caption,
        // The PNG is the bare map: no outline, electrodes or colour bar.
        FigureFormat::Png => format!(
            "{name}: the activation pattern on the scalp (after the average reference), the bare map without outline or colour bar: colours span \u{b1}{largest:.3e} in the pattern's own unit (the data's unit per unit of the component's output for weights with a covariance), orange positive, blue negative; view from above, nose up, the disc reaching the lowest electrode. The SVG export adds the outline, electrodes and colour bar."
        ),
    };
    match req.format {
        FigureFormat::Svg => {
            let figure = topomap_svg(positions, &relative, &options)
                .map_err(|e| ReportError::figure(&r.path, what, e))?;
            Ok(ExportedFigure {
                bytes: figure.svg.into_bytes(),
                width: figure.width,
                height: figure.height,
                caption,
            })
        }
        FigureFormat::Png => {
            let image = topomap_png(positions, &relative, &options)
                .map_err(|e| ReportError::figure(&r.path, what.clone(), e))?;
            let bytes = image
                .encode_png_dpi(req.dpi)
                .map_err(|e| ReportError::figure(&r.path, what, e))?;
            Ok(ExportedFigure {
                bytes,
                width: image.width,
                height: image.height,
                caption: format!(
                    "{caption} The PNG holds the coloured disc only (no outline, dots or colour bar: ask for .svg for those)."
                ),
            })
        }
    }
}

/// The share chart or the regularisation path (vector only).
fn chart(
    r: &ResultFile,
    req: &FigureRequest,
    name: &str,
    what: String,
) -> Result<ExportedFigure, ReportError> {
    if req.format == FigureFormat::Png {
        return Err(unavailable(
            r,
            what,
            "this chart is a vector drawing: ask for an .svg file",
        ));
    }
    let c = req.component;
    let (figure, caption) = if req.kind == FigureKind::Shares {
        let a = &r.attribution;
        let order = order_by(&a.region_names, |reg| a.share[reg * r.k + c]);
        let bars = share_bars(r, c, &order, SHARE_REGIONS);
        let options = RegionSharesOptions {
            width: req.width,
            title: format!("{name}: leading regions"),
            ..RegionSharesOptions::default()
        };
        let figure = region_shares_svg(&bars, &options)
            .map_err(|e| ReportError::figure(&r.path, what, e))?;
        (
            figure,
            format!(
                "{name}: bars, share of the fitted pattern per region (the {} largest); whiskers, 95 % bootstrap interval; dots, how often the region was selected across resamples (percent).",
                bars.len()
            ),
        )
    } else {
        let Some((samples, chosen_ratio)) = path_samples(r, c) else {
            return Err(unavailable(
                r,
                what,
                "the result holds no regularisation path",
            ));
        };
        let options = PathChartOptions {
            width: req.width,
            height: (req.width * 9 / 16).max(200),
            title: format!("{name}: regularisation path"),
            chosen_ratio,
        };
        let figure = regularisation_path_svg(&samples, &options)
            .map_err(|e| ReportError::figure(&r.path, what, e))?;
        (
            figure,
            format!(
                "{name}: explained variance and active patches as λ falls from λmax; the dashed line is the λ of the fit."
            ),
        )
    };
    Ok(ExportedFigure {
        bytes: figure.svg.into_bytes(),
        width: figure.width,
        height: figure.height,
        caption,
    })
}
