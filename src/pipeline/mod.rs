//! The main job chained: lead field, dictionary, fit and attribution for a
//! decoder's patterns. Pure functions over in-memory data; the CLI reads
//! and writes the files and keeps the cache.

mod error;
mod fit_stage;
mod forward_stage;
mod lambda_rule;
mod noise_rule;
mod outcome;
mod perturb;
mod quality;
mod resample;
mod resample_fits;
mod time_resolved;

pub use error::PipelineError;
pub use fit_stage::{fit_patterns, FitOptions, Problem};
pub use forward_stage::{bem_leadfield_for, dictionary_for, leadfield_for, DistanceKind};
pub use lambda_rule::LambdaRule;
pub use noise_rule::{PatternNoise, NULL_QUANTILE, RATIO_FLOOR};
pub use outcome::{FitOutcome, FittedComponent};
pub use perturb::{perturbed_atoms, perturbed_model, ForwardPerturbation};
pub use quality::{component_flags, is_poorly_explained, POORLY_EXPLAINED_EV};
pub use resample::{ResampleOptions, ResampleSummary, SELECTION_THRESHOLD};
pub use time_resolved::{
    column_strength, leading_floor, time_shares, time_window_blocks, TimeRange, TimeShares,
    LEADING_SHARE,
};
