//! Pipeline stage `patterns`: decoder weights to activation patterns (Haufe et al. 2014),
//! average referencing and noise whitening.
//!
//! All matrices are plain row-major slices: weights and patterns `n_ch × k`, covariances
//! `n_ch × n_ch`, dictionaries `n_ch × m`. Products are summed in a fixed order and faer is
//! called sequentially, so results do not depend on the thread count.

mod covariance;
mod error;
mod haufe;
mod noise;
mod reference;
mod time_resolved;
mod whiten;

pub use covariance::{PSD_TOLERANCE, SYMMETRY_TOLERANCE};
pub use error::PatternsError;
pub use haufe::{activation_patterns, PatternsInfo, CONDITION_LIMIT};
pub use noise::{fold_noise, sample_count_variance, FoldNoise};
pub use reference::average_reference;
pub use time_resolved::{per_time_patterns, space_time_patterns};
pub use whiten::{Whitener, DEFAULT_EIGENVALUE_FLOOR};
