//! Topographic scalp maps: the spherical-spline field in an azimuthal equidistant
//! projection about the vertex, as a bare PNG raster or as an SVG figure with head
//! outline, electrodes, contour lines and a colour bar.
//!
//! Projection: a direction at polar angle θ from +z (the vertex, Cz on a standard
//! layout) and azimuth φ in the head's x–y plane goes to radius ρ = θ / 90° (in units of
//! the equator radius) at the same azimuth, +x to the right and +y (nose) up. The
//! equator (θ = 90°, through Fpz, T7, Oz, T8 on a standard layout) is the head outline.
//! The map disc ends at the polar angle of the lowest electrode, but at most 120°, so
//! points below the equator down to that electrode are still shown.

use super::axes::{colour_bar, title, INK, MUTED};
use super::colormap::{diverging, ColourTable};
use super::contour::{chain, contour_segments, Grid};
use super::figure_error::{check_finite, check_length, FigureError};
use super::image::Image;
use super::spline::{SphericalSpline, SplineParams, MIN_ELECTRODES};
use super::svg::{num, Attrs, Figure, Svg};
use super::ticks::nice_ticks;
use crate::geometry::Vec3;
use rayon::prelude::*;
use std::fmt::Write;

/// The largest polar angle the map disc reaches (degrees).
pub const MAX_EDGE_DEG: f64 = 120.0;
/// Smallest and largest `size_px` accepted.
const SIZE_RANGE: (u32, u32) = (64, 4096);
/// Contour lines are traced on every second pixel of the raster.
const CONTOUR_STEP: usize = 2;

/// Options of a topographic map.
#[derive(Debug, Clone, PartialEq)]
pub struct TopomapOptions<'a> {
    /// For [`topomap_svg`] the figure width (px; the height follows); for
    /// [`topomap_png`] the side of the square image.
    pub size_px: u32,
    /// Title above the map (SVG only).
    pub title: String,
    /// Unit written above the colour bar, e.g. "µV" or "a.u." (SVG only).
    pub unit: String,
    /// The values were divided by this scale: written under the colour bar
    /// as "×scale", so that a tick times it is the value in `unit` (SVG
    /// only; `None` writes nothing).
    pub scale: Option<f64>,
    /// Colour limit: the map is coloured over [−limit, +limit]. `None`: the largest
    /// magnitude of the interpolated field inside the disc, so nothing saturates.
    pub limits: Option<f64>,
    /// Electrode labels drawn beside the marks (SVG only), one per electrode.
    pub labels: Option<&'a [String]>,
    /// Draw contour lines at nice-number levels (SVG only).
    pub contours: bool,
    /// Raster pixels per CSS pixel of the SVG's map (1–4; 2 gives crisp maps on
    /// high-density screens at four times the cost). Ignored by [`topomap_png`].
    pub pixel_ratio: u32,
    /// Centre of the head sphere (m) to project the electrodes about. `None`: the
    /// least-squares sphere through the electrodes (needs them spread over the head).
    pub sphere_center: Option<Vec3>,
    /// Parameters of the spherical spline.
    pub spline: SplineParams,
}

impl Default for TopomapOptions<'_> {
    fn default() -> Self {
        Self {
            size_px: 400,
            title: String::new(),
            unit: "a.u.".to_string(),
            scale: None,
            limits: None,
            labels: None,
            contours: true,
            pixel_ratio: 1,
            sphere_center: None,
            spline: SplineParams::default(),
        }
    }
}

/// Polar angle (rad) and position in the map plane (units of the equator radius, y up)
/// of the unit direction `u`.
fn project(u: Vec3) -> (f64, [f64; 2]) {
    let theta = u[2].clamp(-1.0, 1.0).acos();
    let horizontal = u[0].hypot(u[1]);
    let rho = theta / std::f64::consts::FRAC_PI_2;
    if horizontal == 0.0 {
        return (theta, [0.0, 0.0]);
    }
    (theta, [rho * u[0] / horizontal, rho * u[1] / horizontal])
}

/// The unit direction at map-plane point (x, y) (units of the equator radius, y up).
fn unproject(x: f64, y: f64) -> Vec3 {
    let rho = x.hypot(y);
    let theta = rho * std::f64::consts::FRAC_PI_2;
    if rho == 0.0 {
        return [0.0, 0.0, 1.0];
    }
    let s = theta.sin() / rho;
    [s * x, s * y, theta.cos()]
}

/// The fitted field and the geometry of its map.
struct Layout {
    spline: SphericalSpline,
    /// Map-plane positions of the electrodes and whether each lies on the disc.
    marks: Vec<([f64; 2], bool)>,
    /// Disc radius in units of the equator radius (edge polar angle / 90°).
    edge: f64,
}

