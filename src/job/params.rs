//! The parameters of `attribute`, declared once: the command line flattens
//! these structs (clap), job scripts and saved results read and write them
//! (serde, keys = the flags' names with `_` for `-`), and [`validate`]
//! checks them before anything is read or computed. Defaults are the clap
//! declarations themselves ([`Default`] parses an empty command line).
//!
//! [`validate`]: AttributeParams::validate

use std::path::PathBuf;

use serde::{Deserialize, Serialize};

use super::error::{JobError, JobResult};
use super::specs::{
    HeadChoice, LambdaRuleName, MontageSpec, OrientationChoice, ProfileChoice, Reference,
    SourcesSpec,
};
use crate::dictionary::{AtomOrientation, DictionaryParams, Profile};
use crate::limits::{check_count, MAX_PATCH_LENGTH_MM, RESAMPLE_RECORD_BYTES};
use crate::pipeline::{FitOptions, LambdaRule, PatternNoise, ResampleOptions};

/// Most perturbed forward models the resamples may cycle through (each is a
/// lead field of its own).
pub const MAX_FORWARD_PERTURBATIONS: usize = 64;

/// The values clap declares as defaults for `A` (an empty command line).
pub(crate) fn declared_defaults<A: clap::Args + clap::FromArgMatches>() -> A {
    let command = A::augment_args(clap::Command::new("defaults").no_binary_name(true));
    let matches = command
        .try_get_matches_from(Vec::<String>::new())
        .expect("the declared defaults parse (tested)");
    A::from_arg_matches(&matches).expect("the declared defaults convert (tested)")
}

/// Implements `Default` from the clap declarations.
macro_rules! declared_default {
    ($($t:ty),*) => {$(
        impl Default for $t {
            fn default() -> Self {
                $crate::job::params::declared_defaults::<$t>()
            }
        }
    )*};
}
pub(crate) use declared_default;

/// The input files of `attribute` (paths; positions inside are mm).
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct AttributeInputs {
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
    /// Noise covariance (n_ch x n_ch .npy or .csv, decoder channel order) to whiten patterns and dictionary.
    #[arg(long)]
    pub noise_covariance: Option<PathBuf>,
}

/// The forward model: montage, sources, head, regions.
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct ForwardParams {
    /// Montage: 10-20, 10-10, 10-5, or an electrodes file (.tsv/.csv, mm).
    #[arg(long, default_value = "10-5")]
    pub montage: MontageSpec,
    /// Sources: template (about 20k vertices), template-5k, or a GIFTI/PLY/OFF surface or TSV/CSV table (mm).
    #[arg(long, default_value = "template")]
    pub sources: SourcesSpec,
    /// Head: default (four shells), template-bem (the template's own surfaces, boundary elements) or a TOML file.
    #[arg(long, default_value = "default")]
    pub head: HeadChoice,
    /// Region label per source (GIFTI label array or one label a line).
    #[arg(long)]
    pub regions: Option<PathBuf>,
}

/// The patch dictionary's options, in mm on the command line.
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct PatchParams {
    /// Geodesic patch radii in mm, comma-separated.
    #[arg(
        long,
        allow_negative_numbers = true,
        value_delimiter = ',',
        default_value = "5,10,20"
    )]
    pub radii_mm: Vec<f64>,
    /// Seed spacing in mm (farthest-point sampling); default: every source is a seed.
    #[arg(long, allow_negative_numbers = true)]
    pub spacing_mm: Option<f64>,
    /// Patch profile over geodesic distance.
    #[arg(long, value_enum, default_value_t = ProfileChoice::Gaussian)]
    pub profile: ProfileChoice,
    /// Source orientation, as in `leadfield --orientation`: along the normals (one atom per
    /// patch), or free (x, y, z: three atoms per patch; needs a free-orientation lead field).
    /// `--atom-orientation` is accepted too.
    #[arg(
        long = "orientation",
        alias = "atom-orientation",
        value_enum,
        default_value_t = OrientationChoice::Normal
    )]
    #[serde(alias = "orientation")]
    pub atom_orientation: OrientationChoice,
}

