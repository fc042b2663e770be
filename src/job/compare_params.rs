//! The parameters of `compare`, declared once: the command line flattens
//! [`CompareParams`] (clap), the batch's `[compare]` table starts from its
//! defaults (the clap declarations) and serde reads and writes it (keys =
//! the flags' names with `_` for `-`). [`CompareParams::validate`] checks
//! every value against the result folders before anything is read.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::error::{JobError, JobResult};
use super::params::declared_default;
use crate::cohort;
use crate::geometry::TemplateResolution;
use crate::limits::{check_count, MAX_PATCH_LENGTH_MM, RESAMPLE_RECORD_BYTES};

/// The largest `--smoothing-cutoff`, in Gaussian widths.
pub const MAX_SMOOTHING_CUTOFF: f64 = 10.0;

/// Everything `compare` is asked, apart from the result folders and where
/// its outputs go.
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct CompareParams {
    /// Paired comparison of decoders A and B: the folders must be named
    /// `<subject>-A` and `<subject>-B` (or with `_` or `.` for `-`), or be
    /// `<subject>/A` and `<subject>/B`; the group statistics use the A results.
    #[arg(long, num_args = 2, value_names = ["A", "B"])]
    pub pair: Option<Vec<String>>,
    /// How a result on another cortex reaches the template:
    /// `SUBJECT_DIR=INDEX_FILE` (.npy/.csv/.txt, one template vertex per
    /// subject vertex) or `SUBJECT_DIR=SUBJECT_SPHERE.gii,TEMPLATE_SPHERE.gii`
    /// (nearest neighbour between registered spheres). Repeatable.
    #[arg(long = "map", value_name = "SUBJECT_DIR=MAPFILE")]
    pub map: Vec<String>,
    /// The template: `template` or `template-5k`; default: the source space
    /// of the first result without a --map.
    #[arg(long)]
    pub template: Option<String>,
    /// Geodesic Gaussian width σ (mm) of the smoothing before the cosine.
    #[arg(long, allow_negative_numbers = true, default_value_t = 10.0)]
    pub smoothing_mm: f64,
    /// Cut the smoothing kernel at this many σ.
    #[arg(long, allow_negative_numbers = true, default_value_t = 3.0)]
    pub smoothing_cutoff: f64,
    /// Bootstrap resamples of the subjects for the group mean's interval.
    #[arg(long, default_value_t = 2000)]
    pub bootstrap: usize,
    /// Random sign flips of the group test (all 2^n when 2^n is not larger).
    #[arg(long, default_value_t = 10_000)]
    pub sign_flips: usize,
    /// Family-wise error level for the table of surviving regions.
    #[arg(long, allow_negative_numbers = true, default_value_t = 0.05)]
    pub alpha: f64,
    /// Seed of the bootstrap and the sign flips.
    #[arg(long, default_value_t = 2002)]
    pub seed: u64,
    /// Entropic transport ε relative to the mean centroid distance.
    #[arg(long, allow_negative_numbers = true, default_value_t = 0.05)]
    pub transport_epsilon: f64,
    /// Iteration limit of each transport (Sinkhorn) solve; a warning says
    /// how many pairs reach it and what that can cost.
    #[arg(long, default_value_t = cohort::TRANSPORT_ITERATIONS)]
    pub transport_iterations: usize,
    /// Skip the transport distance.
    #[arg(long)]
    pub no_transport: bool,
}

declared_default!(CompareParams);

/// The largest --transport-iterations: each iteration of a solve costs
/// about 2 × regions² multiply-adds per pair, so a million already takes
/// minutes on the 4950 pairs of 100 subjects.
const MAX_TRANSPORT_ITERATIONS: usize = 1_000_000;

/// How one subject reaches the template.
#[derive(Debug, Clone, PartialEq)]
pub enum MapSpec {
    /// One template vertex per subject vertex, from a file.
    Indices(PathBuf),
    /// Nearest neighbour between the subject's and the template's
    /// registered spheres.
    Spheres(PathBuf, PathBuf),
}

/// Validated parameters: the statistics' parameters, the parsed maps (keyed
/// by the result folder as given, without `./`), the template, the pair's
/// labels and the warnings about the values.
#[derive(Debug, Clone, PartialEq)]
pub struct CheckedCompare {
    /// The parameters of the statistics.
    pub stats: cohort::CompareParams,
    /// The --map of each mapped result folder.
    pub maps: BTreeMap<PathBuf, MapSpec>,
    /// The named template, if any.
    pub template: Option<TemplateResolution>,
    /// The labels A and B of a paired comparison.
    pub pair: Option<(String, String)>,
    /// Values that are legal but cannot give a result (one line each).
    pub warnings: Vec<String>,
}

