//! The numeric base the domain modules share: small operations on plain
//! row-major slices that do not belong to any one pipeline stage.
//!
//! - [`SplitMix64`]: the seeded generator behind resampling (pipeline),
//!   bootstrap and sign-flip draws (cohort) and simulations (validation).
//! - `symmetric_eigen` (crate-internal): the sequential symmetric
//!   eigendecomposition used by the patterns stage, the montage sphere fit
//!   and the dipole confidence ellipsoid.
//! - [`average_reference_columns`] and [`centre_covariance`]: the common
//!   average reference of a channel × column matrix and of a channel
//!   covariance (H A and H C H with H = I − 11ᵀ/n the centring matrix).
//! - [`rescale_to_unit_norm`]: one column of a channel × atom matrix to
//!   unit 2-norm, its scale folded into the atom's norm.
//! - [`average_ranks`]: ranks with ties averaged (Spearman's correlation in
//!   attribution, the ROC area of the recovery benchmark).
//! - [`Progress`]: how every long stage reports its steps and hears that
//!   its caller wants it to stop (the job's observer is one).
//!
//! *Invariant:* no file I/O and no import of any other module of the crate;
//! every sum runs in a fixed order, so results do not depend on the thread
//! count.

mod columns;
pub(crate) mod eigen;
mod progress;
mod ranks;
mod reference;
mod rng;

pub use columns::{rescale_all_to_unit_norm, rescale_to_unit_norm};
pub(crate) use eigen::symmetric_eigen;
pub use progress::{Progress, Quiet};
pub use ranks::average_ranks;
pub use reference::{average_reference_columns, centre_covariance};
pub use rng::SplitMix64;
