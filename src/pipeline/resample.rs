//! Uncertainty by a parametric bootstrap from the residual.
//!
//! For a component with reconstruction ŷ and residual r over n channels,
//! the noise level is σ̂² = ‖r‖² / max(n − 1 − df, 1) (one degree lost to
//! the average reference, df = nonzero coefficients). Each resample fits
//! y* = ŷ + σ̂ e, with e white Gaussian noise (average-referenced unless the
//! patterns were whitened), at the same λ, and recomputes the region
//! shares. The interval is the 2.5–97.5 % percentile interval of the
//! resampled shares (Efron & Tibshirani 1993, "An Introduction to the
//! Bootstrap", ch. 13); a region counts as selected in a resample when its
//! share is at least the selection threshold. Resample i uses random
//! stream i of the seed, so results do not depend on the thread count.

/// Share at or above which a region counts as selected in a resample (5 %;
/// the default of [`ResampleOptions::selection_threshold`], which the
/// terminal legend, the report and the README quote).
pub const SELECTION_THRESHOLD: f64 = 0.05;

/// Options of the resampling.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResampleOptions {
    /// Number of resamples (0 = none).
    pub n_resamples: usize,
    /// Seed of the random streams.
    pub seed: u64,
    /// Share at or above which a region counts as selected.
    pub selection_threshold: f64,
}

impl Default for ResampleOptions {
    fn default() -> Self {
        ResampleOptions {
            n_resamples: 100,
            seed: 20141,
            selection_threshold: SELECTION_THRESHOLD,
        }
    }
}

/// Per component and region: interval and selection frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct ResampleSummary {
    /// `intervals[c][r]` for component c and region r.
    pub intervals: Vec<Vec<crate::attribution::RegionInterval>>,
    /// Estimated noise standard deviation per component (pattern units).
    pub noise_sd: Vec<f64>,
    /// Number of resamples used.
    pub n_resamples: usize,
    /// Resampled block fits that stopped on their iteration or time budget
    /// (their shares are used as they are, with the gap they reached).
    pub budget_stops: usize,
    /// Reads of the whole dictionary by the resampled fits' block products
    /// (λ_max and the full certificates of all resamples on one forward
    /// model share each read).
    pub dictionary_passes: usize,
    /// Mean passes over the dictionary per resampled block fit, counted as
    /// if the fit ran alone (`solver::Info::dictionary_passes`).
    pub fit_passes: f64,
    /// Per component, the probability that the estimate's leading region is
    /// the truth's: its lead frequency through the calibration map
    /// (`attribution::leader_probability`); NaN without a leader.
    pub leader_probability: Vec<f64>,
    /// `resampled_shares[c][r][b]`: the share of region r in column c in
    /// resample b, kept when the caller set the column blocks (a decoder
    /// with a time axis, for the time ranges' uncertainty); else empty.
    pub resampled_shares: Vec<Vec<Vec<f64>>>,
}
