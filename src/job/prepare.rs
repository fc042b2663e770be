//! Getting the decoder and the dictionary into the fit's space: patterns
//! from weights (Haufe et al. 2014, NeuroImage 87:96, eq. 6), checked and
//! average-referenced; the dictionary restricted to the decoder's channels,
//! re-referenced and whitened with the patterns; and the fitted patterns
//! mapped back to the patterns' units.

use std::path::Path;

use super::error::{JobError, JobResult};
use super::observer::JobObserver;
use crate::dictionary::{
    atoms_for_channels, select_channels, AtomComponent, DEFAULT_DROP_RELATIVE_NORM,
};
use crate::io::decoder_file::{DecoderContent, DecoderFile};
use crate::io::dictionary_file::DictionaryFile;
use crate::montage::Montage;
use crate::patterns::{activation_patterns, average_reference, Whitener};

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// A matrix file (.npy or .csv) as (row-major values, rows, columns).
pub fn read_matrix(path: &Path) -> Result<(Vec<f64>, usize, usize), JobError> {
    crate::io::decoder_file::read_matrix(path).input("reading a matrix")
}

/// Scale column `j` of the row-major n × m `atoms` to unit 2-norm and fold
/// the scale into `norm` (the atom's removed scale); a zero column stays zero.
pub fn rescale_to_unit_norm(atoms: &mut [f64], n: usize, m: usize, j: usize, norm: &mut f64) {
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
pub fn reference_atoms(dict: &mut DictionaryFile) {
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

/// Restrict a dictionary to `labels` (decoder order), recomputing atoms
/// from the profiles when channels must be dropped or reordered.
pub fn restrict(
    dict: DictionaryFile,
    labels: &[String],
    path: &Path,
    observer: &dyn JobObserver,
) -> Result<DictionaryFile, JobError> {
    let Some(lf) = &dict.leadfield else {
        if labels.len() != dict.n_channels {
            return Err(bad(format!(
                "{}: the dictionary has {} rows and no channel labels, but the patterns have {} channels",
                path.display(),
                dict.n_channels,
                labels.len()
            )));
        }
        observer.note(&format!(
            "note: {} has no channel labels: its {} rows are taken to be the decoder's channels in the decoder's order (matched by count only)",
            path.display(),
            dict.n_channels
        ));
        return Ok(dict);
    };
    let montage = Montage::new(lf.labels.clone(), lf.electrode_positions.clone())
        .input(format!("{}: channel labels", path.display()))?;
    let idx = montage.select(labels).input(format!(
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
    let gain = select_channels(&lf.gain, lf.n_channels(), &idx).input("selecting channels")?;
    let gain_xyz = match &lf.gain_xyz {
        Some(g) => Some(select_channels(g, lf.n_channels(), &idx).input("selecting channels")?),
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
    .input("recomputing atoms for the decoder's channels")?;
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
pub fn whiten(
    dict: &mut DictionaryFile,
    patterns: &[f64],
    k: usize,
    path: &Path,
) -> Result<(Vec<f64>, Vec<f64>, Whitener), JobError> {
    let n = dict.n_channels;
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
    let yw = w.apply(patterns, k).input("whitening the patterns")?;
    let m = dict.n_atoms;
    let aw = w.apply(&dict.atoms, m).input("whitening the dictionary")?;
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
