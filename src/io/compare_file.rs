//! The output files of `patchwise compare`: `compare.h5`, `regions.csv`,
//! `similarity.csv`, `paired.csv` and `summary.json` (layouts in
//! docs/cohort.md).

use std::path::Path;

use super::error::IoError;
use super::result_file::CAUTION;
use super::store::{Attr, Dataset, Store};
use super::table::{format_fixed, write_table, Delimiter, TableError};
use crate::cohort::{CompareParams, Comparison, PairedComparison};

/// Everything `compare.h5` and `summary.json` hold besides the comparison.
pub struct CompareRecord<'a> {
    /// The comparison.
    pub comparison: &'a Comparison,
    /// The paired comparison, if `--pair` was given.
    pub paired: Option<&'a PairedComparison>,
    /// Per subject: the result file read and its SHA-256.
    pub inputs: &'a [(String, String)],
    /// Per subject: how its source map reached the template.
    pub mapping: &'a [String],
    /// In a paired comparison, per subject: the B result file and its
    /// SHA-256 (`inputs` holds the A results); empty otherwise.
    pub inputs_b: &'a [(String, String)],
    /// In a paired comparison, per subject: how the B source map reached
    /// the template; empty otherwise.
    pub mapping_b: &'a [String],
    /// Gaussian width of the smoothing kernel (m).
    pub smoothing_sigma_m: f64,
    /// Cut-off of the smoothing kernel (m).
    pub smoothing_cutoff_m: f64,
    /// The template's vertex count.
    pub n_template: usize,
    /// The parameters used.
    pub params: &'a CompareParams,
}

/// The null hypothesis of the group test, in words (stored with the p-values).
pub const GROUP_NULL: &str = "share = 0 in every subject (sign-flip symmetric), two-sided one-sample t, max-|t| over regions for the family-wise error";

/// The null hypothesis of the paired test.
pub const PAIRED_NULL: &str = "share(A) - share(B) = 0 in every subject (exchangeable A/B), two-sided one-sample t of the differences, max-|t| over regions";

/// Stack one per-component vector field into a k × n array.
fn stack(k: usize, n: usize, f: impl Fn(usize) -> Vec<f64>) -> Dataset {
    let values: Vec<f64> = (0..k).flat_map(f).collect();
    Dataset::f64(vec![k, n], values)
}

