//! The error of a job: a message with its cause chain, and whether the
//! cause is the user's input (a file, a field, an option) or a failure
//! while computing. The command line maps the two kinds to exit codes 2
//! and 1; the Python package to `ValueError` and `RuntimeError`.

use std::fmt;

/// Whose the failure is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ErrorKind {
    /// Bad input or options: the message names the file, field or option.
    Input,
    /// A failure while computing (a solver, a write).
    Compute,
}

/// A job's error: what was being done, the cause below it, and its kind.
#[derive(Debug, thiserror::Error)]
pub struct JobError {
    /// Input or compute.
    pub kind: ErrorKind,
    message: String,
    #[source]
    source: Option<Box<dyn std::error::Error + Send + Sync>>,
}

impl fmt::Display for JobError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl JobError {
    /// Bad input: `message` names the file, field or option and what was expected.
    pub fn input(message: impl Into<String>) -> Self {
        JobError {
            kind: ErrorKind::Input,
            message: message.into(),
            source: None,
        }
    }

    /// A failure while computing.
    pub fn compute(message: impl Into<String>) -> Self {
        JobError {
            kind: ErrorKind::Compute,
            message: message.into(),
            source: None,
        }
    }

    /// `source` under `context`, as an error of `kind`.
    pub fn wrap(
        kind: ErrorKind,
        context: impl fmt::Display,
        source: impl std::error::Error + Send + Sync + 'static,
    ) -> Self {
        JobError {
            kind,
            message: context.to_string(),
            source: Some(Box::new(source)),
        }
    }

    /// The same error under `context` (what was being done), same kind.
    pub fn context(self, context: impl fmt::Display) -> Self {
        JobError {
            kind: self.kind,
            message: context.to_string(),
            source: Some(Box::new(self)),
        }
    }

    /// The message and every cause below it, on one line (`a: b: c`); a
    /// cause whose text already ends the line is not repeated.
    pub fn chain_text(&self) -> String {
        let mut text = self.message.clone();
        let mut source = std::error::Error::source(self);
        while let Some(cause) = source {
            let part = cause.to_string();
            if !text.ends_with(&part) {
                text.push_str(": ");
                text.push_str(&part);
            }
            source = cause.source();
        }
        text
    }

    /// Whether the failure is the input's.
    pub fn is_input(&self) -> bool {
        self.kind == ErrorKind::Input
    }
}

impl From<crate::io::staging::StagingError> for JobError {
    fn from(e: crate::io::staging::StagingError) -> Self {
        let kind = if e.is_refusal() {
            ErrorKind::Input
        } else {
            ErrorKind::Compute
        };
        JobError {
            kind,
            message: e.to_string(),
            source: None,
        }
    }
}

/// Attach a context and a kind to a library result.
pub trait JobResult<T> {
    /// Bad input, with `context` (what was being read or checked).
    fn input(self, context: impl fmt::Display) -> Result<T, JobError>;
    /// A compute failure, with `context`.
    fn compute(self, context: impl fmt::Display) -> Result<T, JobError>;
}

impl<T, E> JobResult<T> for Result<T, E>
where
    E: std::error::Error + Send + Sync + 'static,
{
    fn input(self, context: impl fmt::Display) -> Result<T, JobError> {
        self.map_err(|e| JobError {
            kind: ErrorKind::Input,
            message: context.to_string(),
            source: Some(Box::new(e)),
        })
    }
    fn compute(self, context: impl fmt::Display) -> Result<T, JobError> {
        self.map_err(|e| JobError {
            kind: ErrorKind::Compute,
            message: context.to_string(),
            source: Some(Box::new(e)),
        })
    }
}
