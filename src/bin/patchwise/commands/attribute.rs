//! `patchwise attribute`: which cortical regions does a decoder rely on?

use std::path::{Path, PathBuf};

use patchwise::batch::cache_locks;
use patchwise::dictionary::{
    atoms_for_channels, select_channels, AtomComponent, DEFAULT_DROP_RELATIVE_NORM,
};
use patchwise::forward::Orientation;
use patchwise::io::cache::{default_cache_dir, entry_path, file_sha256, ContentHash};
use patchwise::io::decoder_file::{read_decoder, DecoderContent, DecoderFile};
use patchwise::io::dictionary_file::{read_dictionary, write_dictionary, DictionaryFile};
use patchwise::io::leadfield_file::{read_leadfield, write_leadfield, LeadFieldFile};
use patchwise::limits::{check_count, RESAMPLE_RECORD_BYTES};
use patchwise::montage::Montage;
use patchwise::patterns::{activation_patterns, average_reference, Whitener};
use patchwise::pipeline::{
    fit_patterns, FitOptions, FitOutcome, LambdaRule, PatternNoise, Problem, ResampleOptions,
};

use super::attribute_noise::{pattern_noise, NoiseInputs};
use super::attribute_perturb::{perturbed_for_resamples, ForwardModel};

use super::dictionary::{AtomOrientationArg, DictionaryOptions};
use crate::cli_error::OrExit;
use crate::inputs::{compute_leadfield, ForwardOptions};
use crate::outputs::write_outputs;
use crate::progress::{bar, note};
use crate::CliError;

/// Arguments of `patchwise attribute`.
#[derive(clap::Args, Debug, Clone)]
pub struct Args {
    /// Decoder file: .npz, .h5 or .mat with `channels` and `patterns`, or `weights` + `covariance`;
    /// or a bare .npy/.csv matrix of patterns (n_ch x k) with --channels.
    #[arg(long, conflicts_with = "patterns")]
    pub decoder: Option<PathBuf>,
    /// Patterns (.npy or .csv, n_ch x k) to fit on --dictionary, rows in the dictionary's channel order unless --channels is given.
    #[arg(long, requires = "dictionary")]
    pub patterns: Option<PathBuf>,
    /// Channel labels of a bare matrix (one a line, or a BIDS channels.tsv).
    #[arg(long)]
    pub channels: Option<PathBuf>,
    /// A dictionary file (ours, or any HDF5 with /dictionary/atoms and /dictionary/group); skips the forward model.
    #[arg(long)]
    pub dictionary: Option<PathBuf>,
    #[command(flatten)]
    pub forward: ForwardOptions,
    #[command(flatten)]
    pub dictionary_options: DictionaryOptions,
    /// Noise covariance (n_ch x n_ch .npy or .csv, decoder channel order) to whiten patterns and dictionary.
    #[arg(long)]
    pub noise_covariance: Option<PathBuf>,
    /// Reference of the fit: average (patterns and atoms re-referenced to the common average) or none (both used as given).
    #[arg(long, value_parser = ["average", "none"], default_value = "average")]
    pub reference: String,
    /// Fit all components with one shared support instead of one by one.
    #[arg(long)]
    pub joint: bool,
    /// How lambda is chosen: noise (lambda = q * sigma, q the 95 % quantile of the largest patch
    /// correlation of pure noise, sigma the pattern's noise: from --noise-sd, the decoder's folds or
    /// n_samples, else estimated with the fit), or the minimum of bic, aic or gcv along the path.
    #[arg(long, value_parser = ["noise", "bic", "aic", "gcv"], default_value = "noise")]
    pub lambda_rule: String,
    /// Noise standard deviation per channel of the patterns, in their units (after average
    /// referencing); used by the noise rule and the resamples instead of an estimate.
    #[arg(long)]
    pub noise_sd: Option<f64>,
    /// lambda = R * lambda_max (0 < R <= 1) instead of the lambda rule.
    #[arg(long, conflicts_with = "lambda")]
    pub lambda_ratio: Option<f64>,
    /// An absolute lambda (units of the whitened patterns).
    #[arg(long)]
    pub lambda: Option<f64>,
    /// Relative duality-gap tolerance.
    #[arg(long, default_value_t = 1e-8)]
    pub tol: f64,
    /// Number of bootstrap resamples for the intervals (0 = none).
    #[arg(long, default_value_t = 100)]
    pub resamples: usize,
    /// Seed of the resampling.
    #[arg(long, default_value_t = 20141)]
    pub seed: u64,
    /// Perturbed forward models the resamples cycle through (electrodes moved by 4 mm per
    /// coordinate, shell conductivities drawn around the head's), so the intervals also carry the
    /// head model's uncertainty; 0 = resample the pattern noise only.
    #[arg(long, default_value_t = 4)]
    pub forward_perturbations: usize,
    /// Skip the debiased least-squares refit.
    #[arg(long)]
    pub no_refit: bool,
    /// Cache folder for lead fields and dictionaries (default: $PATCHWISE_CACHE, else the user cache folder).
    #[arg(long)]
    pub cache: Option<PathBuf>,
    /// Output folder.
    #[arg(long)]
    pub out: PathBuf,
    /// Do not write report.html into the output folder.
    #[arg(long)]
    pub no_report: bool,
}

