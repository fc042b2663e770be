//! Pictures of the cortex: shaded, colour-coded orthographic views of a
//! triangle mesh with per-vertex values, optional region outlines, and
//! panels of several views.
//!
//! Shading is Lambert's cosine law with a head-light (the light comes from
//! the camera) plus an ambient term, evaluated in linear light with the
//! vertex normals interpolated across each triangle. Values are interpolated
//! across each triangle too (barycentric), then coloured, so colour
//! boundaries follow the data rather than the triangle edges. Region outlines
//! mark the pixels whose region differs from a neighbouring pixel's, a
//! pixel's region being the one its triangle's corners weigh most in
//! (barycentric weights summed per region; at a vertex, the vertex's own).
//! Pictures are drawn at `supersample`² samples per pixel and averaged in
//! linear light (premultiplied alpha). The design is described in
//! `docs/pictures.md`.
//!
//! ```
//! use patchwise::geometry::Mesh;
//! use patchwise::render::{render_view, ColourSpec, View, ViewOptions};
//!
//! let sphere = Mesh::icosphere(3, 0.07);
//! let values: Vec<f64> = sphere.vertices.iter().map(|p| p[2]).collect();
//! let mut options = ViewOptions::new(View::Front, 320, 240);
//! options.colour = ColourSpec::Signed { limit: None, threshold: 0.01 };
//! let picture = render_view(&sphere, &values, &options)?;
//! let png = picture.encode_png()?;
//! assert!(png.starts_with(b"\x89PNG"));
//! # Ok::<(), patchwise::render::RenderError>(())
//! ```

use rayon::prelude::*;

use super::camera::{Hemispheres, View};
use super::colormap::{bytes_to_linear_srgb, linear_to_srgb, ColourTable};
use super::error::RenderError;
use super::image::Image;
use super::raster::{check_mesh, fit_framing, Binned, Framing, BAND_ROWS, NO_TRIANGLE};
use crate::geometry::{dot, normalize, scale, Mesh, Vec3};

/// How per-vertex values become colours.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ColourSpec {
    /// No values: the bare cortex in [`CORTEX_GREY`].
    Plain,
    /// Signed values on the diverging map, limits `-limit ..= limit`
    /// (`None`: the largest |value|). Values with |value| < `threshold`
    /// show as bare cortex.
    Signed {
        /// Symmetric colour limit (> 0), or `None` for the largest |value|.
        limit: Option<f64>,
        /// Values with |value| below this (≥ 0, same unit as the values) are
        /// not coloured.
        threshold: f64,
    },
    /// Values ≥ 0 (shares, magnitudes) on the sequential map over
    /// `0 ..= max` (`None`: the largest value). Values below `threshold`
    /// show as bare cortex.
    Positive {
        /// Upper colour limit (> 0), or `None` for the largest value.
        max: Option<f64>,
        /// Values below this (≥ 0) are not coloured.
        threshold: f64,
    },
}

/// Lambert shading weights: colour × (ambient + diffuse · cos θ).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Shading {
    /// Light that reaches every surface (0..1).
    pub ambient: f64,
    /// Head-light weight (0..1); cos θ is between the surface normal and the
    /// direction to the camera.
    pub diffuse: f64,
}

impl Default for Shading {
    fn default() -> Self {
        Shading {
            ambient: 0.3,
            diffuse: 0.7,
        }
    }
}

/// The bare cortex colour (8-bit sRGB): a light warm grey, darker than the
/// diverging map's neutral centre so that uncoloured cortex and near-zero
/// coloured values stay apart.
pub const CORTEX_GREY: [u8; 3] = [196, 193, 188];

/// Region outline colour (8-bit sRGB) and its opacity.
pub const OUTLINE: [u8; 4] = [38, 36, 44, 200];

/// Colour (8-bit sRGB) and opacity of the ring around painted areas
/// ([`ViewOptions::outline_painted`]): darker and more opaque than the
/// region outlines, so the two read apart.
pub const PAINT_OUTLINE: [u8; 4] = [12, 12, 16, 235];

