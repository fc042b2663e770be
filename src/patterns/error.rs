//! The error type of the `patterns` stage.

/// What went wrong while turning weights into patterns or whitening.
///
/// Each variant names the matrix (`weights`, `covariance`, `noise covariance`,
/// `Wᵀ Σ W`, ...) and says what was expected.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PatternsError {
    /// The decoder of one time point failed (a decoder with a time axis).
    #[error("time index {index}: {source}")]
    AtTime {
        /// 0-based time index.
        index: usize,
        /// What went wrong there.
        source: Box<PatternsError>,
    },
    /// A dimension is zero.
    #[error("{matrix}: {what} must be at least 1, found 0")]
    EmptyDimension {
        /// The matrix concerned.
        matrix: &'static str,
        /// Which dimension (`channels`, `columns`, ...).
        what: &'static str,
    },
    /// The slice length does not match the stated shape.
    #[error("{matrix}: expected {rows} × {cols} = {expected} values (row-major), found {found}")]
    Shape {
        /// The matrix concerned.
        matrix: &'static str,
        /// Expected number of rows.
        rows: usize,
        /// Expected number of columns.
        cols: usize,
        /// `rows * cols`.
        expected: usize,
        /// The slice length given.
        found: usize,
    },
    /// An entry is NaN or infinite.
    #[error("{matrix}: entry ({row}, {col}) is {value}, expected a finite number")]
    NotFinite {
        /// The matrix concerned.
        matrix: &'static str,
        /// 0-based row.
        row: usize,
        /// 0-based column.
        col: usize,
        /// The offending value.
        value: f64,
    },
    /// A covariance is not symmetric within the tolerance.
    #[error(
        "{matrix}: not symmetric: entry ({row}, {col}) = {value} but ({col}, {row}) = {transposed}; \
         expected |difference| <= {tolerance:e} (relative to the largest |entry|)"
    )]
    NotSymmetric {
        /// The matrix concerned.
        matrix: &'static str,
        /// 0-based row of the worst pair.
        row: usize,
        /// 0-based column of the worst pair.
        col: usize,
        /// Entry (row, col).
        value: f64,
        /// Entry (col, row).
        transposed: f64,
        /// The relative tolerance used.
        tolerance: f64,
    },
    /// A covariance has a clearly negative eigenvalue.
    #[error(
        "{matrix}: not positive semi-definite: smallest eigenvalue {min_eigenvalue:e}, largest \
         {max_eigenvalue:e}; expected smallest >= -{tolerance:e} × largest"
    )]
    NotPositiveSemidefinite {
        /// The matrix concerned.
        matrix: &'static str,
        /// Smallest eigenvalue.
        min_eigenvalue: f64,
        /// Largest eigenvalue.
        max_eigenvalue: f64,
        /// The relative tolerance used.
        tolerance: f64,
    },
    /// A matrix that must be inverted is singular or too badly conditioned.
    #[error(
        "{matrix}: not invertible: condition number {condition_number:e} (eigenvalues {min_eigenvalue:e} \
         .. {max_eigenvalue:e}); expected a positive definite matrix with condition number <= {limit:e}"
    )]
    Singular {
        /// The matrix concerned.
        matrix: &'static str,
        /// Largest over smallest eigenvalue (infinite when the smallest is <= 0).
        condition_number: f64,
        /// Smallest eigenvalue.
        min_eigenvalue: f64,
        /// Largest eigenvalue.
        max_eigenvalue: f64,
        /// The limit used.
        limit: f64,
    },
    /// The covariance is entirely zero.
    #[error("{matrix}: all entries are zero, expected a non-zero covariance")]
    Zero {
        /// The matrix concerned.
        matrix: &'static str,
    },
    /// The eigenvalue iteration did not converge.
    #[error("{matrix}: the symmetric eigendecomposition did not converge")]
    Eigendecomposition {
        /// The matrix concerned.
        matrix: &'static str,
    },
    /// An invalid eigenvalue floor was given to the whitener.
    #[error("eigenvalue floor {value}: expected a finite number in [0, 1)")]
    InvalidFloor {
        /// The value given.
        value: f64,
    },
    /// Noise inputs (folds, sample count) that cannot be used.
    #[error("{0}")]
    Invalid(String),
}