/// The fit: reference, λ, tolerance, resampling.
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct FitParams {
    /// Reference of the fit: average (patterns and atoms re-referenced to the common average) or none (both used as given).
    #[arg(long, value_enum, default_value_t = Reference::Average)]
    pub reference: Reference,
    /// Fit all components with one shared support instead of one by one.
    #[arg(long)]
    pub joint: bool,
    /// How lambda is chosen: noise (lambda = q * sigma, q the 95 % quantile of the largest patch
    /// correlation of pure noise, sigma the pattern's noise: from --noise-sd, the decoder's folds or
    /// n_samples, else estimated with the fit), or the minimum of bic, aic or gcv along the path.
    #[arg(long, value_enum, default_value_t = LambdaRuleName::Noise)]
    pub lambda_rule: LambdaRuleName,
    /// Noise standard deviation per channel of the patterns, in their units (after average
    /// referencing); used by the noise rule and the resamples instead of an estimate.
    #[arg(long, allow_negative_numbers = true)]
    pub noise_sd: Option<f64>,
    /// lambda = R * lambda_max (0 < R <= 1) instead of the lambda rule.
    #[arg(long, allow_negative_numbers = true, conflicts_with = "lambda")]
    pub lambda_ratio: Option<f64>,
    /// An absolute lambda (units of the whitened patterns).
    #[arg(long, allow_negative_numbers = true)]
    pub lambda: Option<f64>,
    /// Relative duality-gap tolerance.
    #[arg(long, allow_negative_numbers = true, default_value = "1e-8")]
    pub tol: f64,
    /// Number of bootstrap resamples for the intervals and the selection frequency (the percentage
    /// of resamples in which a region is selected: its share >= 5 %) (0 = none).
    #[arg(long, default_value_t = 100)]
    pub resamples: usize,
    /// Seed of the resampling.
    #[arg(long, default_value_t = 20141)]
    pub seed: u64,
    /// Perturbed forward models the resamples cycle through (electrodes moved by 6 mm per
    /// coordinate, shell conductivities drawn around the head's), so the intervals also carry the
    /// head model's uncertainty; 0 = resample the pattern noise only.
    #[arg(long, default_value_t = 4)]
    pub forward_perturbations: usize,
    /// Skip the debiased least-squares refit.
    #[arg(long)]
    pub no_refit: bool,
    /// For a decoder with a time axis (`times` in its file): width in seconds of the time windows
    /// over which a patch's support is shared (windows end to end from the first sample; 0 = each
    /// time point fitted alone). Default 0.05 s.
    #[arg(long, allow_negative_numbers = true)]
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_window: Option<f64>,
}

/// Width (s) of the time windows of a decoder with a time axis when
/// `--time-window` is not given: 50 ms, a few samples at the sampling rates
/// of event-related decoders and under the 50 ms the time ranges are checked
/// to (docs/time_resolved.md); our choice, no source.
pub const DEFAULT_TIME_WINDOW: f64 = 0.05;

/// Everything `attribute` is asked, apart from where its outputs go.
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct AttributeParams {
    /// Input files.
    #[command(flatten)]
    #[serde(flatten)]
    pub inputs: AttributeInputs,
    /// Forward model.
    #[command(flatten)]
    #[serde(flatten)]
    pub forward: ForwardParams,
    /// Patch dictionary.
    #[command(flatten)]
    #[serde(flatten)]
    pub patches: PatchParams,
    /// The fit.
    #[command(flatten)]
    #[serde(flatten)]
    pub fit: FitParams,
}

