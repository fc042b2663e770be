//! Size checks of a file as read: each reader (`result_read`,
//! `compare_read`) lists every array against the counts the file states
//! (components, channels, regions, subjects), once, so a `ResultFile` or
//! `CompareFile` is whole and nothing downstream (the report pages, the
//! comparison) checks again or indexes out of range.

use std::path::Path;

use super::error::IoError;

/// One check: the dataset, its number of values, the number expected and
/// what the rest of the file implies, in words.
pub(crate) type Check = (&'static str, usize, usize, String);

/// The first check whose sizes differ, as an error naming the file `path`.
pub(crate) fn check_sizes(path: &Path, checks: Vec<Check>) -> Result<(), IoError> {
    for (field, found, expected_len, expected) in checks {
        if found != expected_len {
            return Err(IoError::Shape {
                path: path.to_path_buf(),
                dataset: field.to_string(),
                found: vec![found],
                expected: format!("{expected_len} values ({expected})"),
            });
        }
    }
    Ok(())
}
