//! Reading `result.h5` back (the layout written by [`super::result_file`]):
//! for reports, comparisons and anyone who wants the numbers in Rust.
//!
//! Positions come back in metres; shares, source maps (A·m per source) and
//! patterns as stored. Optional parts (resampling intervals, the λ path,
//! montage positions, the source space) are `None` when the file lacks them.

use std::path::{Path, PathBuf};

use super::error::IoError;
use super::layout_checks::{check_sizes, Check};
use super::leadfield_file::{montage_from_store, sources_from_store};
use super::store::{Attr, Store};
use crate::geometry::{SourceSpace, Vec3};

/// Everything `result.h5` holds.
#[derive(Debug, Clone)]
pub struct ResultFile {
    /// The file read.
    pub path: PathBuf,
    /// Input hashes (name, hex digest) from the root attributes `hash_<name>`, sorted by name.
    pub hashes: Vec<(String, String)>,
    /// The caution stored with the result.
    pub caution: String,
    /// The software that wrote it.
    pub software: String,
    /// Notes of the run.
    pub notes: Vec<String>,
    /// Per component, why its attribution needs care (`/fit/flags`; "" when
    /// none, and all "" for results written before the flags existed).
    pub flags: Vec<String>,
    /// Channel labels of the patterns (n_ch).
    pub labels: Vec<String>,
    /// Component names (k).
    pub component_names: Vec<String>,
    /// Number of components.
    pub k: usize,
    /// Patterns after referencing, before whitening, n_ch × k row-major.
    pub patterns: Vec<f64>,
    /// What the patterns came from (`patterns` or `weights+covariance`).
    pub patterns_source: String,
    /// Electrode positions (m) of the channels, fit order, when stored.
    pub electrode_positions: Option<Vec<Vec3>>,
    /// The source space of the fit, when stored.
    pub sources: Option<SourceSpace>,
    /// The fit.
    pub fit: ResultFit,
    /// The attribution.
    pub attribution: ResultAttribution,
    /// The equivalent dipoles `patchwise dipole` added, if any.
    pub dipoles: Option<ResultDipoles>,
    /// The filters' gain over the cortex (`/filter_gain`), when the decoder
    /// gave weights and the lead field was known.
    pub filter_gain: Option<crate::attribution::FilterGain>,
    /// Region × time shares (`/attribution/times`, `share_time`, ...), for a
    /// decoder with a time axis.
    pub time: Option<crate::pipeline::TimeShares>,
}

/// The `/dipole` group: one row per dipole (two per component for a
/// symmetric pair), positions in mm.
#[derive(Debug, Clone)]
pub struct ResultDipoles {
    /// `single` or `pair`.
    pub model: String,
    /// Component of each row.
    pub component: Vec<i64>,
    /// Dipole index within its component (0, or 0/1 for a pair).
    pub dipole: Vec<i64>,
    /// Positions (mm).
    pub positions_mm: Vec<[f64; 3]>,
    /// Moments (A·m when the patterns are in V).
    pub moments: Vec<[f64; 3]>,
    /// Radius of the 95 % confidence sphere of equal volume (mm).
    pub ci95_radius_mm: Vec<f64>,
    /// Region of the nearest cortex vertex.
    pub nearest_region: Vec<String>,
    /// Distance to the nearest cortex vertex (mm).
    pub distance_to_cortex_mm: Vec<f64>,
    /// Distance to the patch fit's peak of the same component (mm), when
    /// the dipoles were fitted into an attribution folder.
    pub distance_to_patch_peak_mm: Option<Vec<f64>>,
    /// Residual variance per component.
    pub residual_variance: Vec<f64>,
}

fn triples(v: Vec<f64>) -> Vec<[f64; 3]> {
    v.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect()
}

