//! The raw TOML of a job script, parsed strictly (unknown keys are errors),
//! and the translation of byte spans into line:column.

use serde::{Deserialize, Serialize};
use toml::Spanned;

/// The options a job may set, each with the meaning of the `patchwise
/// attribute` flag of the same name (`_` for `-`). `None` means "the
/// default of `attribute`". Path-valued options are resolved relative to
/// the job script's folder by [`crate::batch::load_script`].
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JobOptions {
    /// `--montage`: a standard layout name or an electrodes file.
    pub montage: Option<String>,
    /// `--sources`: `template`, `template-5k` or a surface/table file.
    pub sources: Option<String>,
    /// `--head`: `default` or a head TOML file.
    pub head: Option<String>,
    /// `--regions`: a region label file.
    pub regions: Option<String>,
    /// `--channels`: channel labels of a bare matrix decoder.
    pub channels: Option<String>,
    /// `--dictionary`: a dictionary file (skips the forward model).
    pub dictionary: Option<String>,
    /// `--noise-covariance`: a noise covariance matrix file.
    pub noise_covariance: Option<String>,
    /// `--reference`: `average` or `none`.
    pub reference: Option<String>,
    /// `--joint`: one shared support for all components.
    pub joint: Option<bool>,
    /// `--lambda-ratio`: lambda / lambda_max, in (0, 1].
    pub lambda_ratio: Option<f64>,
    /// `--lambda`: an absolute lambda.
    pub lambda: Option<f64>,
    /// `--tol`: relative duality-gap tolerance, in (0, 1).
    pub tol: Option<f64>,
    /// `--resamples`: bootstrap resamples (0 = none).
    pub resamples: Option<u64>,
    /// `--seed`: seed of the resampling.
    pub seed: Option<u64>,
    /// `--no-refit`: skip the debiased refit.
    pub no_refit: Option<bool>,
    /// `--radii-mm`: geodesic patch radii in mm.
    pub radii_mm: Option<Vec<f64>>,
    /// `--spacing-mm`: seed spacing in mm.
    pub spacing_mm: Option<f64>,
    /// `--profile`: `gaussian` or `flat`.
    pub profile: Option<String>,
    /// `--atom-orientation`: `normal` or `free`.
    pub atom_orientation: Option<String>,
    /// `--no-report`: no report.html in the job's folder.
    pub no_report: Option<bool>,
}

impl JobOptions {
    /// These options with every unset one taken from `defaults`.
    pub fn or(&self, defaults: &JobOptions) -> JobOptions {
        macro_rules! pick {
            ($($f:ident),*) => { JobOptions { $($f: self.$f.clone().or_else(|| defaults.$f.clone()),)* } };
        }
        pick!(
            montage,
            sources,
            head,
            regions,
            channels,
            dictionary,
            noise_covariance,
            reference,
            joint,
            lambda_ratio,
            lambda,
            tol,
            resamples,
            seed,
            no_refit,
            radii_mm,
            spacing_mm,
            profile,
            atom_orientation,
            no_report
        )
    }
}

/// One `[[job]]` table as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawJob {
    pub name: Spanned<String>,
    pub decoder: Spanned<String>,
    pub montage: Option<String>,
    pub sources: Option<String>,
    pub head: Option<String>,
    pub regions: Option<String>,
    pub channels: Option<String>,
    pub dictionary: Option<String>,
    pub noise_covariance: Option<String>,
    pub reference: Option<String>,
    pub joint: Option<bool>,
    pub lambda_ratio: Option<f64>,
    pub lambda: Option<f64>,
    pub tol: Option<f64>,
    pub resamples: Option<u64>,
    pub seed: Option<u64>,
    pub no_refit: Option<bool>,
    pub radii_mm: Option<Vec<f64>>,
    pub spacing_mm: Option<f64>,
    pub profile: Option<String>,
    pub atom_orientation: Option<String>,
    pub no_report: Option<bool>,
}

impl RawJob {
    /// The options part (everything but `name` and `decoder`).
    pub fn options(&self) -> JobOptions {
        JobOptions {
            montage: self.montage.clone(),
            sources: self.sources.clone(),
            head: self.head.clone(),
            regions: self.regions.clone(),
            channels: self.channels.clone(),
            dictionary: self.dictionary.clone(),
            noise_covariance: self.noise_covariance.clone(),
            reference: self.reference.clone(),
            joint: self.joint,
            lambda_ratio: self.lambda_ratio,
            lambda: self.lambda,
            tol: self.tol,
            resamples: self.resamples,
            seed: self.seed,
            no_refit: self.no_refit,
            radii_mm: self.radii_mm.clone(),
            spacing_mm: self.spacing_mm,
            profile: self.profile.clone(),
            atom_orientation: self.atom_orientation.clone(),
            no_report: self.no_report,
        }
    }
}

/// The `[compare]` table as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawCompare {
    pub out: String,
    pub pair: Option<Vec<String>>,
}

/// The whole script as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawScript {
    pub defaults: Option<Spanned<JobOptions>>,
    #[serde(default)]
    pub job: Vec<Spanned<RawJob>>,
    pub compare: Option<Spanned<RawCompare>>,
}

/// A lenient reading used only to say which job an error's line is in.
#[derive(Debug, Deserialize)]
pub(crate) struct LenientScript {
    #[serde(default)]
    pub job: Vec<Spanned<toml::Table>>,
}

/// 1-based line and column (in characters) of byte `offset` in `text`.
pub(crate) fn line_column(text: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(text.len());
    let before = text.get(..offset).unwrap_or(text);
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before[line_start..].chars().count() + 1;
    (line, column)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn line_column_counts_from_one() {
        let text = "a = 1\nbé = 2\n";
        assert_eq!(line_column(text, 0), (1, 1));
        assert_eq!(line_column(text, 6), (2, 1));
        // "bé" is three bytes; the column counts characters.
        assert_eq!(line_column(text, 9), (2, 3));
    }
}