/// Write `compare.h5` atomically. Arrays lead with the component axis:
/// `/group/share` is k × n_subjects × n_regions, `/group/*` per region
/// k × n_regions, `/similarity/*` k × n_subjects × n_subjects.
pub fn write_compare(path: &Path, r: &CompareRecord<'_>) -> Result<(), IoError> {
    let c = r.comparison;
    let k = c.components.len();
    let n_s = c.subjects.len();
    let n_r = c.region_names.len();
    let mut s = Store::new();
    s.set_group_attr("/", "caution", Attr::Str(CAUTION.to_string()));
    s.set_group_attr(
        "/",
        "software",
        Attr::Str(format!("patchwise {}", env!("CARGO_PKG_VERSION"))),
    );
    s.set_group_attr("/", "warnings", Attr::StrArray(c.warnings.clone()));
    s.insert("/subjects", Dataset::strings(c.subjects.clone()));
    s.insert("/regions/names", Dataset::strings(c.region_names.clone()));
    s.insert(
        "/components/names",
        Dataset::strings(c.components.iter().map(|x| x.name.clone()).collect()),
    );
    s.insert(
        "/inputs/results",
        Dataset::strings(r.inputs.iter().map(|x| x.0.clone()).collect()),
    );
    s.insert(
        "/inputs/sha256",
        Dataset::strings(r.inputs.iter().map(|x| x.1.clone()).collect()),
    );
    s.insert("/inputs/mapping", Dataset::strings(r.mapping.to_vec()));
    if !r.inputs_b.is_empty() {
        s.insert(
            "/inputs/results_b",
            Dataset::strings(r.inputs_b.iter().map(|x| x.0.clone()).collect()),
        );
        s.insert(
            "/inputs/sha256_b",
            Dataset::strings(r.inputs_b.iter().map(|x| x.1.clone()).collect()),
        );
        s.insert("/inputs/mapping_b", Dataset::strings(r.mapping_b.to_vec()));
    }
    s.insert(
        "/group/share",
        Dataset::f64(
            vec![k, n_s, n_r],
            c.components.iter().flat_map(|x| x.share.clone()).collect(),
        ),
    );
    let comp = |f: fn(&crate::cohort::ComponentComparison) -> &Vec<f64>| {
        stack(k, n_r, |i| f(&c.components[i]).clone())
    };
    s.insert("/group/consistency", comp(|x| &x.consistency));
    s.insert(
        "/group/mean_selection_frequency",
        comp(|x| &x.mean_selection_frequency),
    );
    s.insert("/group/lead_fraction", comp(|x| &x.lead_fraction));
    s.insert("/group/mean_share", comp(|x| &x.mean_share));
    s.insert("/group/mean_low", comp(|x| &x.mean_low));
    s.insert("/group/mean_high", comp(|x| &x.mean_high));
    s.insert("/group/t", comp(|x| &x.test.statistic));
    s.insert("/group/p_raw", comp(|x| &x.test.p_raw));
    s.insert("/group/p_corrected", comp(|x| &x.test.p_corrected));
    // Where the subjects' filters listen, when every subject has a gain map
    // (then every component has all three arrays).
    let all = |f: fn(&crate::cohort::ComponentComparison) -> &Option<Vec<f64>>| {
        c.components
            .iter()
            .map(|x| f(x).clone())
            .collect::<Option<Vec<Vec<f64>>>>()
            .map(|v| v.concat())
    };
    if let (Some(relative), Some(mean), Some(rho)) = (
        all(|x| &x.relative_filter_gain),
        all(|x| &x.mean_relative_filter_gain),
        all(|x| &x.filter_gain_rank_correlation),
    ) {
        if k > 0 {
            s.insert(
                "/group/relative_filter_gain",
                Dataset::f64(vec![k, n_s, n_r], relative),
            );
            s.insert(
                "/group/mean_relative_filter_gain",
                Dataset::f64(vec![k, n_r], mean),
            );
            s.insert(
                "/group/filter_gain_rank_correlation",
                Dataset::f64(vec![k, n_s], rho),
            );
        }
    }
    s.set_group_attr("/group", "null", Attr::Str(GROUP_NULL.to_string()));
    s.set_group_attr(
        "/group",
        "sign_flips",
        Attr::I64Array(c.components.iter().map(|x| x.test.n_flips as i64).collect()),
    );
    s.set_group_attr(
        "/group",
        "bootstrap_resamples",
        Attr::I64(r.params.bootstrap_resamples as i64),
    );
    s.set_group_attr("/group", "level", Attr::F64(r.params.level));
    s.set_group_attr("/group", "alpha", Attr::F64(r.params.alpha));
    s.set_group_attr("/group", "seed", Attr::I64(r.params.seed as i64));
    let square = |f: fn(&crate::cohort::ComponentComparison) -> &Vec<f64>| {
        Dataset::f64(
            vec![k, n_s, n_s],
            c.components.iter().flat_map(|x| f(x).clone()).collect(),
        )
    };
    s.insert("/similarity/cosine", square(|x| &x.cosine));
    s.insert("/similarity/transport_mm", {
        let mut d = square(|x| &x.transport_m);
        if let super::store::Array::F64(v) = &mut d.data {
            v.iter_mut().for_each(|x| *x *= 1e3);
        }
        d
    });
    s.set_group_attr(
        "/similarity",
        "smoothing_sigma_mm",
        Attr::F64(r.smoothing_sigma_m * 1e3),
    );
    s.set_group_attr(
        "/similarity",
        "smoothing_cutoff_mm",
        Attr::F64(r.smoothing_cutoff_m * 1e3),
    );
    s.set_group_attr(
        "/similarity",
        "transport_epsilon_mm",
        Attr::F64(c.transport_epsilon_m * 1e3),
    );
    s.set_group_attr(
        "/similarity",
        "template_vertices",
        Attr::I64(r.n_template as i64),
    );
    if let Some(p) = r.paired {
        let n_p = p.pairs.len();
        let kp = p.components.len();
        s.insert("/paired/subjects", Dataset::strings(p.pairs.clone()));
        s.insert(
            "/paired/difference",
            Dataset::f64(
                vec![kp, n_p, n_r],
                p.components
                    .iter()
                    .flat_map(|x| x.difference.clone())
                    .collect(),
            ),
        );
        let pc = |f: fn(&crate::cohort::PairedComponent) -> &Vec<f64>| {
            stack(kp, n_r, |i| f(&p.components[i]).clone())
        };
        s.insert("/paired/mean_difference", pc(|x| &x.mean_difference));
        s.insert("/paired/mean_low", pc(|x| &x.mean_low));
        s.insert("/paired/mean_high", pc(|x| &x.mean_high));
        s.insert("/paired/p_raw", pc(|x| &x.test.p_raw));
        s.insert("/paired/p_corrected", pc(|x| &x.test.p_corrected));
        s.set_group_attr("/paired", "null", Attr::Str(PAIRED_NULL.to_string()));
    }
    s.write_atomic(path)
}