/// Everything the outputs need.
pub struct Attribution {
    /// Channel labels in decoder order.
    pub labels: Vec<String>,
    /// Patterns after referencing, before whitening (n_ch x k).
    pub patterns: Vec<f64>,
    /// Component names.
    pub component_names: Vec<String>,
    /// Number of components.
    pub k: usize,
    /// Where the patterns came from.
    pub patterns_source: String,
    /// The dictionary used (restricted to the decoder's channels).
    pub dictionary: DictionaryFile,
    /// The fit.
    pub outcome: FitOutcome,
    /// Input hashes.
    pub hashes: Vec<(String, String)>,
    /// Notes for the summary.
    pub notes: Vec<String>,
    /// Whether the fit was whitened.
    pub whitened: bool,
    /// The fitted patterns D X in the units of `patterns` (n_ch x k).
    pub reconstruction: Vec<f64>,
    /// What was asked (name, value), for summary.json and the report.
    pub job: Vec<(String, String)>,
    /// The λ rule in words (`noise`, `bic`, ..., or the fixed value).
    pub lambda_rule: String,
    /// Where the noise level came from, in words.
    pub noise_level: String,
}

fn bad(message: String) -> CliError {
    CliError::bad_input(anyhow::anyhow!(message))
}

impl Args {
    fn fit_options(&self) -> Result<FitOptions, CliError> {
        let lambda = match (self.lambda_ratio, self.lambda) {
            (Some(r), _) if !(r.is_finite() && r > 0.0 && r <= 1.0) => {
                return Err(bad(format!("--lambda-ratio {r}: expected 0 < R <= 1")))
            }
            (Some(r), _) => LambdaRule::Ratio(r),
            (None, Some(l)) if !(l.is_finite() && l > 0.0) => {
                return Err(bad(format!("--lambda {l}: expected a positive number")))
            }
            (None, Some(l)) => LambdaRule::Absolute(l),
            (None, None) => match self.lambda_rule.as_str() {
                "bic" => LambdaRule::Bic,
                "aic" => LambdaRule::Aic,
                "gcv" => LambdaRule::Gcv,
                _ => LambdaRule::Noise,
            },
        };
        if self.forward_perturbations > 64 {
            return Err(bad(format!(
                "--forward-perturbations {}: expected at most 64 (each is a lead field of its own)",
                self.forward_perturbations
            )));
        }
        if let Some(sd) = self.noise_sd {
            if !(sd.is_finite() && sd > 0.0) {
                return Err(bad(format!(
                    "--noise-sd {sd}: expected a positive noise standard deviation in the patterns' units"
                )));
            }
        }
        if !(self.tol.is_finite() && self.tol > 0.0 && self.tol < 1.0) {
            return Err(bad(format!("--tol {}: expected 0 < tol < 1", self.tol)));
        }
        check_count("--resamples", self.resamples as u64, RESAMPLE_RECORD_BYTES)
            .bad_input("checking the options")?;
        // The dictionary options key the cache: they are checked here, before
        // any lookup, so that a NaN can never stand for the default entry.
        self.dictionary_options.params()?;
        Ok(FitOptions {
            lambda,
            joint: self.joint,
            tol: self.tol,
            refit: !self.no_refit,
            resample: ResampleOptions {
                n_resamples: self.resamples,
                seed: self.seed,
                ..ResampleOptions::default()
            },
            whitened: self.noise_covariance.is_some(),
            noise: PatternNoise::default(),
        })
    }
}

