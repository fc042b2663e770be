//! Reading `compare.h5` back (the layout written by
//! [`super::compare_file::write_compare`]): for the comparison report and
//! anyone who wants the cohort numbers in Rust.
//!
//! Arrays come back row-major with the component axis first, exactly as
//! stored; NaN marks "no value" (e.g. a transport distance that was not
//! computed) and is kept, infinities are rejected. Distances stay in
//! millimetres, as the file's `_mm` names say.

use std::path::{Path, PathBuf};

use super::error::IoError;
use super::layout_checks::{check_sizes, Check};
use super::store::{normalise_path, Array, Attr, Store};

/// Everything `compare.h5` holds.
#[derive(Debug, Clone)]
pub struct CompareFile {
    /// The file read.
    pub path: PathBuf,
    /// The caution stored with the comparison.
    pub caution: String,
    /// The software that wrote it.
    pub software: String,
    /// Warnings of the comparison.
    pub warnings: Vec<String>,
    /// Subject names (n_subjects), the order of every subject axis.
    pub subjects: Vec<String>,
    /// Region names (n_regions), template order.
    pub region_names: Vec<String>,
    /// Per subject: the result file read.
    pub input_results: Vec<String>,
    /// Per subject: the SHA-256 of its result file.
    pub input_sha256: Vec<String>,
    /// Per subject: how its source map reached the template.
    pub input_mapping: Vec<String>,
    /// In a paired comparison, per subject: the B result file (the A one
    /// is in `input_results`); empty otherwise.
    pub input_results_b: Vec<String>,
    /// Per subject: the SHA-256 of its B result file (paired only).
    pub input_sha256_b: Vec<String>,
    /// Per subject: how its B source map reached the template (paired only).
    pub input_mapping_b: Vec<String>,
    /// The group comparison, one entry per component.
    pub components: Vec<CompareComponent>,
    /// The null hypothesis of the group test, in words.
    pub group_null: String,
    /// Bootstrap resamples of the group mean's interval.
    pub bootstrap_resamples: i64,
    /// Level of the interval (e.g. 0.95).
    pub level: f64,
    /// Family-wise error level.
    pub alpha: f64,
    /// Seed of the bootstrap and the sign flips.
    pub seed: i64,
    /// Gaussian width σ of the smoothing kernel (mm).
    pub smoothing_sigma_mm: f64,
    /// Cut-off of the smoothing kernel (mm).
    pub smoothing_cutoff_mm: f64,
    /// Entropic transport ε (mm); NaN when no transport was computed.
    pub transport_epsilon_mm: f64,
    /// The template's vertex count.
    pub template_vertices: i64,
    /// The paired comparison, when `--pair` was given.
    pub paired: Option<ComparePaired>,
}

/// One component of the group comparison.
#[derive(Debug, Clone)]
pub struct CompareComponent {
    /// Component name.
    pub name: String,
    /// Shares, n_subjects × n_regions row-major.
    pub share: Vec<f64>,
    /// Per region: fraction of subjects (with intervals) whose interval
    /// [share_low, share_high] excludes zero; NaN when no subject has one.
    pub consistency: Vec<f64>,
    /// Per region: mean selection frequency over subjects.
    pub mean_selection_frequency: Vec<f64>,
    /// Per region: fraction of subjects whose largest share is there
    /// (absent in files written before it existed).
    pub lead_fraction: Option<Vec<f64>>,
    /// Per region: group mean share.
    pub mean_share: Vec<f64>,
    /// Per region: lower end of the bootstrap interval of the mean.
    pub mean_low: Vec<f64>,
    /// Per region: upper end of the bootstrap interval of the mean.
    pub mean_high: Vec<f64>,
    /// Per region: one-sample t statistic.
    pub t: Vec<f64>,
    /// Per region: uncorrected sign-flip p-value.
    pub p_raw: Vec<f64>,
    /// Per region: max-statistic corrected p-value.
    pub p_corrected: Vec<f64>,
    /// Sign flips drawn (or enumerated) by the test.
    pub sign_flips: i64,
    /// Cosine similarity of the smoothed maps, n_subjects × n_subjects.
    pub cosine: Vec<f64>,
    /// Transport distance (mm), n_subjects × n_subjects; NaN when not computed.
    pub transport_mm: Vec<f64>,
}

