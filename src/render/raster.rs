//! Orthographic triangle rasterization with a depth buffer: which triangle
//! covers each pixel, how deep, and where inside it.
//!
//! Pixels are sampled at their centres. A sample belongs to a triangle when
//! all three edge functions have the sign of the triangle's area (both
//! windings are accepted, so open meshes and back faces draw too); the
//! nearest such triangle wins. The image is cut into bands of rows that are
//! filled in parallel, each band visiting its triangles in mesh order, so the
//! result does not depend on the thread count.

use rayon::prelude::*;

use super::camera::View;
use super::error::RenderError;
use crate::geometry::Vec3;

/// Marks a pixel no triangle covers.
pub const NO_TRIANGLE: u32 = u32::MAX;

/// Rows per band of parallel work.
const BAND_ROWS: usize = 8;

/// How screen coordinates (metres) map to pixels.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Framing {
    /// Pixels per metre.
    pub pixels_per_metre: f64,
    /// The screen point (right, up; metres) drawn at the image centre.
    pub centre: [f64; 2],
}

impl Framing {
    /// Pixel coordinates (x right, y down; continuous, pixel centres at
    /// half-integers) of screen point (right, up).
    pub fn to_pixel(&self, width: u32, height: u32, right: f64, up: f64) -> [f64; 2] {
        [
            0.5 * width as f64 + (right - self.centre[0]) * self.pixels_per_metre,
            0.5 * height as f64 - (up - self.centre[1]) * self.pixels_per_metre,
        ]
    }
}

/// What covers each pixel: the nearest triangle, its depth and the
/// barycentric coordinates of the pixel centre in it. Row-major from the
/// top-left.
#[derive(Debug, Clone, PartialEq)]
pub struct Fragments {
    /// Width in pixels.
    pub width: u32,
    /// Height in pixels.
    pub height: u32,
    /// Triangle index per pixel, or [`NO_TRIANGLE`].
    pub triangle: Vec<u32>,
    /// Depth along the view direction (metres; smaller is nearer), infinite
    /// where no triangle covers the pixel.
    pub depth: Vec<f64>,
    /// Barycentric coordinates of the pixel centre in its triangle (weights
    /// of the triangle's first, second and third vertex).
    pub barycentric: Vec<[f32; 3]>,
}

/// Checks that every triangle names existing vertices and every vertex is
/// finite.
pub fn check_mesh(vertices: &[Vec3], triangles: &[[u32; 3]]) -> Result<(), RenderError> {
    if vertices.is_empty() || triangles.is_empty() {
        return Err(RenderError::EmptyMesh {
            n_vertices: vertices.len(),
            n_triangles: triangles.len(),
        });
    }
    if let Some(vertex) = vertices
        .iter()
        .position(|p| !p.iter().all(|c| c.is_finite()))
    {
        return Err(RenderError::BadVertex { vertex });
    }
    for (triangle, tri) in triangles.iter().enumerate() {
        if let Some(&vertex) = tri.iter().find(|&&v| v as usize >= vertices.len()) {
            return Err(RenderError::BadTriangle {
                triangle,
                vertex,
                n_vertices: vertices.len(),
            });
        }
    }
    Ok(())
}

/// The framing that fits the drawn triangles (those with `include[t]`) into
/// a `width` x `height` image, leaving `margin` (a fraction of each side) free
/// on every side. `None` when nothing is drawn or it has no extent.
pub fn fit_framing(
    vertices: &[Vec3],
    triangles: &[[u32; 3]],
    include: &[bool],
    view: View,
    width: u32,
    height: u32,
    margin: f64,
) -> Option<Framing> {
    let (right, up) = (view.right(), view.up());
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for (tri, _) in triangles.iter().zip(include).filter(|(_, &inc)| inc) {
        for &v in tri {
            let p = vertices.get(v as usize)?;
            let s = [
                crate::geometry::dot(*p, right),
                crate::geometry::dot(*p, up),
            ];
            for k in 0..2 {
                lo[k] = lo[k].min(s[k]);
                hi[k] = hi[k].max(s[k]);
            }
        }
    }
    let extent = [hi[0] - lo[0], hi[1] - lo[1]];
    if !(extent[0] > 0.0 || extent[1] > 0.0) {
        return None;
    }
    let free = (1.0 - 2.0 * margin.clamp(0.0, 0.45)).max(0.1);
    let sx = width as f64 * free / extent[0];
    let sy = height as f64 * free / extent[1];
    Some(Framing {
        pixels_per_metre: sx.min(sy),
        centre: [0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1])],
    })
}

