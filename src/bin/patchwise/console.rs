//! Printing that never panics: a closed stdout or stderr (`| head -1`,
//! `| true`, a closed terminal) ends the output quietly instead of
//! aborting the command, so a batch still finishes its jobs and writes its
//! summary. `outln!` and `errln!` stand for `outln!` and `errln!` in
//! the binary; a failed write is dropped (the process ignores SIGPIPE, as
//! every Rust program does, so the write returns EPIPE instead of killing
//! it).

use std::fmt;
use std::io::Write;

/// Write to stdout, ignoring a closed pipe or any other write error.
pub fn out(args: fmt::Arguments<'_>) {
    let _ = std::io::stdout().lock().write_fmt(args);
}

/// Write to stderr, ignoring a closed pipe or any other write error.
pub fn err(args: fmt::Arguments<'_>) {
    let _ = std::io::stderr().lock().write_fmt(args);
}

/// `outln!` to stdout that never panics (see the module).
macro_rules! outln {
    () => {
        $crate::console::out(format_args!("\n"))
    };
    ($($arg:tt)*) => {
        $crate::console::out(format_args!("{}\n", format_args!($($arg)*)))
    };
}

/// `errln!` to stderr that never panics (see the module).
macro_rules! errln {
    () => {
        $crate::console::err(format_args!("\n"))
    };
    ($($arg:tt)*) => {
        $crate::console::err(format_args!("{}\n", format_args!($($arg)*)))
    };
}
