//! Errors of job scripts: each names the script, the line or the job, and
//! what was expected.

use std::path::PathBuf;

/// A job script that cannot be used as written.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum BatchError {
    /// The script could not be read.
    #[error("{path}: {source}")]
    Io {
        /// The file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// The TOML is malformed, has an unknown key or a value of the wrong type.
    #[error("{path}:{line}:{column}: {message}{}", job.as_ref().map(|j| format!(" (in job {j})")).unwrap_or_default())]
    Parse {
        /// The script.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// 1-based column (characters).
        column: usize,
        /// The job the line belongs to, when known.
        job: Option<String>,
        /// What went wrong.
        message: String,
    },
    /// A job's value is out of range, or an input file is missing.
    #[error("{path}:{line}: job {job}: {message}")]
    Job {
        /// The script.
        path: PathBuf,
        /// 1-based line of the job's table.
        line: usize,
        /// The job's name (after glob expansion, when it came from one).
        job: String,
        /// What is wrong and what was expected.
        message: String,
    },
    /// The script holds no job.
    #[error("{path}: the script holds no [[job]] table; expected at least one job")]
    NoJobs {
        /// The script.
        path: PathBuf,
    },
    /// Two jobs have the same name (after glob expansion).
    #[error("{path}: job name {name:?} is used twice (lines {first_line} and {second_line}); names must be unique after glob expansion")]
    DuplicateName {
        /// The script.
        path: PathBuf,
        /// The name.
        name: String,
        /// Line of the first job's table.
        first_line: usize,
        /// Line of the second job's table.
        second_line: usize,
    },
    /// The `[defaults]` or `[compare]` table is invalid.
    #[error("{path}:{line}: [{table}]: {message}")]
    Table {
        /// The script.
        path: PathBuf,
        /// 1-based line.
        line: usize,
        /// `defaults` or `compare`.
        table: &'static str,
        /// What is wrong.
        message: String,
    },
    /// A shard specification that is not `I/N` with 1 ≤ I ≤ N.
    #[error("shard {spec:?}: {message}; expected I/N with 1 <= I <= N, e.g. 2/8")]
    Shard {
        /// The specification as given.
        spec: String,
        /// What is wrong.
        message: String,
    },
    /// An input file of a job could not be hashed.
    #[error("job {job}: {key} {path}: {source}")]
    Input {
        /// The job.
        job: String,
        /// The key naming the file (`decoder`, `channels`, ...).
        key: String,
        /// The file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
}