/// How a picture is scaled and placed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Scale {
    /// Fit what the view draws into the image with this margin (a fraction
    /// of each side, 0 to 0.45).
    Fit {
        /// Free fraction on each side.
        margin: f64,
    },
    /// A fixed number of pixels per metre, centred on what the view draws.
    PixelsPerMetre(f64),
}

/// Everything about one picture except the mesh and the values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ViewOptions<'a> {
    /// Which side to show.
    pub view: View,
    /// Width in pixels.
    pub width: u32,
    /// Height in pixels.
    pub height: u32,
    /// How values become colours.
    pub colour: ColourSpec,
    /// Region per vertex (any integers, -1 for none) to outline, if any.
    pub regions: Option<&'a [i32]>,
    /// Hemisphere per vertex (0 left, 1 right), as the template gives; when
    /// absent a triangle is left when its centroid has x < 0.
    pub hemisphere: Option<&'a [u8]>,
    /// Shading weights.
    pub shading: Shading,
    /// Samples per pixel along each axis (1 to 4); 2 gives 2×2 anti-aliasing.
    pub supersample: u32,
    /// Background colour (RGBA); transparent by default.
    pub background: [u8; 4],
    /// Scale and placement.
    pub scale: Scale,
    /// Values that are constant per region (a share painted on its region):
    /// each sample takes the value of the region that weighs most at it (the
    /// rule that draws the outlines) instead of the value interpolated
    /// across the triangle, so no blend of two regions' colours (a halo)
    /// appears along a border. Needs `regions`; ignored without.
    pub values_by_region: bool,
    /// Draw a thin dark ring ([`PAINT_OUTLINE`]) along the edge of the
    /// painted areas (values at or above the threshold), so that a small
    /// active patch stays visible at any picture size.
    pub outline_painted: bool,
}

impl ViewOptions<'_> {
    /// Defaults: bare cortex, no regions, hemispheres by x sign, default
    /// shading, 2×2 anti-aliasing, transparent background, fitted with a 3 %
    /// margin.
    pub fn new(view: View, width: u32, height: u32) -> ViewOptions<'static> {
        ViewOptions {
            view,
            width,
            height,
            colour: ColourSpec::Plain,
            regions: None,
            hemisphere: None,
            shading: Shading::default(),
            supersample: 2,
            background: [255, 255, 255, 0],
            scale: Scale::Fit { margin: 0.03 },
            values_by_region: false,
            outline_painted: false,
        }
    }
}

/// The checked, view-independent part of a picture: normals, colour limits,
/// hemisphere per triangle.
struct Scene<'a> {
    mesh: &'a Mesh,
    values: &'a [f64],
    normals: Vec<Vec3>,
    left_triangle: Vec<bool>,
    /// Outward face normals (from the winding, flipped when the surface is
    /// oriented inward) when the mesh is closed and consistently oriented,
    /// so that faces turned away from the camera can be skipped; `None`
    /// draws every face.
    outward: Option<Vec<Vec3>>,
    /// The colour map tabulated in linear light.
    table: Option<Vec<[f64; 3]>>,
    /// Colour-map range: value at the table's start and end.
    range: [f64; 2],
    threshold: f64,
    signed: bool,
}

/// Whether every edge is shared by exactly two triangles that run along it in
/// opposite directions: a closed, consistently oriented surface (possibly
/// several, like the template's two hemispheres).
fn closed_and_oriented(triangles: &[[u32; 3]]) -> bool {
    let mut directed: Vec<u64> = triangles
        .iter()
        .flat_map(|&[a, b, c]| [(a, b), (b, c), (c, a)])
        .map(|(a, b)| (a as u64) << 32 | b as u64)
        .collect();
    directed.par_sort_unstable();
    if directed.windows(2).any(|w| w[0] == w[1]) {
        return false;
    }
    directed.iter().all(|&e| {
        let reverse = (e & 0xffff_ffff) << 32 | e >> 32;
        directed.binary_search(&reverse).is_ok()
    })
}

/// A colour table's entries in linear light, so that pixel loops need no
/// transfer-curve powers.
fn linear_table(table: &ColourTable) -> Vec<[f64; 3]> {
    let n = table.len();
    (0..n)
        .map(|i| bytes_to_linear_srgb(table.at(i as f64 / (n - 1) as f64)))
        .collect()
}

