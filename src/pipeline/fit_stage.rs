//! Fit decoder patterns with the group LASSO, choose λ, attribute, resample.

use rayon::prelude::*;
use sprs::CsMat;

use crate::attribution::{
    attribute, component_shares, lead_frequencies, leader_probability, percentile, Attribution,
    AttributionInput, RegionInterval, RegionMass,
};
use crate::geometry::Vec3;
use crate::numeric::{average_reference_columns, SplitMix64};
use crate::solver::{
    fit, fit_warm, path, refit, DenseDictionary, Fit, Groups, Lambda, NoObserver, Params, PathSpec,
    ValidParams,
};

use super::lambda_rule::{bic, LambdaRule, BIC_MIN_RATIO, BIC_PATH_POINTS};
use super::noise_rule::{fit_block_noise, null_quantile, PatternNoise, NULL_QUANTILE};
use super::outcome::{BlockFit, FitOutcome, FittedComponent};
use super::resample::{ResampleOptions, ResampleSummary};
use super::resample_fits::{column_block, ResampleFits};
use super::PipelineError;

/// The fitted problem and the source space the attribution needs.
/// Matrices row-major, as in the HDF5 files.
pub struct Problem<'a> {
    /// Unit-norm atoms, n_ch × n_atoms.
    pub atoms: &'a [f64],
    /// Number of channels.
    pub n_channels: usize,
    /// Group of each atom.
    pub group: &'a [usize],
    /// Norm removed from each atom.
    pub atom_norms: &'a [f64],
    /// Source amplitudes of each unnormalised atom, CSC n_src × n_atoms.
    pub profile: &'a CsMat<f64>,
    /// Region of each source (-1 none).
    pub source_region: &'a [i32],
    /// Number of named regions.
    pub n_regions: usize,
    /// Source positions (m).
    pub source_positions: &'a [Vec3],
    /// The atoms under perturbed forward models (each n_ch × n_atoms,
    /// row-major, prepared like `atoms`); resample b draws model b mod P.
    /// Empty: every resample uses `atoms`.
    pub perturbed: &'a [Vec<f64>],
}

impl Problem<'_> {
    /// The attribution of `coefficients` (n_atoms × k) fitted to `patterns`
    /// (n_ch × k) on this problem.
    fn attribute(
        &self,
        patterns: &[f64],
        coefficients: &[f64],
        k: usize,
    ) -> Result<Attribution, PipelineError> {
        Ok(attribute(&AttributionInput {
            atoms: self.atoms,
            n_channels: self.n_channels,
            group: self.group,
            atom_norms: self.atom_norms,
            profile: self.profile,
            patterns,
            coefficients,
            n_components: k,
            source_region: self.source_region,
            n_regions: self.n_regions,
            source_positions: self.source_positions,
        })?)
    }
}

/// Options of the fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitOptions {
    /// How λ is chosen.
    pub lambda: LambdaRule,
    /// Fit the components jointly (shared support) instead of one by one.
    pub joint: bool,
    /// Relative duality-gap tolerance.
    pub tol: f64,
    /// Also compute the debiased least-squares refit on the support.
    pub refit: bool,
    /// Resampling for uncertainty.
    pub resample: ResampleOptions,
    /// The patterns and atoms were whitened (changes the resampling noise).
    pub whitened: bool,
    /// What is known of the noise in the patterns (the noise rule's σ and
    /// the resamples' noise shape).
    pub noise: PatternNoise,
    /// The blocks of columns fitted together, when the caller sets them (a
    /// decoder with a time axis: one block per component and time window,
    /// [`super::time_window_blocks`]); each column in exactly one block.
    /// `None`: one block per column, or one for all with `joint`. Also keeps
    /// every resample's shares ([`ResampleSummary::resampled_shares`]).
    pub column_blocks: Option<Vec<Vec<usize>>>,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            lambda: LambdaRule::Noise,
            joint: false,
            tol: 1e-8,
            refit: true,
            resample: ResampleOptions::default(),
            whitened: false,
            noise: PatternNoise::default(),
            column_blocks: None,
        }
    }
}