/// The paired comparison of two decoders.
#[derive(Debug, Clone)]
pub struct ComparePaired {
    /// Subjects with both results (n_pairs).
    pub subjects: Vec<String>,
    /// The null hypothesis of the paired test, in words.
    pub null: String,
    /// One entry per component.
    pub components: Vec<PairedComponentFile>,
}

/// One component of the paired comparison.
#[derive(Debug, Clone)]
pub struct PairedComponentFile {
    /// Share differences A − B, n_pairs × n_regions row-major.
    pub difference: Vec<f64>,
    /// Per region: mean difference.
    pub mean_difference: Vec<f64>,
    /// Per region: lower end of the interval of the mean difference.
    pub mean_low: Vec<f64>,
    /// Per region: upper end of the interval of the mean difference.
    pub mean_high: Vec<f64>,
    /// Per region: uncorrected p-value.
    pub p_raw: Vec<f64>,
    /// Per region: max-statistic corrected p-value.
    pub p_corrected: Vec<f64>,
}

/// A float dataset of exactly `shape`, row-major, NaN allowed, infinities
/// rejected.
fn block(store: &Store, path: &Path, name: &str, shape: &[usize]) -> Result<Vec<f64>, IoError> {
    let values = block_with_infinities(store, path, name, shape)?;
    if let Some(i) = values.iter().position(|v| v.is_infinite()) {
        return Err(IoError::Value {
            path: path.to_path_buf(),
            object: format!("{} element {i}", normalise_path(name)),
            message: format!("{} is infinite, expected a number or NaN", values[i]),
        });
    }
    Ok(values)
}

/// [`block`] that also accepts ±∞ (the t statistic of identical nonzero
/// shares).
fn block_with_infinities(
    store: &Store,
    path: &Path,
    name: &str,
    shape: &[usize],
) -> Result<Vec<f64>, IoError> {
    let ds = store.dataset(path, name)?;
    if ds.shape != shape {
        return Err(IoError::Shape {
            path: path.to_path_buf(),
            dataset: normalise_path(name),
            found: ds.shape.clone(),
            expected: format!("{shape:?}"),
        });
    }
    let values: Vec<f64> = match &ds.data {
        Array::F64(v) => v.clone(),
        Array::I64(v) => v.iter().map(|&x| x as f64).collect(),
        other => {
            return Err(IoError::Type {
                path: path.to_path_buf(),
                object: normalise_path(name),
                found: other.kind(),
                expected: "numbers".to_string(),
            })
        }
    };
    Ok(values)
}

/// Split a row-major `k × rest` block into k vectors.
fn split(values: Vec<f64>, k: usize) -> Vec<Vec<f64>> {
    let n = values.len() / k.max(1);
    values.chunks(n.max(1)).map(<[f64]>::to_vec).collect()
}

fn str_or_empty(store: &Store, path: &Path, object: &str, name: &str) -> String {
    store.attr_str(path, object, name).unwrap_or_default()
}

fn f64_or_nan(store: &Store, path: &Path, object: &str, name: &str) -> f64 {
    store.attr_f64(path, object, name).unwrap_or(f64::NAN)
}

fn int_or(store: &Store, path: &Path, object: &str, name: &str) -> i64 {
    match store.attr(path, object, name) {
        Ok(Attr::I64(x)) => *x,
        _ => -1,
    }
}

/// Read `compare.h5`.
pub fn read_compare(path: &Path) -> Result<CompareFile, IoError> {
    let store = Store::read(path)?;
    compare_from_store(&store, path)
}

