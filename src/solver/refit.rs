//! The debiased refit: least squares of Y on the atoms of a support.

use faer::linalg::solvers::Solve;
use faer::{Mat, Side};

use super::error::{check_len, SolverError};
use super::fit::Fit;
use super::kernels::dot;
use super::operator::DenseDictionary;
use super::problem::Targets;

/// Relative ridge added to the Gram matrix when its Cholesky factorisation
/// fails (a rank-deficient support, e.g. more atoms than channels).
const RIDGE: f64 = 1e-10;

/// The refit and how it was solved.
#[derive(Debug, Clone, PartialEq)]
pub struct Refit {
    /// Coefficients, residual and explained variance of the refit (zero rows
    /// off the support).
    pub fit: Fit,
    /// Atoms of the support (nonzero rows of the penalised solution), increasing.
    pub support: Vec<usize>,
    /// Ridge μ used: 0 if the Gram matrix was positive definite, else
    /// `1e-10 · mean(diag(D_SᵀD_S))`.
    pub ridge: f64,
}

/// Least squares of `y` (row-major `n_ch x k`) on the atoms where
/// `coefficients` (row-major `n_atoms x k`) has a nonzero row: solves the
/// normal equations D_SᵀD_S X_S = D_SᵀY by Cholesky (faer). If the Gram
/// matrix is not positive definite, solves (D_SᵀD_S + μI) X_S = D_SᵀY with the
/// tiny ridge μ of [`Refit::ridge`] instead. Returned apart from the
/// penalised solution, which it does not change.
///
/// # Errors
/// Shape and finiteness errors, or [`SolverError::Refit`] if even the
/// ridged system cannot be factorised.
pub fn refit(
    dict: &DenseDictionary,
    y: &[f64],
    k: usize,
    coefficients: &[f64],
) -> Result<Refit, SolverError> {
    let targets = Targets::from_row_major(dict.n_channels(), k, y)?;
    check_len(
        "coefficients (n_atoms x k, row-major)",
        || format!("{} x {k}", dict.n_atoms()),
        dict.n_atoms() * k,
        coefficients.len(),
    )?;
    let support: Vec<usize> = (0..dict.n_atoms())
        .filter(|&j| coefficients[j * k..(j + 1) * k].iter().any(|&v| v != 0.0))
        .collect();
    let s = support.len();
    let n = dict.n_channels();
    let mut x = vec![0.0; dict.n_atoms() * k];
    let mut ridge = 0.0;
    if s > 0 {
        let gram = Mat::<f64>::from_fn(s, s, |a, b| {
            dot(dict.atom(support[a]), dict.atom(support[b]))
        });
        let rhs = Mat::<f64>::from_fn(s, k, |a, c| {
            dot(dict.atom(support[a]), &targets.cols[c * n..(c + 1) * n])
        });
        let solution = match gram.llt(Side::Lower) {
            Ok(llt) => llt.solve(&rhs),
            Err(_) => {
                ridge = RIDGE * (0..s).map(|a| gram[(a, a)]).sum::<f64>() / s as f64;
                let ridged = Mat::<f64>::from_fn(s, s, |a, b| {
                    gram[(a, b)] + if a == b { ridge } else { 0.0 }
                });
                let llt = ridged.llt(Side::Lower).map_err(|e| SolverError::Refit {
                    n_support: s,
                    reason: format!("Cholesky of the ridged Gram matrix failed: {e:?}"),
                })?;
                llt.solve(&rhs)
            }
        };
        for (a, &j) in support.iter().enumerate() {
            for c in 0..k {
                x[j * k + c] = solution[(a, c)];
            }
        }
    }
    Ok(Refit {
        fit: Fit::from_coefficients(dict, &targets, x),
        support,
        ridge,
    })
}