/// Checks a finite option value.
fn check_option(
    field: &'static str,
    value: f64,
    ok: bool,
    expected: &'static str,
) -> Result<(), RenderError> {
    if ok && value.is_finite() {
        Ok(())
    } else {
        Err(RenderError::BadColourOption {
            field,
            value,
            expected,
        })
    }
}

impl<'a> Scene<'a> {
    fn new(
        mesh: &'a Mesh,
        values: &'a [f64],
        options: &ViewOptions<'_>,
    ) -> Result<Scene<'a>, RenderError> {
        check_mesh(&mesh.vertices, &mesh.triangles)?;
        let n = mesh.n_vertices();
        let needs_values = !matches!(options.colour, ColourSpec::Plain);
        if (needs_values || !values.is_empty()) && values.len() != n {
            return Err(RenderError::LengthMismatch {
                field: "values",
                expected: n,
                got: values.len(),
            });
        }
        if let Some((vertex, &value)) = values.iter().enumerate().find(|(_, v)| !v.is_finite()) {
            return Err(RenderError::NonFiniteValue { vertex, value });
        }
        for (field, len) in [
            ("regions", options.regions.map(<[i32]>::len)),
            ("hemisphere", options.hemisphere.map(<[u8]>::len)),
        ] {
            if let Some(got) = len {
                if got != n {
                    return Err(RenderError::LengthMismatch {
                        field,
                        expected: n,
                        got,
                    });
                }
            }
        }
        let s = options.supersample;
        check_option(
            "supersample",
            s as f64,
            (1..=4).contains(&s),
            "an integer from 1 to 4",
        )?;
        check_option(
            "shading.ambient",
            options.shading.ambient,
            (0.0..=1.0).contains(&options.shading.ambient),
            "a number in [0, 1]",
        )?;
        check_option(
            "shading.diffuse",
            options.shading.diffuse,
            (0.0..=1.0).contains(&options.shading.diffuse),
            "a number in [0, 1]",
        )?;
        match options.scale {
            Scale::Fit { margin } => check_option(
                "scale.margin",
                margin,
                (0.0..=0.45).contains(&margin),
                "a fraction in [0, 0.45]",
            )?,
            Scale::PixelsPerMetre(p) => {
                check_option("scale.pixels_per_metre", p, p > 0.0, "a finite number > 0")?
            }
        }
        let largest_abs = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let largest = values.iter().fold(0.0f64, |m, &v| m.max(v));
        // Signed data: symmetric limits and the diverging map; shares: [0, max]
        // and the sequential map. A limit left out is the data's own.
        let (limit, threshold, signed) = match options.colour {
            ColourSpec::Plain => (None, f64::INFINITY, false),
            ColourSpec::Signed { limit, threshold } => {
                (Some(("colour.limit", limit, largest_abs)), threshold, true)
            }
            ColourSpec::Positive { max, threshold } => {
                (Some(("colour.max", max, largest)), threshold, false)
            }
        };
        let (table, range) = match limit {
            None => (None, [0.0, 1.0]),
            Some((field, given, own)) => {
                if let Some(l) = given {
                    check_option(field, l, l > 0.0, "a finite number > 0")?;
                }
                check_option(
                    "colour.threshold",
                    threshold,
                    threshold >= 0.0,
                    "a finite number >= 0",
                )?;
                let l = given.unwrap_or(own);
                if signed {
                    (Some(linear_table(&ColourTable::diverging())), [-l, l])
                } else {
                    (Some(linear_table(&ColourTable::sequential())), [0.0, l])
                }
            }
        };
        let left_triangle = mesh
            .triangles
            .iter()
            .map(|tri| match options.hemisphere {
                // A triangle belongs to the hemisphere of most of its corners.
                Some(h) => tri.iter().filter(|&&v| h[v as usize] == 0).count() >= 2,
                None => {
                    tri.iter()
                        .map(|&v| mesh.vertices[v as usize][0])
                        .sum::<f64>()
                        < 0.0
                }
            })
            .collect();
        let outward = closed_and_oriented(&mesh.triangles).then(|| {
            let sign = if mesh.volume() < 0.0 { -1.0 } else { 1.0 };
            (0..mesh.n_triangles())
                .map(|t| scale(mesh.triangle_cross(t), sign))
                .collect()
        });
        Ok(Scene {
            mesh,
            values,
            normals: mesh.vertex_normals(),
            left_triangle,
            outward,
            table,
            range,
            threshold,
            signed,
        })
    }

    /// Which triangles a view rasterizes: those of its hemispheres that do
    /// not face away from the camera. On a closed surface a face turned away
    /// is always hidden by a nearer one, so skipping it changes nothing but
    /// the time.
    fn visible(&self, view: View) -> Vec<bool> {
        let mut include = self.include(view);
        if let Some(outward) = &self.outward {
            let forward = view.forward();
            for (inc, n) in include.iter_mut().zip(outward) {
                *inc = *inc && dot(*n, forward) < 0.0;
            }
        }
        include
    }

    /// Which triangles belong to a view's hemispheres.
    fn include(&self, view: View) -> Vec<bool> {
        match view.hemispheres() {
            Hemispheres::Both => vec![true; self.left_triangle.len()],
            Hemispheres::Left => self.left_triangle.clone(),
            Hemispheres::Right => self.left_triangle.iter().map(|&l| !l).collect(),
        }
    }

    /// The linear-light base colour of a value.
    fn base_colour(&self, value: f64, grey: [f64; 3]) -> [f64; 3] {
        let Some(table) = &self.table else {
            return grey;
        };
        let magnitude = if self.signed { value.abs() } else { value };
        if magnitude < self.threshold || self.range[1] <= 0.0 {
            return grey;
        }
        let f = (value - self.range[0]) / (self.range[1] - self.range[0]);
        let i = (f.clamp(0.0, 1.0) * (table.len() - 1) as f64).round() as usize;
        table[i.min(table.len() - 1)]
    }
}