fn layout(
    positions: &[Vec3],
    values: &[f64],
    options: &TopomapOptions<'_>,
) -> Result<Layout, FigureError> {
    check_length("values", positions.len(), values.len())?;
    if positions.len() < MIN_ELECTRODES {
        return Err(FigureError::Empty {
            field: "positions",
            required: MIN_ELECTRODES,
        });
    }
    check_finite("values", values)?;
    for (index, p) in positions.iter().enumerate() {
        if let Some(&value) = p.iter().find(|c| !c.is_finite()) {
            return Err(FigureError::NotFinite {
                field: "positions",
                index,
                value,
            });
        }
    }
    if !(SIZE_RANGE.0..=SIZE_RANGE.1).contains(&options.size_px) {
        return Err(FigureError::BadOption {
            field: "size_px",
            value: options.size_px.to_string(),
            expected: "a size from 64 to 4096 px",
        });
    }
    if let Some(limit) = options.limits {
        if !(limit.is_finite() && limit > 0.0) {
            return Err(FigureError::BadOption {
                field: "limits",
                value: limit.to_string(),
                expected: "a finite colour limit > 0",
            });
        }
    }
    if let Some(labels) = options.labels {
        check_length("labels", positions.len(), labels.len())?;
    }
    if !(1..=4).contains(&options.pixel_ratio) {
        return Err(FigureError::BadOption {
            field: "pixel_ratio",
            value: options.pixel_ratio.to_string(),
            expected: "1, 2, 3 or 4 raster pixels per CSS pixel",
        });
    }
    let spline = match options.sphere_center {
        Some(center) => SphericalSpline::fit_about(positions, values, center, &options.spline)?,
        None => SphericalSpline::fit(positions, values, &options.spline)?,
    };
    let projected: Vec<(f64, [f64; 2])> = spline.directions().iter().map(|&u| project(u)).collect();
    let lowest = projected.iter().map(|p| p.0).fold(0.0, f64::max);
    let edge = lowest.min(MAX_EDGE_DEG.to_radians()) / std::f64::consts::FRAC_PI_2;
    if edge.is_nan() || edge <= 0.0 {
        return Err(FigureError::BadOption {
            field: "positions",
            value: "all electrodes at the vertex".to_string(),
            expected: "electrodes spread over the scalp",
        });
    }
    let marks = projected
        .iter()
        .map(|&(_, xy)| (xy, xy[0].hypot(xy[1]) <= edge * (1.0 + 1e-9)))
        .collect();
    Ok(Layout {
        spline,
        marks,
        edge,
    })
}

/// A raster of the field: colours, the values at pixel centres and the colour limit.
struct Raster {
    image: Image,
    values: Vec<f64>,
    inside: Vec<bool>,
    limit: f64,
}

/// The disc of radius `edge` (equator radii) filling a `side`-pixel square.
fn rasterise(layout: &Layout, side: u32, limit: Option<f64>) -> Result<Raster, FigureError> {
    let mut image = Image::new(side, side, [0, 0, 0, 0])?;
    let n = side as usize;
    let half = side as f64 / 2.0;
    // Pixels per equator radius.
    let scale = half / layout.edge;
    let mut values = vec![0.0; n * n];
    let mut coverage = vec![0.0f64; n * n];
    values
        .par_chunks_mut(n)
        .zip(coverage.par_chunks_mut(n))
        .enumerate()
        .for_each(|(row, (vals, cover))| {
            let y = (half - (row as f64 + 0.5)) / scale;
            for (col, (v, c)) in vals.iter_mut().zip(cover.iter_mut()).enumerate() {
                let x = (col as f64 + 0.5 - half) / scale;
                let r = x.hypot(y);
                // Anti-aliased edge: the fraction of a pixel inside the disc, from the
                // signed distance of its centre to the edge (in pixels).
                *c = ((layout.edge - r) * scale + 0.5).clamp(0.0, 1.0);
                if *c > 0.0 {
                    let shrink = if r > layout.edge {
                        layout.edge / r
                    } else {
                        1.0
                    };
                    *v = layout
                        .spline
                        .evaluate_fast(unproject(x * shrink, y * shrink));
                }
            }
        });
    let limit = match limit {
        Some(l) => l,
        None => {
            let peak = values
                .iter()
                .zip(&coverage)
                .filter(|(_, &c)| c > 0.0)
                .fold(0.0f64, |m, (v, _)| m.max(v.abs()));
            if peak > 0.0 {
                peak
            } else {
                1.0
            }
        }
    };
    let table = ColourTable::diverging();
    image
        .rgba
        .par_chunks_mut(4)
        .zip(values.par_iter().zip(coverage.par_iter()))
        .for_each(|(px, (&v, &c))| {
            if c > 0.0 {
                let [r, g, b] = table.at((v / limit + 1.0) / 2.0);
                px.copy_from_slice(&[r, g, b, (c * 255.0).round() as u8]);
            }
        });
    let inside = coverage.iter().map(|&c| c >= 1.0).collect();
    Ok(Raster {
        image,
        values,
        inside,
        limit,
    })
}