impl CheckedCompare {
    /// The files the maps name, as (what, path): inputs that outputs may
    /// never replace.
    pub fn map_files(&self) -> Vec<(&'static str, &Path)> {
        let mut out = Vec::new();
        for spec in self.maps.values() {
            match spec {
                MapSpec::Indices(file) => out.push(("--map file", file.as_path())),
                MapSpec::Spheres(subject, template) => {
                    out.push(("--map sphere", subject.as_path()));
                    out.push(("--map sphere", template.as_path()));
                }
            }
        }
        out
    }
}

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// A folder path without a trailing separator or `./`, for matching --map.
pub fn normalise(p: &Path) -> PathBuf {
    p.components()
        .filter(|c| !matches!(c, std::path::Component::CurDir))
        .collect()
}

fn parse_maps(maps: &[String]) -> Result<BTreeMap<PathBuf, MapSpec>, JobError> {
    let mut out = BTreeMap::new();
    for m in maps {
        let (dir, file) = m.split_once('=').ok_or_else(|| {
            bad(format!(
                "--map {m:?}: expected SUBJECT_DIR=MAPFILE or SUBJECT_DIR=SUBJECT_SPHERE.gii,TEMPLATE_SPHERE.gii"
            ))
        })?;
        let spec = match file.split_once(',') {
            Some((a, b)) => MapSpec::Spheres(PathBuf::from(a), PathBuf::from(b)),
            None => MapSpec::Indices(PathBuf::from(file)),
        };
        out.insert(normalise(Path::new(dir)), spec);
    }
    Ok(out)
}

impl CompareParams {
    /// Check the numeric options (they key the smoothing kernel's cache
    /// entry, so they are checked before any entry is looked up).
    fn check_numbers(&self) -> Result<(), JobError> {
        check_count("--bootstrap", self.bootstrap as u64, RESAMPLE_RECORD_BYTES)
            .input("checking the options")?;
        check_count(
            "--sign-flips",
            self.sign_flips as u64,
            RESAMPLE_RECORD_BYTES,
        )
        .input("checking the options")?;
        if self.transport_iterations == 0 || self.transport_iterations > MAX_TRANSPORT_ITERATIONS {
            return Err(bad(format!(
                "--transport-iterations {}: expected 1 to {MAX_TRANSPORT_ITERATIONS}",
                self.transport_iterations
            )));
        }
        for (name, value) in [
            ("--smoothing-mm", self.smoothing_mm),
            ("--smoothing-cutoff", self.smoothing_cutoff),
            ("--transport-epsilon", self.transport_epsilon),
        ] {
            if !(value.is_finite() && value > 0.0) {
                return Err(bad(format!("{name} {value}: expected a positive number")));
            }
        }
        // A width beyond any head makes every map one constant; a cut-off far
        // beyond the Gaussian's reach (its weight at 10 σ is e^-50) makes the
        // kernel dense, n_sources² entries, without changing a number.
        if self.smoothing_mm > MAX_PATCH_LENGTH_MM {
            return Err(bad(format!(
                "--smoothing-mm {:e}: expected at most {MAX_PATCH_LENGTH_MM} mm (the largest head radius)",
                self.smoothing_mm
            )));
        }
        if self.smoothing_cutoff > MAX_SMOOTHING_CUTOFF {
            return Err(bad(format!(
                "--smoothing-cutoff {:e}: expected at most {MAX_SMOOTHING_CUTOFF} (widths; the Gaussian's weight there is e^-50)",
                self.smoothing_cutoff
            )));
        }
        if !(self.alpha > 0.0 && self.alpha < 1.0) {
            return Err(bad(format!("--alpha {}: must lie in (0, 1)", self.alpha)));
        }
        if self.sign_flips == 0 {
            return Err(bad(
                "--sign-flips 0: expected at least 1 (the group test draws this many sign vectors; 10000 by default)"
                    .to_string(),
            ));
        }
        Ok(())
    }

