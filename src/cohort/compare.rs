//! The cohort comparison proper: share matrix, consistency, group mean with
//! a bootstrap interval, the sign-flip group test, and map similarities.

use rayon::prelude::*;

use super::error::CohortError;
use super::similarity::{cosine, SmoothingKernel};
use super::stats::{bootstrap_mean_interval, sign_flip_max_test_greater, SignFlipTest};

/// The group test asks whether a region's share exceeds this (one-sided
/// sign-flip test on share − δ): a share is a signed projection, and a
/// consistently tiny or negative share is not something the cohort relies on.
/// One per cent of the fitted pattern is our convention (no source).
pub const MIN_GROUP_SHARE: f64 = 0.01;
use super::transport::{first_non_finite, region_mass, sinkhorn, SinkhornParams, TransportCosts};
use crate::attribution::lead_frequencies;

/// One subject's attribution, with its source map on the template.
#[derive(Debug, Clone, PartialEq)]
pub struct SubjectResult {
    /// The subject's name (its result folder).
    pub name: String,
    /// Component names (k).
    pub component_names: Vec<String>,
    /// Region names (n_regions), the template's order.
    pub region_names: Vec<String>,
    /// Region shares, n_regions × k, row-major.
    pub share: Vec<f64>,
    /// Lower ends of the share intervals (n_regions × k), if resampled.
    pub share_low: Option<Vec<f64>>,
    /// Upper ends of the share intervals (n_regions × k), if resampled.
    pub share_high: Option<Vec<f64>>,
    /// Selection frequencies (n_regions × k), if resampled.
    pub selection_frequency: Option<Vec<f64>>,
    /// Source map on the template (A·m per template vertex), n_template × k.
    pub source_map: Vec<f64>,
    /// Area-weighted mean gain of the decoder's filters per region
    /// (n_regions × k, `/filter_gain/region_mean`), when the decoder was
    /// given as weights and the lead field was known.
    pub filter_gain: Option<Vec<f64>>,
}

impl SubjectResult {
    /// Number of components.
    pub fn k(&self) -> usize {
        self.component_names.len()
    }
}

/// Parameters of [`compare`].
#[derive(Debug, Clone, PartialEq)]
pub struct CompareParams {
    /// Bootstrap resamples of the subjects for the group mean's interval.
    pub bootstrap_resamples: usize,
    /// Coverage of the bootstrap interval (0.95).
    pub level: f64,
    /// Random sign flips of the group test (all 2^n when 2^n ≤ this).
    pub sign_flips: usize,
    /// Seed of the bootstrap and the sign flips.
    pub seed: u64,
    /// Family-wise error level used to pick the regions that survive.
    pub alpha: f64,
    /// Entropic transport between region masses: ε relative to the mean
    /// off-diagonal centroid cost, or `None` to skip transport.
    pub transport_epsilon_relative: Option<f64>,
    /// Iteration limit of each Sinkhorn solve.
    pub transport_iterations: usize,
}

/// The default iteration limit of the transport distance's Sinkhorn solves
/// (measured on the template: docs/cohort.md).
pub const TRANSPORT_ITERATIONS: usize = 2000;

/// A Sinkhorn solve counts as stopped short when its L1 marginal error is
/// still above this at the iteration limit.
pub const TRANSPORT_MARGINAL_WARNING: f64 = 1e-4;

impl Default for CompareParams {
    fn default() -> Self {
        CompareParams {
            bootstrap_resamples: 2000,
            level: 0.95,
            sign_flips: 10_000,
            seed: 2002,
            alpha: 0.05,
            transport_epsilon_relative: Some(0.05),
            transport_iterations: TRANSPORT_ITERATIONS,
        }
    }
}