/// The bare map: a `size_px` square RGBA image with the interpolated field inside the
/// disc (diverging colours over ±limit) and transparent corners.
///
/// Errors: lengths differ, fewer than 4 electrodes, a non-finite value or position,
/// labels of the wrong number, a limit not finite and positive, a size outside
/// 64–4096 px, or a spline that cannot be fitted.
pub fn topomap_png(
    positions: &[Vec3],
    values: &[f64],
    options: &TopomapOptions<'_>,
) -> Result<Image, FigureError> {
    let layout = layout(positions, values, options)?;
    Ok(rasterise(&layout, options.size_px, options.limits)?.image)
}

/// The map as an SVG figure `size_px` wide: the raster inlined as a base64 PNG, the head
/// outline (a circle at the equator, or where the map ends when electrodes lie below
/// the equator, with the equator then dashed; nose toward +y, ears at ±x), electrode
/// dots (and labels when given), thin contour lines at nice-number levels when
/// `contours` is set (negative levels dashed), a colour bar with ticks, the unit and the
/// scale, and the title.
///
/// Errors as for [`topomap_png`].
pub fn topomap_svg(
    positions: &[Vec3],
    values: &[f64],
    options: &TopomapOptions<'_>,
) -> Result<Figure, FigureError> {
    let layout = layout(positions, values, options)?;
    let width = f64::from(options.size_px);
    let bar_space = 74.0;
    let top = if options.title.is_empty() { 12.0 } else { 40.0 };
    let margin = 12.0;
    let map_side = (width - bar_space - 2.0 * margin).max(32.0);
    // The head outline is drawn where the map ends when electrodes lie below the
    // equator (so the disc never spills outside the head), else at the equator;
    // its nose reaches 1.12 outline radii: keep it inside the square.
    let outline = layout.edge.max(1.0);
    let extent = 1.12 * outline;
    let disc_px = (map_side / 2.0 * layout.edge / extent).floor();
    let ratio = options.pixel_ratio;
    let side = (2.0 * disc_px) as u32 * ratio;
    let raster = rasterise(&layout, side.max(2), options.limits)?;
    let scale = disc_px / layout.edge; // pixels per equator radius
    let cx = margin + map_side / 2.0;
    let cy = top + map_side / 2.0;
    let height = (top + map_side + margin).ceil();
    let to_px = |p: [f64; 2]| (cx + p[0] * scale, cy - p[1] * scale);

    let mut svg = Svg::new(options.size_px, height as u32);
    svg.rect(0.0, 0.0, width, height, &Attrs::new().fill("#ffffff"));
    if !options.title.is_empty() {
        title(&mut svg, margin, 26.0, &options.title);
    }
    svg.image_png(
        cx - disc_px,
        cy - disc_px,
        2.0 * disc_px,
        2.0 * disc_px,
        &raster.image.encode_png()?,
        &Attrs::new().class("map"),
    );
    if options.contours {
        draw_contours(
            &mut svg,
            &raster,
            side as usize,
            ratio as usize,
            (cx - disc_px, cy - disc_px),
        );
    }
    if layout.edge > 1.0 + 1e-9 {
        // The equator (Fpz, T7, Oz, T8 on a standard layout), for orientation.
        svg.circle(
            cx,
            cy,
            scale,
            &Attrs::new()
                .stroke(MUTED, 0.6)
                .set("stroke-dasharray", "3 3")
                .class("equator"),
        );
    } else {
        svg.circle(cx, cy, disc_px, &Attrs::new().stroke("#c9ced4", 0.75));
    }
    draw_head(&mut svg, cx, cy, outline * scale);
    for (i, &(xy, on_disc)) in layout.marks.iter().enumerate() {
        if !on_disc {
            continue;
        }
        let (x, y) = to_px(xy);
        svg.circle(
            x,
            y,
            1.9,
            &Attrs::new()
                .fill(INK)
                .set("stroke", "#ffffff")
                .set("stroke-width", "0.6")
                .class("electrode"),
        );
        if let Some(labels) = options.labels {
            svg.text(
                x,
                y - 4.0,
                &labels[i],
                &Attrs::new()
                    .fill(INK)
                    .set("font-size", "8")
                    .set("text-anchor", "middle")
                    .class("label"),
            );
        }
    }
    let bar_height = (map_side * 0.6).max(60.0);
    colour_bar(
        &mut svg,
        margin + map_side + 16.0,
        cy - bar_height / 2.0,
        12.0,
        bar_height,
        -raster.limit,
        raster.limit,
        &|t| diverging(2.0 * t - 1.0),
        &options.unit,
    );
    if let Some(factor) = options.scale {
        svg.text(
            margin + map_side + 16.0,
            cy + bar_height / 2.0 + 16.0,
            &format!("\u{00d7}{factor:.2e}"),
            &Attrs::new().fill(INK).class("scale"),
        );
    }
    Ok(svg.finish())
}