/// Extract the comparison layout from a store read from `path`.
pub fn compare_from_store(store: &Store, path: &Path) -> Result<CompareFile, IoError> {
    let subjects = store.strings(path, "/subjects", None)?;
    let region_names = store.strings(path, "/regions/names", None)?;
    let names = store.strings(path, "/components/names", None)?;
    let (n_s, n_r, k) = (subjects.len(), region_names.len(), names.len());
    let per_region = |name: &str| block(store, path, name, &[k, n_r]).map(|v| split(v, k));
    let share = split(block(store, path, "/group/share", &[k, n_s, n_r])?, k);
    let consistency = per_region("/group/consistency")?;
    let frequency = per_region("/group/mean_selection_frequency")?;
    let lead_fraction = if store.contains("/group/lead_fraction") {
        Some(per_region("/group/lead_fraction")?)
    } else {
        None
    };
    let mean_share = per_region("/group/mean_share")?;
    let mean_low = per_region("/group/mean_low")?;
    let mean_high = per_region("/group/mean_high")?;
    // ±∞ where every subject has the same nonzero share (see cohort::stats).
    let t = split(
        block_with_infinities(store, path, "/group/t", &[k, n_r])?,
        k,
    );
    let p_raw = per_region("/group/p_raw")?;
    let p_corrected = per_region("/group/p_corrected")?;
    let cosine = split(block(store, path, "/similarity/cosine", &[k, n_s, n_s])?, k);
    let transport = split(
        block(store, path, "/similarity/transport_mm", &[k, n_s, n_s])?,
        k,
    );
    let flips = match store.attr(path, "/group", "sign_flips") {
        Ok(Attr::I64Array(v)) if v.len() == k => v.clone(),
        _ => vec![-1; k],
    };
    let components = (0..k)
        .map(|c| CompareComponent {
            name: names[c].clone(),
            share: share[c].clone(),
            consistency: consistency[c].clone(),
            mean_selection_frequency: frequency[c].clone(),
            lead_fraction: lead_fraction.as_ref().map(|l| l[c].clone()),
            mean_share: mean_share[c].clone(),
            mean_low: mean_low[c].clone(),
            mean_high: mean_high[c].clone(),
            t: t[c].clone(),
            p_raw: p_raw[c].clone(),
            p_corrected: p_corrected[c].clone(),
            sign_flips: flips[c],
            cosine: cosine[c].clone(),
            transport_mm: transport[c].clone(),
        })
        .collect();
    let inputs = |name: &str| -> Result<Vec<String>, IoError> {
        if store.contains(name) {
            store.strings(path, name, Some(n_s))
        } else {
            Ok(Vec::new())
        }
    };
    let paired = if store.contains("/paired/subjects") {
        let pairs = store.strings(path, "/paired/subjects", None)?;
        let n_p = pairs.len();
        let kp = store
            .dataset(path, "/paired/difference")?
            .shape
            .first()
            .copied()
            .unwrap_or(0);
        let difference = split(
            block(store, path, "/paired/difference", &[kp, n_p, n_r])?,
            kp,
        );
        let get = |name: &str| block(store, path, name, &[kp, n_r]).map(|v| split(v, kp));
        let mean_difference = get("/paired/mean_difference")?;
        let low = get("/paired/mean_low")?;
        let high = get("/paired/mean_high")?;
        let p_raw = get("/paired/p_raw")?;
        let p_corrected = get("/paired/p_corrected")?;
        Some(ComparePaired {
            subjects: pairs,
            null: str_or_empty(store, path, "/paired", "null"),
            components: (0..kp)
                .map(|c| PairedComponentFile {
                    difference: difference[c].clone(),
                    mean_difference: mean_difference[c].clone(),
                    mean_low: low[c].clone(),
                    mean_high: high[c].clone(),
                    p_raw: p_raw[c].clone(),
                    p_corrected: p_corrected[c].clone(),
                })
                .collect(),
        })
    } else {
        None
    };
    let warnings = match store.attr(path, "/", "warnings") {
        Ok(Attr::StrArray(v)) => v.clone(),
        Ok(Attr::Str(s)) => vec![s.clone()],
        _ => Vec::new(),
    };
    let file = CompareFile {
        path: path.to_path_buf(),
        caution: str_or_empty(store, path, "/", "caution"),
        software: str_or_empty(store, path, "/", "software"),
        warnings,
        subjects,
        region_names,
        input_results: inputs("/inputs/results")?,
        input_sha256: inputs("/inputs/sha256")?,
        input_mapping: inputs("/inputs/mapping")?,
        input_results_b: inputs("/inputs/results_b")?,
        input_sha256_b: inputs("/inputs/sha256_b")?,
        input_mapping_b: inputs("/inputs/mapping_b")?,
        components,
        group_null: str_or_empty(store, path, "/group", "null"),
        bootstrap_resamples: int_or(store, path, "/group", "bootstrap_resamples"),
        level: f64_or_nan(store, path, "/group", "level"),
        alpha: f64_or_nan(store, path, "/group", "alpha"),
        seed: int_or(store, path, "/group", "seed"),
        smoothing_sigma_mm: f64_or_nan(store, path, "/similarity", "smoothing_sigma_mm"),
        smoothing_cutoff_mm: f64_or_nan(store, path, "/similarity", "smoothing_cutoff_mm"),
        transport_epsilon_mm: f64_or_nan(store, path, "/similarity", "transport_epsilon_mm"),
        template_vertices: int_or(store, path, "/similarity", "template_vertices"),
        paired,
    };
    // Whole or refused: nothing downstream checks sizes again.
    check_compare_layout(&file)?;
    Ok(file)
}

