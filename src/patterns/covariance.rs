//! Checks shared by the pattern computation and the whitener: shapes, finiteness,
//! symmetry and positive semi-definiteness of covariances.

use super::PatternsError;
use crate::numeric::symmetric_eigen;
use faer::Mat;

/// Relative symmetry tolerance for covariances: `max |Σ_ij − Σ_ji| <= 1e-9 · max |Σ_ij|`.
/// Loose enough for covariances computed in single precision and stored as doubles only
/// when they were symmetrised first; tight enough to catch a transposed or mis-shaped input.
pub const SYMMETRY_TOLERANCE: f64 = 1e-9;

/// Relative tolerance for positive semi-definiteness: the smallest eigenvalue must be
/// `>= -1e-10 · largest` (rounding in an estimated covariance of a rank-deficient signal
/// gives tiny negative eigenvalues that are not an error).
pub const PSD_TOLERANCE: f64 = 1e-10;

/// Fail unless `data` holds `rows × cols` values and both are positive.
pub(crate) fn check_shape(
    matrix: &'static str,
    data: &[f64],
    rows: usize,
    cols: usize,
) -> Result<(), PatternsError> {
    if rows == 0 {
        return Err(PatternsError::EmptyDimension {
            matrix,
            what: "rows (channels)",
        });
    }
    if cols == 0 {
        return Err(PatternsError::EmptyDimension {
            matrix,
            what: "columns",
        });
    }
    let expected = rows.saturating_mul(cols);
    if data.len() != expected {
        return Err(PatternsError::Shape {
            matrix,
            rows,
            cols,
            expected,
            found: data.len(),
        });
    }
    Ok(())
}

/// Fail on the first NaN or infinite entry of the row-major matrix.
pub(crate) fn check_finite(
    matrix: &'static str,
    data: &[f64],
    cols: usize,
) -> Result<(), PatternsError> {
    match data.iter().position(|v| !v.is_finite()) {
        Some(i) => Err(PatternsError::NotFinite {
            matrix,
            row: i / cols,
            col: i % cols,
            value: data[i],
        }),
        None => Ok(()),
    }
}

/// A covariance that passed the checks, symmetrised, with its eigendecomposition.
pub(crate) struct CheckedCovariance {
    /// `(Σ + Σᵀ) / 2`, row-major.
    pub values: Vec<f64>,
    /// Eigenvalues, non-decreasing.
    pub eigenvalues: Vec<f64>,
    /// Eigenvectors as columns.
    pub eigenvectors: Mat<f64>,
}

/// Check shape, finiteness, symmetry and positive semi-definiteness of the `n × n`
/// covariance `cov`, and return it symmetrised with its eigendecomposition.
pub(crate) fn check_covariance(
    matrix: &'static str,
    cov: &[f64],
    n: usize,
) -> Result<CheckedCovariance, PatternsError> {
    check_shape(matrix, cov, n, n)?;
    check_finite(matrix, cov, n)?;
    let largest = cov.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    if largest == 0.0 {
        return Err(PatternsError::Zero { matrix });
    }
    let mut worst = (0.0, 0, 0);
    for i in 0..n {
        for j in (i + 1)..n {
            let d = (cov[i * n + j] - cov[j * n + i]).abs();
            if d > worst.0 {
                worst = (d, i, j);
            }
        }
    }
    if worst.0 > SYMMETRY_TOLERANCE * largest {
        let (_, i, j) = worst;
        return Err(PatternsError::NotSymmetric {
            matrix,
            row: i,
            col: j,
            value: cov[i * n + j],
            transposed: cov[j * n + i],
            tolerance: SYMMETRY_TOLERANCE,
        });
    }
    let mut values = cov.to_vec();
    for i in 0..n {
        for j in (i + 1)..n {
            let mean = 0.5 * (cov[i * n + j] + cov[j * n + i]);
            values[i * n + j] = mean;
            values[j * n + i] = mean;
        }
    }
    let (eigenvalues, eigenvectors) =
        symmetric_eigen(&values, n).ok_or(PatternsError::Eigendecomposition { matrix })?;
    let min = eigenvalues.first().copied().unwrap_or(0.0);
    let max = eigenvalues.last().copied().unwrap_or(0.0);
    if max <= 0.0 || min < -PSD_TOLERANCE * max {
        return Err(PatternsError::NotPositiveSemidefinite {
            matrix,
            min_eigenvalue: min,
            max_eigenvalue: max,
            tolerance: PSD_TOLERANCE,
        });
    }
    Ok(CheckedCovariance {
        values,
        eigenvalues,
        eigenvectors,
    })
}
