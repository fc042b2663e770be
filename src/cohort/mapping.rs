//! Carrying a subject's source map to the template through a per-vertex
//! correspondence: nearest neighbour between registered spherical surfaces,
//! or an explicit index list.
//!
//! A source map holds dipole moments (A·m per vertex), an amount rather than
//! a density, so carrying it sums the amounts of all subject vertices that
//! map to one template vertex: the total moment, and the moment inside any
//! template region, are conserved exactly. Template vertices that receive no
//! subject vertex get zero (where the template is finer than the subject the
//! carried map is sparse; the geodesic smoothing before the similarity
//! spreads it again). This is "area-preserving where it matters": the
//! amounts per region, which the comparison uses, are conserved; the
//! per-vertex density is not resampled.

use std::collections::HashMap;

use crate::geometry::{norm, Vec3};

use super::error::CohortError;

/// A map from subject vertices to template vertices.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct VertexMap {
    /// Template vertex of each subject vertex.
    pub target: Vec<u32>,
    /// Number of template vertices.
    pub n_template: usize,
}

impl VertexMap {
    /// A map from an index list (one template vertex per subject vertex),
    /// checking every index; `subject` names the map in errors.
    pub fn from_indices(
        subject: &str,
        indices: &[i64],
        n_template: usize,
    ) -> Result<VertexMap, CohortError> {
        let mut target = Vec::with_capacity(indices.len());
        for (vertex, &t) in indices.iter().enumerate() {
            if t < 0 || t as u64 >= n_template as u64 {
                return Err(CohortError::MapTarget {
                    subject: subject.to_string(),
                    vertex,
                    target: t,
                    n_template,
                });
            }
            target.push(t as u32);
        }
        Ok(VertexMap { target, n_template })
    }

    /// Carry `values` (n_subject × k, row-major) to the template
    /// (n_template × k) by summing over the subject vertices mapped to each
    /// template vertex, in subject vertex order.
    pub fn carry(&self, subject: &str, values: &[f64], k: usize) -> Result<Vec<f64>, CohortError> {
        if values.len() != self.target.len() * k {
            return Err(CohortError::Shape {
                subject: subject.to_string(),
                field: "source map (rows = subject vertices of the map)".to_string(),
                found: values.len(),
                expected: self.target.len() * k,
            });
        }
        let mut out = vec![0.0; self.n_template * k];
        for (v, &t) in self.target.iter().enumerate() {
            let t = t as usize;
            for c in 0..k {
                out[t * k + c] += values[v * k + c];
            }
        }
        Ok(out)
    }
}

/// Unit direction of a point on a registered sphere (spheres are centred at
/// the origin, as registration tools write them; common practice, no
/// source). A point at the origin has no direction.
fn direction(p: Vec3) -> Option<Vec3> {
    let n = norm(p);
    (n > 0.0 && n.is_finite()).then(|| [p[0] / n, p[1] / n, p[2] / n])
}

/// Nearest template vertex for every subject vertex, by the angle between
/// their directions on the two registered spheres (the radii may differ).
///
/// Template directions are binned in a uniform grid of cubes over [−1, 1]³
/// whose side is about the mean vertex spacing; a query searches growing
/// shells of cells around its own and stops once no unvisited cell can hold
/// a closer point. Ties go to the lower template index, so the result is
/// deterministic. `subject` names the sphere in errors.
pub fn nearest_on_sphere(
    subject: &str,
    subject_sphere: &[Vec3],
    template_sphere: &[Vec3],
) -> Result<VertexMap, CohortError> {
    let n_t = template_sphere.len();
    if n_t == 0 {
        return Err(CohortError::Shape {
            subject: "template sphere".to_string(),
            field: "vertices".to_string(),
            found: 0,
            expected: 1,
        });
    }
    let mut dirs = Vec::with_capacity(n_t);
    for (v, &p) in template_sphere.iter().enumerate() {
        dirs.push(direction(p).ok_or(CohortError::NotFinite {
            subject: "template sphere".to_string(),
            field: "vertex direction (at the origin or not finite)".to_string(),
            index: v,
        })?);
    }
    // Mean spacing of n points on the unit sphere: √(4π / n).
    let h = (4.0 * std::f64::consts::PI / n_t as f64).sqrt().max(1e-6);
    let cells = (2.0 / h).ceil() as i64;
    let cell_of =
        |d: Vec3| -> [i64; 3] { d.map(|x| (((x + 1.0) / h).floor() as i64).clamp(0, cells - 1)) };
    let mut grid: HashMap<[i64; 3], Vec<u32>> = HashMap::new();
    for (v, &d) in dirs.iter().enumerate() {
        grid.entry(cell_of(d)).or_default().push(v as u32);
    }
    let mut target = Vec::with_capacity(subject_sphere.len());
    for (v, &p) in subject_sphere.iter().enumerate() {
        let q = direction(p).ok_or(CohortError::NotFinite {
            subject: subject.to_string(),
            field: "sphere vertex direction (at the origin or not finite)".to_string(),
            index: v,
        })?;
        let c = cell_of(q);
        let mut best = (f64::INFINITY, u32::MAX);
        let mut ring = 0i64;
        loop {
            for i in -ring..=ring {
                for j in -ring..=ring {
                    for l in -ring..=ring {
                        if i.abs().max(j.abs()).max(l.abs()) != ring {
                            continue;
                        }
                        let key = [c[0] + i, c[1] + j, c[2] + l];
                        if let Some(list) = grid.get(&key) {
                            for &t in list {
                                let d = dirs[t as usize];
                                let e = [d[0] - q[0], d[1] - q[1], d[2] - q[2]];
                                let dist2 = e[0] * e[0] + e[1] * e[1] + e[2] * e[2];
                                if dist2 < best.0 || (dist2 == best.0 && t < best.1) {
                                    best = (dist2, t);
                                }
                            }
                        }
                    }
                }
            }
            // Any point in ring + 1 or beyond lies at least ring·h away.
            let reach = ring as f64 * h;
            if best.1 != u32::MAX && best.0.sqrt() < reach || ring > cells {
                break;
            }
            ring += 1;
        }
        target.push(best.1);
    }
    Ok(VertexMap {
        target,
        n_template: n_t,
    })
}