fn read_matrix(path: &Path) -> Result<(Vec<f64>, usize, usize), CliError> {
    patchwise::io::decoder_file::read_matrix(path).bad_input("reading a matrix")
}

/// Scale column `j` of the row-major n × m `atoms` to unit 2-norm and fold
/// the scale into `norm` (the atom's removed scale); a zero column stays zero.
pub(super) fn rescale_to_unit_norm(
    atoms: &mut [f64],
    n: usize,
    m: usize,
    j: usize,
    norm: &mut f64,
) {
    let s = (0..n).map(|i| atoms[i * m + j].powi(2)).sum::<f64>().sqrt();
    if s > 0.0 {
        for i in 0..n {
            atoms[i * m + j] /= s;
        }
    }
    *norm *= s;
}

/// Re-reference atoms to the common average (subtract each column's
/// channel mean) and rescale them to unit norm, folding the scale into the
/// atom norms; columns already referenced are left as they are.
#[allow(clippy::needless_range_loop)]
fn reference_atoms(dict: &mut DictionaryFile) {
    let (n, m) = (dict.n_channels, dict.n_atoms);
    let mut norms = dict.atom_norms.clone().unwrap_or_else(|| vec![1.0; m]);
    for j in 0..m {
        let mean = (0..n).map(|i| dict.atoms[i * m + j]).sum::<f64>() / n as f64;
        let scale = (0..n)
            .map(|i| dict.atoms[i * m + j].abs())
            .fold(0.0, f64::max);
        if mean.abs() <= 1e-12 * scale {
            continue;
        }
        for i in 0..n {
            dict.atoms[i * m + j] -= mean;
        }
        rescale_to_unit_norm(&mut dict.atoms, n, m, j, &mut norms[j]);
    }
    dict.atom_norms = Some(norms);
}

/// The decoder's patterns (n_ch x k), average-referenced over its channels
/// unless `average` is false.
pub(crate) fn decoder_patterns(
    decoder: &DecoderFile,
    path: &Path,
    average: bool,
) -> Result<Vec<f64>, CliError> {
    let n = decoder.channels.len();
    let raw = match &decoder.content {
        DecoderContent::Patterns(p) => p.clone(),
        DecoderContent::Weights {
            weights,
            covariance,
        } => {
            activation_patterns(weights, covariance, n, decoder.k)
                .bad_input(format!("{}: turning weights into patterns", path.display()))?
                .0
        }
    };
    let referenced = if average {
        average_reference(&raw, n, decoder.k).bad_input("average reference")?
    } else {
        raw.clone()
    };
    for c in 0..decoder.k {
        let norm: f64 = (0..n)
            .map(|i| referenced[i * decoder.k + c].powi(2))
            .sum::<f64>()
            .sqrt();
        let scale: f64 = (0..n)
            .map(|i| raw[i * decoder.k + c].abs())
            .fold(0.0, f64::max);
        let (smallest, largest) = patchwise::limits::PATTERN_MAGNITUDE_RANGE;
        if scale.is_nan() || (scale > 0.0 && !(smallest..=largest).contains(&scale)) {
            return Err(bad(format!(
                "{}: component {c} has values up to {scale:e} in absolute value; expected its largest value between {smallest:e} and {largest:e}, where the fit's squared norms neither overflow nor vanish: rescale the patterns (e.g. to volts or microvolts)",
                path.display()
            )));
        }
        if norm <= 1e-12 * scale.max(f64::MIN_POSITIVE) || norm.is_nan() {
            return Err(bad(format!(
                "{}: component {c} is zero or constant over the channels after average referencing; nothing to attribute",
                path.display()
            )));
        }
    }
    Ok(referenced)
}