/// The comparison of one component across subjects.
#[derive(Debug, Clone, PartialEq)]
pub struct ComponentComparison {
    /// Component name (the first subject's).
    pub name: String,
    /// Shares, n_subjects × n_regions, row-major.
    pub share: Vec<f64>,
    /// Per region, the fraction of subjects (with intervals) whose interval
    /// [share_low, share_high] excludes zero; NaN when no subject has one.
    pub consistency: Vec<f64>,
    /// Per region, the mean selection frequency over subjects that have one
    /// (NaN when none does).
    pub mean_selection_frequency: Vec<f64>,
    /// Per region, the fraction of subjects whose largest share is in the
    /// region (subjects without a positive share count for none).
    pub lead_fraction: Vec<f64>,
    /// Per region, the group mean share.
    pub mean_share: Vec<f64>,
    /// Per region, the bootstrap interval of the group mean.
    pub mean_low: Vec<f64>,
    /// Upper end of the bootstrap interval.
    pub mean_high: Vec<f64>,
    /// The sign-flip group test (one-sided: share > MIN_GROUP_SHARE).
    pub test: SignFlipTest,
    /// Cosine similarity of the smoothed |source maps|, n_subjects ×
    /// n_subjects (1 on the diagonal, NaN for an empty map).
    pub cosine: Vec<f64>,
    /// Entropic transport cost (m) between region masses, n_subjects ×
    /// n_subjects (NaN when skipped).
    pub transport_m: Vec<f64>,
    /// The filters' region gain of each subject relative to its largest
    /// region (so weights of any scale compare), n_subjects × n_regions;
    /// `None` unless every subject has a gain map.
    pub relative_filter_gain: Option<Vec<f64>>,
    /// Per region, the mean over subjects of `relative_filter_gain`.
    pub mean_relative_filter_gain: Option<Vec<f64>>,
    /// Per subject, the Spearman rank correlation of its region gain with
    /// its region shares (NaN where undefined, e.g. a constant side).
    pub filter_gain_rank_correlation: Option<Vec<f64>>,
}

/// Per component, the relative region gain (n_s × n_r), its mean over
/// subjects (n_r) and each subject's rank correlation of gain with share;
/// `None` unless every subject has a gain map.
#[allow(clippy::type_complexity)]
fn gain_comparison(
    subjects: &[SubjectResult],
    c: usize,
    n_r: usize,
) -> Option<(Vec<f64>, Vec<f64>, Vec<f64>)> {
    let k = subjects[0].k();
    let n_s = subjects.len();
    let mut relative = Vec::with_capacity(n_s * n_r);
    let mut rho = Vec::with_capacity(n_s);
    for s in subjects {
        let gain = column(s.filter_gain.as_ref()?, k, c);
        let largest = gain
            .iter()
            .filter(|g| g.is_finite())
            .fold(0.0f64, |m, &g| m.max(g));
        relative.extend(
            gain.iter()
                .map(|&g| if largest > 0.0 { g / largest } else { f64::NAN }),
        );
        rho.push(crate::attribution::spearman(&gain, &column(&s.share, k, c)).unwrap_or(f64::NAN));
    }
    let mean = (0..n_r)
        .map(|r| (0..n_s).map(|s| relative[s * n_r + r]).sum::<f64>() / n_s as f64)
        .collect();
    Some((relative, mean, rho))
}

/// The comparison of all components.
#[derive(Debug, Clone, PartialEq)]
pub struct Comparison {
    /// Subject names, input order.
    pub subjects: Vec<String>,
    /// Region names.
    pub region_names: Vec<String>,
    /// One entry per component.
    pub components: Vec<ComponentComparison>,
    /// Absolute transport ε (m), NaN when transport was skipped.
    pub transport_epsilon_m: f64,
    /// Things the user should know (component names that disagree, ...).
    pub warnings: Vec<String>,
}

/// The warning for the pairs of component `c` whose Sinkhorn solve
/// stopped at the limit with its marginals still off by more than
/// [`TRANSPORT_MARGINAL_WARNING`], or `None`. It gives the count, the
/// limit, the largest marginal error and what that error can cost: an L1
/// error e of the unit mass leaves at most e of the mass unplaced, which
/// moves ⟨P, C⟩ by at most e × the largest centroid cost.
fn transport_warning(
    c: usize,
    results: &[(f64, f64)],
    sp: &SinkhornParams,
    cost_m: &[f64],
) -> Option<String> {
    let short: Vec<f64> = results
        .iter()
        .map(|r| r.1)
        .filter(|e| *e > TRANSPORT_MARGINAL_WARNING)
        .collect();
    if short.is_empty() {
        return None;
    }
    let worst = short.iter().fold(0.0f64, |a, &b| a.max(b));
    let largest_cost = cost_m
        .iter()
        .filter(|x| x.is_finite())
        .fold(0.0f64, |a, &b| a.max(b));
    Some(format!(
        "component {c}: the transport distance (Sinkhorn) reached its limit of {} iterations for {} of {} pairs with the marginals still off by more than {:e} (largest L1 error {worst:.1e} of the unit mass), so those distances may be off by up to {:.2} mm (the error times the largest centroid distance, {:.0} mm); raise --transport-iterations, or --transport-epsilon for a smoother, faster plan",
        sp.max_iterations,
        short.len(),
        results.len(),
        TRANSPORT_MARGINAL_WARNING,
        worst * largest_cost * 1e3,
        largest_cost * 1e3
    ))
}