/// The corner (0, 1 or 2) of a triangle whose region carries the largest
/// summed barycentric weight `b`: at a vertex the vertex itself; across a
/// triangle whose corners straddle two regions the boundary runs straight
/// from edge midpoint to edge midpoint, which draws smoother lines than the
/// nearest vertex's region would.
fn dominant_corner<B: Copy + Into<f64>>(r: [Option<i32>; 3], b: [B; 3]) -> usize {
    let weight = |k: usize| -> f64 { (0..3).filter(|&j| r[j] == r[k]).map(|j| b[j].into()).sum() };
    let (w0, w1, w2) = (weight(0), weight(1), weight(2));
    if w0 >= w1 && w0 >= w2 {
        0
    } else if w1 >= w2 {
        1
    } else {
        2
    }
}

/// Marks the covered samples whose region differs from a covered
/// 4-neighbour's. Both sides of a boundary are marked, so a
/// line is two samples (one output pixel at 2×2) wide.
fn outline_samples(
    triangle: &[u32],
    barycentric: &[[f32; 3]],
    triangles: &[[u32; 3]],
    regions: &[i32],
    w: usize,
    h: usize,
) -> Vec<bool> {
    // Region of each covered sample: the region whose corners carry the
    // largest summed barycentric weight (`dominant_corner`).
    let region: Vec<Option<i32>> = triangle
        .par_iter()
        .zip(barycentric)
        .map(|(&t, b)| {
            let tri = triangles.get(t as usize)?;
            let r = [0, 1, 2].map(|k| regions.get(tri[k] as usize).copied());
            r[dominant_corner(r, *b)]
        })
        .collect();
    (0..w * h)
        .into_par_iter()
        .map(|i| {
            let Some(r) = region[i] else {
                return false;
            };
            let (x, y) = (i % w, i / w);
            let differs = |j: usize| region[j].is_some_and(|q| q != r);
            (x > 0 && differs(i - 1))
                || (x + 1 < w && differs(i + 1))
                || (y > 0 && differs(i - w))
                || (y + 1 < h && differs(i + w))
        })
        .collect()
}

