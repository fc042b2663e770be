//! Progress bars on stderr, drawn only when stderr is a terminal.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressStyle};

/// A progress bar for `total` steps of `what`, hidden when stderr is not a
/// terminal (pipes, CI logs and tests stay clean).
pub fn bar(total: usize, what: &str) -> ProgressBar {
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

/// A status line on stderr (always shown; short).
pub fn note(message: impl std::fmt::Display) {
    eprintln!("{message}");
}