/// Check the subjects agree on components and regions and that every array
/// has its shape; returns warnings for component names that differ.
pub(crate) fn check_subjects(
    subjects: &[SubjectResult],
    n_template: usize,
) -> Result<Vec<String>, CohortError> {
    if subjects.len() < 2 {
        return Err(CohortError::TooFewSubjects {
            needed: 2,
            found: subjects.len(),
        });
    }
    let first = &subjects[0];
    let (k, n_r) = (first.k(), first.region_names.len());
    let mut warnings = Vec::new();
    for s in subjects {
        if s.k() != k {
            return Err(CohortError::Components {
                subject: s.name.clone(),
                found: s.k(),
                reference: first.name.clone(),
                expected: k,
            });
        }
        if s.region_names != first.region_names {
            let detail = if s.region_names.len() != n_r {
                format!("{} regions, expected {n_r}", s.region_names.len())
            } else {
                let r = (0..n_r)
                    .find(|&r| s.region_names[r] != first.region_names[r])
                    .unwrap_or(0);
                format!(
                    "region {r} is {:?}, expected {:?}",
                    s.region_names[r], first.region_names[r]
                )
            };
            return Err(CohortError::Regions {
                subject: s.name.clone(),
                reference: first.name.clone(),
                detail,
            });
        }
        for (c, (a, b)) in s
            .component_names
            .iter()
            .zip(&first.component_names)
            .enumerate()
        {
            if a != b {
                warnings.push(format!(
                    "{}: component {c} is named {a:?}, but {:?} in {}; matched by index",
                    s.name, b, first.name
                ));
            }
        }
        let mut arrays: Vec<(&str, &[f64], usize)> = vec![
            ("share", &s.share, n_r * k),
            ("source_map", &s.source_map, n_template * k),
        ];
        for (name, a) in [
            ("share_low", &s.share_low),
            ("share_high", &s.share_high),
            ("selection_frequency", &s.selection_frequency),
            ("filter_gain", &s.filter_gain),
        ] {
            if let Some(a) = a {
                arrays.push((name, a, n_r * k));
            }
        }
        for (field, values, expected) in arrays {
            if values.len() != expected {
                return Err(CohortError::Shape {
                    subject: s.name.clone(),
                    field: field.to_string(),
                    found: values.len(),
                    expected,
                });
            }
        }
        for (field, values) in [("share", &s.share), ("source_map", &s.source_map)] {
            if let Some(index) = first_non_finite(values) {
                return Err(CohortError::NotFinite {
                    subject: s.name.clone(),
                    field: field.to_string(),
                    index,
                });
            }
        }
    }
    Ok(warnings)
}

/// Column `c` of an n × k row-major matrix.
pub(crate) fn column(values: &[f64], k: usize, c: usize) -> Vec<f64> {
    values.iter().skip(c).step_by(k).copied().collect()
}

/// Per region, consistency and mean selection frequency of component `c`.
fn consistency(subjects: &[SubjectResult], c: usize, n_r: usize) -> (Vec<f64>, Vec<f64>) {
    let k = subjects[0].k();
    let mut excl = vec![0usize; n_r];
    let mut with_interval = 0usize;
    let mut freq = vec![0.0; n_r];
    let mut with_freq = 0usize;
    for s in subjects {
        if let (Some(lo), Some(hi)) = (&s.share_low, &s.share_high) {
            with_interval += 1;
            for r in 0..n_r {
                let (l, h) = (lo[r * k + c], hi[r * k + c]);
                excl[r] += usize::from(l > 0.0 || h < 0.0);
            }
        }
        if let Some(f) = &s.selection_frequency {
            with_freq += 1;
            for r in 0..n_r {
                freq[r] += f[r * k + c];
            }
        }
    }
    let cons = excl
        .iter()
        .map(|&e| {
            if with_interval > 0 {
                e as f64 / with_interval as f64
            } else {
                f64::NAN
            }
        })
        .collect();
    let mean_freq = freq
        .iter()
        .map(|&f| {
            if with_freq > 0 {
                f / with_freq as f64
            } else {
                f64::NAN
            }
        })
        .collect();
    (cons, mean_freq)
}

