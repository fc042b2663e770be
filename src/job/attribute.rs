//! `attribute`, the main job, as one library call: which cortical regions
//! does a decoder rely on? The command line, batch jobs and the demo call
//! [`attribute`]; the outputs are written by [`super::outputs`].

use std::path::{Path, PathBuf};

use super::cache::dictionary_for_channels;
use super::cache_folder::trim_after_job;
use super::error::{JobError, JobResult};
use super::noise::{pattern_noise, NoiseInputs};
use super::observer::{interrupted, staged, JobObserver};
use super::params::AttributeParams;
use super::perturb::perturbed_for_resamples;
use super::prepare::{
    check_channels, decoder_gain, decoder_patterns, read_matrix, reconstruction, restrict,
    whitener_for,
};
use super::specs::Reference;
use crate::dictionary::PatchDictionary;
use crate::io::cache::file_hash;
use crate::io::decoder_file::{read_decoder, DecoderContent, DecoderFile};
use crate::io::dictionary_file::read_dictionary;
use crate::pipeline::{fit_patterns, FitOptions, FitOutcome, LambdaRule, Problem};

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// The SHA-256 of an input file for the result's hashes.
fn input_hash(path: &Path) -> Result<String, JobError> {
    file_hash(path).map_err(|e| bad(format!("{}: {e}", path.display())))
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
    pub dictionary: PatchDictionary,
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
    /// What was asked (summary.json's `params`, readable back into
    /// [`AttributeParams`] to rerun the same job; in words by
    /// [`AttributeParams::describe`]).
    pub params: AttributeParams,
    /// The λ rule in words (`noise`, `bic`, ..., or the fixed value).
    pub lambda_rule: String,
    /// Where the noise level came from, in words.
    pub noise_level: String,
    /// The gain of the decoder's filters over the cortex, when the decoder
    /// gives weights and the dictionary its lead field
    /// ([`crate::attribution::filter_gain`]).
    pub filter_gain: Option<crate::attribution::FilterGain>,
    /// Why `filter_gain` is `None`, in words (`None` when it was computed).
    pub filter_gain_missing: Option<String>,
    /// Region × time shares and time ranges, for a decoder with a time axis
    /// (then the k columns are (component, time) pairs, column c · n_times + t).
    pub time: Option<crate::pipeline::TimeShares>,
}

