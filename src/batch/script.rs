//! The raw TOML of a job script, parsed strictly (unknown keys are errors),
//! and the translation of byte spans into line:column.

use serde::{Deserialize, Serialize};
use toml::Spanned;

/// Declares [`JobOptions`] and [`RawJob`] from one list of option fields,
/// so that a `[[job]]` table accepts exactly the keys `[defaults]` does.
macro_rules! job_options {
    ($($(#[doc = $doc:literal])* $field:ident: $ty:ty,)*) => {
        /// The options a job may set, each with the meaning of the `patchwise
        /// attribute` flag of the same name (`_` for `-`). `None` means "the
        /// default of `attribute`". Path-valued options are resolved relative to
        /// the job script's folder by [`crate::batch::load_script`].
        #[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
        #[serde(deny_unknown_fields)]
        pub struct JobOptions {
            $($(#[doc = $doc])* pub $field: Option<$ty>,)*
        }

        impl JobOptions {
            /// These options with every unset one taken from `defaults`.
            pub fn or(&self, defaults: &JobOptions) -> JobOptions {
                JobOptions {
                    $($field: self.$field.clone().or_else(|| defaults.$field.clone()),)*
                }
            }
        }

        /// One `[[job]]` table as written: a name, a decoder and the options.
        #[derive(Debug, Clone, Deserialize)]
        #[serde(deny_unknown_fields)]
        pub(crate) struct RawJob {
            pub name: Spanned<String>,
            pub decoder: Spanned<String>,
            $(pub $field: Option<$ty>,)*
        }

        impl RawJob {
            /// The options part (everything but `name` and `decoder`).
            pub fn options(&self) -> JobOptions {
                JobOptions {
                    $($field: self.$field.clone(),)*
                }
            }
        }
    };
}

job_options! {
    /// `--montage`: a standard layout name or an electrodes file.
    montage: String,
    /// `--sources`: `template`, `template-5k` or a surface/table file.
    sources: String,
    /// `--head`: `default` or a head TOML file.
    head: String,
    /// `--regions`: a region label file.
    regions: String,
    /// `--channels`: channel labels of a bare matrix decoder.
    channels: String,
    /// `--dictionary`: a dictionary file (skips the forward model).
    dictionary: String,
    /// `--noise-covariance`: a noise covariance matrix file.
    noise_covariance: String,
    /// `--reference`: `average` or `none`.
    reference: String,
    /// `--joint`: one shared support for all components.
    joint: bool,
    /// `--lambda-rule`: `noise`, `bic`, `aic` or `gcv`.
    lambda_rule: String,
    /// `--noise-sd`: the patterns' noise standard deviation per channel.
    noise_sd: f64,
    /// `--lambda-ratio`: lambda / lambda_max, in (0, 1].
    lambda_ratio: f64,
    /// `--lambda`: an absolute lambda.
    lambda: f64,
    /// `--tol`: relative duality-gap tolerance, in (0, 1).
    tol: f64,
    /// `--resamples`: bootstrap resamples (0 = none).
    resamples: u64,
    /// `--seed`: seed of the resampling.
    seed: u64,
    /// `--forward-perturbations`: perturbed forward models for the resamples.
    forward_perturbations: u64,
    /// `--no-refit`: skip the debiased refit.
    no_refit: bool,
    /// `--radii-mm`: geodesic patch radii in mm.
    radii_mm: Vec<f64>,
    /// `--spacing-mm`: seed spacing in mm.
    spacing_mm: f64,
    /// `--profile`: `gaussian` or `flat`.
    profile: String,
    /// `--atom-orientation`: `normal` or `free`.
    atom_orientation: String,
    /// `--no-report`: no report.html in the job's folder.
    no_report: bool,
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