/// Head outline: a circle of `scale` px, a nose toward +y and ears at ±x, in the ink
/// colour.
fn draw_head(svg: &mut Svg, cx: f64, cy: f64, scale: f64) {
    let stroke = Attrs::new()
        .stroke(INK, 1.5)
        .set("stroke-linejoin", "round")
        .set("stroke-linecap", "round");
    svg.circle(cx, cy, scale, &stroke.clone().class("head"));
    // Nose: two lines from ±10° on the outline to a tip 0.12 radii outside it.
    let (s, c) = 10f64.to_radians().sin_cos();
    let d = format!(
        "M{} {} L{} {} L{} {}",
        num(cx - s * scale),
        num(cy - c * scale),
        num(cx),
        num(cy - 1.12 * scale),
        num(cx + s * scale),
        num(cy - c * scale)
    );
    svg.path(&d, &stroke.clone().class("nose"));
    // Ears: a rounded flap on each side, from 18° above to 18° below the horizontal.
    for side in [-1.0, 1.0] {
        let (s, c) = 18f64.to_radians().sin_cos();
        let x0 = cx + side * c * scale;
        let d = format!(
            "M{} {} C{} {} {} {} {} {}",
            num(x0),
            num(cy - s * scale),
            num(cx + side * 1.1 * scale),
            num(cy - 0.36 * scale),
            num(cx + side * 1.1 * scale),
            num(cy + 0.36 * scale),
            num(x0),
            num(cy + s * scale)
        );
        svg.path(&d, &stroke.clone().class("ear"));
    }
}

/// Contour lines of the raster's values at the nice-number ticks of ±limit (excluding
/// the ends); negative levels dashed, zero a little stronger. The raster has `ratio`
/// pixels per CSS pixel and its top-left corner at `origin` (CSS px).
fn draw_contours(svg: &mut Svg, raster: &Raster, side: usize, ratio: usize, origin: (f64, f64)) {
    let step_px = CONTOUR_STEP * ratio;
    let Some(ticks) = nice_ticks(-raster.limit, raster.limit, 9) else {
        return;
    };
    let nodes = side.div_ceil(step_px);
    let mut values = Vec::with_capacity(nodes * nodes);
    let mut inside = Vec::with_capacity(nodes * nodes);
    for j in 0..nodes {
        for i in 0..nodes {
            let k = (j * step_px) * side + i * step_px;
            values.push(raster.values[k]);
            inside.push(raster.inside[k]);
        }
    }
    let grid = Grid {
        nx: nodes,
        ny: nodes,
        values: &values,
        inside: &inside,
    };
    let (step, ratio) = (step_px as f64, ratio as f64);
    // Node (i, j) is the centre of raster pixel (i·step, j·step).
    let px = |p: (f64, f64)| {
        (
            origin.0 + (p.0 * step + 0.5) / ratio,
            origin.1 + (p.1 * step + 0.5) / ratio,
        )
    };
    for &level in &ticks.values {
        if level.abs() >= raster.limit * (1.0 - 1e-9) {
            continue;
        }
        let segments = contour_segments(&grid, level);
        if segments.is_empty() {
            continue;
        }
        let mut d = String::with_capacity(segments.len() * 14);
        for line in chain(&segments) {
            for (k, p) in line.iter().enumerate() {
                let (x, y) = px(*p);
                let _ = write!(d, "{}{} {}", if k == 0 { "M" } else { "L" }, num(x), num(y));
            }
        }
        let mut attrs = Attrs::new()
            .stroke(
                if level == 0.0 { INK } else { MUTED },
                if level == 0.0 { 0.8 } else { 0.55 },
            )
            .set("stroke-opacity", if level == 0.0 { "0.7" } else { "0.55" })
            .set("stroke-linecap", "round")
            .class("contour");
        if level < 0.0 {
            attrs = attrs.set("stroke-dasharray", "2 2");
        }
        svg.path(&d, &attrs);
    }
}
