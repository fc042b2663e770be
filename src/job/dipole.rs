//! `dipole` as a library call: equivalent-dipole fits of a decoder's
//! patterns (single dipoles or symmetric pairs), each dipole placed on the
//! nearest cortex vertex and its region, beside the attribution already in
//! the output folder when there is one. [`write_dipole_files`] writes
//! result.h5 and dipoles.csv into a (staging) folder.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::error::{JobError, JobResult};
use super::observer::JobObserver;
use super::params::ForwardParams;
use super::prepare::{check_channels, decoder_patterns};
use crate::dipole::RESIDUAL_CUT;
use crate::dipole::{nearest_source, DipoleError, DipoleFit, DipoleFitter, DipoleOptions};
use crate::geometry::SourceSpace;
use crate::io::decoder_file::read_decoder;
use crate::io::dipole_file::{
    read_existing_result, set_distance_to_patch_peak, write_dipoles_csv, write_into_result,
    write_new_result, DipoleRecord, DipoleRow, ExistingResult, PatternsRecord,
};

/// The parameters of `dipole` (paths; positions inside are mm).
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DipoleParams {
    /// Decoder file: .npz, .h5 or .mat with `channels` and `patterns`, or `weights` + `covariance`;
    /// or a bare .npy/.csv matrix of patterns (n_ch x k) with --channels.
    #[arg(long)]
    pub decoder: PathBuf,
    /// Channel labels of a bare matrix (one a line, or a BIDS channels.tsv).
    #[arg(long)]
    #[serde(default)]
    pub channels: Option<PathBuf>,
    /// Forward model.
    #[command(flatten)]
    #[serde(flatten)]
    pub forward: ForwardParams,
    /// Fit a symmetric pair per component (positions mirrored in x, two free moments).
    #[arg(long)]
    #[serde(default)]
    pub pairs: bool,
    /// Noise standard deviation per channel, in the units of the patterns (default: estimated from the residual).
    #[arg(long, allow_negative_numbers = true)]
    #[serde(default)]
    pub noise_sd: Option<f64>,
    /// Residual variance (a fraction, 0 to 1) under which the table says one dipole model
    /// explains a pattern well; 0.15 is a common convention, not a test.
    #[arg(long, default_value_t = RESIDUAL_CUT)]
    #[serde(default = "default_residual_cut")]
    pub residual_cut: f64,
}

fn default_residual_cut() -> f64 {
    RESIDUAL_CUT
}

impl DipoleParams {
    /// Check the values before anything is read.
    pub fn validate(&self) -> Result<(), JobError> {
        if let Some(s) = self.noise_sd {
            if !(s.is_finite() && s > 0.0) {
                return Err(JobError::input(format!(
                    "--noise-sd {s}: expected a positive number"
                )));
            }
        }
        if !(self.residual_cut.is_finite() && (0.0..=1.0).contains(&self.residual_cut)) {
            return Err(JobError::input(format!(
                "--residual-cut {}: expected a fraction from 0 to 1 (0.15 for 15 %)",
                self.residual_cut
            )));
        }
        Ok(())
    }

    /// The input files, as (what, path).
    pub fn input_files(&self) -> Vec<(&'static str, PathBuf)> {
        let mut inputs = vec![("decoder", self.decoder.clone())];
        inputs.extend(self.channels.clone().map(|c| ("channel list", c)));
        inputs.extend(self.forward.input_files());
        inputs
    }
}

/// The fits and everything their files and table need.
pub struct Dipoles {
    /// One fit per component.
    pub fits: Vec<DipoleFit>,
    /// One row per fitted dipole (mm, nearest cortex region).
    pub rows: Vec<DipoleRow>,
    /// Component names: the attribution's beside, else numbers.
    pub names: Vec<String>,
    /// Symmetric pairs rather than single dipoles.
    pub pairs: bool,
    /// Whether the noise level was estimated from the residual.
    pub noise_sd_estimated: bool,
    /// The fit's options (grid, margin).
    pub options: DipoleOptions,
    /// Channel labels in decoder order.
    pub labels: Vec<String>,
    /// The patterns fitted (n_ch x k).
    pub patterns: Vec<f64>,
    /// Where the patterns came from.
    pub patterns_source: &'static str,
    /// Number of components.
    pub k: usize,
    /// The result file the dipoles join, when one was given.
    pub existing: Option<ExistingResult>,
}

impl Dipoles {
    /// Whether the dipoles join an attribution (a result with peaks).
    pub fn beside_attribution(&self) -> bool {
        self.existing.as_ref().is_some_and(|e| e.peaks_mm.is_some())
    }
}

