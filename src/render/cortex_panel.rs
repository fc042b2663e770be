//! The cortex views of the reports: one panel of views at print resolution,
//! shown at page size, each with its orientation marks, and the view that
//! shows the most of the map picked out.
//!
//! Used by the source maps and filter gains of `report.html` and by the
//! group maps of `compare.html`, so every cortex picture of the reports is
//! drawn, sized and marked the same way.

use super::axes::colour_bar;
use super::camera::View;
use super::cortex::{render_views, ViewOptions};
use super::error::RenderError;
use super::image::Image;
use super::report_html::{escape, png_data_uri};
use super::svg::Svg;
use crate::geometry::Mesh;

/// Size at which a view is shown on the page (CSS px): three to a row of
/// the text column.
pub(crate) const VIEW_DISPLAY: (u32, u32) = (300, 210);

/// Size at which a view is drawn (px): 2.8 times the display size, so a view
/// is 840 px wide and prints sharp at about 7 cm and 300 dpi, or zooms in
/// a browser, while the page layout keeps its size.
pub(crate) const VIEW_PIXELS: (u32, u32) = (840, 588);

/// The views of a report panel: both lateral and both medial surfaces, the
/// top, the front (where the frontal poles face) and the back (where visual
/// cortex lies).
pub(crate) const REPORT_VIEWS: [View; 7] = [
    View::Left,
    View::Right,
    View::MedialLeft,
    View::MedialRight,
    View::Top,
    View::Front,
    View::Back,
];

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
    let mut options = *options;
    options.width = VIEW_PIXELS.0;
    options.height = VIEW_PIXELS.1;
    let views = render_views(mesh, values, &REPORT_VIEWS, &options)?;
    views
        .into_iter()
        .map(|(view, image)| {
            let png = image.encode_png()?;
            Ok(PanelView {
                view,
                markup: view_markup(&png, view),
                coloured: coloured_pixels(&image, coloured),
            })
        })
        .collect()
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
fn view_markup(png: &[u8], view: View) -> String {
    let [west, east, north, south] = view.edge_marks();
    let mut marks =
        format!("<span class=\"mark w\">{west}</span><span class=\"mark e\">{east}</span>");
    if north != "S" {
        marks.push_str(&format!(
            "<span class=\"mark n\">{north}</span><span class=\"mark s\">{south}</span>"
        ));
    }
    format!(
        "<span class=\"view\"><img src=\"{}\" width=\"{}\" height=\"{}\" alt=\"{}\"/>{marks}</span>",
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
