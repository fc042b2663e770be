//! Depth-weighted minimum norm (Tikhonov) estimate.
//!
//! Reference: Hämäläinen & Ilmoniemi 1994, Med Biol Eng Comput 32:35 (the
//! minimum-norm estimate x = R Gᵀ (G R Gᵀ + λ² I)⁻¹ y). Depth weighting by
//! R = diag(‖g_j‖^(−2γ)) with γ = 0.8, and λ² = tr(G R Gᵀ) / (n_ch · SNR²)
//! with an amplitude SNR of 3, are common practice (no source; from memory).

use faer::linalg::solvers::Solve;
use faer::{Mat, Side};

/// Errors of the minimum-norm estimate.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum MinimumNormError {
    /// Inputs disagree in size.
    #[error("lead field has {found} values, expected {expected}")]
    Shape {
        /// Values found.
        found: usize,
        /// Values expected.
        expected: usize,
    },
    /// The regularised Gram matrix is not positive definite.
    #[error("the regularised lead-field Gram matrix is not positive definite")]
    NotPositiveDefinite,
}

/// Parameters of the minimum-norm estimate.
#[derive(Debug, Clone, Copy)]
pub struct MinimumNormParams {
    /// Depth-weighting exponent γ (0 = none).
    pub depth: f64,
    /// Assumed amplitude signal-to-noise ratio that sets λ².
    pub snr: f64,
}

impl Default for MinimumNormParams {
    fn default() -> Self {
        MinimumNormParams {
            depth: 0.8,
            snr: 3.0,
        }
    }
}

/// Minimum-norm source amplitudes for patterns `y` (n_ch × k row-major)
/// and lead field `gain` (n_ch × n_src row-major). Returns n_src × k
/// row-major.
pub fn minimum_norm(
    gain: &[f64],
    n_channels: usize,
    y: &[f64],
    k: usize,
    params: MinimumNormParams,
) -> Result<Vec<f64>, MinimumNormError> {
    if n_channels == 0 || !gain.len().is_multiple_of(n_channels) {
        return Err(MinimumNormError::Shape {
            found: gain.len(),
            expected: n_channels,
        });
    }
    if y.len() != n_channels * k {
        return Err(MinimumNormError::Shape {
            found: y.len(),
            expected: n_channels * k,
        });
    }
    let n_src = gain.len() / n_channels;
    let weights: Vec<f64> = (0..n_src)
        .map(|j| {
            let n2: f64 = (0..n_channels).map(|i| gain[i * n_src + j].powi(2)).sum();
            if n2 > 0.0 {
                n2.powf(-params.depth)
            } else {
                0.0
            }
        })
        .collect();
    let mut gram = Mat::<f64>::zeros(n_channels, n_channels);
    for a in 0..n_channels {
        for b in a..n_channels {
            let mut s = 0.0;
            for j in 0..n_src {
                s += gain[a * n_src + j] * weights[j] * gain[b * n_src + j];
            }
            gram[(a, b)] = s;
            gram[(b, a)] = s;
        }
    }
    let trace: f64 = (0..n_channels).map(|i| gram[(i, i)]).sum();
    let lambda2 = trace / (n_channels as f64 * params.snr * params.snr);
    for i in 0..n_channels {
        gram[(i, i)] += lambda2;
    }
    let llt = gram
        .llt(Side::Lower)
        .map_err(|_| MinimumNormError::NotPositiveDefinite)?;
    let rhs = Mat::<f64>::from_fn(n_channels, k, |i, c| y[i * k + c]);
    let alpha = llt.solve(&rhs);
    let mut out = vec![0.0; n_src * k];
    for j in 0..n_src {
        for c in 0..k {
            let mut s = 0.0;
            for i in 0..n_channels {
                s += gain[i * n_src + j] * alpha[(i, c)];
            }
            out[j * k + c] = weights[j] * s;
        }
    }
    Ok(out)
}
