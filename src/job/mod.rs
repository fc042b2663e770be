//! The jobs users run, as library calls. Each job's parameters are declared
//! once ([`params`]: clap for the command line, serde for job scripts and
//! saved results), the options that name a built-in or a file are typed
//! ([`specs`]), and each job is one function ([`attribute`], [`compare`]) that
//! reports through a [`JobObserver`] and fails with a [`JobError`] that
//! says whether the input or the computation is at fault.
//!
//! Layer: above the pipeline stages, `io` and `render`; below `batch`
//! (job scripts and their runner) and the command line, which parses flags,
//! calls one job and prints (docs/architecture.md).

pub mod attribute;
pub mod bem_head;
pub mod cache;
pub mod cache_folder;
pub mod check;
pub mod check_tables;
pub mod compare;
pub mod compare_inputs;
pub mod compare_outputs;
pub mod compare_params;
pub mod demo;
pub mod demo_time;
mod describe;
pub mod dipole;
pub mod error;
pub mod figure;
pub mod forward;
pub mod gain_outputs;
pub mod keyed_lock;
pub mod leadfield_import;
pub mod montage_frame;
pub mod noise;
pub mod observer;
pub mod outputs;
pub mod params;
pub mod perturb;
pub mod prepare;
pub mod report;
pub mod specs;
pub mod time_outputs;

pub use attribute::{attribute, Attribution};
pub use compare::{compare, Comparison};
pub use compare_params::CompareParams;
pub use error::{ErrorKind, JobError, JobResult};
pub use observer::{JobObserver, NoteKeeper, Silent};
pub use params::{AttributeInputs, AttributeParams, FitParams, ForwardParams, PatchParams};
pub use specs::{
    HeadChoice, LambdaRuleName, MontageSpec, OrientationChoice, ProfileChoice, Reference,
    SourcesSpec,
};
