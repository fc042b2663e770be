//! One recovery case: simulate patches, fit them, score both methods.

use crate::baseline::{minimum_norm, MinimumNormParams};
use crate::dictionary::Dictionary;
use std::sync::Arc;

use crate::forward::{bem_lead_field, lead_field, ForwardError, Orientation, Reference};
use crate::geometry::{norm, normalize, sub, GeodesicSolver, SourceSpace, Vec3};
use crate::head::bem::{project_to_scalp, BemSystem};
use crate::head::SphereHead;
use crate::numeric::{average_reference_columns, SplitMix64};
use crate::pipeline::{
    fit_patterns, FitOptions, LambdaRule, PipelineError, Problem, ResampleOptions,
};

use super::metrics::{region_top1, roc_auc};

/// What every case shares: the source space, the fit's dictionary (built
/// with the default head at the nominal electrode positions), geodesics.
pub struct RecoverySetup<'a> {
    /// Sources with regions.
    pub sources: &'a SourceSpace,
    /// The fit's lead field, n_ch × n_src row-major, average reference.
    pub fit_gain: &'a [f64],
    /// The fit's dictionary.
    pub dictionary: &'a Dictionary,
    /// Geodesic distances on the source mesh.
    pub geodesic: &'a GeodesicSolver,
    /// Nominal electrode positions (m) of the fit.
    pub electrodes: &'a [Vec3],
    /// Nominal electrode positions (m) of the simulation (jittered per
    /// case): the fit's, unless the data come from another head.
    pub sim_electrodes: &'a [Vec3],
    /// The fit's atoms under perturbed forward models (for resamples that
    /// also draw the forward model; `pipeline::perturbed_atoms`).
    pub perturbed: &'a [Vec<f64>],
}

/// One simulated case.
#[derive(Debug, Clone)]
pub struct CaseSpec {
    /// Random seed of the case.
    pub seed: u64,
    /// Number of active patches (1 to 3).
    pub n_patches: usize,
    /// Signal-to-noise ratio, dB (power).
    pub snr_db: f64,
    /// Electrode position jitter (m), a random direction per electrode.
    pub jitter_m: f64,
    /// The head the data are simulated with.
    pub sim_head: SimHead,
    /// The λ rule of the patch fit.
    pub lambda: LambdaRule,
    /// Bootstrap resamples of the patch fit (0 = none; then
    /// `lead_support` is NaN).
    pub resamples: usize,
    /// Resamples also draw the forward model (the setup's perturbed atoms).
    pub perturb_model: bool,
}

/// The head a case is simulated with.
#[derive(Debug, Clone)]
pub enum SimHead {
    /// Concentric spheres.
    Spheres(SphereHead),
    /// A factorised boundary-element head (the jittered electrodes are
    /// moved onto its scalp).
    Bem(Arc<BemSystem>),
}

impl From<SphereHead> for SimHead {
    fn from(head: SphereHead) -> Self {
        SimHead::Spheres(head)
    }
}

/// Which method a result is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// The group-LASSO patch fit.
    Patches,
    /// Depth-weighted minimum norm.
    MinimumNorm,
}

