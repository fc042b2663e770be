//! What a fit produced: per block (a component, or all jointly) what the
//! solver did and how λ was set, and the whole outcome with shares and
//! resampling intervals. Shared by the fit stage and the λ rules.

use crate::attribution::Attribution;
use crate::solver::{Fit, StopReason};

use super::resample::ResampleSummary;

/// What the solver did for one fitted block (a component, or all jointly).
#[derive(Debug, Clone, PartialEq)]
pub struct FittedComponent {
    /// The components of the block.
    pub components: Vec<usize>,
    /// λ used.
    pub lambda: f64,
    /// λ_max of the block.
    pub lambda_max: f64,
    /// Relative duality gap at the end.
    pub duality_gap: f64,
    /// FISTA iterations.
    pub iterations: usize,
    /// Active groups (patches).
    pub n_active_groups: usize,
    /// The path searched: (ratio, explained variance, active groups, BIC).
    pub path: Vec<(f64, f64, usize, f64)>,
    /// Why the solver stopped (a budget stop is reported, not an error).
    pub stop_reason: StopReason,
    /// The noise standard deviation per channel the λ rule used (fit space;
    /// NaN for rules that use none).
    pub noise_sd: f64,
    /// The chosen λ is the last point the rule could search (the end of the
    /// criterion's path, or the noise rule's floor): λ is set by the range,
    /// not by the data.
    pub at_range_end: bool,
    /// Passes over the dictionary of every solve that chose λ and fitted
    /// the block (a path or the noise rule's search: all its points), as
    /// `solver::Info::dictionary_passes` counts them.
    pub dictionary_passes: f64,
}

impl FittedComponent {
    /// What the solver reported for the block of components `cols`, with
    /// the path searched, the rule's noise level (NaN when it used none) and
    /// whether λ sits at the end of the searched range.
    pub(crate) fn from_info(
        cols: &[usize],
        info: &crate::solver::Info,
        path: Vec<(f64, f64, usize, f64)>,
        noise_sd: f64,
        at_range_end: bool,
    ) -> Self {
        FittedComponent {
            components: cols.to_vec(),
            lambda: info.lambda,
            lambda_max: info.lambda_max,
            duality_gap: info.duality_gap,
            iterations: info.iterations,
            n_active_groups: info.n_active_groups,
            path,
            stop_reason: info.stop_reason,
            noise_sd,
            at_range_end,
            dictionary_passes: info.dictionary_passes,
        }
    }
}

/// Everything the fit produced.
#[derive(Debug, Clone)]
pub struct FitOutcome {
    /// The penalised solution (n_atoms × k), residual, explained variance.
    pub fit: Fit,
    /// The debiased refit on the support, when asked for.
    pub refit: Option<Fit>,
    /// One entry per fitted block.
    pub blocks: Vec<FittedComponent>,
    /// Shares, source maps and peaks.
    pub attribution: Attribution,
    /// Resampling intervals, when resampling ran.
    pub resample: Option<ResampleSummary>,
    /// Per component, the pattern's signal-to-noise power ratio
    /// ‖y‖² / (n_eff σ²) − 1 when the noise level σ was given (folds, a
    /// sample count, a number); `None` when σ was estimated with the fit.
    pub pattern_snr: Option<Vec<f64>>,
    /// Per column, the noise level it was divided by before a fit with
    /// column blocks (a decoder with a time axis; then λ, λ_max and the gap
    /// of `blocks` are those of the divided problem); `None` otherwise.
    pub column_scale: Option<Vec<f64>>,
}

/// One block's coefficients (n_atoms × block width) and what the solver did.
pub(crate) struct BlockFit {
    pub(crate) coefficients: Vec<f64>,
    pub(crate) info: FittedComponent,
}