/// The whole job: read and check the inputs, build or fetch the forward
/// model and dictionary (cached under `cache`), fit, resample, flag.
/// `component_names` overrides the decoder file's names.
pub fn attribute(
    params: &AttributeParams,
    cache: &Path,
    component_names: Option<Vec<String>>,
    observer: &dyn JobObserver,
) -> Result<Attribution, JobError> {
    let options = params.validate()?;
    let inputs = &params.inputs;
    // Inputs first: every bad input is found before anything is computed or written.
    let (decoder, input_path) = match (&inputs.decoder, &inputs.patterns) {
        (Some(d), _) => (
            read_decoder(d, inputs.channels.as_deref()).input("reading the decoder")?,
            d.clone(),
        ),
        (None, Some(p)) => {
            let (values, rows, k) = read_matrix(p)?;
            let labels = match &inputs.channels {
                Some(c) => crate::io::electrodes::read_channel_list(c).input("reading channels")?,
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
    let content_hash = input_hash(&input_path)?;
    let given = GivenDecoder {
        decoder,
        path: input_path,
        content_hash,
    };
    let outcome = run(params, options, given, cache, component_names, observer);
    trim_after_job(cache, observer);
    outcome
}

/// A decoder already read (the demo's, made in memory): the decoder, the
/// path that names it in messages, and the BLAKE3 hash of its file's bytes for
/// the hashes of the result.
pub struct GivenDecoder {
    /// The decoder.
    pub decoder: DecoderFile,
    /// Names the decoder in messages (the file it is saved as).
    pub path: PathBuf,
    /// BLAKE3 hash of the decoder file's bytes, hexadecimal.
    pub content_hash: String,
}

/// [`attribute`] on a decoder already read; `params.inputs.decoder` only
/// names it (in the job's description), and is not read.
pub fn attribute_decoder(
    params: &AttributeParams,
    given: GivenDecoder,
    cache: &Path,
    component_names: Option<Vec<String>>,
    observer: &dyn JobObserver,
) -> Result<Attribution, JobError> {
    let options = params.validate()?;
    let outcome = run(params, options, given, cache, component_names, observer);
    trim_after_job(cache, observer);
    outcome
}

/// The job after the decoder is read.
fn run(
    params: &AttributeParams,
    options: FitOptions,
    given: GivenDecoder,
    cache: &Path,
    component_names: Option<Vec<String>>,
    observer: &dyn JobObserver,
) -> Result<Attribution, JobError> {
    let inputs = &params.inputs;
    let GivenDecoder {
        decoder,
        path: input_path,
        content_hash,
    } = given;
    let mut hashes = vec![("decoder".to_string(), content_hash)];
    let mut notes = Vec::new();
    // Labels must be unique ignoring case and aliases.
    check_channels(&decoder.channels, &input_path)?;
    let average = params.fit.reference == Reference::Average;
    let patterns = decoder_patterns(&decoder, &input_path, average)?;
    let k = decoder.k;
    interrupted(observer)?;
    let mut forward = None;
    let mut dict = match &inputs.dictionary {
        Some(p) => {
            let d = read_dictionary(p).input("reading the dictionary")?;
            hashes.push(("dictionary".to_string(), input_hash(p)?));
            if inputs.patterns.is_some() && inputs.channels.is_none() {
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
                restrict(d, &decoder.channels, p, observer)?
            }
        }
        None => {
            let (d, f) = dictionary_for_channels(
                &params.forward,
                &params.patches,
                &decoder.channels,
                cache,
                &mut hashes,
                observer,
            )?;
            forward = Some(f);
            d
        }
    };
    if average {
        dict.rereference();
    } else {
        notes.push("reference none: patterns and atoms used as given".to_string());
    }
    let mut unwhitened = None;
    let mut whitener = None;
    let fit_y = match &inputs.noise_covariance {
        Some(p) => {
            hashes.push(("noise_covariance".to_string(), input_hash(p)?));
            let w = whitener_for(p, dict.n_channels)?;
            let yw = w.apply(&patterns, k).input("whitening the patterns")?;
            let before = dict.atoms.clone();
            let scales = dict.whiten(&w).input("whitening the dictionary")?;
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
    interrupted(observer)?;
    let perturbed = perturbed_for_resamples(
        &dict,
        forward.as_ref(),
        average,
        whitener.as_ref(),
        &params.fit,
        &mut notes,
        observer,
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
        noise_sd: params.fit.noise_sd,
    })?;
    if let Some(axis) = &decoder.extras.time {
        let width = params
            .fit
            .time_window
            .unwrap_or(super::params::DEFAULT_TIME_WINDOW);
        options.column_blocks = Some(
            crate::pipeline::time_window_blocks(
                &axis.times,
                width,
                axis.n_components,
                params.fit.joint,
            )
            .input("--time-window")?,
        );
        notes.push(format!(
            "time axis: {} time points from {:.4} to {:.4} s; support shared within windows of {width} s",
            axis.times.len(),
            axis.times[0],
            axis.times[axis.times.len() - 1]
        ));
        for warning in time_axis_warnings(&axis.times, width) {
            observer.note(&warning);
            notes.push(warning);
        }
    }
    if options.lambda == LambdaRule::Noise {
        notes.push(format!(
            "lambda by the noise rule; noise level {}",
            options.noise.describe()
        ));
    }
    interrupted(observer)?;
    let outcome = staged(
        observer,
        "resampling",
        options.resample.n_resamples,
        |progress| fit_patterns(&problem, &fit_y, k, &options, progress),
    )
    .compute("fitting")?;
    // Names given by the caller (the demo), else the decoder file's, else numbers;
    // with a time axis, one name per (component, time) column.
    let n_named = decoder.extras.time.as_ref().map_or(k, |a| a.n_components);
    let component_names = component_names
        .or_else(|| decoder.extras.component_names.clone())
        .unwrap_or_else(|| (0..n_named).map(|c| format!("component {c}")).collect());
    let (component_names, time) = match &decoder.extras.time {
        None => (component_names, None),
        Some(axis) => {
            let columns = component_names
                .iter()
                .flat_map(|name| {
                    axis.times
                        .iter()
                        .map(move |t| format!("{name} @ {:.1} ms", t * 1e3))
                })
                .collect();
            // The fitted patterns in the fit's space, where the noise levels are.
            let fitted: Vec<f64> = fit_y
                .iter()
                .zip(&outcome.fit.residual)
                .map(|(y, r)| y - r)
                .collect();
            let n_fit = fit_y.len() / k.max(1);
            let strength =
                crate::pipeline::column_strength(&fitted, k, outcome.column_scale.as_deref());
            let shares = crate::pipeline::time_shares(
                &outcome.attribution,
                outcome.resample.as_ref(),
                &strength,
                &axis.times,
                (axis.n_components, names.len()),
                // Free directions of the fit's space (as for the noise level).
                if average {
                    n_fit.saturating_sub(1)
                } else {
                    n_fit
                },
            )
            .compute("region x time shares")?;
            (columns, Some(shares))
        }
    };
    if component_names.len() != k {
        return Err(bad(format!(
            "{}: {} component names for {} components",
            input_path.display(),
            component_names.len(),
            n_named
        )));
    }
    // Flags reach the report through the notes (and summary.json per component).
    for (c, name) in component_names.iter().enumerate() {
        for flag in crate::pipeline::component_flags(&outcome, c) {
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
    let (filter_gain, filter_gain_missing) = match decoder_gain(&decoder, &dict, average)? {
        Ok(g) => (Some(g), None),
        Err(why) => (None, Some(why)),
    };
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
        time,
        lambda_rule: options.lambda.name(),
        noise_level: options.noise.describe(),
        params: params.clone(),
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
        whitened: inputs.noise_covariance.is_some(),
        filter_gain,
        filter_gain_missing,
    })
}

/// Notes on a time axis that looks wrong for the fit over time: a sampling
/// step at least as long as the window (each time point is then fitted
/// alone), or a span beyond a minute (times in milliseconds given as
/// seconds look like this; an event-related decoder spans about a second).
fn time_axis_warnings(times: &[f64], width: f64) -> Vec<String> {
    let mut out = Vec::new();
    let step = times
        .windows(2)
        .map(|w| w[1] - w[0])
        .fold(f64::INFINITY, f64::min);
    // The windows open at (t − t₀)/width to rounding (time_window_blocks).
    if width > 0.0 && step >= width * (1.0 - 1e-9) {
        out.push(format!(
            "warning: the sampling step ({step} s) is at least the time window ({width} s): each window holds one time point, so every time point is fitted alone; --time-window sets the window in seconds"
        ));
    }
    let span = times.last().copied().unwrap_or(0.0) - times.first().copied().unwrap_or(0.0);
    if span > 60.0 {
        out.push(format!(
            "warning: the times span {span} s; `times` is read in seconds (were milliseconds given?)"
        ));
    }
    out
}

#[cfg(test)]
mod time_axis_tests {
    use super::time_axis_warnings;

    #[test]
    fn milliseconds_and_coarse_steps_are_flagged() {
        let seconds: Vec<f64> = (0..21).map(|i| i as f64 * 0.02).collect();
        assert!(time_axis_warnings(&seconds, 0.05).is_empty());
        let millis: Vec<f64> = seconds.iter().map(|t| t * 1000.0).collect();
        assert_eq!(time_axis_warnings(&millis, 0.05).len(), 2);
        assert_eq!(time_axis_warnings(&seconds, 0.02).len(), 1);
        assert!(time_axis_warnings(&seconds, 0.0).is_empty());
    }
}