    /// Check every value for a comparison of `results` (the result folders)
    /// before anything is read: at least two folders, the numbers, the
    /// --map values (each naming one of the folders), the template's name
    /// and the pair's labels.
    pub fn validate(&self, results: &[PathBuf]) -> Result<CheckedCompare, JobError> {
        if results.len() < 2 {
            return Err(bad(format!(
                "compare needs at least 2 result folders, got {}",
                results.len()
            )));
        }
        self.check_numbers()?;
        let mut warnings = Vec::new();
        // Random flips give p >= 1 / (flips + 1): too few and nothing can pass.
        let exact = results.len() < 31 && (1usize << results.len()) <= self.sign_flips;
        if !exact && 1.0 / (self.sign_flips as f64 + 1.0) >= self.alpha {
            warnings.push(format!(
                "--sign-flips {}: the smallest p-value is 1/{} = {:.3}, not below --alpha {}; no region can survive the correction",
                self.sign_flips,
                self.sign_flips + 1,
                1.0 / (self.sign_flips as f64 + 1.0),
                self.alpha
            ));
        }
        let maps = parse_maps(&self.map)?;
        for dir in maps.keys() {
            if !results.iter().any(|r| normalise(r) == *dir) {
                return Err(bad(format!(
                    "--map {}: not one of the result folders given",
                    dir.display()
                )));
            }
        }
        let template = match &self.template {
            Some(name) => Some(TemplateResolution::from_name(name).ok_or_else(|| {
                bad(format!(
                    "--template {name:?}: expected template or template-5k"
                ))
            })?),
            None => None,
        };
        let pair = match self.pair.as_deref() {
            None => None,
            Some([a, b]) => Some((a.clone(), b.clone())),
            Some(other) => {
                return Err(bad(format!(
                    "--pair: expected two labels A B, got {}",
                    other.len()
                )))
            }
        };
        let stats = cohort::CompareParams {
            bootstrap_resamples: self.bootstrap,
            level: 0.95,
            sign_flips: self.sign_flips,
            seed: self.seed,
            alpha: self.alpha,
            transport_epsilon_relative: (!self.no_transport).then_some(self.transport_epsilon),
            transport_iterations: self.transport_iterations,
        };
        // The same folder twice (under any spelling) would count one subject twice.
        let resolved: Vec<PathBuf> = results
            .iter()
            .map(|r| crate::io::staging::resolved(r))
            .collect();
        for (i, a) in resolved.iter().enumerate() {
            if let Some(j) = resolved[..i].iter().position(|b| b == a) {
                return Err(bad(format!(
                    "{} and {} are the same result folder ({}); give each subject once",
                    results[j].display(),
                    results[i].display(),
                    a.display()
                )));
            }
        }
        Ok(CheckedCompare {
            stats,
            maps,
            template,
            pair,
            warnings,
        })
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // The declared defaults are the statistics' own defaults, and saved
    // parameters read back equal (common practice, no source).
    #[test]
    fn defaults_match_the_statistics_and_round_trip() {
        let p = CompareParams::default();
        let results = vec![PathBuf::from("a"), PathBuf::from("b")];
        let checked = p.validate(&results).unwrap();
        assert_eq!(checked.stats, cohort::CompareParams::default());
        assert!(checked.warnings.is_empty());
        let back: CompareParams =
            serde_json::from_str(&serde_json::to_string(&p).unwrap()).unwrap();
        assert_eq!(back, p);
        let partial: CompareParams = serde_json::from_str(r#"{"pair": ["A", "B"]}"#).unwrap();
        assert_eq!(partial.bootstrap, p.bootstrap);
        let checked = partial.validate(&results).unwrap();
        assert_eq!(checked.pair, Some(("A".to_string(), "B".to_string())));
    }

    #[test]
    fn bad_values_name_their_option() {
        let results = vec![PathBuf::from("a"), PathBuf::from("./b")];
        let mut p = CompareParams {
            alpha: 1.5,
            ..CompareParams::default()
        };
        let e = p.validate(&results).unwrap_err();
        assert!(e.is_input() && e.to_string().contains("--alpha 1.5"), "{e}");
        p.alpha = 0.05;
        p.map = vec!["c=map.npy".to_string()];
        let e = p.validate(&results).unwrap_err();
        assert!(e.to_string().contains("--map c"), "{e}");
        p.map = vec!["b=s.gii,t.gii".to_string()];
        assert_eq!(p.validate(&results).unwrap().map_files().len(), 2);
        assert!(p.validate(&results[..1]).is_err());
    }
}
