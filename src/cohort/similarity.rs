//! Similarity of source maps: a geodesic Gaussian smoothing kernel on the
//! template mesh, and the cosine of smoothed maps.

use rayon::prelude::*;

use crate::geometry::{GeodesicScratch, GeodesicSolver};

use super::error::CohortError;

/// A sparse smoothing operator on a mesh: row v holds the weights
/// w_vu ∝ exp(−d(v, u)² / 2σ²) over the vertices u within the cut-off
/// geodesic distance d(v, u) ≤ c σ, normalised to add up to 1 (a local
/// weighted mean; common practice, no source). Computed once per mesh.
#[derive(Debug, Clone, PartialEq)]
pub struct SmoothingKernel {
    /// Gaussian width σ (m).
    pub sigma_m: f64,
    /// Cut-off radius c σ (m).
    pub cutoff_m: f64,
    /// Row start offsets into `columns` and `weights` (n_vertices + 1).
    pub row_start: Vec<usize>,
    /// Vertex index of each weight.
    pub columns: Vec<u32>,
    /// Normalised weights.
    pub weights: Vec<f64>,
}

impl SmoothingKernel {
    /// Build the kernel of width `sigma_m` cut at `cutoff_sigmas` σ from the
    /// fast-marching geodesic distances of `solver` (parallel over vertices,
    /// each row computed alone, so the bits do not depend on the thread
    /// count).
    pub fn new(
        solver: &GeodesicSolver,
        sigma_m: f64,
        cutoff_sigmas: f64,
    ) -> Result<SmoothingKernel, CohortError> {
        if !(sigma_m.is_finite() && sigma_m > 0.0) {
            return Err(CohortError::Parameter {
                name: "smoothing sigma",
                message: format!("must be a positive length, got {sigma_m} m"),
            });
        }
        if !(cutoff_sigmas.is_finite() && cutoff_sigmas > 0.0) {
            return Err(CohortError::Parameter {
                name: "smoothing cut-off",
                message: format!("must be a positive multiple of sigma, got {cutoff_sigmas}"),
            });
        }
        let cutoff_m = sigma_m * cutoff_sigmas;
        let rows: Vec<Vec<(u32, f64)>> = (0..solver.n_vertices())
            .into_par_iter()
            .map_init(GeodesicScratch::new, |scratch, v| {
                let mut row: Vec<(u32, f64)> = solver
                    .distances_within_using(scratch, v, cutoff_m)
                    .into_iter()
                    .map(|(u, d)| (u, (-0.5 * (d / sigma_m).powi(2)).exp()))
                    .collect();
                if row.is_empty() {
                    // An isolated vertex keeps its own value.
                    row.push((v as u32, 1.0));
                }
                row.sort_by_key(|&(u, _)| u);
                let total: f64 = row.iter().map(|&(_, w)| w).sum();
                row.iter().map(|&(u, w)| (u, w / total)).collect()
            })
            .collect();
        let mut row_start = Vec::with_capacity(rows.len() + 1);
        let mut columns = Vec::new();
        let mut weights = Vec::new();
        row_start.push(0);
        for row in rows {
            for (u, w) in row {
                columns.push(u);
                weights.push(w);
            }
            row_start.push(columns.len());
        }
        Ok(SmoothingKernel {
            sigma_m,
            cutoff_m,
            row_start,
            columns,
            weights,
        })
    }

    /// Number of vertices (rows).
    pub fn n_vertices(&self) -> usize {
        self.row_start.len().saturating_sub(1)
    }

    /// The smoothed map K x (x has one value per vertex).
    pub fn apply(&self, x: &[f64]) -> Vec<f64> {
        (0..self.n_vertices())
            .into_par_iter()
            .map(|v| {
                let range = self.row_start[v]..self.row_start[v + 1];
                self.columns[range.clone()]
                    .iter()
                    .zip(&self.weights[range])
                    .map(|(&u, &w)| w * x[u as usize])
                    .sum()
            })
            .collect()
    }
}

/// Cosine similarity ⟨a, b⟩ / (‖a‖ ‖b‖); NaN when either is zero.
pub fn cosine(a: &[f64], b: &[f64]) -> f64 {
    let ab: f64 = a.iter().zip(b).map(|(x, y)| x * y).sum();
    let aa: f64 = a.iter().map(|x| x * x).sum();
    let bb: f64 = b.iter().map(|x| x * x).sum();
    if aa > 0.0 && bb > 0.0 {
        ab / (aa.sqrt() * bb.sqrt())
    } else {
        f64::NAN
    }
}
