//! Job scripts for many attributions at once: parsing, validation, glob
//! expansion, shards and the input hash that makes reruns resumable.
//!
//! A job script is a TOML file with an optional `[defaults]` table, one
//! `[[job]]` table per job and an optional `[compare]` table:
//!
//! ```toml
//! [defaults]
//! sources = "template-5k"
//! montage = "10-10"
//! resamples = 100
//!
//! [[job]]
//! name = "sub-01"
//! decoder = "decoders/sub-01.npz"
//!
//! [[job]]
//! name = "patients"
//! decoder = "patients/*.npz"   # one job per file: patients-<file stem>
//! lambda_ratio = 0.1
//! ```
//!
//! Keys have the meaning of `patchwise attribute`'s flags with `_` for `-`;
//! a job's key overrides the same key of `[defaults]`; unknown keys are
//! rejected with their line. Relative paths are relative to the script's
//! folder. [`run::run_batch`] runs the jobs (each one `job::attribute`),
//! stages each job's folder with its marker, and writes the summary.

mod checks;
mod error;
pub mod inspect;
mod plan;
pub mod run;
mod script;
mod shard;

pub use error::BatchError;
pub use plan::{
    input_hash, load_script, parse_script, CompareSpec, Job, Script, MARKER_FILE, SUMMARY_FILE,
};
pub use script::{option_keys, NO_REPORT};
pub use shard::Shard;
