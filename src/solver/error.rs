//! The solver's typed error.

use thiserror::Error;

/// What can go wrong when setting up or running the group-LASSO fit.
///
/// Not converging is a value of this type, never a panic.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum SolverError {
    /// An array did not have the length its shape implies.
    #[error("{what}: expected {expected} values ({shape}), got {got}")]
    Shape {
        /// Which array (for example `y (n_ch x k, row-major)`).
        what: &'static str,
        /// The shape that was expected, in words.
        shape: String,
        /// The number of values expected.
        expected: usize,
        /// The number of values given.
        got: usize,
    },
    /// A dimension was zero where at least one is needed.
    #[error("{what} must be at least 1, got 0")]
    EmptyDimension {
        /// Which dimension (for example `n_atoms`).
        what: &'static str,
    },
    /// An input value was NaN or infinite.
    #[error("{what}: value at row {row}, column {column} is not finite ({value})")]
    NonFinite {
        /// Which array.
        what: &'static str,
        /// Row of the offending value (0-based).
        row: usize,
        /// Column of the offending value (0-based).
        column: usize,
        /// The value itself.
        value: f64,
    },
    /// An atom's group index was outside `0..n_groups`.
    #[error("group of atom {atom} is {group}, expected an index in 0..{n_groups}")]
    GroupOutOfRange {
        /// The atom (0-based).
        atom: usize,
        /// Its group index as given.
        group: i64,
        /// The number of groups.
        n_groups: usize,
    },
    /// A group index in `0..n_groups` had no atom.
    #[error("group {group} has no atom (groups must partition the atoms, every group non-empty)")]
    EmptyGroup {
        /// The empty group (0-based).
        group: usize,
    },
    /// The group assignment does not have one entry per atom.
    #[error("group assignment has {got} entries, the dictionary has {n_atoms} atoms")]
    GroupCount {
        /// Atoms in the dictionary.
        n_atoms: usize,
        /// Entries in the assignment.
        got: usize,
    },
    /// A parameter was outside its valid range.
    #[error("parameter {name} = {value}: expected {expected}")]
    InvalidParameter {
        /// The parameter name (for example `tol`).
        name: &'static str,
        /// The value given.
        value: f64,
        /// The valid range in words.
        expected: &'static str,
    },
    /// The relative duality gap did not reach the tolerance within `max_iter` iterations.
    #[error("not converged: relative duality gap {gap:e} after {iterations} iterations")]
    NotConverged {
        /// The relative duality gap reached.
        gap: f64,
        /// FISTA iterations run.
        iterations: usize,
    },
    /// A dense linear solve (debiased refit) failed.
    #[error("least-squares refit failed on {n_support} support atoms: {reason}")]
    Refit {
        /// Size of the support.
        n_support: usize,
        /// What failed.
        reason: String,
    },
    /// A separate fit of one pattern column failed.
    #[error("pattern column {column}: {source}")]
    Column {
        /// The column (0-based).
        column: usize,
        /// The underlying error.
        source: Box<SolverError>,
    },
}

/// Checks that `values` has `expected` entries.
pub(crate) fn check_len(
    what: &'static str,
    shape: impl FnOnce() -> String,
    expected: usize,
    got: usize,
) -> Result<(), SolverError> {
    if expected == got {
        Ok(())
    } else {
        Err(SolverError::Shape {
            what,
            shape: shape(),
            expected,
            got,
        })
    }
}

/// Checks that every value of a row-major `n_rows x n_cols` array is finite.
pub(crate) fn check_finite_row_major(
    what: &'static str,
    values: &[f64],
    n_cols: usize,
) -> Result<(), SolverError> {
    match values.iter().position(|v| !v.is_finite()) {
        None => Ok(()),
        Some(i) => Err(SolverError::NonFinite {
            what,
            row: i / n_cols.max(1),
            column: i % n_cols.max(1),
            value: values[i],
        }),
    }
}
