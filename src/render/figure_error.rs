//! The typed error of the vector figures (topographic maps and charts).

use super::error::RenderError;
use super::spline::SplineError;

/// What went wrong while drawing a topographic map or a chart. Every variant names the
/// field and index at fault and what was expected.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FigureError {
    /// Nothing to draw.
    #[error("`{field}` is empty: expected at least {required} entries")]
    Empty {
        /// The input's name.
        field: &'static str,
        /// Entries needed.
        required: usize,
    },
    /// Two inputs that go together differ in length.
    #[error("`{field}` has {got} entries: expected {expected}")]
    LengthMismatch {
        /// The input's name.
        field: &'static str,
        /// Entries expected.
        expected: usize,
        /// Entries given.
        got: usize,
    },
    /// A number is NaN or infinite.
    #[error("`{field}[{index}]` = {value}: expected a finite number")]
    NotFinite {
        /// The input's name.
        field: &'static str,
        /// 0-based index.
        index: usize,
        /// The value given.
        value: f64,
    },
    /// A number is outside its range.
    #[error("`{field}[{index}]` = {value}: expected {expected}")]
    OutOfRange {
        /// The input's name.
        field: &'static str,
        /// 0-based index.
        index: usize,
        /// The value given.
        value: f64,
        /// What is accepted.
        expected: &'static str,
    },
    /// An option is not usable.
    #[error("option `{field}` = {value}: expected {expected}")]
    BadOption {
        /// The option's name.
        field: &'static str,
        /// The value given, printed.
        value: String,
        /// What is accepted.
        expected: &'static str,
    },
    /// The spherical spline of a topographic map could not be fitted.
    #[error("topographic map interpolation: {0}")]
    Spline(#[from] SplineError),
    /// A raster inside the figure could not be made or encoded.
    #[error("raster inside the figure: {0}")]
    Render(#[from] RenderError),
}

/// The first non-finite entry of `values`, as a [`FigureError::NotFinite`].
pub(crate) fn check_finite(field: &'static str, values: &[f64]) -> Result<(), FigureError> {
    match values.iter().position(|v| !v.is_finite()) {
        Some(index) => Err(FigureError::NotFinite {
            field,
            index,
            value: values[index],
        }),
        None => Ok(()),
    }
}

/// `got == expected`, else a [`FigureError::LengthMismatch`].
pub(crate) fn check_length(
    field: &'static str,
    expected: usize,
    got: usize,
) -> Result<(), FigureError> {
    if got == expected {
        Ok(())
    } else {
        Err(FigureError::LengthMismatch {
            field,
            expected,
            got,
        })
    }
}
