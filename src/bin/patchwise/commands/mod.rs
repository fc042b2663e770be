//! One file per subcommand: its arguments and an `exec` that calls the library.

pub mod check;
pub mod montage;