declared_default!(
    AttributeInputs,
    ForwardParams,
    PatchParams,
    FitParams,
    AttributeParams
);

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// A number as a user can read it in a message: plain between 1e-4 and
/// 1e6, else in exponent form (`1e300`, not three hundred digits).
fn shown(v: f64) -> String {
    if v == 0.0 || !v.is_finite() || (1e-4..1e6).contains(&v.abs()) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

impl PatchParams {
    /// Validated library parameters (radii in metres).
    pub fn params(&self) -> Result<DictionaryParams, JobError> {
        if let Some(s) = self.spacing_mm {
            if !(s.is_finite() && s > 0.0 && s <= MAX_PATCH_LENGTH_MM) {
                return Err(bad(format!(
                    "--spacing-mm {}: expected a positive length in mm, at most {MAX_PATCH_LENGTH_MM}",
                    shown(s)
                )));
            }
        }
        if let Some(r) = self
            .radii_mm
            .iter()
            .find(|r| !(r.is_finite() && **r > 0.0 && **r <= MAX_PATCH_LENGTH_MM))
        {
            return Err(bad(format!(
                "--radii-mm {}: expected positive lengths in mm, at most {MAX_PATCH_LENGTH_MM}",
                shown(*r)
            )));
        }
        let params = DictionaryParams {
            radii_m: self.radii_mm.iter().map(|r| r * 1e-3).collect(),
            profile: match self.profile {
                ProfileChoice::Gaussian => Profile::Gaussian,
                ProfileChoice::Flat => Profile::Flat,
            },
            orientation: match self.atom_orientation {
                OrientationChoice::Normal => AtomOrientation::Normal,
                OrientationChoice::Free => AtomOrientation::Free,
            },
            ..DictionaryParams::default()
        };
        params.validate().input("dictionary options")?;
        Ok(params)
    }

    /// The options as JSON (stored with the dictionary and hashed for the cache).
    pub fn to_json(&self) -> String {
        serde_json::json!({
            "radii_mm": self.radii_mm,
            "spacing_mm": self.spacing_mm,
            "profile": self.profile.to_string(),
            "orientation": self.atom_orientation.to_string(),
            "average_reference": true,
        })
        .to_string()
    }

    /// The seed spacing in metres.
    pub fn spacing_m(&self) -> Option<f64> {
        self.spacing_mm.map(|s| s * 1e-3)
    }
}

impl FitParams {
    /// The λ rule: a fixed ratio or value when given, else the named rule.
    pub fn lambda(&self) -> Result<LambdaRule, JobError> {
        Ok(match (self.lambda_ratio, self.lambda) {
            (Some(_), Some(_)) => {
                return Err(bad(
                    "both --lambda-ratio and --lambda are set; give one".to_string()
                ))
            }
            (Some(r), _) if !(r.is_finite() && r > 0.0 && r <= 1.0) => {
                return Err(bad(format!(
                    "--lambda-ratio {}: expected 0 < R <= 1",
                    shown(r)
                )))
            }
            (Some(r), _) => LambdaRule::Ratio(r),
            (None, Some(l)) if !(l.is_finite() && l > 0.0) => {
                return Err(bad(format!(
                    "--lambda {}: expected a positive number",
                    shown(l)
                )))
            }
            (None, Some(l)) => LambdaRule::Absolute(l),
            (None, None) => match self.lambda_rule {
                LambdaRuleName::Noise => LambdaRule::Noise,
                LambdaRuleName::Bic => LambdaRule::Bic,
                LambdaRuleName::Aic => LambdaRule::Aic,
                LambdaRuleName::Gcv => LambdaRule::Gcv,
            },
        })
    }

    /// Check every value; the fit's options (the noise is filled in later
    /// from the decoder).
    pub fn fit_options(&self, whitened: bool) -> Result<FitOptions, JobError> {
        let lambda = self.lambda()?;
        if self.forward_perturbations > MAX_FORWARD_PERTURBATIONS {
            return Err(bad(format!(
                "--forward-perturbations {}: expected at most {MAX_FORWARD_PERTURBATIONS} (each is a lead field of its own)",
                self.forward_perturbations
            )));
        }
        if let Some(sd) = self.noise_sd {
            if !(sd.is_finite() && sd > 0.0) {
                return Err(bad(format!(
                    "--noise-sd {}: expected a positive noise standard deviation in the patterns' units",
                    shown(sd)
                )));
            }
        }
        if let Some(w) = self.time_window {
            if !(w.is_finite() && w >= 0.0) {
                return Err(bad(format!(
                    "--time-window {}: expected a width >= 0 in seconds (0 = each time point alone)",
                    shown(w)
                )));
            }
        }
        if !(self.tol.is_finite() && self.tol > 0.0 && self.tol < 1.0) {
            return Err(bad(format!(
                "--tol {}: expected 0 < tol < 1",
                shown(self.tol)
            )));
        }
        check_count("--resamples", self.resamples as u64, RESAMPLE_RECORD_BYTES)
            .input("checking the options")?;
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
            whitened,
            noise: PatternNoise::default(),
            column_blocks: None,
        })
    }
}

impl AttributeParams {
    /// Check every option before anything is read: the fit's values, the
    /// dictionary options (they key the cache, so a NaN can never stand for
    /// the default entry), and that there is something to attribute.
    pub fn validate(&self) -> Result<FitOptions, JobError> {
        let options = self
            .fit
            .fit_options(self.inputs.noise_covariance.is_some())?;
        self.patches.params()?;
        if self.inputs.decoder.is_none() && self.inputs.patterns.is_none() {
            return Err(bad(
                "give --decoder FILE (or --dictionary with --patterns)".to_string()
            ));
        }
        Ok(options)
    }