/// Fit the decoder's patterns. `beside` is the result.h5 the dipoles are
/// to join (read and checked against the decoder before fitting).
pub fn dipole(
    params: &DipoleParams,
    beside: Option<&Path>,
    observer: &dyn JobObserver,
) -> Result<Dipoles, JobError> {
    params.validate()?;
    // Inputs first: every bad input is found before anything is fitted.
    let decoder =
        read_decoder(&params.decoder, params.channels.as_deref()).input("reading the decoder")?;
    check_channels(&decoder.channels, &params.decoder)?;
    let patterns = decoder_patterns(&decoder, &params.decoder, true)?;
    let k = decoder.k;
    let (montage, sources, head) = params.forward.resolve(Some(&decoder.channels), observer)?;
    let Some(head) = head.spheres() else {
        return Err(JobError::input(format!(
            "head {}: the dipole fit works on concentric spheres only; give a head file with model = \"spheres\" (or none) for dipole",
            params.forward.head
        )));
    };
    let existing = beside
        .map(|path| {
            read_existing_result(path, &decoder.channels, k)
                .input("adding the dipoles to the attribution already in --out")
        })
        .transpose()?;
    let options = DipoleOptions {
        pairs: params.pairs,
        noise_sd: params.noise_sd,
        ..DipoleOptions::default()
    };
    let fitter =
        DipoleFitter::new(head, &montage.positions, &options).input("setting up the fit")?;
    let fits = match fitter.fit(&patterns, k) {
        Ok(fits) => fits,
        Err(
            e @ (DipoleError::FlatPattern { .. }
            | DipoleError::NotFinite { .. }
            | DipoleError::Shape { .. }),
        ) => return Err(e).input(params.decoder.display()),
        Err(e) => return Err(e).compute("fitting dipoles"),
    };
    let mut rows = rows(&fits, &sources);
    if let Some(peaks) = existing.as_ref().and_then(|e| e.peaks_mm.as_deref()) {
        set_distance_to_patch_peak(&mut rows, peaks);
    }
    // Names: the attribution's beside, else the decoder's own, else numbers.
    let names = existing
        .as_ref()
        .and_then(|e| e.component_names.clone())
        .or_else(|| decoder.extras.component_names.clone())
        .unwrap_or_else(|| (0..k).map(|c| format!("component {c}")).collect());
    Ok(Dipoles {
        fits,
        rows,
        names,
        pairs: params.pairs,
        noise_sd_estimated: params.noise_sd.is_none(),
        options,
        patterns_source: decoder.source_kind(),
        labels: decoder.channels,
        patterns,
        k,
        existing,
    })
}

/// Write result.h5 (the attribution's with a /dipole group, or a new one
/// with the patterns) and dipoles.csv into `dir`.
pub fn write_dipole_files(dir: &Path, d: &Dipoles) -> Result<(), JobError> {
    let rv: Vec<f64> = d.fits.iter().map(|f| f.residual_variance).collect();
    let noise: Vec<f64> = d.fits.iter().map(|f| f.noise_sd).collect();
    let record = DipoleRecord {
        rows: &d.rows,
        k: d.k,
        residual_variance: &rv,
        noise_sd: &noise,
        noise_sd_estimated: d.noise_sd_estimated,
        model: if d.pairs { "symmetric-pair" } else { "single" },
        margin_mm: d.options.margin * 1e3,
        grid_spacing_mm: d.options.grid_spacing * 1e3,
    };
    let result = dir.join("result.h5");
    match &d.existing {
        Some(e) => write_into_result(&result, e, &record),
        None => write_new_result(
            &result,
            &PatternsRecord {
                labels: &d.labels,
                values: &d.patterns,
                source: d.patterns_source,
                component_names: &d.names,
            },
            &record,
        ),
    }
    .compute("writing result.h5")?;
    write_dipoles_csv(&dir.join("dipoles.csv"), &d.rows, d.pairs, &d.names)
        .compute("writing dipoles.csv")
}

/// Rows of the files for every fitted dipole, with the nearest cortex vertex.
fn rows(fits: &[DipoleFit], sources: &SourceSpace) -> Vec<DipoleRow> {
    let mut out = Vec::new();
    for (component, fit) in fits.iter().enumerate() {
        for (dipole, d) in fit.dipoles.iter().enumerate() {
            let (region, distance) = match nearest_source(&sources.positions, d.position) {
                Some((v, dist)) => {
                    let name = usize::try_from(sources.region.get(v).copied().unwrap_or(-1))
                        .ok()
                        .and_then(|r| sources.region_names.get(r).cloned())
                        .unwrap_or_else(|| "none".to_string());
                    (name, dist * 1e3)
                }
                None => ("none".to_string(), f64::NAN),
            };
            let cov = fit.position_covariance(dipole);
            out.push(DipoleRow {
                component,
                dipole,
                position_mm: d.position.map(|v| v * 1e3),
                moment: d.moment,
                residual_variance: fit.residual_variance,
                region,
                distance_to_cortex_mm: distance,
                distance_to_patch_peak_mm: f64::NAN,
                ci95_radius_mm: fit.ci95_radius * 1e3,
                ci95_semi_axes_mm: fit.ci95_semi_axes.map(|v| v * 1e3),
                covariance_mm2: cov.map(|r| r.map(|v| v * 1e6)),
            });
        }
    }
    out
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // A noise level must be a positive finite number (common practice, no source).
    #[test]
    fn noise_sd_must_be_positive() {
        let mut p = DipoleParams {
            decoder: "d.npz".into(),
            channels: None,
            forward: ForwardParams::default(),
            pairs: false,
            noise_sd: Some(0.0),
            residual_cut: RESIDUAL_CUT,
        };
        let e = p.validate().unwrap_err();
        assert!(e.is_input());
        assert_eq!(e.to_string(), "--noise-sd 0: expected a positive number");
        p.noise_sd = Some(1e-6);
        assert!(p.validate().is_ok());
        assert_eq!(p.input_files().len(), 1);
        // A residual-variance cut is a fraction (common practice, no source).
        for bad in [-0.1, 1.5, f64::NAN] {
            p.residual_cut = bad;
            assert!(p.validate().unwrap_err().is_input(), "{bad}");
        }
        p.residual_cut = 0.3;
        assert!(p.validate().is_ok());
    }
}
