//! Spatial whitening by a noise covariance: W_n = C^{-1/2}, symmetric, from the
//! eigendecomposition C = V Λ Vᵀ, W_n = V Λ^{-1/2} Vᵀ.

use super::covariance::{check_covariance, check_finite, check_shape};
use super::PatternsError;

/// Default relative eigenvalue floor of [`Whitener::new`]: eigenvalues at or below
/// `1e-10 × largest` are treated as zero.
pub const DEFAULT_EIGENVALUE_FLOOR: f64 = 1e-10;

/// The symmetric whitening operator of a noise covariance.
///
/// Eigenvalues at or below `floor × largest` are treated as zero: their eigenvectors are
/// left out of W_n (a pseudo-inverse square root) instead of being amplified by
/// 1/√λ. This is what an average-referenced noise covariance needs, whose constant
/// vector is an exact null direction; the patterns and the dictionary, referenced the
/// same way, have no component there. The whitened noise covariance W_n C W_n is then the
/// identity on the retained subspace (exactly the identity when nothing was left out).
#[derive(Debug, Clone, PartialEq)]
pub struct Whitener {
    n_ch: usize,
    matrix: Vec<f64>,
    rank: usize,
}

impl Whitener {
    /// Whitener of the `n_ch × n_ch` row-major noise covariance with the default floor
    /// [`DEFAULT_EIGENVALUE_FLOOR`].
    pub fn new(noise_covariance: &[f64], n_ch: usize) -> Result<Self, PatternsError> {
        Self::with_floor(noise_covariance, n_ch, DEFAULT_EIGENVALUE_FLOOR)
    }

    /// Whitener with a relative eigenvalue floor in [0, 1).
    ///
    /// The covariance must pass the same checks as in
    /// [`activation_patterns`](super::activation_patterns): finite, symmetric,
    /// positive semi-definite, not all zero.
    pub fn with_floor(
        noise_covariance: &[f64],
        n_ch: usize,
        floor: f64,
    ) -> Result<Self, PatternsError> {
        if !(floor.is_finite() && (0.0..1.0).contains(&floor)) {
            return Err(PatternsError::InvalidFloor { value: floor });
        }
        let cov = check_covariance("noise covariance", noise_covariance, n_ch)?;
        let largest = cov.eigenvalues.last().copied().unwrap_or(0.0);
        let cut = floor * largest;
        let kept: Vec<(usize, f64)> = cov
            .eigenvalues
            .iter()
            .enumerate()
            .filter(|&(_, &l)| l > cut && l > 0.0)
            .map(|(m, &l)| (m, 1.0 / l.sqrt()))
            .collect();
        let v = &cov.eigenvectors;
        let mut matrix = vec![0.0; n_ch * n_ch];
        for i in 0..n_ch {
            for j in 0..n_ch {
                matrix[i * n_ch + j] = kept.iter().map(|&(m, s)| v[(i, m)] * s * v[(j, m)]).sum();
            }
        }
        Ok(Self {
            n_ch,
            matrix,
            rank: kept.len(),
        })
    }

    /// Number of channels.
    pub fn n_channels(&self) -> usize {
        self.n_ch
    }

    /// Number of retained eigen-directions (n_ch unless the floor removed some).
    pub fn rank(&self) -> usize {
        self.rank
    }

    /// The `n_ch × n_ch` row-major matrix W_n.
    pub fn matrix(&self) -> &[f64] {
        &self.matrix
    }

    /// W_n X for the `n_ch × m` row-major matrix X (patterns, or a lead field / dictionary
    /// with one column per source or atom). Returns `n_ch × m`, row-major.
    pub fn apply(&self, rows: &[f64], m: usize) -> Result<Vec<f64>, PatternsError> {
        check_shape("matrix to whiten", rows, self.n_ch, m)?;
        check_finite("matrix to whiten", rows, m)?;
        let n = self.n_ch;
        let mut out = vec![0.0; n * m];
        for i in 0..n {
            let out_row = &mut out[i * m..(i + 1) * m];
            for l in 0..n {
                let w = self.matrix[i * n + l];
                for (o, x) in out_row.iter_mut().zip(&rows[l * m..(l + 1) * m]) {
                    *o += w * x;
                }
            }
        }
        Ok(out)
    }
}