/// All (i, j) with i < j, in row order.
fn pairs(n: usize) -> Vec<(usize, usize)> {
    (0..n)
        .flat_map(|i| (i + 1..n).map(move |j| (i, j)))
        .collect()
}

/// Fill a symmetric matrix from pair values with `diagonal` on the diagonal.
fn symmetric(n: usize, pair_list: &[(usize, usize)], values: &[f64], diagonal: f64) -> Vec<f64> {
    let mut m = vec![diagonal; n * n];
    for (&(i, j), &v) in pair_list.iter().zip(values) {
        m[i * n + j] = v;
        m[j * n + i] = v;
    }
    m
}

/// Compare the subjects' attributions on the template.
///
/// `kernel` smooths the |source maps| before the cosine similarity (the sign
/// of a decoder component is arbitrary, so magnitudes are compared);
/// `template_region` (n_template, the subjects' region order) and `costs`
/// give the region masses and ground costs of the transport distance, which
/// is skipped when `costs` is `None` or `params.transport_epsilon_relative`
/// is `None`.
pub fn compare(
    subjects: &[SubjectResult],
    kernel: &SmoothingKernel,
    template_region: &[i32],
    costs: Option<&TransportCosts>,
    params: &CompareParams,
) -> Result<Comparison, CohortError> {
    let n_template = kernel.n_vertices();
    let mut warnings = check_subjects(subjects, n_template)?;
    if template_region.len() != n_template {
        return Err(CohortError::Shape {
            subject: "template".to_string(),
            field: "region".to_string(),
            found: template_region.len(),
            expected: n_template,
        });
    }
    if !(params.level > 0.0 && params.level < 1.0) {
        return Err(CohortError::Parameter {
            name: "level",
            message: format!("must lie in (0, 1), got {}", params.level),
        });
    }
    let n_s = subjects.len();
    let first = &subjects[0];
    let (k, n_r) = (first.k(), first.region_names.len());
    let transport = match (costs, params.transport_epsilon_relative) {
        (Some(c), Some(rel)) => {
            if c.cost_m.len() != n_r * n_r {
                return Err(CohortError::Shape {
                    subject: "template".to_string(),
                    field: "transport costs".to_string(),
                    found: c.cost_m.len(),
                    expected: n_r * n_r,
                });
            }
            let off: Vec<f64> = (0..n_r * n_r)
                .filter(|i| i / n_r != i % n_r)
                .map(|i| c.cost_m[i])
                .collect();
            let mean = off.iter().sum::<f64>() / off.len().max(1) as f64;
            let epsilon = rel * mean;
            if !(epsilon.is_finite() && epsilon > 0.0) {
                return Err(CohortError::Parameter {
                    name: "transport epsilon",
                    message: format!("relative ε {rel} gives ε = {epsilon} m"),
                });
            }
            Some((c, epsilon))
        }
        _ => None,
    };
    let pair_list = pairs(n_s);
    let mut components = Vec::with_capacity(k);
    for c in 0..k {
        let share: Vec<f64> = subjects
            .iter()
            .flat_map(|s| column(&s.share, k, c))
            .collect();
        let (cons, mean_freq) = consistency(subjects, c, n_r);
        let per_region: Vec<Vec<f64>> = (0..n_r)
            .map(|r| (0..n_s).map(|s| share[s * n_r + r]).collect())
            .collect();
        let lead_fraction = lead_frequencies(&per_region);
        let (mean_share, mean_low, mean_high) = bootstrap_mean_interval(
            &share,
            n_s,
            n_r,
            params.bootstrap_resamples,
            params.level,
            params.seed ^ (c as u64).wrapping_mul(0x5851_F42D_4C95_7F2D),
        );
        // A region is an effect only when its share is positive and more
        // than a trivial part of the pattern: one-sided, against δ.
        let test = sign_flip_max_test_greater(
            &share,
            n_s,
            n_r,
            params.sign_flips,
            params.seed.wrapping_add(1 + c as u64),
            MIN_GROUP_SHARE,
        );
        let magnitudes: Vec<Vec<f64>> = subjects
            .iter()
            .map(|s| {
                column(&s.source_map, k, c)
                    .iter()
                    .map(|x| x.abs())
                    .collect()
            })
            .collect();
        let smoothed: Vec<Vec<f64>> = magnitudes.iter().map(|m| kernel.apply(m)).collect();
        let cos: Vec<f64> = pair_list
            .par_iter()
            .map(|&(i, j)| cosine(&smoothed[i], &smoothed[j]))
            .collect();
        let cosine_matrix = symmetric(n_s, &pair_list, &cos, 1.0);
        let transport_m = match transport {
            Some((costs, epsilon)) => {
                let masses: Vec<Vec<f64>> = magnitudes
                    .iter()
                    .map(|m| region_mass(m, template_region, n_r))
                    .collect();
                let sp = SinkhornParams {
                    epsilon,
                    max_iterations: params.transport_iterations,
                    ..SinkhornParams::default()
                };
                let results: Vec<(f64, f64)> = pair_list
                    .par_iter()
                    .map(|&(i, j)| {
                        sinkhorn(&masses[i], &masses[j], &costs.cost_m, &sp)
                            .map(|r| (r.cost, r.marginal_error))
                            .unwrap_or((f64::NAN, f64::NAN))
                    })
                    .collect();
                if let Some(w) = transport_warning(c, &results, &sp, &costs.cost_m) {
                    warnings.push(w);
                }
                let values: Vec<f64> = results.iter().map(|r| r.0).collect();
                let diagonal: Vec<f64> = masses
                    .par_iter()
                    .map(|m| {
                        sinkhorn(m, m, &costs.cost_m, &sp)
                            .map(|r| r.cost)
                            .unwrap_or(f64::NAN)
                    })
                    .collect();
                let mut matrix = symmetric(n_s, &pair_list, &values, 0.0);
                for (i, d) in diagonal.iter().enumerate() {
                    matrix[i * n_s + i] = *d;
                }
                matrix
            }
            None => vec![f64::NAN; n_s * n_s],
        };
        let mean_low = if params.bootstrap_resamples > 0 {
            mean_low
        } else {
            vec![f64::NAN; n_r]
        };
        let gain = gain_comparison(subjects, c, n_r);
        components.push(ComponentComparison {
            relative_filter_gain: gain.as_ref().map(|g| g.0.clone()),
            mean_relative_filter_gain: gain.as_ref().map(|g| g.1.clone()),
            filter_gain_rank_correlation: gain.map(|g| g.2),
            name: first.component_names[c].clone(),
            share,
            consistency: cons,
            mean_selection_frequency: mean_freq,
            lead_fraction,
            mean_share,
            mean_low,
            mean_high,
            test,
            cosine: cosine_matrix,
            transport_m,
        });
    }
    Ok(Comparison {
        subjects: subjects.iter().map(|s| s.name.clone()).collect(),
        region_names: first.region_names.clone(),
        components,
        transport_epsilon_m: transport.map_or(f64::NAN, |(_, e)| e),
        warnings,
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// Issue 22, item 13: the warning counts the pairs stopped short and
    /// bounds what the stop can cost, e × the largest cost: an L1 marginal
    /// error e leaves at most e of the unit mass unplaced (plain arithmetic
    /// on the plan, no source).
    #[test]
    fn transport_warning_counts_and_bounds_the_stop() {
        let sp = SinkhornParams {
            max_iterations: 7,
            ..SinkhornParams::default()
        };
        let cost = [0.0, 0.1, 0.1, 0.0];
        assert!(transport_warning(0, &[(1.0, 1e-7), (1.0, 5e-5)], &sp, &cost).is_none());
        let w = transport_warning(2, &[(1.0, 2e-3), (1.0, 1e-7), (1.0, 1e-3)], &sp, &cost).unwrap();
        assert!(w.starts_with("component 2:"), "{w}");
        assert!(w.contains("limit of 7 iterations for 2 of 3 pairs"), "{w}");
        assert!(w.contains("largest L1 error 2.0e-3"), "{w}");
        // 2e-3 × 100 mm.
        assert!(w.contains("up to 0.20 mm"), "{w}");
        assert!(
            w.contains("(the error times the largest centroid distance, 100 mm)"),
            "{w}"
        );
    }
}
