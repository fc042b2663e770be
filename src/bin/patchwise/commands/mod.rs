//! One file per subcommand: its arguments and an `exec` that calls the library.

pub mod attribute;
pub mod batch;
pub mod cache;
pub mod check;
pub mod compare;
pub mod demo;
pub mod dictionary;
pub mod dipole;
pub mod figure;
pub mod leadfield;
pub mod montage;
pub mod report;
pub mod template;