/// The scores of one method on one case.
#[derive(Debug, Clone, Copy)]
pub struct CaseResult {
    /// The method.
    pub method: Method,
    /// Distance (mm) from the strongest recovered patch's seed (patch fit)
    /// or the source-map peak (minimum norm) to the nearest true patch seed.
    pub localization_error_mm: f64,
    /// Whether the leading region by share of the pattern (patch fit:
    /// `region_share`; minimum norm: ⟨G_r x_r, ŷ⟩/‖ŷ‖²) is the region whose
    /// true sources contribute most to the clean scalp pattern.
    pub top1_correct: bool,
    /// Whether the same leading region as in `top1_correct` is the truth's
    /// leading region by the attribution's own definition applied to the true
    /// patches: each patch's share ⟨G x_p, G x⟩/‖G x‖² spread over regions by
    /// its |amplitude| mass (like with like for the patch fit).
    pub top1_patch_split_correct: bool,
    /// Whether the region with the largest summed |source map| is the
    /// region holding most true source amplitude (A·m).
    pub top1_amplitude_correct: bool,
    /// Area under the ROC curve of |source map| against the true active set.
    pub auc: f64,
    /// The truth's pattern share of its leading region minus that of its
    /// second region: how clear the winner the top-1 score asks for is.
    pub truth_margin: f64,
    /// This method's share of the pattern in the truth's leading region
    /// minus its share in the method's own leading region (0 when right).
    pub share_deficit: f64,
    /// The rank (1 = first) of the truth's leading region among this
    /// method's region shares.
    pub truth_rank: Option<usize>,
    /// Patch fit with resampling: the lead frequency of the fit's leading
    /// region (the fraction of resamples in which it leads); NaN otherwise.
    pub lead_support: f64,
    /// Whether the method's leading region is within 0.05 of the truth's
    /// largest pattern share (a tie-tolerant top-1).
    pub top1_tie_tolerant: bool,
    /// The truth's pattern share of its leading region.
    pub truth_share: f64,
    /// The truth's patch-split share of the same region (the attribution's
    /// own definition applied to the true patches).
    pub truth_split_share: f64,
    /// The method's share of the truth's leading region and its 95 %
    /// interval (NaN without resampling, and for minimum norm).
    pub truth_region_interval: (f64, f64, f64),
    /// The median, 2.5 % and 97.5 % quantiles of the resampled shares of
    /// the truth's leading region (NaN without resampling).
    pub truth_region_resampled: (f64, f64, f64),
    /// Patch fit: λ/λ_max chosen (NaN for minimum norm).
    pub lambda_ratio: f64,
    /// Patch fit: the chosen λ is at an end of the searched range (the last
    /// point searched, or λ_max itself).
    pub lambda_at_range_end: bool,
}