/// The `/dipole` group, when present.
fn dipoles_from_store(
    store: &Store,
    path: &Path,
    k: usize,
) -> Result<Option<ResultDipoles>, IoError> {
    if !store.contains("/dipole/positions_mm") {
        return Ok(None);
    }
    let (pos, n, _) = store.f64_matrix(path, "/dipole/positions_mm", None, Some(3))?;
    let (mom, _, _) = store.f64_matrix(path, "/dipole/moments", Some(n), Some(3))?;
    let component = store.i64s(path, "/dipole/component", Some(n))?;
    if let Some(c) = component.iter().find(|&&c| c < 0 || c as usize >= k) {
        return Err(IoError::Value {
            path: path.to_path_buf(),
            object: "/dipole/component".to_string(),
            message: format!("component {c}, expected 0..{k}"),
        });
    }
    let distance_to_patch_peak_mm = if store.contains("/dipole/distance_to_patch_peak_mm") {
        Some(store.f64s_nan(path, "/dipole/distance_to_patch_peak_mm", Some(n))?)
    } else {
        None
    };
    Ok(Some(ResultDipoles {
        model: store
            .attr_str(path, "/dipole", "model")
            .unwrap_or_else(|_| "single".to_string()),
        dipole: store.i64s(path, "/dipole/dipole", Some(n))?,
        component,
        positions_mm: triples(pos),
        moments: triples(mom),
        ci95_radius_mm: store.f64s_nan(path, "/dipole/ci95_radius_mm", Some(n))?,
        nearest_region: store.strings(path, "/dipole/nearest_region", Some(n))?,
        distance_to_cortex_mm: store.f64s_nan(path, "/dipole/distance_to_cortex_mm", Some(n))?,
        distance_to_patch_peak_mm,
        residual_variance: store.f64s_nan(path, "/dipole/residual_variance", Some(k))?,
    }))
}

/// The `/fit` group.
#[derive(Debug, Clone)]
pub struct ResultFit {
    /// Number of atoms.
    pub n_atoms: usize,
    /// Penalised coefficients, n_atoms × k.
    pub coefficients: Vec<f64>,
    /// λ per component.
    pub lambda: Vec<f64>,
    /// λ_max per component.
    pub lambda_max: Vec<f64>,
    /// Relative duality gap per component.
    pub duality_gap: Vec<f64>,
    /// Solver iterations per component.
    pub iterations: Vec<i64>,
    /// Explained variance per component.
    pub explained_variance: Vec<f64>,
    /// Residual, n_ch × k (fit space: whitened when a noise covariance was given).
    pub residual: Vec<f64>,
    /// Fitted patterns D X in the units of the patterns, n_ch × k.
    pub reconstruction: Option<Vec<f64>>,
    /// The λ path searched, when stored.
    pub path: Option<ResultPath>,
}

/// The `/fit/path` group: each field n_points × k, NaN where a component's
/// block searched fewer points.
#[derive(Debug, Clone)]
pub struct ResultPath {
    /// Number of path points.
    pub n_points: usize,
    /// λ / λ_max.
    pub ratio: Vec<f64>,
    /// Explained variance.
    pub explained_variance: Vec<f64>,
    /// Active patches.
    pub active_patches: Vec<f64>,
    /// Bayesian information criterion.
    pub bic: Vec<f64>,
}

/// The `/attribution` group.
#[derive(Debug, Clone)]
pub struct ResultAttribution {
    /// Region names (n_regions), the order of `/sources/region_names`.
    pub region_names: Vec<String>,
    /// Shares, n_regions × k.
    pub share: Vec<f64>,
    /// Lower ends of the intervals, n_regions × k.
    pub share_low: Option<Vec<f64>>,
    /// Upper ends of the intervals, n_regions × k.
    pub share_high: Option<Vec<f64>>,
    /// Selection frequencies, n_regions × k.
    pub selection_frequency: Option<Vec<f64>>,
    /// Fraction of resamples in which each region leads, n_regions × k
    /// (absent in results written before it existed).
    pub lead_frequency: Option<Vec<f64>>,
    /// Source map, n_src × k (A·m per source).
    pub source_map: Vec<f64>,
    /// Peak positions (mm) per component; NaN when nothing is active.
    pub peak_mm: Vec<[f64; 3]>,
    /// Peak region per component, -1 = none.
    pub peak_region: Vec<i64>,
    /// Share not assigned to any region, per component.
    pub unassigned_share: Vec<f64>,
    /// Noise level of the resampling per component.
    pub noise_sd: Option<Vec<f64>>,
    /// Per component, the calibrated probability that the leading region is
    /// the truth's (absent in results written before it existed or without
    /// resamples; NaN where no region leads).
    pub leader_probability: Option<Vec<f64>>,
}

