//! The binary's error: a message chain plus the exit code it maps to.

use std::fmt;

/// An error as the command line reports it.
#[derive(Debug)]
pub struct CliError {
    /// Exit code: 1 failed while computing, 2 bad input or usage.
    pub code: i32,
    /// The error with its context chain.
    pub error: anyhow::Error,
}

impl CliError {
    /// Bad input or usage (exit 2).
    pub fn bad_input(error: impl Into<anyhow::Error>) -> Self {
        CliError {
            code: 2,
            error: error.into(),
        }
    }

    /// A failure while computing (exit 1).
    pub fn compute(error: impl Into<anyhow::Error>) -> Self {
        CliError {
            code: 1,
            error: error.into(),
        }
    }

    /// The same error with `context` in front (same exit code).
    pub fn prefix(self, context: impl fmt::Display + Send + Sync + 'static) -> Self {
        CliError {
            code: self.code,
            error: self.error.context(context),
        }
    }

    /// The process exit code.
    pub fn exit_code(&self) -> i32 {
        self.code
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // `{:#}` prints the whole context chain on one line.
        write!(f, "{:#}", self.error)
    }
}

/// Attach a context message and an exit code to a library result.
pub trait OrExit<T> {
    /// Bad input (exit 2) with context.
    fn bad_input(self, context: impl fmt::Display + Send + Sync + 'static) -> Result<T, CliError>;
    /// Compute failure (exit 1) with context.
    fn compute(self, context: impl fmt::Display + Send + Sync + 'static) -> Result<T, CliError>;
}

impl<T, E> OrExit<T> for Result<T, E>
where
    E: std::error::Error + Send + Sync + 'static,
{
    fn bad_input(self, context: impl fmt::Display + Send + Sync + 'static) -> Result<T, CliError> {
        self.map_err(|e| CliError::bad_input(anyhow::Error::new(e).context(context)))
    }
    fn compute(self, context: impl fmt::Display + Send + Sync + 'static) -> Result<T, CliError> {
        self.map_err(|e| CliError::compute(anyhow::Error::new(e).context(context)))
    }
}