/// Simulate, fit and score one case for both methods.
pub fn run_case(
    setup: &RecoverySetup<'_>,
    spec: &CaseSpec,
) -> Result<Vec<CaseResult>, PipelineError> {
    let s = setup.sources;
    let n_src = s.len();
    let n_ch = setup.electrodes.len();
    if setup.sim_electrodes.len() != n_ch {
        return Err(PipelineError::Inconsistent(format!(
            "{} simulation electrodes for {n_ch} fit electrodes",
            setup.sim_electrodes.len()
        )));
    }
    let n_regions = s.region_names.len();
    let mut rng = SplitMix64::new(spec.seed, 1);
    // Ground truth: Gaussian patches (σ = radius / 2, cut at the radius).
    let mut amplitude = vec![0.0; n_src];
    let mut active = vec![false; n_src];
    let mut seeds = Vec::new();
    // Each true patch's sources and amplitudes (A·m), for the patch split.
    let mut patches: Vec<Vec<(usize, f64)>> = Vec::new();
    for _ in 0..spec.n_patches.clamp(1, 3) {
        let seed = ((rng.uniform() * n_src as f64) as usize).min(n_src - 1);
        let radius = 0.005 + 0.025 * rng.uniform();
        let density = 0.5e-3 * (0.5 + rng.uniform());
        let mut patch = Vec::new();
        for (v, d) in setup.geodesic.distances_within(seed, radius) {
            let v = v as usize;
            let a = density * s.areas[v] * (-0.5 * (2.0 * d / radius).powi(2)).exp();
            amplitude[v] += a;
            active[v] = true;
            patch.push((v, a));
        }
        seeds.push(seed);
        patches.push(patch);
    }
    let truth_amplitude_region = region_top1(
        &amplitude.iter().map(|a| a.abs()).collect::<Vec<_>>(),
        &s.region,
        n_regions,
    );
    // Simulation lead field at jittered electrodes with the simulation head.
    let jittered: Vec<Vec3> = setup
        .sim_electrodes
        .iter()
        .map(|&e| {
            let dir = normalize([rng.normal(), rng.normal(), rng.normal()]);
            [
                e[0] + spec.jitter_m * dir[0],
                e[1] + spec.jitter_m * dir[1],
                e[2] + spec.jitter_m * dir[2],
            ]
        })
        .collect();
    let lf = match &spec.sim_head {
        SimHead::Spheres(head) => lead_field(
            head,
            &jittered,
            &s.positions,
            &s.normals,
            Orientation::Normal,
            Reference::Average,
            &|_| {},
        )?,
        SimHead::Bem(system) => {
            let labels: Vec<String> = (1..=n_ch).map(|i| format!("electrode {i}")).collect();
            let points = project_to_scalp(system, &jittered, &labels).map_err(ForwardError::Bem)?;
            bem_lead_field(
                &system.transfer(&points),
                &s.positions,
                &s.normals,
                Orientation::Normal,
                Reference::Average,
                &|_| {},
            )?
        }
    };
    let mut y = vec![0.0; n_ch];
    for (i, yi) in y.iter_mut().enumerate() {
        *yi = (0..n_src)
            .filter(|&v| amplitude[v] != 0.0)
            .map(|v| lf.gain[i * n_src + v] * amplitude[v])
            .sum();
    }
    let truth_shares = pattern_shares(&lf.gain, n_ch, &amplitude, &s.region, n_regions);
    let truth_region = top_region(&truth_shares);
    let split_shares = patch_split_shares(&lf.gain, n_ch, &patches, &s.region, n_regions);
    let split_region = top_region(&split_shares);
    let truth_best = truth_region.map_or(f64::NAN, |t| truth_shares[t]);
    let tie_tolerant =
        |top: Option<usize>| top.is_some_and(|r| truth_shares[r] >= truth_best - 0.05);
    let truth_margin = {
        let mut sorted = truth_shares.clone();
        sorted.sort_by(|a, b| b.total_cmp(a));
        sorted.first().copied().unwrap_or(0.0) - sorted.get(1).copied().unwrap_or(0.0)
    };
    let rank = |shares: &[f64]| {
        truth_region.map(|t| 1 + shares.iter().filter(|&&v| v > shares[t]).count())
    };
    let deficit = |shares: &[f64]| match (top_region(shares), truth_region) {
        (Some(top), Some(truth)) => shares[truth] - shares[top],
        _ => f64::NAN,
    };
    let mut noise: Vec<f64> = (0..n_ch).map(|_| rng.normal()).collect();
    average_reference_columns(&mut noise, 1);
    let ps: f64 = y.iter().map(|v| v * v).sum();
    let pn: f64 = noise.iter().map(|v| v * v).sum();
    let scale = (ps / pn / 10f64.powf(spec.snr_db / 10.0)).sqrt();
    for (yi, e) in y.iter_mut().zip(&noise) {
        *yi += scale * e;
    }
    let nearest_seed_mm = |p: Vec3| {
        seeds
            .iter()
            .map(|&q| norm(sub(p, s.positions[q])) * 1e3)
            .fold(f64::INFINITY, f64::min)
    };

    // Patch fit.
    let d = setup.dictionary;
    let problem = Problem {
        atoms: &d.atoms,
        n_channels: d.n_channels,
        group: &d.group,
        atom_norms: &d.atom_norms,
        profile: &d.profile,
        source_region: &s.region,
        n_regions,
        source_positions: &s.positions,
        perturbed: if spec.perturb_model {
            setup.perturbed
        } else {
            &[]
        },
    };
    let options = FitOptions {
        lambda: spec.lambda,
        refit: false,
        resample: ResampleOptions {
            n_resamples: spec.resamples,
            ..ResampleOptions::default()
        },
        tol: 1e-6,
        ..FitOptions::default()
    };
    let outcome = fit_patterns(&problem, &y, 1, &options, &|_| {})?;
    let comp = &outcome.attribution.components[0];
    let patch_top = comp
        .region_share
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .map(|(r, _)| r);
    // The strongest recovered patch: the group with the largest share; its
    // position is its seed (the centre of the patch).
    let strongest_group = comp
        .group_share
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1))
        .filter(|(_, &v)| v > 0.0)
        .map(|(g, _)| g);
    let strongest_seed =
        strongest_group.and_then(|g| d.group.iter().position(|&x| x == g).map(|j| d.seed[j]));
    let patch = CaseResult {
        method: Method::Patches,
        localization_error_mm: strongest_seed.map_or(f64::NAN, |v| nearest_seed_mm(s.positions[v])),
        top1_correct: patch_top.is_some() && patch_top == truth_region,
        top1_patch_split_correct: patch_top.is_some() && patch_top == split_region,
        top1_amplitude_correct: {
            let abs_map: Vec<f64> = comp.source_map.iter().map(|v| v.abs()).collect();
            let top = region_top1(&abs_map, &s.region, n_regions);
            top.is_some() && top == truth_amplitude_region
        },
        auc: roc_auc(
            &comp.source_map.iter().map(|v| v.abs()).collect::<Vec<_>>(),
            &active,
        ),
        truth_margin,
        share_deficit: deficit(&comp.region_share),
        truth_rank: rank(&comp.region_share),
        lead_support: match (&outcome.resample, patch_top) {
            (Some(rs), Some(top)) => rs.intervals[0][top].lead_frequency,
            _ => f64::NAN,
        },
        top1_tie_tolerant: tie_tolerant(patch_top),
        truth_share: truth_best,
        truth_split_share: truth_region.map_or(f64::NAN, |t| split_shares[t]),
        truth_region_interval: match (&outcome.resample, truth_region) {
            (Some(rs), Some(t)) => (
                comp.region_share[t],
                rs.intervals[0][t].low,
                rs.intervals[0][t].high,
            ),
            (None, Some(t)) => (comp.region_share[t], f64::NAN, f64::NAN),
            _ => (f64::NAN, f64::NAN, f64::NAN),
        },
        truth_region_resampled: match (&outcome.resample, truth_region) {
            (Some(rs), Some(t)) => {
                let i = rs.intervals[0][t];
                (i.median, i.resampled_low, i.resampled_high)
            }
            _ => (f64::NAN, f64::NAN, f64::NAN),
        },
        lambda_ratio: outcome.blocks[0].lambda / outcome.blocks[0].lambda_max,
        lambda_at_range_end: outcome.blocks[0].at_range_end
            || outcome.blocks[0].lambda >= outcome.blocks[0].lambda_max,
    };
    // Minimum norm on the fit's lead field.
    let x = minimum_norm(setup.fit_gain, n_ch, &y, 1, MinimumNormParams::default())
        .map_err(|e| PipelineError::Inconsistent(e.to_string()))?;
    let abs_x: Vec<f64> = x.iter().map(|v| v.abs()).collect();
    let peak = (0..n_src).max_by(|&a, &b| abs_x[a].total_cmp(&abs_x[b]));
    let mn_top_amplitude = region_top1(&abs_x, &s.region, n_regions);
    let mn_shares = pattern_shares(setup.fit_gain, n_ch, &x, &s.region, n_regions);
    let mn_top = top_region(&mn_shares);
    let mn = CaseResult {
        method: Method::MinimumNorm,
        localization_error_mm: peak.map_or(f64::NAN, |p| nearest_seed_mm(s.positions[p])),
        top1_correct: mn_top.is_some() && mn_top == truth_region,
        top1_patch_split_correct: mn_top.is_some() && mn_top == split_region,
        top1_amplitude_correct: mn_top_amplitude.is_some()
            && mn_top_amplitude == truth_amplitude_region,
        auc: roc_auc(&abs_x, &active),
        truth_margin,
        share_deficit: deficit(&mn_shares),
        truth_rank: rank(&mn_shares),
        lead_support: f64::NAN,
        top1_tie_tolerant: tie_tolerant(mn_top),
        truth_share: truth_best,
        truth_split_share: truth_region.map_or(f64::NAN, |t| split_shares[t]),
        truth_region_interval: (
            truth_region.map_or(f64::NAN, |t| mn_shares[t]),
            f64::NAN,
            f64::NAN,
        ),
        truth_region_resampled: (f64::NAN, f64::NAN, f64::NAN),
        lambda_ratio: f64::NAN,
        lambda_at_range_end: false,
    };
    Ok(vec![patch, mn])
}