pub(super) fn leadfield_hash(
    montage: &Montage,
    lf_sources: &patchwise::geometry::SourceSpace,
    head_json: &str,
    orientation: Orientation,
) -> String {
    let mut h = ContentHash::new("leadfield-v1");
    for l in &montage.labels {
        h.str(l);
    }
    h.f64s(
        &montage
            .positions
            .iter()
            .flatten()
            .copied()
            .collect::<Vec<_>>(),
    );
    h.f64s(
        &lf_sources
            .positions
            .iter()
            .flatten()
            .copied()
            .collect::<Vec<_>>(),
    );
    h.f64s(
        &lf_sources
            .normals
            .iter()
            .flatten()
            .copied()
            .collect::<Vec<_>>(),
    );
    h.f64s(&lf_sources.areas);
    h.u64s(
        &lf_sources
            .triangles
            .iter()
            .flatten()
            .map(|&v| v as u64)
            .collect::<Vec<_>>(),
    );
    h.u64s(
        &lf_sources
            .region
            .iter()
            .map(|&r| r as i64 as u64)
            .collect::<Vec<_>>(),
    );
    for n in &lf_sources.region_names {
        h.str(n);
    }
    h.str(head_json);
    h.str(if orientation == Orientation::Free {
        "free"
    } else {
        "normal"
    });
    h.hex()
}

/// Build (or fetch from the cache) the dictionary for the decoder's channels.
fn dictionary_for_decoder(
    args: &Args,
    labels: &[String],
    hashes: &mut Vec<(String, String)>,
) -> Result<(DictionaryFile, ForwardModel), CliError> {
    let (montage, sources, head) = args.forward.resolve(Some(labels))?;
    let orientation = match args.dictionary_options.atom_orientation {
        AtomOrientationArg::Normal => Orientation::Normal,
        AtomOrientationArg::Free => Orientation::Free,
    };
    let cache = args.cache.clone().unwrap_or_else(default_cache_dir);
    // A cache that cannot be made or written costs a note, never the run.
    if let Err(e) = std::fs::create_dir_all(&cache) {
        note(format!(
            "note: the cache folder {} cannot be created ({e}); nothing is cached in this run",
            cache.display()
        ));
    }
    // An entry's temporary file from a run killed while writing it (up to a
    // few hundred MB for a 20k dictionary) is of no use to anyone.
    let removed = patchwise::io::atomic::remove_dead_temporaries(&cache, None);
    if removed > 0 {
        note(format!(
            "removed {removed} temporary file(s) left in {} by a killed run",
            cache.display()
        ));
    }
    let lf_hash = leadfield_hash(&montage, &sources, &head.head_model_json(), orientation);
    let mut dh = ContentHash::new("dictionary-v1");
    dh.str(&lf_hash).str(&args.dictionary_options.to_json());
    let d_hash = dh.hex();
    hashes.push(("leadfield".to_string(), lf_hash.clone()));
    hashes.push(("dictionary".to_string(), d_hash.clone()));
    // Parallel batch jobs on the same channels wait here for the first one
    // to build the entry instead of building it again.
    let dict = cache_locks().with_lock(&d_hash, || {
        cached_dictionary(
            args,
            &cache,
            &lf_hash,
            &d_hash,
            (&montage, &sources, &head),
            orientation,
        )
    })?;
    Ok((
        dict,
        ForwardModel {
            montage,
            sources,
            head,
            orientation,
            cache,
        },
    ))
}

/// The lead field entry `lf_hash` from the cache, computed (and cached when
/// the cache can be written) when missing or unreadable.
pub(super) fn cached_leadfield(
    cache: &Path,
    lf_hash: &str,
    (montage, sources, head): (
        &Montage,
        &patchwise::geometry::SourceSpace,
        &patchwise::head::SphereHead,
    ),
    orientation: Orientation,
) -> Result<LeadFieldFile, CliError> {
    let lf_path = entry_path(cache, "leadfield", lf_hash);
    cache_locks().with_lock(lf_hash, || match read_leadfield(&lf_path) {
        Ok(lf) if lf_path.is_file() => {
            note(format!("using cached lead field {}", lf_path.display()));
            Ok(lf)
        }
        outcome => {
            if let (Err(e), true) = (outcome, lf_path.is_file()) {
                note(format!(
                    "note: the cached lead field is damaged ({e}); rebuilding it"
                ));
            }
            let lf = compute_leadfield(montage, sources, head, orientation)?;
            if let Err(e) = write_leadfield(&lf_path, &lf) {
                note(format!(
                    "note: could not cache the lead field in {}: {e}",
                    cache.display()
                ));
            }
            Ok::<_, CliError>(lf)
        }
    })
}

