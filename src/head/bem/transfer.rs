//! Electrodes on the scalp surface and the transfer matrix: one solve per
//! montage, then the scalp potentials of any source are one product with
//! the inner surface's infinite-medium potentials.

use rayon::prelude::*;

use super::integrals::{nearest_on_mesh, winding_number};
use super::system::primary_xyz;
use super::{BemError, BemSystem};
use crate::geometry::{Mesh, Vec3};
use crate::solver::kernels::dot;

/// Electrodes farther than this from the scalp surface are refused (m).
pub const MAX_ELECTRODE_DISTANCE_M: f64 = 0.030;

/// An electrode placed on the scalp surface: the nearest point of the
/// outermost surface.
#[derive(Debug, Clone, PartialEq)]
pub struct ScalpPoint {
    /// The triangle of the scalp surface it lies on.
    pub triangle: usize,
    /// Its barycentric weights over that triangle's corners.
    pub weights: [f64; 3],
    /// The point (m).
    pub position: Vec3,
    /// Its distance from the electrode as given (m).
    pub distance: f64,
}

/// Projects `electrodes` (m) onto the outermost surface of `system` by the
/// nearest point. Errors: a non-finite coordinate; an electrode farther than
/// [`MAX_ELECTRODE_DISTANCE_M`] (named by `labels`).
pub fn project_to_scalp(
    system: &BemSystem,
    electrodes: &[Vec3],
    labels: &[String],
) -> Result<Vec<ScalpPoint>, BemError> {
    let geometry = system.geometry();
    let scalp = &geometry.surfaces()[geometry.surfaces().len() - 1];
    let scalp_name = &geometry.names()[geometry.names().len() - 1];
    if let Some(index) = electrodes
        .iter()
        .position(|e| !e.iter().all(|c| c.is_finite()))
    {
        return Err(BemError::NotFinite {
            what: "electrode",
            index,
        });
    }
    let points: Vec<ScalpPoint> = electrodes
        .par_iter()
        .map(|&e| {
            let (triangle, weights, distance) = nearest_on_mesh(scalp, e);
            let c = scalp.corners(triangle);
            let position = [0, 1, 2].map(|a| (0..3).map(|k| weights[k] * c[k][a]).sum::<f64>());
            ScalpPoint {
                triangle,
                weights,
                position,
                distance,
            }
        })
        .collect();
    if let Some((index, p)) = points
        .iter()
        .enumerate()
        .find(|(_, p)| p.distance > MAX_ELECTRODE_DISTANCE_M)
    {
        return Err(BemError::ElectrodeFar {
            label: labels
                .get(index)
                .cloned()
                .unwrap_or_else(|| format!("{index}")),
            surface: scalp_name.clone(),
            distance_mm: p.distance * 1e3,
            limit_mm: MAX_ELECTRODE_DISTANCE_M * 1e3,
        });
    }
    Ok(points)
}

/// The transfer matrix of one montage on one head: per electrode, the
/// weights that turn the inner surface's infinite-medium potentials of a
/// source into its potential at that electrode (against the model's own
/// zero; re-reference afterwards).
#[derive(Debug, Clone, PartialEq)]
pub struct BemTransfer {
    n_electrodes: usize,
    /// Row-major n_el × n₁.
    matrix: Vec<f64>,
    /// The innermost surface (m): its vertices carry the weights, and
    /// sources must lie inside it.
    inner: Mesh,
    inner_name: String,
}

impl BemSystem {
    /// The transfer matrix for electrodes placed at `points` on the scalp.
    /// Sequential; about 2 N² k flops for k electrodes.
    pub fn transfer(&self, points: &[ScalpPoint]) -> BemTransfer {
        let n_total = self.n_vertices();
        let k = points.len();
        let n_surf = self.geometry().surfaces().len();
        let scalp_offset = self.offset(n_surf - 1);
        let scalp = &self.geometry().surfaces()[n_surf - 1];
        let mut weights = vec![0.0; n_total * k];
        for (c, p) in points.iter().enumerate() {
            for (corner, &v) in scalp.triangles[p.triangle].iter().enumerate() {
                weights[c * n_total + scalp_offset + v as usize] += p.weights[corner];
            }
        }
        let matrix = self.transfer_of(weights, k);
        BemTransfer {
            n_electrodes: k,
            matrix,
            inner: self.geometry().surfaces()[0].clone(),
            inner_name: self.geometry().names()[0].clone(),
        }
    }
}

impl BemTransfer {
    /// Number of electrodes (rows).
    pub fn n_electrodes(&self) -> usize {
        self.n_electrodes
    }

    /// The innermost surface (m).
    pub fn inner_surface(&self) -> &Mesh {
        &self.inner
    }

    /// Checks that every source lies inside the innermost surface; see
    /// [`check_sources_inside`].
    pub fn check_sources(&self, sources: &[Vec3]) -> Result<(), BemError> {
        check_sources_inside(&self.inner, &self.inner_name, sources)
    }

    /// The potentials (V per A·m) at every electrode of unit dipoles along
    /// x, y, z at `source` (m, inside the inner surface), into `column`
    /// (one entry per electrode). Sums in a fixed order.
    pub fn gain_xyz(&self, source: Vec3, column: &mut [Vec3]) {
        let n_inner = self.inner.n_vertices();
        // x, y and z apart, so the products below run in vector lanes.
        let mut g = vec![0.0; 3 * n_inner];
        let (gx, rest) = g.split_at_mut(n_inner);
        let (gy, gz) = rest.split_at_mut(n_inner);
        for (i, &r) in self.inner.vertices.iter().enumerate() {
            let p = primary_xyz(r, source);
            gx[i] = p[0];
            gy[i] = p[1];
            gz[i] = p[2];
        }
        for (row, out) in self.matrix.chunks(n_inner).zip(column.iter_mut()) {
            *out = [dot(row, gx), dot(row, gy), dot(row, gz)];
        }
    }
}

/// Checks that every source (m) lies inside closed surface `inner` (named
/// `name` in the message): finite, with a winding number above one half.
/// Names the first that does not.
pub fn check_sources_inside(inner: &Mesh, name: &str, sources: &[Vec3]) -> Result<(), BemError> {
    if let Some(index) = sources
        .iter()
        .position(|s| !s.iter().all(|c| c.is_finite()))
    {
        return Err(BemError::NotFinite {
            what: "source",
            index,
        });
    }
    // Sources within the largest ball about the vertices' mean that the
    // surface leaves free are inside without the full winding number (most
    // sources of a cortex, common practice, no source).
    let n = inner.n_vertices().max(1) as f64;
    let mut centre = [0.0; 3];
    for v in &inner.vertices {
        for a in 0..3 {
            centre[a] += v[a] / n;
        }
    }
    let free_radius = if winding_number(inner, centre) > 0.5 {
        nearest_on_mesh(inner, centre).2
    } else {
        0.0
    };
    let inside: Vec<bool> = sources
        .par_iter()
        .map(|&s| {
            let d = [s[0] - centre[0], s[1] - centre[1], s[2] - centre[2]];
            (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt() < free_radius
                || winding_number(inner, s) > 0.5
        })
        .collect();
    match inside.iter().position(|ok| !ok) {
        None => Ok(()),
        Some(index) => {
            let p = sources[index];
            Err(BemError::SourceOutside {
                index,
                surface: name.to_string(),
                x_mm: p[0] * 1e3,
                y_mm: p[1] * 1e3,
                z_mm: p[2] * 1e3,
            })
        }
    }
}