/// The share of the scalp pattern of `amplitude` (through `gain`, n_ch ×
/// n_src) that each region's sources contribute: share_r = ⟨G x_r, G x⟩ /
/// ‖G x‖² with x_r the amplitudes of region r, the same additive
/// decomposition the attribution reports for fitted patches.
fn pattern_shares(
    gain: &[f64],
    n_ch: usize,
    amplitude: &[f64],
    region: &[i32],
    n_regions: usize,
) -> Vec<f64> {
    let n_src = amplitude.len();
    let mut per_region = vec![vec![0.0; n_ch]; n_regions];
    let mut total = vec![0.0; n_ch];
    for (v, &a) in amplitude.iter().enumerate() {
        if a == 0.0 {
            continue;
        }
        for i in 0..n_ch {
            let contribution = gain[i * n_src + v] * a;
            total[i] += contribution;
            if region[v] >= 0 {
                per_region[region[v] as usize][i] += contribution;
            }
        }
    }
    let power: f64 = total.iter().map(|t| t * t).sum();
    per_region
        .iter()
        .map(|y_r| {
            y_r.iter().zip(&total).map(|(a, b)| a * b).sum::<f64>() / power.max(f64::MIN_POSITIVE)
        })
        .collect()
}

/// The attribution's split applied to the true patches: patch p's share of
/// the clean pattern, ⟨G x_p, G x⟩ / ‖G x‖² (x = Σ_p x_p), spread over
/// regions in proportion to its |amplitude| in each (the profile-mass split
/// of the attribution, with the true patch as the profile).
fn patch_split_shares(
    gain: &[f64],
    n_ch: usize,
    patches: &[Vec<(usize, f64)>],
    region: &[i32],
    n_regions: usize,
) -> Vec<f64> {
    let n_src = region.len();
    let per_patch: Vec<Vec<f64>> = patches
        .iter()
        .map(|p| {
            (0..n_ch)
                .map(|i| p.iter().map(|&(v, a)| gain[i * n_src + v] * a).sum())
                .collect()
        })
        .collect();
    let mut total = vec![0.0; n_ch];
    for y_p in &per_patch {
        for (t, v) in total.iter_mut().zip(y_p) {
            *t += v;
        }
    }
    let power = total
        .iter()
        .map(|t| t * t)
        .sum::<f64>()
        .max(f64::MIN_POSITIVE);
    let mut shares = vec![0.0; n_regions];
    for (p, y_p) in patches.iter().zip(&per_patch) {
        let share = y_p.iter().zip(&total).map(|(a, b)| a * b).sum::<f64>() / power;
        let mass: f64 = p.iter().map(|&(_, a)| a.abs()).sum();
        if mass <= 0.0 {
            continue;
        }
        for &(v, a) in p {
            if region[v] >= 0 {
                shares[region[v] as usize] += share * a.abs() / mass;
            }
        }
    }
    shares
}

