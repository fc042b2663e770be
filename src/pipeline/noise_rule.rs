//! λ from the noise in the pattern: the quantile universal threshold, with
//! the noise level given (folds, a sample count, a number) or estimated
//! together with the fit (the scaled lasso).
//!
//! For patterns y = D x + e with white noise e of standard deviation σ per
//! channel, the largest group correlation of pure noise, max_g ‖D_gᵀe‖_F, is
//! σ times a variable M whose distribution depends on the dictionary only. A
//! λ at a high quantile of σ·M keeps groups that noise alone would not
//! select: the quantile universal threshold (Giacobino, Sardy,
//! Diaz-Rodriguez & Hengartner 2017, Electron J Stat 11:4701; from memory).
//! M is sampled here by Monte Carlo on the fit's own dictionary, so the
//! correlation between neighbouring patches is taken into account exactly.
//!
//! When σ is not known it is estimated together with λ as the fixed point
//! σ̂ = ‖y − D x̂(λ)‖ / √n_eff, λ = q σ̂ (the scaled lasso, Sun & Zhang 2012,
//! Biometrika 99:879, their iteration with the residual over n), with
//! n_eff = k (n_ch − 1) values (one degree per column lost to the average
//! reference). Because σ̂ falls with the noise, so does λ: the rule follows
//! the data instead of the end of a fixed path.
//!
//! The search walks the same geometric grid of ratios as the criteria
//! (1 down to 0.02 in 15 points) and continues below it, with the same step,
//! until the noise-implied ratio q σ̂/λ_max rises above the grid point (the
//! fixed point is then bracketed), or a floor of 1e-4 is reached (reported).

use crate::numeric::SplitMix64;
use crate::solver::{fit_warm, null_lambda_max, DenseDictionary, Groups, Lambda, NoObserver};

use super::lambda_rule::{bic, BIC_MIN_RATIO, BIC_PATH_POINTS};
use super::outcome::{BlockFit, FittedComponent};
use super::PipelineError;

/// Monte Carlo draws of the null maximum.
pub const NULL_DRAWS: usize = 200;
/// Seed of the null draws (fixed: λ must not depend on the resampling seed).
const NULL_SEED: u64 = 0x5eed_0017;
/// The quantile of the null maximum that sets λ = q σ.
pub const NULL_QUANTILE: f64 = 0.95;
/// The smallest ratio λ/λ_max the search goes down to.
pub const RATIO_FLOOR: f64 = 1e-4;
/// Fixed-point iterations of the scaled lasso, at most.
const MAX_FIXED_POINT: usize = 25;

/// How the noise level of the patterns is known.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PatternNoise {
    /// Per component, the noise standard deviation per channel in the fit's
    /// space (after reference and whitening); `None` = estimate with λ.
    pub sd: Option<Vec<f64>>,
    /// Where the level came from, in words (for summary.json).
    pub source: String,
    /// Fold deviations in the fit's space, each n_ch × k row-major, scaled so
    /// that Σ_f g_f d_f with g_f standard normal has the jackknife covariance
    /// of the pattern; the resamples then draw noise of that shape.
    pub fold_deviations: Option<Vec<Vec<f64>>>,
}

impl PatternNoise {
    /// The source in words, "estimated with λ (scaled lasso)" when none.
    pub fn describe(&self) -> String {
        if self.source.is_empty() {
            "estimated with lambda (scaled lasso)".to_string()
        } else {
            self.source.clone()
        }
    }
}

/// The `level`-quantile of the null maximum for blocks of `kb` columns.
pub(crate) fn null_quantile(
    dict: &DenseDictionary,
    groups: &Groups,
    kb: usize,
    level: f64,
) -> Result<f64, PipelineError> {
    let n = dict.n_channels();
    let mut rng = SplitMix64::new(NULL_SEED, kb as u64);
    let e: Vec<f64> = (0..n * kb * NULL_DRAWS).map(|_| rng.normal()).collect();
    let maxima = null_lambda_max(dict, groups, &e, kb, NULL_DRAWS)?;
    Ok(crate::attribution::percentile(&maxima, level))
}