/// Relative duality-gap tolerance of the resampled fits.
const RESAMPLE_TOL: f64 = 1e-4;
/// Iteration and time budget of one fit of the main estimate.
const FIT_MAX_ITER: usize = 50_000;
const FIT_MAX_SECONDS: f64 = 60.0;
/// Iteration and time budget of one resampled fit.
const RESAMPLE_MAX_ITER: usize = 5_000;
const RESAMPLE_MAX_SECONDS: f64 = 10.0;

/// How one block's λ is set: the rule, plus the noise rule's quantile and
/// the block's given noise level.
#[derive(Clone, Copy)]
struct BlockRule {
    rule: LambdaRule,
    quantile: f64,
    noise_sd: Option<f64>,
}

fn fit_block(
    dict: &DenseDictionary,
    groups: &Groups,
    y: &[f64],
    cols: &[usize],
    block_rule: BlockRule,
    params: &ValidParams,
    warm: Option<&[f64]>,
) -> Result<BlockFit, PipelineError> {
    let kb = cols.len();
    let n_ch = dict.n_channels();
    let rule = block_rule.rule;
    match rule {
        LambdaRule::Noise => fit_block_noise(
            dict,
            groups,
            y,
            cols,
            block_rule.quantile,
            block_rule.noise_sd,
            params,
        ),
        LambdaRule::Ratio(_) | LambdaRule::Absolute(_) => {
            let lambda = match rule {
                LambdaRule::Absolute(l) => Lambda::Absolute(l),
                LambdaRule::Ratio(r) => Lambda::Ratio(r),
                _ => Lambda::Ratio(1.0),
            };
            let p = params.with_lambda(lambda)?;
            let (f, info) = match warm {
                Some(x0) => fit_warm(dict, groups, y, kb, x0, &p, &mut NoObserver)?,
                None => fit(dict, groups, y, kb, &p, &mut NoObserver)?,
            };
            Ok(BlockFit {
                coefficients: f.coefficients,
                info: FittedComponent::from_info(cols, &info, Vec::new(), f64::NAN, false),
            })
        }
        LambdaRule::Bic | LambdaRule::Gcv | LambdaRule::Aic => {
            let spec = PathSpec::LogSpaced {
                n_lambdas: BIC_PATH_POINTS,
                min_ratio: BIC_MIN_RATIO,
            };
            let points = path(dict, groups, y, kb, &spec, params, &mut NoObserver)?;
            let y_sq: f64 = y.iter().map(|v| v * v).sum();
            let n = n_ch * kb;
            let mut best = 0;
            let mut best_score = f64::INFINITY;
            let mut summary = Vec::with_capacity(points.len());
            for (i, p) in points.iter().enumerate() {
                let rss = (1.0 - p.explained_variance_total) * y_sq;
                let df = p.coefficients.atoms.len() * kb;
                // The empty fit (at λ_max) is never chosen.
                let (b, score) = if p.coefficients.atoms.is_empty() {
                    (f64::INFINITY, f64::INFINITY)
                } else {
                    (
                        bic(rss, n, df),
                        rule.score(rss, n, df).unwrap_or(f64::INFINITY),
                    )
                };
                summary.push((
                    p.ratio,
                    p.explained_variance_total,
                    p.info.n_active_groups,
                    b,
                ));
                if score < best_score {
                    best_score = score;
                    best = i;
                }
            }
            let chosen = &points[best];
            let at_range_end = best + 1 == points.len();
            let mut info =
                FittedComponent::from_info(cols, &chosen.info, summary, f64::NAN, at_range_end);
            info.dictionary_passes = points.iter().map(|p| p.info.dictionary_passes).sum();
            Ok(BlockFit {
                coefficients: chosen.coefficients.to_dense(),
                info,
            })
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn fit_all(
    dict: &DenseDictionary,
    groups: &Groups,
    y: &[f64],
    k: usize,
    blocks: &[Vec<usize>],
    rules: &[BlockRule],
    params: &ValidParams,
    warm: Option<&[f64]>,
    scale: Option<&[f64]>,
) -> Result<(Vec<f64>, Vec<FittedComponent>), PipelineError> {
    let n_atoms = dict.n_atoms();
    // Each column divided by its scale before the fit (a decoder with a time
    // axis: its own noise level), the coefficients multiplied back after.
    let scaled = |mut block: Vec<f64>, cols: &[usize]| {
        if let Some(sc) = scale {
            for row in block.chunks_mut(cols.len()) {
                for (v, &c) in row.iter_mut().zip(cols) {
                    *v /= sc[c];
                }
            }
        }
        block
    };
    let fitted: Vec<Result<BlockFit, PipelineError>> = blocks
        .par_iter()
        .zip(rules.par_iter())
        .map(|(cols, &rule)| {
            let yb = scaled(column_block(y, k, cols), cols);
            let x0 = warm.map(|x| scaled(column_block(x, k, cols), cols));
            let mut b = fit_block(dict, groups, &yb, cols, rule, params, x0.as_deref())?;
            if let Some(sc) = scale {
                for row in b.coefficients.chunks_mut(cols.len()) {
                    for (v, &c) in row.iter_mut().zip(cols) {
                        *v *= sc[c];
                    }
                }
            }
            Ok(b)
        })
        .collect();
    let mut coefficients = vec![0.0; n_atoms * k];
    let mut infos = Vec::with_capacity(blocks.len());
    for result in fitted {
        let b = result?;
        let kb = b.info.components.len();
        for j in 0..n_atoms {
            for (bi, &c) in b.info.components.iter().enumerate() {
                coefficients[j * k + c] = b.coefficients[j * kb + bi];
            }
        }
        infos.push(b.info);
    }
    Ok((coefficients, infos))
}

/// The noise level of each column of a decoder with a time axis, by which
/// the column is divided before the windowed fit, so that the group norm of
/// a window weighs its time points by their signal-to-noise ratio and not by
/// the scale each one happens to have (a per-time Haufe transform scales
/// each time point by its own decoder's output variance): the level given
/// (`options.noise.sd`), else the noise rule's scaled-lasso estimate of each
/// column fitted alone. A level that is not finite and positive counts as 1.
fn column_noise(
    dict: &DenseDictionary,
    groups: &Groups,
    patterns: &[f64],
    k: usize,
    options: &FitOptions,
    params: &ValidParams,
) -> Result<Vec<f64>, PipelineError> {
    let levels = match &options.noise.sd {
        Some(sd) => sd.clone(),
        None => {
            let blocks: Vec<Vec<usize>> = (0..k).map(|c| vec![c]).collect();
            let rule = BlockRule {
                rule: LambdaRule::Noise,
                quantile: null_quantile(dict, groups, 1, NULL_QUANTILE)?,
                noise_sd: None,
            };
            let (_, infos) = fit_all(
                dict,
                groups,
                patterns,
                k,
                &blocks,
                &vec![rule; k],
                params,
                None,
                None,
            )?;
            let mut sd = vec![1.0; k];
            for b in infos {
                for &c in &b.components {
                    sd[c] = b.noise_sd;
                }
            }
            sd
        }
    };
    Ok(levels
        .into_iter()
        .map(|v| if v.is_finite() && v > 0.0 { v } else { 1.0 })
        .collect())
}

/// Fit `patterns` (n_ch × k row-major) on the problem's dictionary, choose
/// λ by the options' rule, attribute, and resample for uncertainty.
/// `progress` hears the number of resamples finished.
pub fn fit_patterns(
    problem: &Problem<'_>,
    patterns: &[f64],
    k: usize,
    options: &FitOptions,
    progress: &dyn crate::numeric::Progress,
) -> Result<FitOutcome, PipelineError> {
    let n_ch = problem.n_channels;
    let n_atoms = problem.group.len();
    if patterns.len() != n_ch * k || k == 0 {
        return Err(PipelineError::Inconsistent(format!(
            "patterns have {} values, expected {n_ch} channels x {k} components",
            patterns.len()
        )));
    }
    let dict = DenseDictionary::from_row_major(n_ch, n_atoms, problem.atoms)?;
    let assignment: Vec<i64> = problem.group.iter().map(|&g| g as i64).collect();
    let groups = Groups::from_assignment(&assignment)?;
    let params = Params {
        tol: options.tol,
        max_iter: FIT_MAX_ITER,
        max_seconds: Some(FIT_MAX_SECONDS),
        stop_on_budget: true,
        ..Params::default()
    }
    .validate()?;
    let blocks: Vec<Vec<usize>> = match &options.column_blocks {
        Some(given) => {
            let mut seen = vec![0usize; k];
            for &c in given.iter().flatten() {
                if c < k {
                    seen[c] += 1;
                }
            }
            if given.iter().any(Vec::is_empty) || seen.iter().any(|&n| n != 1) {
                return Err(PipelineError::Inconsistent(format!(
                    "column blocks must hold each of the {k} columns exactly once"
                )));
            }
            given.clone()
        }
        None if options.joint => vec![(0..k).collect()],
        None => (0..k).map(|c| vec![c]).collect(),
    };
    if let Some(sd) = &options.noise.sd {
        if sd.len() != k || sd.iter().any(|v| !(v.is_finite() && *v > 0.0)) {
            return Err(PipelineError::Inconsistent(format!(
                "noise level: {} values, expected {k} finite positive values (one per component)",
                sd.len()
            )));
        }
    }
    // The null quantile depends on the block width only.
    let quantile = if options.lambda == LambdaRule::Noise {
        let mut by_width = std::collections::BTreeMap::new();
        for b in &blocks {
            if let std::collections::btree_map::Entry::Vacant(e) = by_width.entry(b.len()) {
                e.insert(null_quantile(&dict, &groups, b.len(), NULL_QUANTILE)?);
            }
        }
        by_width
    } else {
        Default::default()
    };
    let scale = match options.column_blocks {
        Some(_) => Some(column_noise(&dict, &groups, patterns, k, options, &params)?),
        None => None,
    };
    let rules: Vec<BlockRule> = blocks
        .iter()
        .map(|b| BlockRule {
            rule: options.lambda,
            quantile: quantile.get(&b.len()).copied().unwrap_or(f64::NAN),
            // Columns divided by their noise level have unit noise.
            noise_sd: if scale.is_some() {
                Some(1.0)
            } else {
                // A joint block's level: the root mean square of its components'.
                options.noise.sd.as_ref().map(|sd| {
                    (b.iter().map(|&c| sd[c] * sd[c]).sum::<f64>() / b.len() as f64).sqrt()
                })
            },
        })
        .collect();
    let (coefficients, infos) = fit_all(
        &dict,
        &groups,
        patterns,
        k,
        &blocks,
        &rules,
        &params,
        None,
        scale.as_deref(),
    )?;
    let full_fit = Fit::evaluate(&dict, patterns, k, coefficients.clone())?;
    let refit_fit = if options.refit {
        Some(refit(&dict, patterns, k, &coefficients)?.fit)
    } else {
        None
    };
    let attribution = problem.attribute(patterns, &coefficients, k)?;
    let resample = if options.resample.n_resamples > 0 && problem.n_regions > 0 {
        Some(resample(
            problem,
            &dict,
            &groups,
            patterns,
            &full_fit,
            &coefficients,
            &blocks,
            &infos,
            k,
            options,
            &attribution,
            scale.as_deref(),
            progress,
        )?)
    } else {
        None
    };
    // How far above its own noise each pattern stands, when the noise is known.
    let pattern_snr = options.noise.sd.as_ref().map(|sd| {
        let n_eff = n_ch.saturating_sub(1).max(1) as f64;
        (0..k)
            .map(|c| {
                let power: f64 = (0..n_ch).map(|i| patterns[i * k + c].powi(2)).sum();
                power / (n_eff * sd[c] * sd[c]) - 1.0
            })
            .collect()
    });
    Ok(FitOutcome {
        column_scale: scale,
        pattern_snr,
        fit: full_fit,
        refit: refit_fit,
        blocks: infos,
        attribution,
        resample,
    })
}

/// The nonzero entries (row, value) of each column of the row-major
/// matrix `coef` with `k` columns, in one pass over its rows.
fn sparse_columns(coef: &[f64], k: usize) -> Vec<Vec<(usize, f64)>> {
    let mut columns = vec![Vec::new(); k];
    for (j, row) in coef.chunks_exact(k.max(1)).enumerate() {
        for (column, &v) in columns.iter_mut().zip(row) {
            if v != 0.0 {
                column.push((j, v));
            }
        }
    }
    columns
}

#[allow(clippy::too_many_arguments)]
fn resample(
    problem: &Problem<'_>,
    dict: &DenseDictionary,
    groups: &Groups,
    patterns: &[f64],
    full: &Fit,
    coefficients: &[f64],
    blocks: &[Vec<usize>],
    infos: &[FittedComponent],
    k: usize,
    options: &FitOptions,
    attribution: &Attribution,
    scale: Option<&[f64]>,
    progress: &dyn crate::numeric::Progress,
) -> Result<ResampleSummary, PipelineError> {
    let n_ch = problem.n_channels;
    let n_atoms = problem.group.len();
    let opts = options.resample;
    // Noise level per component from the residual and the active set.
    // A level the user gave (folds, a sample count, a number) wins over the
    // residual's.
    let noise_sd: Vec<f64> = (0..k)
        .map(|c| {
            if let Some(sd) = &options.noise.sd {
                return sd[c];
            }
            let rss: f64 = (0..n_ch).map(|i| full.residual[i * k + c].powi(2)).sum();
            let df = (0..n_atoms)
                .filter(|&j| coefficients[j * k + c] != 0.0)
                .count();
            let dof = (n_ch as f64 - 1.0 - df as f64).max(1.0);
            (rss / dof).sqrt()
        })
        .collect();
    // The reconstruction ŷ = y − r around which the noise is drawn.
    let y_hat: Vec<f64> = patterns
        .iter()
        .zip(&full.residual)
        .map(|(y, r)| y - r)
        .collect();
    let lambdas: Vec<Lambda> = infos
        .iter()
        .map(|b| {
            // λ = 0 (a block fitted to zero) means λ_max of the resample.
            if b.lambda > 0.0 {
                Lambda::Absolute(b.lambda)
            } else {
                Lambda::Ratio(1.0)
            }
        })
        .collect();
    // Resampled fits only feed percentiles of shares, which need no 1e-8
    // certificate: on the batch benchmark a relative gap of 1e-4 moves the
    // interval ends 7–9 times less than changing the resampling seed does
    // (docs/benchmarks.md, Batch), and costs 17 % less CPU than 1e-5.
    let resample_params = Params {
        tol: RESAMPLE_TOL.max(options.tol),
        max_iter: RESAMPLE_MAX_ITER,
        max_seconds: Some(RESAMPLE_MAX_SECONDS),
        stop_on_budget: true,
        ..Params::default()
    }
    .validate()?;
    let params = &resample_params;
    // The region mass of each patch depends on the dictionary only.
    let mass = RegionMass::new(
        problem.profile,
        problem.group,
        problem.source_region,
        problem.n_regions,
    );
    // The perturbed forward models, each a dictionary of its own.
    let perturbed: Vec<DenseDictionary> = problem
        .perturbed
        .iter()
        .map(|a| DenseDictionary::from_row_major(n_ch, n_atoms, a))
        .collect::<Result<_, _>>()?;
    // Resample b draws from random stream b of the seed, whatever the order
    // of the fits.
    let draw = |b: usize| -> Vec<f64> {
        let mut rng = SplitMix64::new(opts.seed, b as u64);
        match &options.noise.fold_deviations {
            // Noise of the folds' own shape: Σ_f g_f d_f has the
            // jackknife covariance of the pattern (a Gaussian multiplier
            // bootstrap; Wu 1986, Ann Stat 14:1261, from memory).
            Some(deviations) => {
                let mut y_star = y_hat.clone();
                for d in deviations {
                    let g = rng.normal();
                    for (v, dv) in y_star.iter_mut().zip(d) {
                        *v += g * dv;
                    }
                }
                y_star
            }
            None => {
                let mut y_star = vec![0.0; n_ch * k];
                for c in 0..k {
                    let mut e: Vec<f64> = (0..n_ch).map(|_| rng.normal()).collect();
                    if !options.whitened {
                        average_reference_columns(&mut e, 1);
                    }
                    for i in 0..n_ch {
                        y_star[i * k + c] = y_hat[i * k + c] + noise_sd[c] * e[i];
                    }
                }
                y_star
            }
        }
    };
    let fits = ResampleFits {
        groups,
        k,
        blocks,
        lambdas: &lambdas,
        // Warm-started from the fit itself: the resampled problems are close.
        warm: coefficients,
        scale,
        params,
    };
    // The resamples on one forward model (b mod P) are fitted as blocks.
    let n_models = perturbed.len().max(1);
    let mut runs: Vec<Vec<Vec<f64>>> = vec![Vec::new(); opts.n_resamples];
    let mut budget_stops = 0;
    let (mut stacked_passes, mut fit_passes, mut n_fits) = (0, 0.0, 0);
    for m in 0..n_models.min(opts.n_resamples) {
        if progress.cancelled() {
            return Err(PipelineError::Cancelled);
        }
        let members: Vec<usize> = (m..opts.n_resamples).step_by(n_models).collect();
        let y_stars: Vec<Vec<f64>> = members.par_iter().map(|&b| draw(b)).collect();
        let (model, atoms) = if perturbed.is_empty() {
            (dict, problem.atoms)
        } else {
            (&perturbed[m], problem.perturbed[m].as_slice())
        };
        // Only the region shares are needed: no source map, no peak. The
        // columns are read in one pass over the rows and their shares run in
        // parallel (a decoder with a time axis has a column per time point,
        // and a block of resamples may hold a single one).
        let fitted = fits.fit(model, &y_stars, |coef| -> Vec<Vec<f64>> {
            sparse_columns(coef, k)
                .into_par_iter()
                .map(|nonzero| {
                    let mut x = vec![0.0; n_atoms];
                    for (j, v) in nonzero {
                        x[j] = v;
                    }
                    component_shares(atoms, n_ch, problem.group, &x, &mass).region_share
                })
                .collect()
        })?;
        budget_stops += fitted.budget_stops;
        stacked_passes += fitted.stacked_passes;
        fit_passes += fitted.fit_passes;
        n_fits += fitted.n_fits;
        for (&b, s) in members.iter().zip(fitted.kept) {
            runs[b] = s;
        }
        progress.advance(members.len());
    }
    let mut shares: Vec<Vec<Vec<f64>>> = vec![vec![Vec::new(); problem.n_regions]; k];
    for run in runs {
        for (c, regions) in run.into_iter().enumerate() {
            for (r, s) in regions.into_iter().enumerate() {
                shares[c][r].push(s);
            }
        }
    }
    let estimate = |c: usize, r: usize| {
        attribution.components[c]
            .region_share
            .get(r)
            .copied()
            .unwrap_or(0.0)
    };
    let intervals: Vec<Vec<RegionInterval>> = shares
        .iter()
        .enumerate()
        .map(|(c, per_region)| {
            let lead = lead_frequencies(per_region);
            per_region
                .iter()
                .zip(lead)
                .enumerate()
                .map(|(r, (v, lead_frequency))| {
                    let (q_low, q_high) = (percentile(v, 0.025), percentile(v, 0.975));
                    let median = percentile(v, 0.5);
                    let (low, high) = centred_interval(estimate(c, r), q_low, q_high, median);
                    RegionInterval {
                        low,
                        high,
                        median,
                        resampled_low: q_low,
                        resampled_high: q_high,
                        selection_frequency: v
                            .iter()
                            .filter(|&&s| s >= opts.selection_threshold)
                            .count() as f64
                            / v.len().max(1) as f64,
                        lead_frequency,
                    }
                })
                .collect()
        })
        .collect();
    let leader_probability = intervals
        .iter()
        .enumerate()
        .map(|(c, per_region)| {
            let lead: Vec<f64> = per_region.iter().map(|i| i.lead_frequency).collect();
            leader_probability(&attribution.components[c].region_share, &lead)
        })
        .collect();
    Ok(ResampleSummary {
        resampled_shares: if options.column_blocks.is_some() {
            shares
        } else {
            Vec::new()
        },
        leader_probability,
        budget_stops,
        dictionary_passes: stacked_passes,
        fit_passes: if n_fits > 0 {
            fit_passes / n_fits as f64
        } else {
            0.0
        },
        intervals,
        noise_sd,
        n_resamples: opts.n_resamples,
    })
}

/// The 95 % interval of a share ŝ from the 2.5 and 97.5 % quantiles and
/// the median m of its resampled values: the resamples' spread around their
/// median, added to the estimate, [ŝ + (q₀.₀₂₅ − m), ŝ + (q₀.₉₇₅ − m)],
/// joined with the plain percentile interval [q₀.₀₂₅, q₀.₉₇₅]. The centred
/// part holds the estimate (the resampled fits are penalised again, which
/// shifts their distribution away from ŝ, so the percentile interval alone
/// need not); the percentile part keeps what the resamples saw when their
/// shares split between two values (a region selected in half of them: the
/// centred part alone then shifts the whole spread above ŝ and leaves out
/// the resamples at zero). A bound that only the shift produced is cut
/// back: the interval goes below min(0, q₀.₀₂₅, ŝ) or above
/// max(1, q₀.₉₇₅, ŝ) only where the resamples or the estimate do. The
/// basic interval [2ŝ − q₀.₉₇₅, 2ŝ − q₀.₀₂₅] (Davison & Hinkley 1997,
/// "Bootstrap Methods and their Application", eq. 5.6) fails where a
/// region is not selected (ŝ = 0 reflects every resampled share below
/// zero). docs/validation.md compares the forms' coverage on the recovery
/// benchmark.
pub(crate) fn centred_interval(estimate: f64, q_low: f64, q_high: f64, median: f64) -> (f64, f64) {
    if !(q_low.is_finite() && q_high.is_finite() && median.is_finite()) {
        return (f64::NAN, f64::NAN);
    }
    let low = (estimate + (q_low - median)).min(q_low).min(estimate);
    let high = (estimate + (q_high - median)).max(q_high).max(estimate);
    let floor = 0.0_f64.min(q_low).min(estimate);
    let ceiling = 1.0_f64.max(q_high).max(estimate);
    (low.max(floor), high.min(ceiling))
}

#[cfg(test)]
mod tests {
    use super::centred_interval;

    // The interval's definition on two spreads (arithmetic of the doc
    // comment, common practice, no source).
    #[test]
    fn interval_holds_the_estimate_and_what_the_resamples_saw() {
        // Unimodal, shifted by re-penalisation: the centred part decides.
        let (low, high) = centred_interval(0.60, 0.45, 0.55, 0.50);
        assert!((low - 0.45).abs() < 1e-12 && (high - 0.65).abs() < 1e-12);
        // Split between 0 and 1 (selected in half of the resamples): the
        // percentile part keeps the zeros, and the shift cannot pass 1.
        let (low, high) = centred_interval(0.90, 0.0, 1.0, 0.23);
        assert_eq!((low, high), (0.0, 1.0));
        // Nothing negative anywhere: the shift alone cannot go below 0.
        let (low, _) = centred_interval(0.05, 0.02, 0.40, 0.20);
        assert_eq!(low, 0.0);
        // Negative shares seen: kept.
        let (low, high) = centred_interval(-0.1, -0.3, 0.1, -0.1);
        assert!((low + 0.3).abs() < 1e-12 && (high - 0.1).abs() < 1e-12);
    }
}