/// The region with the largest positive share, if any.
fn top_region(shares: &[f64]) -> Option<usize> {
    let mut best = None;
    let mut best_value = 0.0;
    for (r, &v) in shares.iter().enumerate() {
        if v > best_value {
            best_value = v;
            best = Some(r);
        }
    }
    best
}

/// The shared data of a recovery run, owned: the template with regions,
/// the demo's 64 channels of the 10-10 system, the default head's lead field
/// and the default dictionary.
pub struct RecoveryFixture {
    sources: SourceSpace,
    gain: Vec<f64>,
    dictionary: Dictionary,
    geodesic: GeodesicSolver,
    electrodes: Vec<Vec3>,
    sim_electrodes: Vec<Vec3>,
    perturbed: Vec<Vec<f64>>,
    /// The sphere head the fit assumes (the default; unused by a fixture
    /// fitted with a boundary-element head).
    pub head: SphereHead,
}

impl RecoveryFixture {
    /// Build the fixture on a template resolution with the default dictionary.
    pub fn new(resolution: crate::geometry::TemplateResolution) -> Result<Self, PipelineError> {
        Self::with_dictionary(resolution, &crate::dictionary::DictionaryParams::default())
    }

    /// Build the fixture on a template resolution with the given dictionary parameters.
    pub fn with_dictionary(
        resolution: crate::geometry::TemplateResolution,
        params: &crate::dictionary::DictionaryParams,
    ) -> Result<Self, PipelineError> {
        Self::with_perturbation(
            resolution,
            params,
            &crate::pipeline::ForwardPerturbation::default(),
        )
    }

    /// Build the fixture with the given dictionary parameters and forward
    /// perturbations for the resamples.
    pub fn with_perturbation(
        resolution: crate::geometry::TemplateResolution,
        params: &crate::dictionary::DictionaryParams,
        perturbation: &crate::pipeline::ForwardPerturbation,
    ) -> Result<Self, PipelineError> {
        let t = crate::geometry::template(resolution);
        let sources = SourceSpace::from_template(&t);
        let head = SphereHead::default_adult();
        let full = crate::montage::standard("10-10", head.outer_radius())?;
        let labels: Vec<String> = crate::demo::CHANNELS_64
            .iter()
            .map(|s| s.to_string())
            .collect();
        let montage = full.subset(&full.select(&labels)?);
        let (lf, _) = crate::pipeline::leadfield_for(
            &montage,
            &sources,
            &head,
            Orientation::Normal,
            &|_| {},
        )?;
        let (dictionary, _, _) = crate::pipeline::dictionary_for(&lf, params, None, &|_| {})?;
        let geodesic = GeodesicSolver::new(&t.mesh)?;
        let perturbed = crate::pipeline::perturbed_atoms(
            &head,
            &montage.positions,
            &sources.positions,
            &sources.normals,
            &dictionary.profile,
            &dictionary.component,
            perturbation,
        )?;
        Ok(RecoveryFixture {
            sources,
            gain: lf.gain,
            dictionary,
            geodesic,
            sim_electrodes: montage.positions.clone(),
            electrodes: montage.positions,
            perturbed,
            head,
        })
    }

