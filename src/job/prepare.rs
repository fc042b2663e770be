//! The decoder's side of getting into the fit's space: patterns from
//! weights (Haufe et al. 2014, NeuroImage 87:96, eq. 6), checked and
//! average-referenced; the dictionary restricted to the decoder's channels
//! (the messages around [`PatchDictionary::restrict_to`]); the whitener of
//! a noise covariance file; the fitted patterns mapped back to the
//! patterns' units; and the gain of the decoder's filters over the
//! dictionary's sources in the fit's reference. The dictionary's own operations (`restrict_to`,
//! `rereference`, `whiten`) are methods of [`PatchDictionary`].

use std::path::Path;

use super::error::{JobError, JobResult};
use super::observer::JobObserver;
use crate::attribution::{filter_gain, FilterGain, GainInput};
use crate::dictionary::{AtomComponent, PatchDictionary, RestrictError};
use crate::io::decoder_file::{DecoderContent, DecoderFile};
use crate::montage::Montage;
use crate::patterns::{
    activation_patterns, average_reference, per_time_patterns, space_time_patterns, Whitener,
};

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// A matrix file (.npy or .csv) as (row-major values, rows, columns).
pub fn read_matrix(path: &Path) -> Result<(Vec<f64>, usize, usize), JobError> {
    crate::io::decoder_file::read_matrix(path).input("reading a matrix")
}

