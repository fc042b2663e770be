//! The regularisation path: warm-started fits from λ_max down.

use super::error::SolverError;
use super::fit::Fit;
use super::groups::Groups;
use super::observer::{NoObserver, Observer};
use super::operator::DenseDictionary;
use super::outer::solve;
use super::params::{Info, ValidParams};
use super::problem::{lambda_max, Prepared, Targets};

/// Which λ values a path visits, as fractions of λ_max.
#[derive(Debug, Clone, PartialEq)]
pub enum PathSpec {
    /// These ratios λ/λ_max, in this order (each 0 < r ≤ 1).
    Ratios(Vec<f64>),
    /// `n_lambdas` ratios log-spaced from 1 down to `min_ratio` (0 < min_ratio < 1).
    LogSpaced {
        /// Number of λ values (≥ 1; with 1 only λ_max).
        n_lambdas: usize,
        /// Smallest ratio λ/λ_max.
        min_ratio: f64,
    },
}

impl PathSpec {
    /// The checked ratios.
    pub fn ratios(&self) -> Result<Vec<f64>, SolverError> {
        match self {
            PathSpec::Ratios(r) => {
                if r.is_empty() {
                    return Err(SolverError::EmptyDimension {
                        what: "path ratios",
                    });
                }
                for &v in r {
                    if !(v.is_finite() && v > 0.0 && v <= 1.0) {
                        return Err(SolverError::InvalidParameter {
                            name: "path ratio",
                            value: v,
                            expected: "0 < ratio <= 1",
                        });
                    }
                }
                Ok(r.clone())
            }
            &PathSpec::LogSpaced {
                n_lambdas,
                min_ratio,
            } => {
                if n_lambdas == 0 {
                    return Err(SolverError::EmptyDimension { what: "n_lambdas" });
                }
                if !(min_ratio.is_finite() && min_ratio > 0.0 && min_ratio < 1.0) {
                    return Err(SolverError::InvalidParameter {
                        name: "min_ratio",
                        value: min_ratio,
                        expected: "0 < min_ratio < 1",
                    });
                }
                if n_lambdas == 1 {
                    return Ok(vec![1.0]);
                }
                let step = min_ratio.ln() / (n_lambdas - 1) as f64;
                Ok((0..n_lambdas).map(|i| (step * i as f64).exp()).collect())
            }
        }
    }
}

/// Nonzero rows of a coefficient matrix.
#[derive(Debug, Clone, PartialEq)]
pub struct SparseRows {
    /// Number of atoms of the full matrix.
    pub n_atoms: usize,
    /// Columns per row.
    pub k: usize,
    /// Atoms with a nonzero row, increasing.
    pub atoms: Vec<usize>,
    /// Their rows, row-major `atoms.len() x k`.
    pub values: Vec<f64>,
}

impl SparseRows {
    /// Keeps the nonzero rows of a row-major `n_atoms x k` matrix.
    pub fn from_dense(dense: &[f64], k: usize) -> Self {
        let mut atoms = Vec::new();
        let mut values = Vec::new();
        for (j, row) in dense.chunks_exact(k).enumerate() {
            if row.iter().any(|&v| v != 0.0) {
                atoms.push(j);
                values.extend_from_slice(row);
            }
        }
        Self {
            n_atoms: dense.len() / k.max(1),
            k,
            atoms,
            values,
        }
    }

    /// The full row-major `n_atoms x k` matrix.
    pub fn to_dense(&self) -> Vec<f64> {
        let mut out = vec![0.0; self.n_atoms * self.k];
        for (i, &j) in self.atoms.iter().enumerate() {
            out[j * self.k..(j + 1) * self.k]
                .copy_from_slice(&self.values[i * self.k..(i + 1) * self.k]);
        }
        out
    }
}

/// One λ of a path.
#[derive(Debug, Clone, PartialEq)]
pub struct PathPoint {
    /// λ/λ_max.
    pub ratio: f64,
    /// The coefficients X at this λ.
    pub coefficients: SparseRows,
    /// Per column, 1 − ‖R_c‖²/‖Y_c‖².
    pub explained_variance: Vec<f64>,
    /// 1 − ‖R‖_F²/‖Y‖_F² over all columns.
    pub explained_variance_total: f64,
    /// What the fit at this λ did (λ, gap, active groups, ...).
    pub info: Info,
}

/// Fits the joint problem (see [`fit`](super::fit)) for each λ of `spec`,
/// each warm-started from the previous solution. `y` is row-major `n_ch x k`;
/// `params.lambda` is ignored (the path gives λ).
///
/// # Errors
/// As [`fit`](super::fit); a λ that does not converge stops the path.
pub fn path(
    dict: &DenseDictionary,
    groups: &Groups,
    y: &[f64],
    k: usize,
    spec: &PathSpec,
    params: &ValidParams,
    observer: &mut dyn Observer,
) -> Result<Vec<PathPoint>, SolverError> {
    let ratios = spec.ratios()?;
    let prep = Prepared::new(dict, groups)?;
    let targets = Targets::from_row_major(dict.n_channels(), k, y)?;
    let lmax = lambda_max(&prep, &targets);
    observer.observe_init(
        "path",
        &[("n_lambdas", ratios.len() as f64), ("lambda_max", lmax)],
    );
    let mut x = vec![0.0; dict.n_atoms() * k];
    let mut points = Vec::with_capacity(ratios.len());
    for (index, &ratio) in ratios.iter().enumerate() {
        let lambda = ratio * lmax;
        let mut info = solve(
            &prep,
            &targets,
            lambda,
            lmax,
            params,
            &mut x,
            &mut NoObserver,
        )?;
        if index == 0 {
            info.dictionary_passes += 1.0; // λ_max
        }
        let fit = Fit::from_coefficients(dict, &targets, x.clone());
        let total = if targets.half_sq > 0.0 {
            let r2: f64 = fit.residual.iter().map(|v| v * v).sum();
            1.0 - r2 / (2.0 * targets.half_sq)
        } else {
            0.0
        };
        observer.observe_iter(&[
            ("index", index as f64),
            ("lambda", lambda),
            ("ratio", ratio),
            ("gap", info.duality_gap),
            ("n_active_groups", info.n_active_groups as f64),
            ("explained_variance", total),
        ]);
        points.push(PathPoint {
            ratio,
            coefficients: SparseRows::from_dense(&x, k),
            explained_variance: fit.explained_variance,
            explained_variance_total: total,
            info,
        });
    }
    observer.observe_final(&[("n_lambdas", ratios.len() as f64)]);
    Ok(points)
}