fn root_str(store: &Store, path: &Path, name: &str) -> String {
    store.attr_str(path, "/", name).unwrap_or_default()
}

fn optional(
    store: &Store,
    path: &Path,
    name: &str,
    rows: usize,
    cols: usize,
) -> Result<Option<Vec<f64>>, IoError> {
    if !store.contains(name) {
        return Ok(None);
    }
    let (v, _, _) = store.f64_matrix_nan(path, name, Some(rows), Some(cols))?;
    Ok(Some(v))
}

/// Per-component vector `name` (length k), NaN allowed.
fn per_component(store: &Store, path: &Path, name: &str, k: usize) -> Result<Vec<f64>, IoError> {
    store.f64s_nan(path, name, Some(k))
}

/// Per-component vector `name` (length k, NaN allowed) when the store has it
/// (results written before it existed, or without resamples, do not).
fn optional_per_component(
    store: &Store,
    path: &Path,
    name: &str,
    k: usize,
) -> Result<Option<Vec<f64>>, IoError> {
    if !store.contains(name) {
        return Ok(None);
    }
    per_component(store, path, name, k).map(Some)
}

/// Read `result.h5`.
pub fn read_result(path: &Path) -> Result<ResultFile, IoError> {
    let store = Store::read(path)?;
    result_from_store(&store, path)
}

