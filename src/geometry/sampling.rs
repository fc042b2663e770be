//! Farthest-point seed sampling on a mesh with fast-marching geodesic distances.

use std::collections::BinaryHeap;

use super::error::MeshError;
use super::geodesic::{Entry, GeodesicScratch, GeodesicSolver, Method};
use super::mesh::Mesh;

/// Seeds spread over `mesh` so that every vertex lies within about
/// `spacing_m` (geodesic, fast marching) of a seed; see
/// [`GeodesicSolver::farthest_point_seeds`].
///
/// # Errors
/// The errors of [`GeodesicSolver::new`], or [`MeshError::InvalidSpacing`].
pub fn farthest_point_seeds(mesh: &Mesh, spacing_m: f64) -> Result<Vec<usize>, MeshError> {
    GeodesicSolver::new(mesh)?.farthest_point_seeds(spacing_m)
}

impl GeodesicSolver {
    /// Farthest-point sampling: the first seed is vertex 0 (or the lowest
    /// vertex that some triangle uses); each next seed is the vertex farthest
    /// from all seeds so far (ties to the lower index), until every vertex is
    /// within `spacing_m` of a seed. Vertices of a component no seed has
    /// reached are infinitely far, so each connected component starts at its
    /// lowest-numbered vertex. Vertices no triangle uses are never seeds.
    ///
    /// Each seed's marching stops at vertices already closer to an earlier
    /// seed, so the work is about that seed's Voronoi cell. The result is
    /// deterministic (no threads involved).
    ///
    /// # Errors
    /// [`MeshError::InvalidSpacing`] unless `spacing_m` is finite and positive.
    pub fn farthest_point_seeds(&self, spacing_m: f64) -> Result<Vec<usize>, MeshError> {
        if !(spacing_m.is_finite() && spacing_m > 0.0) {
            return Err(MeshError::InvalidSpacing { spacing_m });
        }
        let n = self.n_vertices();
        let mut best = vec![f64::INFINITY; n];
        // The marching's min-heap on negated distances pops the farthest
        // vertex first, ties to the lower index.
        let mut heap = BinaryHeap::with_capacity(n);
        for (v, d) in best.iter_mut().enumerate() {
            if self.is_isolated(v) {
                *d = 0.0;
            } else {
                heap.push(Entry {
                    time: f64::NEG_INFINITY,
                    vertex: v as u32,
                });
            }
        }
        let mut scratch = GeodesicScratch::new();
        let mut seeds = Vec::new();
        while let Some(Entry { time, vertex }) = heap.pop() {
            let distance = -time;
            if distance != best[vertex as usize] {
                continue;
            }
            if distance <= spacing_m {
                break;
            }
            seeds.push(vertex as usize);
            self.march(
                &mut scratch,
                vertex,
                Method::FastMarching,
                f64::INFINITY,
                |w, t| {
                    if t < best[w as usize] {
                        best[w as usize] = t;
                        heap.push(Entry {
                            time: -t,
                            vertex: w,
                        });
                        true
                    } else {
                        false
                    }
                },
                |_, _| {},
            );
        }
        Ok(seeds)
    }
}