    /// The fixture fitted with a boundary-element head instead of the
    /// default spheres: the demo's 64 channels placed on that head's scalp
    /// (`positions`, the full standard layout with its labels), its lead
    /// field and the default dictionary built on it. No perturbed atoms
    /// (resamples then draw the pattern noise only).
    pub fn with_bem_fit(
        resolution: crate::geometry::TemplateResolution,
        params: &crate::dictionary::DictionaryParams,
        system: &BemSystem,
        layout: &crate::montage::Montage,
    ) -> Result<Self, PipelineError> {
        let t = crate::geometry::template(resolution);
        let sources = SourceSpace::from_template(&t);
        let montage = demo_channels(layout)?;
        let (lf, _) = crate::pipeline::bem_leadfield_for(
            &montage,
            &sources,
            (system, "{}"),
            Orientation::Normal,
            &|_| {},
        )?;
        let (dictionary, _, _) = crate::pipeline::dictionary_for(&lf, params, None, &|_| {})?;
        let geodesic = GeodesicSolver::new(&t.mesh)?;
        Ok(RecoveryFixture {
            sources,
            gain: lf.gain,
            dictionary,
            geodesic,
            sim_electrodes: montage.positions.clone(),
            electrodes: montage.positions,
            perturbed: Vec::new(),
            head: SphereHead::default_adult(),
        })
    }

    /// Simulate at the demo's 64 channels of `layout` (another head's
    /// electrode positions, same labels) instead of the fit's.
    pub fn simulating_at(
        mut self,
        layout: &crate::montage::Montage,
    ) -> Result<Self, PipelineError> {
        self.sim_electrodes = demo_channels(layout)?.positions;
        Ok(self)
    }

    /// The borrowed setup for [`run_case`].
    pub fn setup(&self) -> RecoverySetup<'_> {
        RecoverySetup {
            sources: &self.sources,
            fit_gain: &self.gain,
            dictionary: &self.dictionary,
            geodesic: &self.geodesic,
            electrodes: &self.electrodes,
            sim_electrodes: &self.sim_electrodes,
            perturbed: &self.perturbed,
        }
    }
}

/// The demo's 64 channels of a 10-10 (or finer) layout, in the demo's order.
fn demo_channels(
    layout: &crate::montage::Montage,
) -> Result<crate::montage::Montage, PipelineError> {
    let labels: Vec<String> = crate::demo::CHANNELS_64
        .iter()
        .map(|s| s.to_string())
        .collect();
    Ok(layout.subset(&layout.select(&labels)?))
}

#[cfg(test)]
mod tests {
    use super::{patch_split_shares, pattern_shares};

    // Two channels, three sources, G = [[1, 0, 1], [0, 1, 1]]; sources 0 → region 0,
    // 1 and 2 → region 1. Patch A = {0: 1, 2: 1}, patch B = {1: 2}. Hand-computed:
    // y_A = [2, 1], y_B = [0, 2], y = [2, 3], ‖y‖² = 13.
    const GAIN: [f64; 6] = [1.0, 0.0, 1.0, 0.0, 1.0, 1.0];
    const REGION: [i32; 3] = [0, 1, 1];

    #[test]
    fn patch_split_spreads_each_patch_share_by_its_mass() {
        // share_A = ⟨y_A, y⟩/‖y‖² = 7/13, half of A's mass in each region;
        // share_B = 6/13, all in region 1.
        let patches = vec![vec![(0, 1.0), (2, 1.0)], vec![(1, 2.0)]];
        let s = patch_split_shares(&GAIN, 2, &patches, &REGION, 2);
        assert!((s[0] - 3.5 / 13.0).abs() < 1e-12, "{s:?}");
        assert!((s[1] - 9.5 / 13.0).abs() < 1e-12, "{s:?}");
    }

    #[test]
    fn pattern_split_decomposes_the_pattern_by_region() {
        // Region 0 holds x = [1, 0, 0] → G x_0 = [1, 0], ⟨[1, 0], y⟩ = 2 → 2/13.
        let s = pattern_shares(&GAIN, 2, &[1.0, 2.0, 1.0], &REGION, 2);
        assert!((s[0] - 2.0 / 13.0).abs() < 1e-12, "{s:?}");
        assert!((s[1] - 11.0 / 13.0).abs() < 1e-12, "{s:?}");
    }
}