/// Extract the result layout from a store read from `path`.
pub fn result_from_store(store: &Store, path: &Path) -> Result<ResultFile, IoError> {
    let mut hashes: Vec<(String, String)> = store
        .group_attrs
        .get("/")
        .map(|attrs| {
            attrs
                .iter()
                .filter_map(|(name, value)| match (name.strip_prefix("hash_"), value) {
                    (Some(n), Attr::Str(h)) => Some((n.to_string(), h.clone())),
                    _ => None,
                })
                .collect()
        })
        .unwrap_or_default();
    hashes.sort();
    let notes = serde_json::from_str(&root_str(store, path, "notes")).unwrap_or_default();
    let labels = store.strings(path, "/patterns/labels", None)?;
    let n_ch = labels.len();
    let (patterns, _, k) = store.f64_matrix(path, "/patterns/values", Some(n_ch), None)?;
    let component_names = if store.contains("/patterns/component_names") {
        store.strings(path, "/patterns/component_names", Some(k))?
    } else {
        (0..k).map(|c| format!("component {c}")).collect()
    };
    let flags = if store.contains("/fit/flags") {
        store.strings(path, "/fit/flags", Some(k))?
    } else {
        vec![String::new(); k]
    };
    let patterns_source = store
        .strings(path, "/patterns/source", Some(1))
        .map(|v| v.concat())
        .unwrap_or_default();
    let electrode_positions = montage_from_store(store, path)?.map(|(_, p)| p);
    let sources = if store.contains("/sources/positions_mm") {
        Some(sources_from_store(store, path, None)?)
    } else {
        None
    };
    let (coefficients, n_atoms, _) = store.f64_matrix(path, "/fit/coefficients", None, Some(k))?;
    let (residual, _, _) = store.f64_matrix(path, "/fit/residual", Some(n_ch), Some(k))?;
    let path_data = if store.contains("/fit/path/ratio") {
        let (ratio, n_points, _) = store.f64_matrix_nan(path, "/fit/path/ratio", None, Some(k))?;
        let get = |name: &str| {
            store
                .f64_matrix_nan(path, name, Some(n_points), Some(k))
                .map(|(v, _, _)| v)
        };
        Some(ResultPath {
            n_points,
            ratio,
            explained_variance: get("/fit/path/explained_variance")?,
            active_patches: get("/fit/path/active_patches")?,
            bic: get("/fit/path/bic")?,
        })
    } else {
        None
    };
    let fit = ResultFit {
        n_atoms,
        coefficients,
        lambda: per_component(store, path, "/fit/lambda", k)?,
        lambda_max: per_component(store, path, "/fit/lambda_max", k)?,
        duality_gap: per_component(store, path, "/fit/duality_gap", k)?,
        iterations: store.i64s(path, "/fit/iterations", Some(k))?,
        explained_variance: per_component(store, path, "/fit/explained_variance", k)?,
        residual,
        reconstruction: optional(store, path, "/fit/reconstruction", n_ch, k)?,
        path: path_data,
    };
    let region_names = store.strings(path, "/attribution/region_names", None)?;
    let n_regions = region_names.len();
    let (share, _, _) = store.f64_matrix(path, "/attribution/share", Some(n_regions), Some(k))?;
    let (source_map, n_src, _) =
        store.f64_matrix(path, "/attribution/source_map", None, Some(k))?;
    if let Some(s) = &sources {
        if s.len() != n_src {
            return Err(IoError::Shape {
                path: path.to_path_buf(),
                dataset: "/attribution/source_map".to_string(),
                found: vec![n_src, k],
                expected: format!("[{}, {k}] (one row per source)", s.len()),
            });
        }
    }
    let peak_mm = match optional(store, path, "/attribution/peak_mm", k, 3)? {
        Some(v) => v.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect(),
        None => vec![[f64::NAN; 3]; k],
    };
    let peak_region = if store.contains("/attribution/peak_region") {
        store.i64s(path, "/attribution/peak_region", Some(k))?
    } else {
        vec![-1; k]
    };
    let unassigned_share = if store.contains("/attribution/unassigned_share") {
        per_component(store, path, "/attribution/unassigned_share", k)?
    } else {
        vec![0.0; k]
    };
    let noise_sd = optional_per_component(store, path, "/attribution/noise_sd", k)?;
    let leader_probability =
        optional_per_component(store, path, "/attribution/leader_probability", k)?;
    let attribution = ResultAttribution {
        share_low: optional(store, path, "/attribution/share_low", n_regions, k)?,
        share_high: optional(store, path, "/attribution/share_high", n_regions, k)?,
        selection_frequency: optional(
            store,
            path,
            "/attribution/selection_frequency",
            n_regions,
            k,
        )?,
        lead_frequency: optional(store, path, "/attribution/lead_frequency", n_regions, k)?,
        region_names,
        share,
        source_map,
        peak_mm,
        peak_region,
        unassigned_share,
        noise_sd,
        leader_probability,
    };
    let dipoles = dipoles_from_store(store, path, k)?;
    let filter_gain = super::filter_gain_file::filter_gain_from_store(
        store,
        path,
        k,
        attribution.region_names.len(),
    )?;
    let time = super::result_time::read_time(store, path, attribution.region_names.len(), k)?;
    let result = ResultFile {
        time,
        filter_gain,
        dipoles,
        path: path.to_path_buf(),
        hashes,
        caution: root_str(store, path, "caution"),
        software: root_str(store, path, "software"),
        notes,
        flags,
        labels,
        component_names,
        k,
        patterns,
        patterns_source,
        electrode_positions,
        sources,
        fit,
        attribution,
    };
    // Whole or refused: nothing downstream checks sizes again.
    check_result_layout(&result)?;
    Ok(result)
}