    /// The input files and folders these parameters name, as (what, path):
    /// for the checks that outputs never replace inputs. Built-in names
    /// (standard montages, the template, the default head) are left out.
    pub fn input_paths(&self) -> Vec<(&'static str, PathBuf)> {
        let forward: Vec<&str> = self.forward.files().iter().map(|(k, _)| *k).collect();
        self.files()
            .into_iter()
            .filter(|(key, path)| !forward.contains(key) || path.is_file())
            .map(|(key, path)| {
                let what = match key {
                    "channels" => "channel list",
                    "noise_covariance" => "noise covariance",
                    other => other,
                };
                (what, path)
            })
            .chain(
                super::bem_head::head_surface_files(&self.forward.head)
                    .into_iter()
                    .filter(|p| p.is_file())
                    .map(|p| ("head surface", p)),
            )
            .collect()
    }

    /// Every option that names a file, as (key, path) for editing (a job
    /// script resolves them against its folder): the decoder or patterns,
    /// channels, dictionary, noise covariance, and the forward model's
    /// files. The one listing of the file-valued options.
    pub fn files_mut(&mut self) -> Vec<(&'static str, &mut PathBuf)> {
        let i = &mut self.inputs;
        let mut out: Vec<(&'static str, &mut PathBuf)> = [
            ("decoder", &mut i.decoder),
            ("patterns", &mut i.patterns),
            ("channels", &mut i.channels),
            ("dictionary", &mut i.dictionary),
            ("noise_covariance", &mut i.noise_covariance),
        ]
        .into_iter()
        .filter_map(|(key, p)| p.as_mut().map(|p| (key, p)))
        .collect();
        out.extend(self.forward.files_mut());
        out
    }

    /// [`Self::files_mut`], read only.
    pub fn files(&self) -> Vec<(&'static str, PathBuf)> {
        owned(self.clone().files_mut())
    }
}

/// A `files_mut` listing as owned paths (the read-only `files`, derived
/// from the one listing).
fn owned(files: Vec<(&'static str, &mut PathBuf)>) -> Vec<(&'static str, PathBuf)> {
    files
        .into_iter()
        .map(|(key, path)| (key, path.clone()))
        .collect()
}

impl ForwardParams {
    /// The options that name existing files (montage, sources, head,
    /// regions), as (what, path).
    pub fn input_files(&self) -> Vec<(&'static str, PathBuf)> {
        let mut named = self.files();
        named.extend(
            super::bem_head::head_surface_files(&self.head)
                .into_iter()
                .map(|p| ("head surface", p)),
        );
        named.retain(|(_, p)| p.is_file());
        named
    }

    /// The options that name files rather than built-ins, as (key, path),
    /// whether the files exist or not.
    pub fn files(&self) -> Vec<(&'static str, PathBuf)> {
        owned(self.clone().files_mut())
    }

    /// [`Self::files`] for editing.
    pub fn files_mut(&mut self) -> Vec<(&'static str, &mut PathBuf)> {
        let mut named = Vec::new();
        if let MontageSpec::File(p) = &mut self.montage {
            named.push(("montage", p));
        }
        if let SourcesSpec::File(p) = &mut self.sources {
            named.push(("sources", p));
        }
        if let HeadChoice::File(p) = &mut self.head {
            named.push(("head", p));
        }
        if let Some(r) = &mut self.regions {
            named.push(("regions", r));
        }
        named
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // The defaults are the command line's: an empty command line parses,
    // and saved parameters read back equal (common practice, no source).
    #[test]
    fn defaults_parse_and_round_trip() {
        let p = AttributeParams::default();
        assert_eq!(p.fit.tol, 1e-8);
        assert_eq!(p.fit.resamples, 100);
        assert_eq!(p.patches.radii_mm, vec![5.0, 10.0, 20.0]);
        assert_eq!(p.forward.montage, MontageSpec::Standard("10-5".into()));
        let json = serde_json::to_string(&p).unwrap();
        let back: AttributeParams = serde_json::from_str(&json).unwrap();
        assert_eq!(back, p);
        // A partial table fills in the rest from the defaults.
        let partial: AttributeParams =
            serde_json::from_str(r#"{"joint": true, "radii_mm": [5.0]}"#).unwrap();
        assert!(partial.fit.joint);
        assert_eq!(partial.patches.radii_mm, vec![5.0]);
        assert_eq!(partial.fit.seed, p.fit.seed);
    }

    #[test]
    fn bad_values_name_their_option() {
        let mut p = AttributeParams::default();
        p.inputs.decoder = Some("d.npz".into());
        p.fit.lambda_ratio = Some(1.5);
        let e = p.validate().unwrap_err();
        assert!(
            e.is_input() && e.to_string().contains("--lambda-ratio 1.5"),
            "{e}"
        );
        p.fit.lambda_ratio = None;
        p.patches.radii_mm = vec![f64::NAN];
        assert!(p.validate().unwrap_err().to_string().contains("--radii-mm"));
    }
}