/// Write `regions.csv`: one row per component and region, template order.
pub fn write_regions_csv(path: &Path, c: &Comparison) -> Result<(), TableError> {
    let header = [
        "component",
        "region",
        "mean_share",
        "mean_low",
        "mean_high",
        "consistency",
        "mean_selection_frequency",
        "p_value",
        "p_corrected",
    ];
    let mut rows = Vec::new();
    for comp in &c.components {
        for (r, name) in c.region_names.iter().enumerate() {
            rows.push(vec![
                comp.name.clone(),
                name.clone(),
                format_fixed(comp.mean_share[r], 6, ""),
                format_fixed(comp.mean_low[r], 6, ""),
                format_fixed(comp.mean_high[r], 6, ""),
                format_fixed(comp.consistency[r], 4, ""),
                format_fixed(comp.mean_selection_frequency[r], 4, ""),
                format_fixed(comp.test.p_raw[r], 6, ""),
                format_fixed(comp.test.p_corrected[r], 6, ""),
            ]);
        }
    }
    write_table(path, Delimiter::Comma, &header, &rows)
}

/// Write `similarity.csv`: one row per component and subject pair (a < b).
pub fn write_similarity_csv(path: &Path, c: &Comparison) -> Result<(), TableError> {
    let header = [
        "component",
        "subject_a",
        "subject_b",
        "cosine",
        "transport_mm",
    ];
    let n = c.subjects.len();
    let mut rows = Vec::new();
    for comp in &c.components {
        for i in 0..n {
            for j in i + 1..n {
                rows.push(vec![
                    comp.name.clone(),
                    c.subjects[i].clone(),
                    c.subjects[j].clone(),
                    format_fixed(comp.cosine[i * n + j], 6, ""),
                    format_fixed(comp.transport_m[i * n + j] * 1e3, 4, ""),
                ]);
            }
        }
    }
    write_table(path, Delimiter::Comma, &header, &rows)
}

/// Write `paired.csv`: one row per component and region.
pub fn write_paired_csv(path: &Path, p: &PairedComparison) -> Result<(), TableError> {
    let header = [
        "component",
        "region",
        "mean_difference",
        "mean_low",
        "mean_high",
        "p_value",
        "p_corrected",
    ];
    let mut rows = Vec::new();
    for comp in &p.components {
        for (r, name) in p.region_names.iter().enumerate() {
            rows.push(vec![
                comp.name.clone(),
                name.clone(),
                format_fixed(comp.mean_difference[r], 6, ""),
                format_fixed(comp.mean_low[r], 6, ""),
                format_fixed(comp.mean_high[r], 6, ""),
                format_fixed(comp.test.p_raw[r], 6, ""),
                format_fixed(comp.test.p_corrected[r], 6, ""),
            ]);
        }
    }
    write_table(path, Delimiter::Comma, &header, &rows)
}

fn finite(v: f64) -> serde_json::Value {
    if v.is_finite() {
        serde_json::json!(v)
    } else {
        serde_json::Value::Null
    }
}