/// Check that every per-component and per-region array has the size the
/// component and region counts imply, so the page never indexes out of range.
pub(crate) fn check_result_layout(r: &ResultFile) -> Result<(), IoError> {
    let k = r.k;
    let n_ch = r.labels.len();
    let n_reg = r.attribution.region_names.len();
    let a = &r.attribution;
    let f = &r.fit;
    let mut checks: Vec<Check> = vec![
        (
            "/patterns/component_names",
            r.component_names.len(),
            k,
            format!("k = {k}"),
        ),
        (
            "/patterns/values",
            r.patterns.len(),
            n_ch * k,
            format!("n_ch x k = {n_ch} x {k}"),
        ),
        ("/fit/lambda", f.lambda.len(), k, format!("k = {k}")),
        ("/fit/lambda_max", f.lambda_max.len(), k, format!("k = {k}")),
        (
            "/fit/duality_gap",
            f.duality_gap.len(),
            k,
            format!("k = {k}"),
        ),
        ("/fit/iterations", f.iterations.len(), k, format!("k = {k}")),
        (
            "/fit/explained_variance",
            f.explained_variance.len(),
            k,
            format!("k = {k}"),
        ),
        (
            "/fit/residual",
            f.residual.len(),
            n_ch * k,
            format!("n_ch x k = {n_ch} x {k}"),
        ),
        (
            "/fit/coefficients",
            f.coefficients.len(),
            f.n_atoms * k,
            format!("n_atoms x k = {} x {k}", f.n_atoms),
        ),
        (
            "/attribution/share",
            a.share.len(),
            n_reg * k,
            format!("n_regions x k = {n_reg} x {k}"),
        ),
        (
            "/attribution/peak_mm",
            a.peak_mm.len(),
            k,
            format!("k = {k} rows"),
        ),
        (
            "/attribution/peak_region",
            a.peak_region.len(),
            k,
            format!("k = {k}"),
        ),
        (
            "/attribution/unassigned_share",
            a.unassigned_share.len(),
            k,
            format!("k = {k}"),
        ),
    ];
    let region_arrays = [
        ("/attribution/share_low", &a.share_low),
        ("/attribution/share_high", &a.share_high),
        ("/attribution/selection_frequency", &a.selection_frequency),
        ("/attribution/lead_frequency", &a.lead_frequency),
    ];
    for (field, values) in region_arrays {
        if let Some(v) = values {
            checks.push((
                field,
                v.len(),
                n_reg * k,
                format!("n_regions x k = {n_reg} x {k}"),
            ));
        }
    }
    let component_arrays = [
        ("/attribution/noise_sd", &a.noise_sd),
        ("/attribution/leader_probability", &a.leader_probability),
    ];
    for (field, values) in component_arrays {
        if let Some(v) = values {
            checks.push((field, v.len(), k, format!("k = {k}")));
        }
    }
    if let (Some(g), Some(s)) = (&r.filter_gain, &r.sources) {
        let n_src = s.len();
        checks.push((
            "/filter_gain/source",
            g.source.len(),
            n_src * k,
            format!("n_src x k = {n_src} x {k}"),
        ));
    }
    if let Some(v) = &f.reconstruction {
        checks.push((
            "/fit/reconstruction",
            v.len(),
            n_ch * k,
            format!("n_ch x k = {n_ch} x {k}"),
        ));
    }
    if let Some(p) = &f.path {
        let n = p.n_points * k;
        let expected = format!("n_path x k = {} x {k}", p.n_points);
        checks.push(("/fit/path/ratio", p.ratio.len(), n, expected.clone()));
        checks.push((
            "/fit/path/explained_variance",
            p.explained_variance.len(),
            n,
            expected.clone(),
        ));
        checks.push((
            "/fit/path/active_patches",
            p.active_patches.len(),
            n,
            expected.clone(),
        ));
        checks.push(("/fit/path/bic", p.bic.len(), n, expected));
    }
    if let Some(e) = &r.electrode_positions {
        checks.push((
            "/montage/positions_mm",
            e.len(),
            n_ch,
            format!("n_ch = {n_ch} rows"),
        ));
    }
    if let Some(s) = &r.sources {
        let n_src = s.len();
        if !a.source_map.is_empty() {
            checks.push((
                "/attribution/source_map",
                a.source_map.len(),
                n_src * k,
                format!("n_src x k = {n_src} x {k}"),
            ));
        }
        checks.push((
            "/sources/region",
            s.region.len(),
            n_src,
            format!("n_src = {n_src}"),
        ));
    }
    check_sizes(&r.path, checks)
}
