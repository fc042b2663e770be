//! Progress bars on stderr, drawn only when stderr is a terminal, and the
//! command line's job observer. Batch jobs run with a silent observer, so
//! a batch draws one overall bar.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressStyle};

/// A progress bar for `total` steps of `what`, hidden when stderr is not a
/// terminal (pipes, CI logs and tests stay clean).
pub fn bar(total: usize, what: &str) -> ProgressBar {
    terminal_bar(total, what)
}

/// A progress bar for `total` steps of `what`, hidden only when stderr is
/// not a terminal.
pub fn terminal_bar(total: usize, what: &str) -> ProgressBar {
    if !std::io::stderr().is_terminal() {
        return ProgressBar::hidden();
    }
    let pb = ProgressBar::new(total as u64);
    if let Ok(style) = ProgressStyle::with_template("{msg:>22} [{bar:30}] {pos}/{len} ({eta} left)")
    {
        pb.set_style(style.progress_chars("=> "));
    }
    pb.set_message(what.to_string());
    pb
}

/// A status line on stderr (short).
pub fn note(message: impl std::fmt::Display) {
    errln!("{message}");
}

/// The job observer of the command line: notes through [`note`], one bar
/// per stage through [`bar`] (so both follow the quiet switch and the
/// terminal test).
#[derive(Default)]
pub struct Console {
    current: std::sync::Mutex<Option<ProgressBar>>,
}

impl patchwise::job::JobObserver for Console {
    fn note(&self, message: &str) {
        note(message);
    }
    fn line(&self, text: &str) {
        let current = self.current.lock().ok();
        match current.as_ref().and_then(|c| c.as_ref()) {
            Some(pb) if !pb.is_hidden() => pb.println(text),
            _ => outln!("{text}"),
        }
    }
    fn stage_start(&self, what: &str, total: usize) {
        if let Ok(mut current) = self.current.lock() {
            *current = Some(bar(total, what));
        }
    }
    fn stage_advance(&self, n: usize) {
        if let Ok(current) = self.current.lock() {
            if let Some(pb) = current.as_ref() {
                pb.inc(n as u64);
            }
        }
    }
    fn stage_end(&self) {
        if let Ok(mut current) = self.current.lock() {
            if let Some(pb) = current.take() {
                pb.finish_and_clear();
            }
        }
    }
}