/// The contents of `summary.json`: per component the regions whose
/// corrected p-value is below α, the mean off-diagonal similarities, and
/// the settings.
pub fn summary_json(r: &CompareRecord<'_>) -> serde_json::Value {
    let c = r.comparison;
    let n = c.subjects.len();
    let alpha = r.params.alpha;
    let mean_off = |m: &[f64]| -> f64 {
        let vals: Vec<f64> = (0..n * n)
            .filter(|i| i / n < i % n)
            .map(|i| m[i])
            .filter(|x| x.is_finite())
            .collect();
        vals.iter().sum::<f64>() / vals.len().max(1) as f64
    };
    let comps: Vec<serde_json::Value> = c
        .components
        .iter()
        .enumerate()
        .map(|(i, comp)| {
            let surviving: Vec<serde_json::Value> = (0..c.region_names.len())
                .filter(|&reg| comp.test.p_corrected[reg] < alpha)
                .map(|reg| {
                    serde_json::json!({
                        "region": c.region_names[reg],
                        "mean_share": finite(comp.mean_share[reg]),
                        "mean_low": finite(comp.mean_low[reg]),
                        "mean_high": finite(comp.mean_high[reg]),
                        "consistency": finite(comp.consistency[reg]),
                        "lead_fraction": finite(comp.lead_fraction[reg]),
                        "p_value": comp.test.p_raw[reg],
                        "p_corrected": comp.test.p_corrected[reg],
                    })
                })
                .collect();
            serde_json::json!({
                "index": i,
                "name": comp.name,
                "sign_flips": comp.test.n_flips,
                "exact_enumeration": comp.test.exact,
                "regions_surviving_correction": surviving,
                "leading_regions": leading_regions(&c.region_names, &comp.lead_fraction),
                "mean_cosine": finite(mean_off(&comp.cosine)),
                "mean_transport_mm": finite(mean_off(&comp.transport_m) * 1e3),
            })
        })
        .collect();
    let paired = r.paired.map(|p| {
        serde_json::json!({
            "subjects": p.pairs,
            "null": PAIRED_NULL,
            "components": p.components.iter().map(|pc| {
                serde_json::json!({
                    "name": pc.name,
                    "regions_surviving_correction": (0..p.region_names.len())
                        .filter(|&reg| pc.test.p_corrected[reg] < alpha)
                        .map(|reg| serde_json::json!({
                            "region": p.region_names[reg],
                            "mean_difference": pc.mean_difference[reg],
                            "mean_low": finite(pc.mean_low[reg]),
                            "mean_high": finite(pc.mean_high[reg]),
                            "p_corrected": pc.test.p_corrected[reg],
                        }))
                        .collect::<Vec<_>>(),
                })
            }).collect::<Vec<_>>(),
        })
    });
    serde_json::json!({
        "caution": CAUTION,
        "software": format!("patchwise {}", env!("CARGO_PKG_VERSION")),
        "subjects": c.subjects,
        "inputs": r.inputs.iter().map(|(p, h)| serde_json::json!({"result": p, "sha256": h})).collect::<Vec<_>>(),
        "mapping": r.mapping,
        "inputs_b": r.inputs_b.iter().map(|(p, h)| serde_json::json!({"result": p, "sha256": h})).collect::<Vec<_>>(),
        "mapping_b": r.mapping_b,
        "template_vertices": r.n_template,
        "null": GROUP_NULL,
        "alpha": alpha,
        "bootstrap_resamples": r.params.bootstrap_resamples,
        "level": r.params.level,
        "seed": r.params.seed,
        "smoothing_sigma_mm": r.smoothing_sigma_m * 1e3,
        "smoothing_cutoff_mm": r.smoothing_cutoff_m * 1e3,
        "transport_epsilon_mm": finite(c.transport_epsilon_m * 1e3),
        "components": comps,
        "paired": paired,
        "warnings": c.warnings,
    })
}

/// The regions that lead some subject, most often first: `{region,
/// fraction}` (the fraction of subjects whose largest share is there).
fn leading_regions(names: &[String], lead_fraction: &[f64]) -> Vec<serde_json::Value> {
    crate::attribution::leaders(lead_fraction)
        .iter()
        .map(|&r| serde_json::json!({"region": names[r], "fraction": lead_fraction[r]}))
        .collect()
}
