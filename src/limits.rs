//! Limits on sizes that input files declare and counts that users ask for,
//! checked before anything is allocated.
//!
//! A damaged or hostile file can declare an array far larger than itself (an
//! HDF5 dataset of 85 × 10⁹ values in a 7.5 KB file, a group index of 2⁴⁰,
//! a zip entry that inflates a thousandfold), and a typing slip can ask for
//! 10¹¹ resamples. Each would end in an allocation the machine cannot serve,
//! which aborts the process instead of giving an error. The readers and the
//! argument validation therefore compare what is declared with what the file
//! can hold and with one memory budget, and refuse what does not fit, naming
//! the limit. `docs/reliability.md` lists the values and the tests.

/// The most memory one array (or one table of resample records) may take:
/// 16 GiB. A 256-channel lead field on 327k sources with free orientation
/// takes 2 GiB, so real inputs stay far below it.
pub const MEMORY_BUDGET_BYTES: u64 = 16 << 30;

/// The largest ratio of inflated to compressed size that deflate can reach
/// (about 1032 : 1; common practice, from memory). A compressed entry that
/// declares more than this times its compressed size is damaged.
pub const MAX_INFLATE_RATIO: u64 = 1032;

/// What one bootstrap or resample record is taken to cost: one share per
/// region and component for up to 2048 region × component pairs, 8 bytes
/// each. With [`MEMORY_BUDGET_BYTES`] this allows 1 048 576 resamples.
pub const RESAMPLE_RECORD_BYTES: u64 = 2048 * 8;

/// The longest patch radius or seed spacing (mm) accepted: 1000 mm, the
/// largest head radius a head file may give. A patch wider than any head
/// covers the whole cortex and a spacing beyond it leaves one seed, so a
/// larger value is a slip (metres written where millimetres belong, or an
/// extra exponent) and is refused rather than fitted.
pub const MAX_PATCH_LENGTH_MM: f64 = 1000.0;

/// The range the largest absolute value of a pattern (or of the patterns
/// made from weights) must lie in. The fit works with squared norms: values
/// beyond 1e100 overflow them (patterns × 1e300 once gave λ = inf and a
/// result of NaNs), values below 1e-100 underflow them to zero. Patterns in
/// volts are about 1e-6, in microvolts about 1, so real ones lie far inside.
pub const PATTERN_MAGNITUDE_RANGE: (f64, f64) = (1e-100, 1e100);

/// A declared size or a requested count that does not fit the limits.
#[derive(Debug, thiserror::Error, PartialEq, Eq)]
#[non_exhaustive]
pub enum LimitError {
    /// A count times the memory each item takes exceeds the budget.
    #[error(
        "{what} = {count}: at most {max} fit in the memory budget of {} GiB ({bytes_each} bytes each)",
        MEMORY_BUDGET_BYTES >> 30
    )]
    TooMany {
        /// The option or field (e.g. `--resamples`).
        what: String,
        /// The count asked for or declared.
        count: u64,
        /// The largest count allowed.
        max: u64,
        /// The memory one item takes.
        bytes_each: u64,
    },
}

/// The largest count of items of `bytes_each` bytes that fits the budget.
pub fn max_count(bytes_each: u64) -> u64 {
    MEMORY_BUDGET_BYTES / bytes_each.max(1)
}

/// Check that `count` items of `bytes_each` bytes fit the memory budget, and
/// return the count as a `usize`. `what` names the option or field.
pub fn check_count(what: &str, count: u64, bytes_each: u64) -> Result<usize, LimitError> {
    let max = max_count(bytes_each);
    match usize::try_from(count) {
        Ok(n) if count <= max => Ok(n),
        _ => Err(LimitError::TooMany {
            what: what.to_string(),
            count,
            max,
            bytes_each,
        }),
    }
}

/// The number of bytes of `shape` elements of `element_bytes` each, or
/// `None` when the product overflows 64 bits.
pub fn declared_bytes(shape: &[u64], element_bytes: u64) -> Option<u64> {
    shape
        .iter()
        .try_fold(element_bytes, |acc, &d| acc.checked_mul(d))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_beyond_the_budget_are_refused_with_the_limit() {
        assert_eq!(
            check_count("--resamples", 100, RESAMPLE_RECORD_BYTES),
            Ok(100)
        );
        let err = check_count("--resamples", 100_000_000_000, RESAMPLE_RECORD_BYTES)
            .expect_err("10^11 resamples cannot fit");
        let text = err.to_string();
        assert!(text.contains("--resamples = 100000000000"), "{text}");
        assert!(text.contains("at most 1048576"), "{text}");
    }

    #[test]
    fn declared_bytes_reports_overflow() {
        assert_eq!(
            declared_bytes(&[85, 1_000_000_000], 8),
            Some(680_000_000_000)
        );
        assert_eq!(declared_bytes(&[u64::MAX, 2], 8), None);
    }
}