/// Marks the covered samples on the edge of the painted areas: a sample
/// whose interpolated value is painted (at or above the threshold, |value|
/// for signed maps) next to a covered 4-neighbour that is not, and that
/// neighbour too, so the ring is two samples (one output pixel at 2×2)
/// wide and straddles the edge.
fn painted_edge_samples(
    scene: &Scene<'_>,
    triangle: &[u32],
    barycentric: &[[f32; 3]],
    w: usize,
    h: usize,
) -> Vec<bool> {
    let triangles = &scene.mesh.triangles;
    let painted: Vec<Option<bool>> = triangle
        .par_iter()
        .zip(barycentric)
        .map(|(&t, b)| {
            let tri = triangles.get(t as usize)?;
            let v: f64 = (0..3)
                .map(|k| f64::from(b[k]) * scene.values[tri[k] as usize])
                .sum();
            let magnitude = if scene.signed { v.abs() } else { v };
            Some(magnitude >= scene.threshold)
        })
        .collect();
    (0..w * h)
        .into_par_iter()
        .map(|i| {
            let Some(p) = painted[i] else {
                return false;
            };
            let (x, y) = (i % w, i / w);
            let differs = |j: usize| painted[j].is_some_and(|q| q != p);
            (x > 0 && differs(i - 1))
                || (x + 1 < w && differs(i + 1))
                || (y > 0 && differs(i - w))
                || (y + 1 < h && differs(i + w))
        })
        .collect()
}

/// Linear light (0..1) to 8-bit sRGB through a table of 4096 + 1 entries
/// with linear interpolation, accurate to well under one 8-bit step.
struct Encoder {
    table: Vec<f32>,
}

impl Encoder {
    const N: usize = 4096;

    fn new() -> Encoder {
        Encoder {
            table: (0..=Self::N)
                .map(|i| (linear_to_srgb(i as f64 / Self::N as f64) * 255.0) as f32)
                .collect(),
        }
    }

    fn encode(&self, v: f64) -> u8 {
        let x = v.clamp(0.0, 1.0) * Self::N as f64;
        let i = (x as usize).min(Self::N - 1);
        let f = (x - i as f64) as f32;
        let s = self.table[i] + (self.table[i + 1] - self.table[i]) * f;
        s.round().clamp(0.0, 255.0) as u8
    }
}

/// Draws one view of a mesh with per-vertex values.
///
/// `values` has one entry per vertex (it may be empty with
/// [`ColourSpec::Plain`]). Errors: an empty or invalid mesh, wrong array
/// lengths, non-finite values, bad options, a zero or oversized image, or a
/// view whose hemisphere has no triangles.
pub fn render_view(
    mesh: &Mesh,
    values: &[f64],
    options: &ViewOptions<'_>,
) -> Result<Image, RenderError> {
    let scene = Scene::new(mesh, values, options)?;
    let framing = framing_for(&scene, options.view, options)?;
    draw(&scene, options.view, options, &framing)
}

/// Draws several views of one mesh at one common scale (the largest that
/// fits every view), so that sizes compare across the panel. Returns each
/// view with its picture, in the order asked.
pub fn render_views(
    mesh: &Mesh,
    values: &[f64],
    views: &[View],
    options: &ViewOptions<'_>,
) -> Result<Vec<(View, Image)>, RenderError> {
    Ok(render_views_framed(mesh, values, views, options)?
        .into_iter()
        .map(|(view, image, _)| (view, image))
        .collect())
}

/// [`render_views`] with each view's framing, so that points (markers,
/// labels) can be placed on the pictures with [`Framing::to_pixel`] of the
/// view's projection.
pub fn render_views_framed(
    mesh: &Mesh,
    values: &[f64],
    views: &[View],
    options: &ViewOptions<'_>,
) -> Result<Vec<(View, Image, Framing)>, RenderError> {
    let scene = Scene::new(mesh, values, options)?;
    let mut framings = Vec::with_capacity(views.len());
    for &view in views {
        framings.push(framing_for(&scene, view, options)?);
    }
    let common = framings
        .iter()
        .map(|f| f.pixels_per_metre)
        .fold(f64::INFINITY, f64::min);
    views
        .iter()
        .zip(framings)
        .map(|(&view, framing)| {
            let framing = Framing {
                pixels_per_metre: common,
                ..framing
            };
            Ok((view, draw(&scene, view, options, &framing)?, framing))
        })
        .collect()
}

