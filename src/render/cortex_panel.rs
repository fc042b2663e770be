//! The cortex views of the reports: one panel of views at print resolution,
//! shown at page size, each with its orientation marks, and the view that
//! shows the most of the map picked out.
//!
//! Used by the source maps and filter gains of `report.html` and by the
//! group maps of `compare.html`, so every cortex picture of the reports is
//! drawn, sized and marked the same way.

use super::axes::colour_bar;
use super::camera::View;
use super::cortex::{render_views_framed, ColourSpec, ViewOptions};
use super::error::RenderError;
use super::image::Image;
use super::raster::Framing;
use super::report_html::{escape, png_data_uri};
use super::svg::Svg;
use crate::geometry::{Mesh, Vec3};

/// Size at which a view is shown on the page (CSS px): three to a row of
/// the text column.
pub(crate) const VIEW_DISPLAY: (u32, u32) = (300, 210);

/// Size at which a view is drawn (px): 2.8 times the display size, so a view
/// is 840 px wide and prints sharp at about 7 cm and 300 dpi, or zooms in
/// a browser, while the page layout keeps its size.
pub(crate) const VIEW_PIXELS: (u32, u32) = (840, 588);

/// The views of a report panel: every view of [`View::ALL`], i.e. both
/// lateral and both medial surfaces, the top, the front (where the frontal
/// poles face) and the back (where visual cortex lies).
pub(crate) const REPORT_VIEWS: [View; 7] = View::ALL;

/// Source-map values below this fraction of the largest |value| show as
/// bare cortex, so the active patches stand out.
pub(crate) const SOURCE_MAP_THRESHOLD: f64 = 0.02;

/// Gains below this fraction of the largest show as bare cortex.
pub(crate) const GAIN_THRESHOLD: f64 = 0.05;

/// How a source map is drawn everywhere (report and exported figures): the
/// diverging map over ±`largest` with values below [`SOURCE_MAP_THRESHOLD`]
/// of it left grey and the painted areas ringed, region outlines, a white
/// ground; bare cortex when `largest` is 0. Size and view are the caller's.
pub(crate) fn source_map_options(regions: &[i32], largest: f64) -> ViewOptions<'_> {
    let mut options = ViewOptions::new(View::Left, 1, 1);
    options.background = [255, 255, 255, 255];
    options.regions = Some(regions);
    if largest > 0.0 {
        options.colour = ColourSpec::Signed {
            limit: Some(largest),
            threshold: SOURCE_MAP_THRESHOLD * largest,
        };
        options.outline_painted = true;
    }
    options
}

/// How a filter's gain is drawn everywhere: the sequential map over
/// [0, `largest`] with gains below [`GAIN_THRESHOLD`] of it left grey,
/// region outlines, a white ground (no rings: the gain is painted almost
/// everywhere).
pub(crate) fn gain_options(regions: &[i32], largest: f64) -> ViewOptions<'_> {
    let mut options = ViewOptions::new(View::Left, 1, 1);
    options.background = [255, 255, 255, 255];
    options.regions = Some(regions);
    options.colour = ColourSpec::Positive {
        max: Some(largest),
        threshold: GAIN_THRESHOLD * largest,
    };
    options
}

/// One drawn view of a panel.
pub(crate) struct PanelView {
    /// Which view.
    pub view: View,
    /// Inline markup: the picture at display size with its orientation marks.
    pub markup: String,
    /// Pixels painted by the colour map (see [`coloured_pixels`]).
    pub coloured: usize,
}

/// Draws `values` on `mesh` in every view of [`REPORT_VIEWS`] at one common
/// scale, at [`VIEW_PIXELS`], with `options` (its size and view are set
/// here). `coloured` tells the painted pixels from bare cortex, outlines
/// and background.
pub(crate) fn cortex_panel(
    mesh: &Mesh,
    values: &[f64],
    options: &ViewOptions<'_>,
    coloured: fn(&[u8]) -> bool,
) -> Result<Vec<PanelView>, RenderError> {
    cortex_panel_with_dipoles(mesh, values, options, coloured, &[])
}

/// An equivalent dipole to mark on the views: position (m) and moment
/// (A·m), head coordinates.
#[derive(Debug, Clone, Copy)]
pub(crate) struct DipoleMark {
    /// Position (m).
    pub position: Vec3,
    /// Moment (A·m).
    pub moment: Vec3,
}

/// [`cortex_panel`] with `dipoles` drawn over the views: a ring at each
/// position projected onto the view and an arrow along the moment's
/// component in the picture plane (its length: 22 px at the display size for a
/// moment in the plane, shorter as the moment turns toward the viewer).
/// Lateral and medial views show the dipoles of their hemisphere only.
pub(crate) fn cortex_panel_with_dipoles(
    mesh: &Mesh,
    values: &[f64],
    options: &ViewOptions<'_>,
    coloured: fn(&[u8]) -> bool,
    dipoles: &[DipoleMark],
) -> Result<Vec<PanelView>, RenderError> {
    let mut options = *options;
    options.width = VIEW_PIXELS.0;
    options.height = VIEW_PIXELS.1;
    let views = render_views_framed(mesh, values, &REPORT_VIEWS, &options)?;
    views
        .into_iter()
        .map(|(view, image, framing)| {
            let png = image.encode_png()?;
            let overlay = dipole_overlay(view, &framing, dipoles);
            Ok(PanelView {
                view,
                markup: view_markup(&png, view, &overlay),
                coloured: coloured_pixels(&image, coloured),
            })
        })
        .collect()
}