/// Check every array against the subject and region counts, so the page
/// never indexes out of range.
pub(crate) fn check_compare_layout(f: &CompareFile) -> Result<(), IoError> {
    let n_s = f.subjects.len();
    let n_r = f.region_names.len();
    let mut checks: Vec<Check> = Vec::new();
    let per_region = format!("n_regions = {n_r}");
    for c in &f.components {
        let fields: [(&'static str, &Vec<f64>); 8] = [
            ("/group/consistency", &c.consistency),
            (
                "/group/mean_selection_frequency",
                &c.mean_selection_frequency,
            ),
            ("/group/mean_share", &c.mean_share),
            ("/group/mean_low", &c.mean_low),
            ("/group/mean_high", &c.mean_high),
            ("/group/t", &c.t),
            ("/group/p_raw", &c.p_raw),
            ("/group/p_corrected", &c.p_corrected),
        ];
        for (field, v) in fields {
            checks.push((field, v.len(), n_r, per_region.clone()));
        }
        let square = format!("n_subjects x n_subjects = {n_s} x {n_s}");
        checks.push((
            "/group/share",
            c.share.len(),
            n_s * n_r,
            format!("n_subjects x n_regions = {n_s} x {n_r}"),
        ));
        checks.push((
            "/similarity/cosine",
            c.cosine.len(),
            n_s * n_s,
            square.clone(),
        ));
        checks.push((
            "/similarity/transport_mm",
            c.transport_mm.len(),
            n_s * n_s,
            square,
        ));
    }
    if let Some(p) = &f.paired {
        let n_p = p.subjects.len();
        for c in &p.components {
            checks.push((
                "/paired/difference",
                c.difference.len(),
                n_p * n_r,
                format!("n_pairs x n_regions = {n_p} x {n_r}"),
            ));
            for (field, v) in [
                ("/paired/mean_difference", &c.mean_difference),
                ("/paired/mean_low", &c.mean_low),
                ("/paired/mean_high", &c.mean_high),
                ("/paired/p_raw", &c.p_raw),
                ("/paired/p_corrected", &c.p_corrected),
            ] {
                checks.push((field, v.len(), n_r, per_region.clone()));
            }
        }
    }
    check_sizes(&f.path, checks)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use crate::cohort::{
        CompareParams, Comparison, ComponentComparison, PairedComparison, PairedComponent,
        SignFlipTest,
    };
    use crate::io::compare_file::{write_compare, CompareRecord, GROUP_NULL};
    use crate::io::result_file::CAUTION;

    fn test(n_r: usize, base: f64) -> SignFlipTest {
        SignFlipTest {
            statistic: (0..n_r).map(|r| base + r as f64).collect(),
            p_raw: (0..n_r).map(|r| 0.01 * (r + 1) as f64).collect(),
            p_corrected: (0..n_r).map(|r| 0.02 * (r + 1) as f64).collect(),
            n_flips: 8,
            exact: true,
        }
    }

    /// Three subjects, two regions, two components; NaN where the file
    /// marks "no value" (no transport, no selection frequency).
    fn comparison() -> Comparison {
        let (n_s, n_r) = (3, 2);
        let comp = |c: usize| ComponentComparison {
            name: format!("c{c} <&>"),
            share: (0..n_s * n_r).map(|i| 0.1 * i as f64 + c as f64).collect(),
            consistency: vec![1.0, 0.5],
            mean_selection_frequency: vec![f64::NAN, 0.25],
            lead_fraction: vec![1.0 / 3.0, 2.0 / 3.0],
            mean_share: vec![0.6, 0.1 + c as f64],
            mean_low: vec![0.5, 0.0],
            mean_high: vec![0.7, 0.2],
            test: test(n_r, c as f64),
            cosine: vec![1.0, 0.9, 0.8, 0.9, 1.0, 0.7, 0.8, 0.7, 1.0],
            transport_m: vec![f64::NAN; n_s * n_s],
            relative_filter_gain: None,
            mean_relative_filter_gain: None,
            filter_gain_rank_correlation: None,
        };
        Comparison {
            subjects: vec!["s0".into(), "s1".into(), "s2".into()],
            region_names: vec!["left-a".into(), "right-b".into()],
            components: vec![comp(0), comp(1)],
            transport_epsilon_m: f64::NAN,
            warnings: vec!["a warning".into()],
        }
    }

    fn same(a: &[f64], b: &[f64]) -> bool {
        a.len() == b.len()
            && a.iter()
                .zip(b)
                .all(|(x, y)| x.to_bits() == y.to_bits() || (x.is_nan() && y.is_nan()))
    }

    // Round trip: every value write_compare stored comes back bit for bit
    // (HDF5 stores IEEE-754 doubles; no tolerance), NaN kept as NaN.
    #[test]
    fn read_compare_returns_what_write_compare_wrote() {
        let mut c = comparison();
        // Identical nonzero shares in every subject give t = ±∞; it must
        // come back (a comparison of two runs of one decoder has it).
        c.components[0].test.statistic[0] = f64::INFINITY;
        c.components[1].test.statistic[1] = f64::NEG_INFINITY;
        let paired = PairedComparison {
            pairs: vec!["s0".into(), "s1".into()],
            region_names: c.region_names.clone(),
            components: vec![PairedComponent {
                name: "c0".into(),
                difference: vec![0.1, -0.2, 0.3, 0.0],
                mean_difference: vec![0.2, -0.1],
                mean_low: vec![0.1, -0.2],
                mean_high: vec![0.3, 0.0],
                test: test(2, 3.0),
            }],
            warnings: vec![],
        };
        let params = CompareParams {
            bootstrap_resamples: 40,
            ..CompareParams::default()
        };
        let inputs: Vec<(String, String)> = (0..3)
            .map(|i| (format!("s{i}/result.h5"), format!("{i:064x}")))
            .collect();
        let mapping = vec!["same cortex".to_string(); 3];
        let inputs_b: Vec<(String, String)> = (0..3)
            .map(|i| (format!("b{i}/result.h5"), format!("{:064x}", i + 7)))
            .collect();
        let record = CompareRecord {
            comparison: &c,
            paired: Some(&paired),
            inputs: &inputs,
            mapping: &mapping,
            inputs_b: &inputs_b,
            mapping_b: &mapping,
            smoothing_sigma_m: 0.01,
            smoothing_cutoff_m: 0.03,
            n_template: 5124,
            params: &params,
        };
        let dir =
            std::env::temp_dir().join(format!("patchwise-compare-read-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("compare.h5");
        write_compare(&path, &record).unwrap();
        let f = read_compare(&path).unwrap();
        assert_eq!(f.subjects, c.subjects);
        assert_eq!(f.region_names, c.region_names);
        assert_eq!(f.caution, CAUTION);
        assert_eq!(f.group_null, GROUP_NULL);
        assert_eq!(f.warnings, c.warnings);
        assert_eq!(f.input_sha256[2], inputs[2].1);
        assert_eq!(f.input_results[1], inputs[1].0);
        // Issue 22, item 11: the B results of a paired comparison are kept.
        assert_eq!(f.input_results_b[2], inputs_b[2].0);
        assert_eq!(f.input_sha256_b[0], inputs_b[0].1);
        assert_eq!(f.input_mapping_b, mapping);
        assert_eq!(f.input_mapping, mapping);
        assert_eq!(f.bootstrap_resamples, 40);
        assert_eq!(f.template_vertices, 5124);
        assert!((f.smoothing_sigma_mm - 10.0).abs() < 1e-12);
        assert!((f.smoothing_cutoff_mm - 30.0).abs() < 1e-12);
        assert!(f.transport_epsilon_mm.is_nan());
        assert_eq!(f.components.len(), 2);
        for (got, want) in f.components.iter().zip(&c.components) {
            assert_eq!(got.name, want.name);
            assert_eq!(got.sign_flips, 8);
            assert!(same(&got.share, &want.share));
            assert!(same(&got.consistency, &want.consistency));
            assert!(same(
                got.lead_fraction.as_ref().unwrap(),
                &want.lead_fraction
            ));
            assert!(same(
                &got.mean_selection_frequency,
                &want.mean_selection_frequency
            ));
            assert!(same(&got.mean_share, &want.mean_share));
            assert!(same(&got.mean_low, &want.mean_low));
            assert!(same(&got.mean_high, &want.mean_high));
            assert!(same(&got.t, &want.test.statistic));
            assert!(same(&got.p_raw, &want.test.p_raw));
            assert!(same(&got.p_corrected, &want.test.p_corrected));
            assert!(same(&got.cosine, &want.cosine));
            assert!(same(&got.transport_mm, &want.transport_m));
        }
        let p = f.paired.unwrap();
        assert_eq!(p.subjects, paired.pairs);
        let (got, want) = (&p.components[0], &paired.components[0]);
        assert!(same(&got.difference, &want.difference));
        assert!(same(&got.mean_difference, &want.mean_difference));
        assert!(same(&got.p_corrected, &want.test.p_corrected));
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn a_share_of_the_wrong_shape_is_an_error_naming_the_dataset() {
        let mut s = Store::new();
        s.insert("/subjects", crate::io::Dataset::strings(vec!["a".into()]));
        s.insert(
            "/regions/names",
            crate::io::Dataset::strings(vec!["r".into()]),
        );
        s.insert(
            "/components/names",
            crate::io::Dataset::strings(vec!["c".into()]),
        );
        s.insert(
            "/group/share",
            crate::io::Dataset::f64(vec![1, 2], vec![0.0, 1.0]),
        );
        let err = compare_from_store(&s, Path::new("x/compare.h5")).unwrap_err();
        let text = err.to_string();
        assert!(
            text.contains("x/compare.h5") && text.contains("/group/share"),
            "{text}"
        );
    }
}