/// Rasterizes the triangles with `include[t]` (all when `include` is empty)
/// seen from `view`, framed by `framing`.
///
/// The mesh must have passed [`check_mesh`]; triangles naming missing
/// vertices are skipped rather than drawn.
pub fn rasterize(
    vertices: &[Vec3],
    triangles: &[[u32; 3]],
    include: &[bool],
    view: View,
    width: u32,
    height: u32,
    framing: &Framing,
) -> Fragments {
    let (w, h) = (width as usize, height as usize);
    let (right, up, forward) = (view.right(), view.up(), view.forward());
    // Pixel coordinates and depth of every vertex.
    let projected: Vec<[f64; 3]> = vertices
        .par_iter()
        .map(|&p| {
            let [x, y] = framing.to_pixel(
                width,
                height,
                crate::geometry::dot(p, right),
                crate::geometry::dot(p, up),
            );
            [x, y, crate::geometry::dot(p, forward)]
        })
        .collect();
    // Bin the triangles into bands of rows, in mesh order.
    let n_bands = h.div_ceil(BAND_ROWS);
    let mut bands: Vec<Vec<u32>> = vec![Vec::new(); n_bands];
    for (t, tri) in triangles.iter().enumerate() {
        if !include.is_empty() && !include.get(t).copied().unwrap_or(false) {
            continue;
        }
        let Some(c) = corners(&projected, tri) else {
            continue;
        };
        let y_min = c[0][1].min(c[1][1]).min(c[2][1]);
        let y_max = c[0][1].max(c[1][1]).max(c[2][1]);
        if y_max < 0.0 || y_min >= h as f64 || !y_min.is_finite() || !y_max.is_finite() {
            continue;
        }
        // Rows whose centre may lie inside: centre y + 0.5 in [y_min, y_max].
        let first = ((y_min - 0.5).ceil().max(0.0)) as usize;
        let last = ((y_max - 0.5).floor().min(h as f64 - 1.0)) as usize;
        if (y_max - 0.5).floor() < 0.0 || first > last {
            continue;
        }
        for band in bands
            .iter_mut()
            .take(last / BAND_ROWS + 1)
            .skip(first / BAND_ROWS)
        {
            band.push(t as u32);
        }
    }
    let mut triangle = vec![NO_TRIANGLE; w * h];
    let mut depth = vec![f64::INFINITY; w * h];
    let mut barycentric = vec![[0.0f32; 3]; w * h];
    triangle
        .par_chunks_mut(BAND_ROWS * w)
        .zip(depth.par_chunks_mut(BAND_ROWS * w))
        .zip(barycentric.par_chunks_mut(BAND_ROWS * w))
        .zip(bands.par_iter())
        .enumerate()
        .for_each(|(band, (((tri_out, depth_out), bary_out), list))| {
            let row0 = band * BAND_ROWS;
            let rows = tri_out.len() / w.max(1);
            for &t in list {
                let Some(c) = corners(&projected, &triangles[t as usize]) else {
                    continue;
                };
                fill_triangle(
                    &c,
                    t,
                    w,
                    row0,
                    rows,
                    (&mut *tri_out, &mut *depth_out, &mut *bary_out),
                );
            }
        });
    Fragments {
        width,
        height,
        triangle,
        depth,
        barycentric,
    }
}

/// The projected corners of a triangle, if its vertices exist.
fn corners(projected: &[[f64; 3]], tri: &[u32; 3]) -> Option<[[f64; 3]; 3]> {
    Some([
        *projected.get(tri[0] as usize)?,
        *projected.get(tri[1] as usize)?,
        *projected.get(tri[2] as usize)?,
    ])
}

/// Twice the signed area of (a, b, p): positive when p lies to the left of
/// a→b in pixel coordinates.
#[inline]
fn edge(a: [f64; 3], b: [f64; 3], px: f64, py: f64) -> f64 {
    (b[0] - a[0]) * (py - a[1]) - (b[1] - a[1]) * (px - a[0])
}

/// Draws one triangle into a band of rows `row0 .. row0 + rows`, keeping the
/// nearer sample where one is already present.
fn fill_triangle(
    c: &[[f64; 3]; 3],
    t: u32,
    w: usize,
    row0: usize,
    rows: usize,
    out: (&mut [u32], &mut [f64], &mut [[f32; 3]]),
) {
    let (tri_out, depth_out, bary_out) = out;
    let area = edge(c[0], c[1], c[2][0], c[2][1]);
    if area == 0.0 || !area.is_finite() {
        return;
    }
    let inv = 1.0 / area;
    let x_min = c[0][0].min(c[1][0]).min(c[2][0]);
    let x_max = c[0][0].max(c[1][0]).max(c[2][0]);
    let y_min = c[0][1].min(c[1][1]).min(c[2][1]);
    let y_max = c[0][1].max(c[1][1]).max(c[2][1]);
    let x0 = (x_min - 0.5).ceil().max(0.0);
    let x1 = (x_max - 0.5).floor().min(w as f64 - 1.0);
    let y0 = (y_min - 0.5).ceil().max(row0 as f64);
    let y1 = (y_max - 0.5).floor().min((row0 + rows) as f64 - 1.0);
    if x0 > x1 || y0 > y1 {
        return;
    }
    let (x0, x1, y0, y1) = (x0 as usize, x1 as usize, y0 as usize, y1 as usize);
    for y in y0..=y1 {
        let py = y as f64 + 0.5;
        let row = (y - row0) * w;
        for x in x0..=x1 {
            let px = x as f64 + 0.5;
            // Normalised edge functions are the barycentric coordinates.
            let b0 = edge(c[1], c[2], px, py) * inv;
            let b1 = edge(c[2], c[0], px, py) * inv;
            let b2 = edge(c[0], c[1], px, py) * inv;
            if b0 < 0.0 || b1 < 0.0 || b2 < 0.0 {
                continue;
            }
            let z = b0 * c[0][2] + b1 * c[1][2] + b2 * c[2][2];
            let i = row + x;
            if z < depth_out[i] {
                depth_out[i] = z;
                tri_out[i] = t;
                bary_out[i] = [b0 as f32, b1 as f32, b2 as f32];
            }
        }
    }
}
