//! Activation patterns from the weights of a linear decoder (backward model):
//! A = Σ_x W (Wᵀ Σ_x W)⁻¹ (Haufe et al. 2014, NeuroImage 87:96, Theorem 1 / eq. 6;
//! the equation number is from memory, verify).

use super::covariance::{check_covariance, check_finite, check_shape};
use super::PatternsError;
use crate::numeric::symmetric_eigen;

/// Largest accepted condition number of `Wᵀ Σ_x W`. Beyond it the estimated sources are
/// (numerically) linearly dependent and the patterns are not determined.
pub const CONDITION_LIMIT: f64 = 1e12;

/// What the pattern computation measured along the way.
#[derive(Debug, Clone, PartialEq)]
pub struct PatternsInfo {
    /// Condition number of `Σ_ŝ = Wᵀ Σ_x W` (k × k).
    pub source_covariance_condition: f64,
    /// Smallest eigenvalue of the data covariance.
    pub covariance_min_eigenvalue: f64,
    /// Largest eigenvalue of the data covariance.
    pub covariance_max_eigenvalue: f64,
}

/// Turn decoder weights into activation patterns.
///
/// `weights` is `n_ch × k` row-major (one filter per column), `covariance` the `n_ch × n_ch`
/// data covariance Σ_x. Returns the `n_ch × k` patterns A = Σ_x W (Wᵀ Σ_x W)⁻¹, row-major,
/// which satisfy Wᵀ A = I.
///
/// # Requirements
/// Σ_x symmetric (relative tolerance [`SYMMETRY_TOLERANCE`](super::SYMMETRY_TOLERANCE)),
/// positive semi-definite (tolerance [`PSD_TOLERANCE`](super::PSD_TOLERANCE)), all entries
/// finite, and Wᵀ Σ_x W positive definite with condition number at most [`CONDITION_LIMIT`].
///
/// # Reference
/// Haufe, Meinecke, Görgen, Dähne, Haynes, Blankertz & Bießmann 2014, "On the
/// interpretation of weight vectors of linear models in multivariate neuroimaging",
/// NeuroImage 87:96–110.
pub fn activation_patterns(
    weights: &[f64],
    covariance: &[f64],
    n_ch: usize,
    k: usize,
) -> Result<(Vec<f64>, PatternsInfo), PatternsError> {
    check_shape("weights", weights, n_ch, k)?;
    check_finite("weights", weights, k)?;
    let cov = check_covariance("covariance", covariance, n_ch)?;
    let sigma = &cov.values;

    // Σ W, summed over channels in index order.
    let mut sigma_w = vec![0.0; n_ch * k];
    for i in 0..n_ch {
        for l in 0..n_ch {
            let s = sigma[i * n_ch + l];
            for j in 0..k {
                sigma_w[i * k + j] += s * weights[l * k + j];
            }
        }
    }
    // Σ_ŝ = Wᵀ (Σ W), symmetrised against rounding.
    let mut source_cov = vec![0.0; k * k];
    for a in 0..k {
        for b in 0..=a {
            let v: f64 = (0..n_ch)
                .map(|i| weights[i * k + a] * sigma_w[i * k + b])
                .sum();
            let w: f64 = (0..n_ch)
                .map(|i| weights[i * k + b] * sigma_w[i * k + a])
                .sum();
            source_cov[a * k + b] = 0.5 * (v + w);
            source_cov[b * k + a] = 0.5 * (v + w);
        }
    }
    let (values, vectors) =
        symmetric_eigen(&source_cov, k).ok_or(PatternsError::Eigendecomposition {
            matrix: "Wᵀ Σ W",
        })?;
    let min = values.first().copied().unwrap_or(0.0);
    let max = values.last().copied().unwrap_or(0.0);
    let condition = if min > 0.0 { max / min } else { f64::INFINITY };
    if condition.is_nan() || condition > CONDITION_LIMIT {
        return Err(PatternsError::Singular {
            matrix: "Wᵀ Σ W",
            condition_number: condition,
            min_eigenvalue: min,
            max_eigenvalue: max,
            limit: CONDITION_LIMIT,
        });
    }
    // Σ_ŝ⁻¹ = V diag(1/λ) Vᵀ from faer's eigendecomposition.
    let mut inverse = vec![0.0; k * k];
    for a in 0..k {
        for b in 0..k {
            inverse[a * k + b] = (0..k)
                .map(|m| vectors[(a, m)] * vectors[(b, m)] / values[m])
                .sum();
        }
    }
    let mut patterns = vec![0.0; n_ch * k];
    for i in 0..n_ch {
        for j in 0..k {
            patterns[i * k + j] = (0..k)
                .map(|m| sigma_w[i * k + m] * inverse[m * k + j])
                .sum();
        }
    }
    let info = PatternsInfo {
        source_covariance_condition: condition,
        covariance_min_eigenvalue: cov.eigenvalues.first().copied().unwrap_or(0.0),
        covariance_max_eigenvalue: cov.eigenvalues.last().copied().unwrap_or(0.0),
    };
    Ok((patterns, info))
}