/// The dictionary entry `d_hash` from the cache, built (with its lead field
/// `lf_hash`, itself cached) when missing or unreadable.
fn cached_dictionary(
    args: &Args,
    cache: &Path,
    lf_hash: &str,
    d_hash: &str,
    (montage, sources, head): (
        &Montage,
        &patchwise::geometry::SourceSpace,
        &patchwise::head::SphereHead,
    ),
    orientation: Orientation,
) -> Result<DictionaryFile, CliError> {
    let d_path = entry_path(cache, "dictionary", d_hash);
    if d_path.is_file() {
        match read_dictionary(&d_path) {
            Ok(d) => {
                note(format!("using cached dictionary {}", d_path.display()));
                return Ok(d);
            }
            Err(e) => note(format!(
                "note: the cached dictionary is damaged ({e}); rebuilding it"
            )),
        }
    }
    let lf = cached_leadfield(cache, lf_hash, (montage, sources, head), orientation)?;
    let (d, _info) = super::dictionary::build(&lf, &args.dictionary_options)?;
    let params = args.dictionary_options.to_json();
    if let Err(e) = write_dictionary(&d_path, &lf, &d, &params) {
        // A read-only or full cache: the dictionary goes through a file of
        // this run's own in the system's temporary folder instead.
        note(format!(
            "note: could not cache the dictionary in {}: {e}",
            cache.display()
        ));
        let own = patchwise::io::atomic::temporary_path(
            &std::env::temp_dir().join(format!("patchwise-dictionary-{d_hash}.h5")),
        );
        let read_back = write_dictionary(&own, &lf, &d, &params)
            .and_then(|()| read_dictionary(&own))
            .compute("building the dictionary without a cache");
        let _ = std::fs::remove_file(&own);
        return read_back;
    }
    read_dictionary(&d_path).compute(format!("reading back {}", d_path.display()))
}

/// Restrict a dictionary to `labels` (decoder order), recomputing atoms
/// from the profiles when channels must be dropped or reordered.
fn restrict(
    dict: DictionaryFile,
    labels: &[String],
    path: &Path,
) -> Result<DictionaryFile, CliError> {
    let Some(lf) = &dict.leadfield else {
        if labels.len() != dict.n_channels {
            return Err(bad(format!(
                "{}: the dictionary has {} rows and no channel labels, but the patterns have {} channels",
                path.display(),
                dict.n_channels,
                labels.len()
            )));
        }
        note(format!(
            "note: {} has no channel labels: its {} rows are taken to be the decoder's channels in the decoder's order (matched by count only)",
            path.display(),
            dict.n_channels
        ));
        return Ok(dict);
    };
    let montage = Montage::new(lf.labels.clone(), lf.electrode_positions.clone())
        .bad_input(format!("{}: channel labels", path.display()))?;
    let idx = montage.select(labels).bad_input(format!(
        "matching the decoder's channels to {}",
        path.display()
    ))?;
    if idx.iter().copied().eq(0..dict.n_channels) {
        return Ok(dict);
    }
    let (Some(profile), Some(_)) = (&dict.profile, &dict.atom_norms) else {
        return Err(bad(format!(
            "{}: channels differ from the decoder's and the file has no /dictionary/profile to recompute the atoms",
            path.display()
        )));
    };
    let gain = select_channels(&lf.gain, lf.n_channels(), &idx).bad_input("selecting channels")?;
    let gain_xyz = match &lf.gain_xyz {
        Some(g) => Some(select_channels(g, lf.n_channels(), &idx).bad_input("selecting channels")?),
        None => None,
    };
    let component = dict
        .component
        .clone()
        .unwrap_or_else(|| vec![AtomComponent::Normal; dict.n_atoms]);
    let (atoms, norms) = atoms_for_channels(
        profile,
        &component,
        &gain,
        gain_xyz.as_deref(),
        idx.len(),
        true,
        DEFAULT_DROP_RELATIVE_NORM,
    )
    .bad_input("recomputing atoms for the decoder's channels")?;
    let mut sub_lf = lf.clone();
    sub_lf.labels = idx.iter().map(|&i| lf.labels[i].clone()).collect();
    sub_lf.electrode_positions = idx.iter().map(|&i| lf.electrode_positions[i]).collect();
    sub_lf.gain = gain;
    sub_lf.gain_xyz = gain_xyz;
    Ok(DictionaryFile {
        leadfield: Some(sub_lf),
        n_channels: idx.len(),
        atoms,
        atom_norms: Some(norms),
        ..dict
    })
}

