//! What a job tells its caller while it runs: notes (one line each) and
//! the progress of long stages. The command line draws bars on a terminal;
//! the Python package and the tests stay silent or keep the notes.

use std::sync::Mutex;

use crate::numeric::Progress;

/// Receives a job's notes and stage progress. Implementations must be
/// `Sync`: stages advance from worker threads.
pub trait JobObserver: Sync {
    /// A one-line note (a cached file used, a warning, an assumption).
    fn note(&self, message: &str);
    /// A line of the job's own record (a batch's "done job (2.1 s)"): the
    /// command line prints it on standard output, above any bar. By
    /// default a note.
    fn line(&self, text: &str) {
        self.note(text);
    }
    /// A stage of `total` steps begins (`what` names it, e.g. "lead field").
    fn stage_start(&self, what: &str, total: usize) {
        let _ = (what, total);
    }
    /// `n` more steps of the current stage are done.
    fn stage_advance(&self, n: usize) {
        let _ = n;
    }
    /// The current stage is over.
    fn stage_end(&self) {}
    /// Whether the caller asked the job to stop (the Python package's
    /// keyboard interrupt). Jobs look between stages and then stop with
    /// [`interrupted`], and the long stages (lead field, dictionary,
    /// resamples) look between their steps through [`staged`]; by default
    /// never.
    fn cancelled(&self) -> bool {
        false
    }
}

/// The error of a job its caller stopped; `Ok` while it may go on.
pub fn interrupted(observer: &dyn JobObserver) -> Result<(), super::error::JobError> {
    if observer.cancelled() {
        Err(super::error::JobError::compute("interrupted by the caller"))
    } else {
        Ok(())
    }
}

/// An observer that ignores everything.
#[derive(Debug, Clone, Copy, Default)]
pub struct Silent;

impl JobObserver for Silent {
    fn note(&self, _message: &str) {}
}

/// An observer that keeps the notes (for tests and for callers that show
/// them later).
#[derive(Debug, Default)]
pub struct NoteKeeper {
    notes: Mutex<Vec<String>>,
}

impl NoteKeeper {
    /// The notes so far, in order.
    pub fn notes(&self) -> Vec<String> {
        self.notes.lock().map(|n| n.clone()).unwrap_or_default()
    }
}

impl JobObserver for NoteKeeper {
    fn note(&self, message: &str) {
        if let Ok(mut n) = self.notes.lock() {
            n.push(message.to_string());
        }
    }
}

/// A job's observer as the [`Progress`] the pipeline stages take: steps
/// advance the current stage, and the caller's wish to stop reaches the
/// stage between its steps.
struct StageProgress<'a>(&'a dyn JobObserver);

impl Progress for StageProgress<'_> {
    fn advance(&self, n: usize) {
        self.0.stage_advance(n);
    }
    fn cancelled(&self) -> bool {
        self.0.cancelled()
    }
}

/// Run `work` as a stage of `total` steps of `observer`, handing it the
/// [`Progress`] the pipeline functions take.
pub fn staged<T>(
    observer: &dyn JobObserver,
    what: &str,
    total: usize,
    work: impl FnOnce(&dyn Progress) -> T,
) -> T {
    observer.stage_start(what, total);
    let out = work(&StageProgress(observer));
    observer.stage_end();
    out
}
