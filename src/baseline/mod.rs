//! Baselines the patch fit is compared against: depth-weighted minimum norm.

mod minimum_norm;

pub use minimum_norm::{minimum_norm, MinimumNormError, MinimumNormParams};