/// Whitened patterns and, per atom, the norm of its whitened column (the
/// factor the unit-norm rescale removed), so fits can be mapped back.
fn whiten(
    dict: &mut DictionaryFile,
    patterns: &[f64],
    k: usize,
    path: &Path,
) -> Result<(Vec<f64>, Vec<f64>, Whitener), CliError> {
    let n = dict.n_channels;
    let (cov, r, c) = read_matrix(path)?;
    if r != n || c != n {
        return Err(bad(format!(
            "{}: noise covariance is {r} x {c}, expected {n} x {n}",
            path.display()
        )));
    }
    // Reference the noise covariance like the data: H C H with H the centring matrix.
    let mut centred = cov.clone();
    let row_mean: Vec<f64> = (0..n)
        .map(|i| (0..n).map(|j| cov[i * n + j]).sum::<f64>() / n as f64)
        .collect();
    let all_mean = row_mean.iter().sum::<f64>() / n as f64;
    for i in 0..n {
        for j in 0..n {
            centred[i * n + j] = cov[i * n + j] - row_mean[i] - row_mean[j] + all_mean;
        }
    }
    let w =
        Whitener::new(&centred, n).bad_input(format!("{}: noise covariance", path.display()))?;
    // Whitening keeps only the covariance's retained directions: with a
    // rank-deficient covariance the fit would see the patterns in that
    // subspace alone and report its explained variance there (rank 10 of
    // 85 made random patterns look 99.8 % explained). The average reference
    // removes exactly one direction, so n - 1 is full rank here.
    let full = n.saturating_sub(1);
    if w.rank() < full {
        return Err(bad(format!(
            "{}: the noise covariance has rank {} of {n} channels (expected {full} after the average reference); whitening by it would measure the fit in a {}-dimensional subspace only and overstate the explained variance. Give a full-rank estimate (more samples, or a regularised one such as C + 0.01 * mean(diag C) * I)",
            path.display(),
            w.rank(),
            w.rank()
        )));
    }
    let yw = w.apply(patterns, k).bad_input("whitening the patterns")?;
    let m = dict.n_atoms;
    let aw = w
        .apply(&dict.atoms, m)
        .bad_input("whitening the dictionary")?;
    let mut norms = dict.atom_norms.clone().unwrap_or_else(|| vec![1.0; m]);
    let mut atoms = aw;
    let mut scales = vec![1.0; m];
    for (j, norm) in norms.iter_mut().enumerate() {
        let before = *norm;
        rescale_to_unit_norm(&mut atoms, n, m, j, norm);
        if before > 0.0 {
            scales[j] = *norm / before;
        }
    }
    dict.atoms = atoms;
    dict.atom_norms = Some(norms);
    Ok((yw, scales, w))
}

/// The fitted patterns in the units of the (unwhitened) patterns: the fit's
/// own D X without whitening, else the unwhitened atoms (each divided by the
/// norm its whitened column had) times the coefficients.
fn reconstruction(
    fit: &patchwise::solver::Fit,
    fit_y: &[f64],
    unwhitened: Option<(&[f64], &[f64])>,
    n: usize,
    k: usize,
) -> Vec<f64> {
    match unwhitened {
        None => fit_y
            .iter()
            .zip(&fit.residual)
            .map(|(y, r)| y - r)
            .collect(),
        Some((atoms, scales)) => {
            let m = fit.n_atoms;
            let mut out = vec![0.0; n * k];
            for j in 0..m {
                for c in 0..k {
                    let x = fit.coefficients[j * k + c];
                    if x == 0.0 || scales[j] == 0.0 {
                        continue;
                    }
                    let w = x / scales[j];
                    for i in 0..n {
                        out[i * k + c] += atoms[i * m + j] * w;
                    }
                }
            }
            out
        }
    }
}

