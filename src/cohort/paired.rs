//! Paired comparison of two decoders fitted on the same subjects.

use super::compare::{check_subjects, column, CompareParams};
use super::error::CohortError;
use super::stats::{bootstrap_mean_interval, sign_flip_max_test, SignFlipTest};
use super::SubjectResult;

/// The paired comparison of one component.
#[derive(Debug, Clone, PartialEq)]
pub struct PairedComponent {
    /// Component name (the first A result's).
    pub name: String,
    /// Share differences A − B, n_pairs × n_regions, row-major.
    pub difference: Vec<f64>,
    /// Per region, the mean paired difference.
    pub mean_difference: Vec<f64>,
    /// Bootstrap interval (over pairs) of the mean difference.
    pub mean_low: Vec<f64>,
    /// Upper end.
    pub mean_high: Vec<f64>,
    /// Sign-flip test of the differences (null: difference = 0, two-sided;
    /// exchanging A and B within a subject flips its sign).
    pub test: SignFlipTest,
}

/// The paired comparison of all components.
#[derive(Debug, Clone, PartialEq)]
pub struct PairedComparison {
    /// Pair names (subject names).
    pub pairs: Vec<String>,
    /// Region names.
    pub region_names: Vec<String>,
    /// One entry per component.
    pub components: Vec<PairedComponent>,
    /// Warnings (component names that disagree).
    pub warnings: Vec<String>,
}

/// Compare decoder A with decoder B: `a[i]` and `b[i]` belong to subject
/// `names[i]`. Both lists must agree on components and regions; the source
/// maps are not used here (pass empty maps with `n_template = 0` if
/// convenient).
pub fn compare_paired(
    names: &[String],
    a: &[SubjectResult],
    b: &[SubjectResult],
    params: &CompareParams,
) -> Result<PairedComparison, CohortError> {
    if a.len() != b.len() || a.len() != names.len() {
        return Err(CohortError::Pairs(format!(
            "{} A results, {} B results and {} names; each subject needs one of each",
            a.len(),
            b.len(),
            names.len()
        )));
    }
    let all: Vec<SubjectResult> = a
        .iter()
        .chain(b)
        .map(|s| SubjectResult {
            source_map: Vec::new(),
            ..s.clone()
        })
        .collect();
    let warnings = check_subjects(&all, 0)?;
    let n = a.len();
    let (k, n_r) = (a[0].k(), a[0].region_names.len());
    let mut components = Vec::with_capacity(k);
    for c in 0..k {
        let difference: Vec<f64> = a
            .iter()
            .zip(b)
            .flat_map(|(x, y)| {
                column(&x.share, k, c)
                    .into_iter()
                    .zip(column(&y.share, k, c))
                    .map(|(p, q)| p - q)
                    .collect::<Vec<_>>()
            })
            .collect();
        let (mean_difference, mean_low, mean_high) = bootstrap_mean_interval(
            &difference,
            n,
            n_r,
            params.bootstrap_resamples,
            params.level,
            params.seed ^ 0xA5A5 ^ c as u64,
        );
        let test = sign_flip_max_test(
            &difference,
            n,
            n_r,
            params.sign_flips,
            params.seed.wrapping_add(101 + c as u64),
        );
        components.push(PairedComponent {
            name: a[0].component_names[c].clone(),
            difference,
            mean_difference,
            mean_low,
            mean_high,
            test,
        });
    }
    Ok(PairedComparison {
        pairs: names.to_vec(),
        region_names: a[0].region_names.clone(),
        components,
        warnings,
    })
}