/// The decoder's patterns (n_ch x k), average-referenced over its channels
/// unless `average` is false.
pub fn decoder_patterns(
    decoder: &DecoderFile,
    path: &Path,
    average: bool,
) -> Result<Vec<f64>, JobError> {
    let n = decoder.channels.len();
    let raw = match &decoder.content {
        DecoderContent::Patterns(p) => p.clone(),
        DecoderContent::Weights {
            weights,
            covariance,
        } => {
            activation_patterns(weights, covariance, n, decoder.k)
                .input(format!("{}: turning weights into patterns", path.display()))?
                .0
        }
        DecoderContent::SpaceTimeWeights {
            weights,
            covariance,
        } => space_time_patterns(weights, covariance, n, decoder.k).input(format!(
            "{}: turning space-time weights into patterns",
            path.display()
        ))?,
        DecoderContent::PerTimeWeights {
            weights,
            covariances,
            n_times,
            shared,
        } => per_time_patterns(
            weights,
            covariances,
            n,
            decoder.k / (*n_times).max(1),
            *n_times,
            *shared,
        )
        .input(format!(
            "{}: turning weights per time point into patterns",
            path.display()
        ))?,
    };
    let referenced = if average {
        average_reference(&raw, n, decoder.k).input("average reference")?
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
        let (smallest, largest) = crate::limits::PATTERN_MAGNITUDE_RANGE;
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

/// Restrict a dictionary read from `path` to `labels` (decoder order),
/// recomputing atoms from the profiles when channels must be dropped or
/// reordered; a dictionary without channel labels is taken as it is, with
/// a note, when its row count matches.
pub fn restrict(
    dict: PatchDictionary,
    labels: &[String],
    path: &Path,
    observer: &dyn JobObserver,
) -> Result<PatchDictionary, JobError> {
    let unlabelled = dict.leadfield.is_none();
    let rows = dict.n_channels;
    let restricted = match dict.restrict_to(labels) {
        Ok(d) => d,
        Err(e @ RestrictError::Unlabelled { .. }) => {
            return Err(bad(format!("{}: {e}", path.display())))
        }
        Err(RestrictError::Labels(e)) => {
            return Err(e).input(format!("{}: channel labels", path.display()))
        }
        Err(RestrictError::Match(e)) => {
            return Err(e).input(format!(
                "matching the decoder's channels to {}",
                path.display()
            ))
        }
        Err(RestrictError::NoProfile) => {
            return Err(bad(format!(
                "{}: channels differ from the decoder's and the file has no /dictionary/profile to recompute the atoms",
                path.display()
            )))
        }
        Err(RestrictError::Channels(e)) => return Err(e).input("selecting channels"),
        Err(RestrictError::Atoms(e)) => {
            return Err(e).input("recomputing atoms for the decoder's channels")
        }
    };
    if unlabelled {
        observer.note(&format!(
            "note: {} has no channel labels: its {} rows are taken to be the decoder's channels in the decoder's order (matched by count only)",
            path.display(),
            rows
        ));
    }
    Ok(restricted)
}

/// The whitener of the noise covariance in `path` (n x n, the decoder's
/// channels), average-referenced like the data and refused when its rank
/// is below n - 1.
pub fn whitener_for(path: &Path, n: usize) -> Result<Whitener, JobError> {
    let (cov, r, c) = read_matrix(path)?;
    if r != n || c != n {
        return Err(bad(format!(
            "{}: noise covariance is {r} x {c}, expected {n} x {n}",
            path.display()
        )));
    }
    // Reference the noise covariance like the data: H C H with H the centring matrix.
    let centred = crate::numeric::centre_covariance(&cov, n);
    let w = Whitener::new(&centred, n).input(format!("{}: noise covariance", path.display()))?;
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
    Ok(w)
}

/// The fitted patterns in the units of the (unwhitened) patterns: the fit's
/// own D X without whitening, else the unwhitened atoms (each divided by the
/// norm its whitened column had) times the coefficients.
pub fn reconstruction(
    fit: &crate::solver::Fit,
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
pub fn check_channels(labels: &[String], path: &Path) -> Result<(), JobError> {
    let minimum = crate::render::spline::MIN_ELECTRODES;
    if labels.len() < minimum {
        return Err(bad(format!(
            "{}: {} channel(s) ({}); expected at least {minimum}",
            path.display(),
            labels.len(),
            labels.join(", ")
        )));
    }
    Montage::new(labels.to_vec(), vec![[0.0, 0.0, 1.0]; labels.len()])
        .input(format!("{}: channel labels", path.display()))?;
    Ok(())
}

/// Why there is no gain map when the decoder gives patterns only.
pub const NEEDS_FILTERS: &str =
    "no filter gain: the decoder gives patterns only; the gain needs the filters (weights)";

/// Why there is no gain map when the dictionary has no lead field.
pub const NEEDS_LEADFIELD: &str = "no filter gain: the dictionary has no lead field (/leadfield/gain) or no source space; the gain needs the forward model";

/// The gain of the decoder's filters over the dictionary's sources, or the
/// reason it cannot be computed. The weights are average-referenced when
/// `average` (Wᵀ H L = (H W)ᵀ L with H the centring matrix, so the lead
/// field's own reference does not matter then); otherwise the weights and
/// the lead field are used as given.
pub fn decoder_gain(
    decoder: &DecoderFile,
    dict: &PatchDictionary,
    average: bool,
) -> Result<Result<FilterGain, String>, JobError> {
    let DecoderContent::Weights { weights, .. } = &decoder.content else {
        return Ok(Err(NEEDS_FILTERS.to_string()));
    };
    let Some(lf) = &dict.leadfield else {
        return Ok(Err(NEEDS_LEADFIELD.to_string()));
    };
    if lf.n_channels() != decoder.channels.len() || lf.n_sources() == 0 {
        return Ok(Err(NEEDS_LEADFIELD.to_string()));
    }
    let mut referenced = weights.clone();
    if average {
        crate::numeric::average_reference_columns(&mut referenced, decoder.k);
    }
    // The orientation of the fit: free when its atoms use x, y, z.
    let free = dict
        .component
        .as_ref()
        .is_some_and(|c| c.iter().any(|&a| a != AtomComponent::Normal));
    let (leadfield, orientations) = match (&lf.gain_xyz, free) {
        (Some(g), true) => (g.as_slice(), 3),
        _ => (lf.gain.as_slice(), 1),
    };
    let gain = filter_gain(&GainInput {
        weights: &referenced,
        n_channels: decoder.channels.len(),
        n_components: decoder.k,
        leadfield,
        orientations,
        source_areas: &lf.sources.areas,
        source_region: &lf.sources.region,
        n_regions: lf.sources.region_names.len(),
    })
    .compute("computing the filter gain")?;
    Ok(Ok(gain))
}
