//! Cohort comparison: region shares, consistency, group tests and map
//! similarity across many attributions on one template cortex.
//!
//! Every function here is pure and works on plain types; reading result
//! folders lives in `crate::io`. Subjects enter as [`SubjectResult`] values
//! whose source maps are already on the template (see [`mapping`] for
//! carrying a map from an individual cortex). The outputs do not depend on
//! the rayon thread count: parallel loops run over independent outputs and
//! every random draw comes from its own seeded stream.
//!
//! # Methods and references
//! - Group mean share with a percentile bootstrap interval over subjects
//!   (Efron B, Tibshirani RJ 1993, *An Introduction to the Bootstrap*,
//!   Chapman & Hall, ch. 13).
//! - Group test per region: sign-flip permutation test of the one-sample t
//!   statistic of share − 0.01, one-sided (the share must exceed it), with the
//!   max-statistic correction over regions for the family-wise error
//!   (Nichols TE, Holmes AP 2002, Hum Brain Mapp 15:1).
//! - Similarity of source maps: cosine after geodesic Gaussian smoothing, and
//!   an entropic optimal-transport distance (Cuturi M 2013, NIPS 26, "Sinkhorn
//!   distances") between region masses with geodesic centroid costs.

mod compare;
mod error;
pub mod mapping;
mod paired;
mod similarity;
mod stats;
mod transport;

pub use compare::{
    compare, CompareParams, Comparison, ComponentComparison, SubjectResult, MIN_GROUP_SHARE,
    TRANSPORT_ITERATIONS, TRANSPORT_MARGINAL_WARNING,
};
pub use error::CohortError;
pub use paired::{compare_paired, PairedComparison, PairedComponent};
pub use similarity::{cosine, SmoothingKernel};
pub use stats::{
    bootstrap_draw, bootstrap_mean_interval, sign_flip_max_test, sign_flip_max_test_greater,
    smallest_exact_sign_flip_p, too_few_subjects_warning, SignFlipTest,
};
pub use transport::{
    region_transport_costs, sinkhorn, SinkhornParams, SinkhornResult, TransportCosts,
};
