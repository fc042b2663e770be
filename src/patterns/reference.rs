//! Common-average re-referencing of patterns (or any channel × column matrix),
//! checked; the arithmetic is [`crate::numeric::average_reference_columns`].

use super::covariance::{check_finite, check_shape};
use super::PatternsError;
use crate::numeric::average_reference_columns;

/// Subtract from every column of the `n_ch × k` row-major matrix its mean over channels,
/// so each column sums to zero (the common average reference; design.md requires the
/// patterns and the lead field to share it).
pub fn average_reference(values: &[f64], n_ch: usize, k: usize) -> Result<Vec<f64>, PatternsError> {
    check_shape("patterns", values, n_ch, k)?;
    check_finite("patterns", values, k)?;
    let mut out = values.to_vec();
    average_reference_columns(&mut out, k);
    Ok(out)
}
