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
        // The whole context chain on one line, each cause once: an error
        // whose message already ends with its source's text (a variant
        // written "{path}: {source}") does not repeat it.
        let mut previous = String::new();
        for (i, cause) in self.error.chain().enumerate() {
            let text = cause.to_string();
            if i > 0 && previous.ends_with(&text) {
                continue;
            }
            if i > 0 {
                f.write_str(": ")?;
            }
            f.write_str(&text)?;
            previous = text;
        }
        Ok(())
    }
}

impl From<patchwise::job::JobError> for CliError {
    fn from(e: patchwise::job::JobError) -> Self {
        match e.kind {
            patchwise::job::ErrorKind::Input => CliError::bad_input(e),
            patchwise::job::ErrorKind::Compute => CliError::compute(e),
        }
    }
}

impl From<patchwise::io::staging::StagingError> for CliError {
    fn from(e: patchwise::io::staging::StagingError) -> Self {
        if e.is_refusal() {
            CliError::bad_input(e)
        } else {
            CliError::compute(e)
        }
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

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug, thiserror::Error)]
    #[error("{path}: {source}")]
    struct WithSource {
        path: String,
        #[source]
        source: std::io::Error,
    }

    // A variant that prints its source is followed by that source in the
    // chain; the line says it once, and other causes stay.
    #[test]
    fn each_cause_is_printed_once() {
        let inner = std::io::Error::new(std::io::ErrorKind::NotFound, "no such file");
        let e = anyhow::Error::new(WithSource {
            path: "d.npz".into(),
            source: inner,
        })
        .context("reading the decoder");
        let text = CliError::bad_input(e).to_string();
        assert_eq!(text, "reading the decoder: d.npz: no such file");
    }
}
