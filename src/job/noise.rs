//! The noise level of the patterns, from what the user gave: `--noise-sd`,
//! the decoder file's `folds`, or its `n_samples` with weights + covariance.
//! Everything is carried into the fit's space (average reference, then
//! whitening) so that the λ rule and the resamples see one σ per component.

use std::path::Path;

use super::error::{JobError, JobResult};
use super::prepare::decoder_patterns;
use crate::io::decoder_file::{DecoderContent, DecoderFile};
use crate::patterns::{fold_noise, sample_count_variance, Whitener};
use crate::pipeline::PatternNoise;

/// What the noise level can be computed from.
pub struct NoiseInputs<'a> {
    /// The decoder as read (with its extras).
    pub decoder: &'a DecoderFile,
    /// Its file, for messages.
    pub path: &'a Path,
    /// The patterns after referencing, before whitening (n_ch × k).
    pub patterns: &'a [f64],
    /// Average reference in use.
    pub average: bool,
    /// The whitener, when the fit is whitened.
    pub whitener: Option<&'a Whitener>,
    /// `--noise-sd`, in the patterns' units.
    pub noise_sd: Option<f64>,
}

/// The pattern noise for the fit: `--noise-sd` first, then folds, then
/// `n_samples` (with weights + covariance); none when nothing was given.
pub fn pattern_noise(inp: &NoiseInputs<'_>) -> Result<PatternNoise, JobError> {
    let d = inp.decoder;
    let (n, k) = (d.channels.len(), d.k);
    // Free directions of the fit's space: one is lost to the average reference.
    let n_eff = if inp.average { n.saturating_sub(1) } else { n }.max(1) as f64;
    if let Some(sd) = inp.noise_sd {
        let v = vec![sd * sd; n * k];
        return Ok(PatternNoise {
            sd: Some(transformed_sd(&v, n, k, inp, n_eff)?),
            source: format!("given (--noise-sd {sd})"),
            fold_deviations: None,
        });
    }
    if let Some(folds) = &d.extras.folds {
        let mut fit_folds = Vec::with_capacity(folds.len());
        for (f, content) in folds.iter().enumerate() {
            let fold = DecoderFile {
                channels: d.channels.clone(),
                k,
                content: content.clone(),
                extras: Default::default(),
            };
            let p = decoder_patterns(&fold, inp.path, inp.average)
                .map_err(|e| e.context(format!("fold {f}")))?;
            fit_folds.push(to_fit_space(&p, k, inp)?);
        }
        let full = to_fit_space(inp.patterns, k, inp)?;
        let noise =
            fold_noise(&full, &fit_folds, n, k).input(format!("{}: folds", inp.path.display()))?;
        return Ok(PatternNoise {
            sd: Some(
                noise
                    .total_variance
                    .iter()
                    .map(|t| (t / n_eff).sqrt().max(f64::MIN_POSITIVE))
                    .collect(),
            ),
            source: format!("from {} fold decoders (grouped jackknife)", fit_folds.len()),
            fold_deviations: Some(noise.deviations),
        });
    }
    if let Some(n_samples) = d.extras.n_samples {
        if let DecoderContent::Weights {
            weights,
            covariance,
        } = &d.content
        {
            let v = sample_count_variance(weights, covariance, n, k, n_samples)
                .input(format!("{}: n_samples", inp.path.display()))?;
            return Ok(PatternNoise {
                sd: Some(transformed_sd(&v, n, k, inp, n_eff)?),
                source: format!("from n_samples = {n_samples} (covariance sampling)"),
                fold_deviations: None,
            });
        }
        return Ok(PatternNoise {
            sd: None,
            source: "estimated with lambda (scaled lasso); n_samples is used with weights + covariance only".to_string(),
            fold_deviations: None,
        });
    }
    Ok(PatternNoise::default())
}

/// Patterns (already referenced) in the fit's space: whitened when asked.
fn to_fit_space(p: &[f64], k: usize, inp: &NoiseInputs<'_>) -> Result<Vec<f64>, JobError> {
    match inp.whitener {
        Some(w) => w.apply(p, k).input("whitening the fold patterns"),
        None => Ok(p.to_vec()),
    }
}

/// Per component, σ in the fit's space from per-channel variances `v`
/// (n × k, pattern units²) of independent channel noise: the variance of
/// T e summed over channels, with T the average reference then the
/// whitening, divided by the free directions.
fn transformed_sd(
    v: &[f64],
    n: usize,
    k: usize,
    inp: &NoiseInputs<'_>,
    n_eff: f64,
) -> Result<Vec<f64>, JobError> {
    // Column i of T is T e_i: reference then whiten the unit vector.
    let mut identity = vec![0.0; n * n];
    for i in 0..n {
        identity[i * n + i] = 1.0;
    }
    let referenced = if inp.average {
        crate::patterns::average_reference(&identity, n, n).input("average reference")?
    } else {
        identity
    };
    let t = to_fit_space(&referenced, n, inp)?;
    let column_sq: Vec<f64> = (0..n)
        .map(|i| (0..n).map(|r| t[r * n + i].powi(2)).sum())
        .collect();
    Ok((0..k)
        .map(|c| {
            let total: f64 = (0..n).map(|i| v[i * k + c] * column_sq[i]).sum();
            (total / n_eff).sqrt().max(f64::MIN_POSITIVE)
        })
        .collect())
}