/// A decoder's channel labels, before anything is computed: unique ignoring
/// case and aliases, and at least as many as a scalp map needs (with the
/// average reference, n channels carry n - 1 independent values; fewer than
/// four cannot be drawn, nor locate anything).
pub(crate) fn check_channels(labels: &[String], path: &Path) -> Result<(), CliError> {
    let minimum = patchwise::render::spline::MIN_ELECTRODES;
    if labels.len() < minimum {
        return Err(bad(format!(
            "{}: {} channel(s) ({}); expected at least {minimum}",
            path.display(),
            labels.len(),
            labels.join(", ")
        )));
    }
    Montage::new(labels.to_vec(), vec![[0.0, 0.0, 1.0]; labels.len()])
        .bad_input(format!("{}: channel labels", path.display()))?;
    Ok(())
}

/// Run the whole job for validated arguments; used by `attribute` and `demo`.
pub fn run(args: &Args, component_names: Option<Vec<String>>) -> Result<Attribution, CliError> {
    let options = args.fit_options()?;
    let mut hashes = Vec::new();
    let mut notes = Vec::new();
    // Inputs first: every bad input is found before anything is computed or written.
    let (decoder, input_path) = match (&args.decoder, &args.patterns) {
        (Some(d), _) => (
            read_decoder(d, args.channels.as_deref()).bad_input("reading the decoder")?,
            d.clone(),
        ),
        (None, Some(p)) => {
            let (values, rows, k) = read_matrix(p)?;
            let labels = match &args.channels {
                Some(c) => {
                    patchwise::io::electrodes::read_channel_list(c).bad_input("reading channels")?
                }
                None => (0..rows).map(|i| format!("row{i}")).collect(),
            };
            if labels.len() != rows {
                return Err(bad(format!(
                    "{}: {rows} rows but {} channel labels",
                    p.display(),
                    labels.len()
                )));
            }
            (
                DecoderFile {
                    channels: labels,
                    k,
                    content: DecoderContent::Patterns(values),
                    extras: Default::default(),
                },
                p.clone(),
            )
        }
        (None, None) => {
            return Err(bad(
                "give --decoder FILE (or --dictionary with --patterns)".to_string()
            ))
        }
    };
    hashes.push((
        "decoder".to_string(),
        file_sha256(&input_path).map_err(|e| bad(format!("{}: {e}", input_path.display())))?,
    ));
    // Labels must be unique ignoring case and aliases.
    check_channels(&decoder.channels, &input_path)?;
    let average = args.reference == "average";
    let patterns = decoder_patterns(&decoder, &input_path, average)?;
    let k = decoder.k;
    let mut forward = None;
    let mut dict = match &args.dictionary {
        Some(p) => {
            let d = read_dictionary(p).bad_input("reading the dictionary")?;
            hashes.push((
                "dictionary".to_string(),
                file_sha256(p).map_err(|e| bad(format!("{}: {e}", p.display())))?,
            ));
            if args.patterns.is_some() && args.channels.is_none() {
                if decoder.channels.len() != d.n_channels {
                    return Err(bad(format!(
                        "{}: patterns have {} rows, the dictionary {} channels",
                        input_path.display(),
                        decoder.channels.len(),
                        d.n_channels
                    )));
                }
                d
            } else {
                restrict(d, &decoder.channels, p)?
            }
        }
        None => {
            let (d, f) = dictionary_for_decoder(args, &decoder.channels, &mut hashes)?;
            forward = Some(f);
            d
        }
    };
    if average {
        reference_atoms(&mut dict);
    } else {
        notes.push("reference none: patterns and atoms used as given".to_string());
    }
    let mut unwhitened = None;
    let mut whitener = None;
    let fit_y = match &args.noise_covariance {
        Some(p) => {
            hashes.push((
                "noise_covariance".to_string(),
                file_sha256(p).map_err(|e| bad(format!("{}: {e}", p.display())))?,
            ));
            let before = dict.atoms.clone();
            let (yw, scales, w) = whiten(&mut dict, &patterns, k, p)?;
            unwhitened = Some((before, scales));
            whitener = Some(w);
            yw
        }
        None => {
            notes.push("no noise covariance given: the fit assumes white sensor noise (identity whitening)".to_string());
            patterns.clone()
        }
    };
    let empty_profile = sprs::CsMat::zero((0, dict.n_atoms)).to_csc();
    let (profile, regions, names, positions) = match (&dict.leadfield, &dict.profile) {
        (Some(lf), Some(p)) => (
            p,
            lf.sources.region.clone(),
            lf.sources.region_names.clone(),
            lf.sources.positions.clone(),
        ),
        _ => {
            notes.push(
                "the dictionary has no source space or profiles: no region table".to_string(),
            );
            (&empty_profile, Vec::new(), Vec::new(), Vec::new())
        }
    };
    let norms = dict
        .atom_norms
        .clone()
        .unwrap_or_else(|| vec![1.0; dict.n_atoms]);
    let perturbed = perturbed_for_resamples(
        &dict,
        forward.as_ref(),
        average,
        whitener.as_ref(),
        args,
        &mut notes,
    )?;
    let problem = Problem {
        atoms: &dict.atoms,
        n_channels: dict.n_channels,
        group: &dict.group,
        atom_norms: &norms,
        profile,
        source_region: &regions,
        n_regions: names.len(),
        source_positions: &positions,
        perturbed: &perturbed,
    };
    let mut options = options;
    options.noise = pattern_noise(&NoiseInputs {
        decoder: &decoder,
        path: &input_path,
        patterns: &patterns,
        average,
        whitener: whitener.as_ref(),
        noise_sd: args.noise_sd,
    })?;
    if options.lambda == LambdaRule::Noise {
        notes.push(format!(
            "lambda by the noise rule; noise level {}",
            options.noise.describe()
        ));
    }
    let pb = bar(options.resample.n_resamples, "resampling");
    let outcome =
        fit_patterns(&problem, &fit_y, k, &options, &|n| pb.inc(n as u64)).compute("fitting")?;
    pb.finish_and_clear();
    // Names given by the caller (the demo), else the decoder file's, else numbers.
    let component_names = component_names
        .or_else(|| decoder.extras.component_names.clone())
        .unwrap_or_else(|| (0..k).map(|c| format!("component {c}")).collect());
    // Flags reach the report through the notes (and summary.json per component).
    for (c, name) in component_names.iter().enumerate() {
        for flag in patchwise::pipeline::component_flags(&outcome, c) {
            notes.push(format!("{name}: {flag}"));
        }
    }
    if let Some(r) = &outcome.resample {
        if r.budget_stops > 0 {
            notes.push(format!(
                "{} resampled fit(s) stopped on their budget; their shares enter the intervals as they were",
                r.budget_stops
            ));
        }
    }
    let reconstruction = reconstruction(
        &outcome.fit,
        &fit_y,
        unwhitened
            .as_ref()
            .map(|(a, s)| (a.as_slice(), s.as_slice())),
        dict.n_channels,
        k,
    );
    Ok(Attribution {
        lambda_rule: options.lambda.name(),
        noise_level: options.noise.describe(),
        job: super::report::job_of(args),
        reconstruction,
        labels: decoder.channels.clone(),
        patterns,
        component_names,
        k,
        patterns_source: decoder.source_kind().to_string(),
        dictionary: dict,
        outcome,
        hashes,
        notes,
        whitened: args.noise_covariance.is_some(),
    })
}