/// The SVG overlay of `dipoles` on one view (empty when none shows).
fn dipole_overlay(view: View, framing: &Framing, dipoles: &[DipoleMark]) -> String {
    use super::camera::Hemispheres;
    let (w, h) = VIEW_PIXELS;
    // Drawn in display units (the overlay's viewBox is the display size,
    // as every inline SVG of the reports).
    let k = f64::from(VIEW_DISPLAY.0) / f64::from(w);
    let mut body = String::new();
    for d in dipoles {
        let shown = match view.hemispheres() {
            Hemispheres::Left => d.position[0] < 0.0,
            Hemispheres::Right => d.position[0] >= 0.0,
            Hemispheres::Both => true,
        };
        if !shown {
            continue;
        }
        let p = view.project(d.position);
        let [x, y] = framing.to_pixel(w, h, p[0], p[1]).map(|c| c * k);
        let m = view.project(d.moment);
        let norm = (m[0] * m[0] + m[1] * m[1] + m[2] * m[2]).sqrt();
        body.push_str(&format!(
            r##"<circle cx="{x:.1}" cy="{y:.1}" r="4" fill="#ffffff" fill-opacity="0.7" stroke="#111111" stroke-width="1.5"/>"##
        ));
        if !(norm.is_finite() && norm > 0.0) {
            continue;
        }
        let (dx, dy) = (22.0 * m[0] / norm, -22.0 * m[1] / norm);
        let len = dx.hypot(dy);
        if len <= 2.5 {
            continue;
        }
        // The head: a triangle 6 px long and 5 px wide at the tip (a
        // polygon, so the page needs no shared marker id).
        let (ux, uy) = (dx / len, dy / len);
        let (tx, ty) = (x + dx, y + dy);
        let (bx, by) = (tx - 6.0 * ux, ty - 6.0 * uy);
        body.push_str(&format!(
            r##"<line x1="{x:.1}" y1="{y:.1}" x2="{bx:.1}" y2="{by:.1}" stroke="#111111" stroke-width="1.8"/><polygon points="{tx:.1},{ty:.1} {:.1},{:.1} {:.1},{:.1}" fill="#111111"/>"##,
            bx - 2.5 * uy,
            by + 2.5 * ux,
            bx + 2.5 * uy,
            by - 2.5 * ux
        ));
    }
    if body.is_empty() {
        return body;
    }
    format!(
        r#"<svg class="overlay" width="{dw}" height="{dh}" viewBox="0 0 {dw} {dh}" aria-hidden="true">{body}</svg>"#,
        dw = VIEW_DISPLAY.0,
        dh = VIEW_DISPLAY.1
    )
}

/// The index of the view with the most painted pixels (the first on a tie).
pub(crate) fn best_view(panel: &[PanelView]) -> usize {
    panel
        .iter()
        .enumerate()
        .max_by_key(|(i, v)| (v.coloured, usize::MAX - i))
        .map_or(0, |(i, _)| i)
}

/// The note that explains the orientation marks.
pub(crate) const MARKS_NOTE: &str = "Letters at the edges of each view: A anterior, P posterior, \
     L left, R right (the subject's).";

/// Pixels of `image` for which `coloured` holds.
fn coloured_pixels(image: &Image, coloured: fn(&[u8]) -> bool) -> usize {
    image.rgba.chunks_exact(4).filter(|p| coloured(p)).count()
}

/// The signed maps' painted pixels: red and blue bytes more than 24 apart
/// (the bare cortex grey differs by 8, the outlines by 8).
pub(crate) fn diverging_painted(p: &[u8]) -> bool {
    p[0].abs_diff(p[2]) > 24
}

/// The sequential map's painted pixels: green more than 12 above the mean
/// of red and blue, or red more than 16 above blue at a light pixel (the
/// map's pale sand start); bare cortex grey and outlines are near neutral.
pub(crate) fn sequential_painted(p: &[u8]) -> bool {
    let (r, g, b) = (i32::from(p[0]), i32::from(p[1]), i32::from(p[2]));
    g - (r + b) / 2 > 12 || (r - b > 16 && r > 200)
}

/// An `<img>` of a view at display size, wrapped with its orientation marks
/// (letters at the left and right edges; at the top and bottom too when the
/// picture's up is not the head's up).
fn view_markup(png: &[u8], view: View, overlay: &str) -> String {
    let [west, east, north, south] = view.edge_marks();
    let mut marks =
        format!("<span class=\"mark w\">{west}</span><span class=\"mark e\">{east}</span>");
    if north != "S" {
        marks.push_str(&format!(
            "<span class=\"mark n\">{north}</span><span class=\"mark s\">{south}</span>"
        ));
    }
    format!(
        "<span class=\"view\"><img src=\"{}\" width=\"{}\" height=\"{}\" alt=\"{}\"/>{overlay}{marks}</span>",
        png_data_uri(png),
        VIEW_DISPLAY.0,
        VIEW_DISPLAY.1,
        escape(view.caption())
    )
}

/// A vertical colour bar beside a panel, `height` px tall, of `map` (which
/// takes the position 0..1 along the bar) from `lo` to `hi`, with `unit`
/// above it.
pub(crate) fn colour_bar_svg(
    height: u32,
    lo: f64,
    hi: f64,
    map: &dyn Fn(f64) -> [u8; 3],
    unit: &str,
) -> String {
    let mut svg = Svg::new(84, height);
    colour_bar(
        &mut svg,
        12.0,
        28.0,
        14.0,
        f64::from(height) - 48.0,
        lo,
        hi,
        map,
        unit,
    );
    svg.finish().svg
}