/// The framing of one view (at the output resolution).
fn framing_for(
    scene: &Scene<'_>,
    view: View,
    options: &ViewOptions<'_>,
) -> Result<Framing, RenderError> {
    let include = scene.include(view);
    let margin = match options.scale {
        Scale::Fit { margin } => margin,
        Scale::PixelsPerMetre(_) => 0.0,
    };
    let fitted = fit_framing(
        &scene.mesh.vertices,
        &scene.mesh.triangles,
        &include,
        view,
        options.width.max(1),
        options.height.max(1),
        margin,
    )
    .ok_or(RenderError::EmptyHemisphere {
        view: view.name(),
        hemisphere: match view.hemispheres() {
            Hemispheres::Left => "left",
            Hemispheres::Right => "right",
            Hemispheres::Both => "whole",
        },
    })?;
    Ok(match options.scale {
        Scale::Fit { .. } => fitted,
        Scale::PixelsPerMetre(p) => Framing {
            pixels_per_metre: p,
            ..fitted
        },
    })
}

/// Rasterizes at the supersampled size, shades every sample, outlines the
/// regions and averages down to the output size.
fn draw(
    scene: &Scene<'_>,
    view: View,
    options: &ViewOptions<'_>,
    framing: &Framing,
) -> Result<Image, RenderError> {
    let mut out = Image::new(options.width, options.height, options.background)?;
    let s = options.supersample;
    let (w, h) = (options.width * s, options.height * s);
    let fine = Framing {
        pixels_per_metre: framing.pixels_per_metre * s as f64,
        centre: framing.centre,
    };
    let include = scene.visible(view);
    let binned = Binned::new(
        &scene.mesh.vertices,
        &scene.mesh.triangles,
        &include,
        view,
        w,
        h,
        &fine,
    );
    let (wu, hu) = (w as usize, h as usize);
    let to_camera = {
        let f = view.forward();
        [-f[0], -f[1], -f[2]]
    };
    let grey = bytes_to_linear_srgb(CORTEX_GREY);
    let outline = bytes_to_linear_srgb([OUTLINE[0], OUTLINE[1], OUTLINE[2]]);
    let outline_alpha = OUTLINE[3] as f64 / 255.0;
    let paint_outline =
        bytes_to_linear_srgb([PAINT_OUTLINE[0], PAINT_OUTLINE[1], PAINT_OUTLINE[2]]);
    let paint_alpha = PAINT_OUTLINE[3] as f64 / 255.0;
    let triangles = &scene.mesh.triangles;
    // The linear-light colour of triangle t at barycentric point b.
    let by_region = options.regions.filter(|_| options.values_by_region);
    let shade = |t: u32, b: [f64; 3]| -> [f64; 3] {
        let tri = triangles[t as usize];
        let mut n = [0.0; 3];
        let mut value = 0.0;
        for k in 0..3 {
            let v = tri[k] as usize;
            for (c, nc) in n.iter_mut().zip(scene.normals[v]) {
                *c += b[k] * nc;
            }
            if !scene.values.is_empty() {
                value += b[k] * scene.values[v];
            }
        }
        if let (Some(regions), false) = (by_region, scene.values.is_empty()) {
            let r = [0, 1, 2].map(|k| regions.get(tri[k] as usize).copied());
            value = scene.values[tri[dominant_corner(r, b)] as usize];
        }
        // Two-sided: a back face seen through an open mesh is lit too.
        let cos = dot(normalize(n), to_camera).abs().min(1.0);
        let light = options.shading.ambient + options.shading.diffuse * cos;
        scene.base_colour(value, grey).map(|c| c * light)
    };
    // Shade the samples of each output pixel and average them in linear
    // light with premultiplied alpha.
    let encoder = Encoder::new();
    let bg = bytes_to_linear_srgb([
        options.background[0],
        options.background[1],
        options.background[2],
    ]);
    let bg_alpha = options.background[3] as f64 / 255.0;
    let su = s as usize;
    let inv = 1.0 / (su * su) as f64;
    let width = options.width as usize;
    // Blocks of output rows are drawn independently: each rasterizes its
    // own samples (plus one sample row above and below, which the outlines
    // need) into buffers small enough to stay in cache.
    let block_rows = (BAND_ROWS / su).max(1);
    out.rgba
        .par_chunks_mut(block_rows * width * 4)
        .enumerate()
        .for_each(|(block, block_out)| {
            let first = block * block_rows * su;
            let start = first.saturating_sub(1);
            let end = (first + block_rows * su + 1).min(hu);
            let (tri_buf, _, bary_buf) = binned.fill_rows(start, end - start);
            let edge = options
                .regions
                .map(|r| outline_samples(&tri_buf, &bary_buf, triangles, r, wu, end - start));
            let painted_edge = (options.outline_painted && !scene.values.is_empty())
                .then(|| painted_edge_samples(scene, &tri_buf, &bary_buf, wu, end - start));
            for (y_in_block, row) in block_out.chunks_mut(width * 4).enumerate() {
                let y = block * block_rows + y_in_block;
                // Reused for every pixel of the row; only the first `n_groups`
                // entries are meaningful.
                let mut groups = [(NO_TRIANGLE, 0u32, [0.0f64; 3], 0u32, 0u32); 16];
                for x in 0..width {
                    // Samples are grouped by triangle and each triangle is
                    // shaded once, at the mean of its samples' barycentric
                    // coordinates, weighted by its share of the samples (shading
                    // is smooth inside a triangle, so this differs from shading
                    // every sample by far less than one 8-bit step, at a quarter
                    // of the cost). Outlines blend per sample.
                    let mut n_groups = 0;
                    let mut uncovered = 0u32;
                    for dy in 0..su {
                        for dx in 0..su {
                            let i = (y * su + dy - start) * wu + x * su + dx;
                            let t = tri_buf[i];
                            if t == NO_TRIANGLE {
                                uncovered += 1;
                                continue;
                            }
                            let g = match groups[..n_groups].iter().position(|g| g.0 == t) {
                                Some(g) => g,
                                None => {
                                    groups[n_groups] = (t, 0, [0.0; 3], 0, 0);
                                    n_groups += 1;
                                    n_groups - 1
                                }
                            };
                            let group = &mut groups[g];
                            group.1 += 1;
                            for (acc, b) in group.2.iter_mut().zip(bary_buf[i]) {
                                *acc += b as f64;
                            }
                            if edge.as_ref().is_some_and(|e| e[i]) {
                                group.3 += 1;
                            }
                            if painted_edge.as_ref().is_some_and(|e| e[i]) {
                                group.4 += 1;
                            }
                        }
                    }
                    let covered = su * su - uncovered as usize;
                    let mut sum = [0.0; 3];
                    for &(t, count, bary, edges, rings) in &groups[..n_groups] {
                        let m = count as f64;
                        let mut c = shade(t, bary.map(|b| b / m));
                        let e = outline_alpha * edges as f64 / m;
                        let p = paint_alpha * rings as f64 / m;
                        for k in 0..3 {
                            c[k] = c[k] * (1.0 - e) + outline[k] * e;
                            c[k] = c[k] * (1.0 - p) + paint_outline[k] * p;
                            sum[k] += c[k] * m;
                        }
                    }
                    let alpha = covered as f64 + uncovered as f64 * bg_alpha;
                    for k in 0..3 {
                        sum[k] += bg[k] * bg_alpha * uncovered as f64;
                    }
                    if covered == 0 {
                        continue;
                    }
                    let px = &mut row[x * 4..x * 4 + 4];
                    if alpha > 0.0 {
                        for k in 0..3 {
                            px[k] = encoder.encode(sum[k] / alpha);
                        }
                    }
                    px[3] = (alpha * inv * 255.0).round().clamp(0.0, 255.0) as u8;
                }
            }
        });
    Ok(out)
}