/// Fit one block with λ = q σ (σ given, or estimated by the fixed point).
/// `y` is row-major n_ch × kb.
#[allow(clippy::too_many_arguments)]
pub(crate) fn fit_block_noise(
    dict: &DenseDictionary,
    groups: &Groups,
    y: &[f64],
    cols: &[usize],
    q: f64,
    given_sd: Option<f64>,
    params: &crate::solver::ValidParams,
) -> Result<BlockFit, PipelineError> {
    let kb = cols.len();
    let n_ch = dict.n_channels();
    let n_eff = (kb * n_ch.saturating_sub(1)).max(1) as f64;
    let y_sq: f64 = y.iter().map(|v| v * v).sum();
    let n = n_ch * kb;
    let step = (BIC_MIN_RATIO.ln() / (BIC_PATH_POINTS - 1) as f64).exp();
    let mut x = vec![0.0; dict.n_atoms() * kb];
    let mut path = Vec::new();
    // (ratio, x, info, σ̂) at the grid point above the bracket.
    let mut above: Option<(f64, Vec<f64>, crate::solver::Info, f64)> = None;
    let mut ratio = 1.0;
    let mut bracketed = false;
    // Passes over the dictionary of every fit of the search.
    let mut passes = 0.0;
    loop {
        let p = params.with_lambda(Lambda::Ratio(ratio))?;
        let (f, info) = fit_warm(dict, groups, y, kb, &x, &p, &mut NoObserver)?;
        passes += info.dictionary_passes;
        x = f.coefficients;
        let rss: f64 = f.residual.iter().map(|v| v * v).sum();
        let sigma_hat = (rss / n_eff).sqrt();
        let sigma = given_sd.unwrap_or(sigma_hat);
        let active = info.n_active_atoms * kb;
        let ev = if y_sq > 0.0 { 1.0 - rss / y_sq } else { 0.0 };
        path.push((
            ratio,
            ev,
            info.n_active_groups,
            if active == 0 {
                f64::INFINITY
            } else {
                bic(rss, n, active)
            },
        ));
        let implied = if info.lambda_max > 0.0 {
            q * sigma / info.lambda_max
        } else {
            1.0
        };
        if implied >= ratio {
            bracketed = true;
            if above.is_none() {
                // Noise alone reaches λ_max: the empty fit is the answer.
                return Ok(block(cols, x, info, path, sigma, false, passes));
            }
            break;
        }
        let next = ratio * step;
        if next < RATIO_FLOOR {
            above = Some((ratio, x.clone(), info, sigma));
            break;
        }
        above = Some((ratio, x.clone(), info, sigma));
        ratio = next;
    }
    let Some((r_above, x_above, info_above, sigma_above)) = above else {
        return Err(PipelineError::Inconsistent(
            "noise rule: empty search".to_string(),
        ));
    };
    if !bracketed {
        // Still below the noise at the floor: an essentially noise-free pattern.
        return Ok(block(
            cols,
            x_above,
            info_above,
            path,
            sigma_above,
            true,
            passes,
        ));
    }
    let lambda_max = info_above.lambda_max;
    // The fixed point lies between the grid point below and the one above.
    let mut rho = (q * sigma_above / lambda_max).clamp(ratio, r_above);
    let mut x = x_above;
    let mut last = None;
    for _ in 0..MAX_FIXED_POINT {
        let p = params.with_lambda(Lambda::Ratio(rho))?;
        let (f, info) = fit_warm(dict, groups, y, kb, &x, &p, &mut NoObserver)?;
        passes += info.dictionary_passes;
        x = f.coefficients;
        let rss: f64 = f.residual.iter().map(|v| v * v).sum();
        let sigma = given_sd.unwrap_or((rss / n_eff).sqrt());
        let next = (q * sigma / lambda_max).clamp(ratio, r_above);
        let done = given_sd.is_some() || (next - rho).abs() <= 1e-3 * rho;
        last = Some((info, sigma));
        if done {
            break;
        }
        rho = next;
    }
    let Some((info, sigma)) = last else {
        return Err(PipelineError::Inconsistent(
            "noise rule: no fixed-point step".to_string(),
        ));
    };
    Ok(block(cols, x, info, path, sigma, false, passes))
}

fn block(
    cols: &[usize],
    coefficients: Vec<f64>,
    info: crate::solver::Info,
    path: Vec<(f64, f64, usize, f64)>,
    noise_sd: f64,
    at_floor: bool,
    passes: f64,
) -> BlockFit {
    let mut info = FittedComponent::from_info(cols, &info, path, noise_sd, at_floor);
    info.dictionary_passes = passes;
    BlockFit { coefficients, info }
}