/// The input files and folders of an `attribute` run, as (what, path).
pub fn input_paths(args: &Args) -> Vec<(&'static str, PathBuf)> {
    let mut inputs: Vec<(&'static str, PathBuf)> = [
        ("decoder", &args.decoder),
        ("patterns", &args.patterns),
        ("channel list", &args.channels),
        ("dictionary", &args.dictionary),
        ("noise covariance", &args.noise_covariance),
        ("cache folder", &args.cache),
    ]
    .into_iter()
    .filter_map(|(what, p)| p.clone().map(|p| (what, p)))
    .collect();
    inputs.extend(args.forward.input_files());
    inputs
}

/// Run `patchwise attribute`.
pub fn exec(args: Args) -> Result<(), CliError> {
    // The output folder is checked before anything is computed: it must be
    // new, empty or ours, and hold none of this run's inputs.
    crate::staging::check_output_folder(&args.out, "--out")?;
    let inputs = input_paths(&args);
    let inputs: Vec<(&str, &Path)> = inputs.iter().map(|(w, p)| (*w, p.as_path())).collect();
    crate::staging::refuse_replaced_inputs(&args.out, "--out", None, &inputs)?;
    let result = run(&args, None)?;
    let dir = write_outputs(&args.out, &result)?;
    if !args.no_report {
        super::report::report_after_outputs(&dir, super::report::job_of(&args))?;
    }
    Ok(())
}
