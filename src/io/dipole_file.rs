//! The dipole fit's files: `dipoles.csv` and the `/dipole/...` group of `result.h5`.
//!
//! One row per fitted dipole (a component has one, or two for a symmetric
//! pair). Positions in mm, moments in A·m, covariances in mm². In HDF5:
//! `/dipole/component` and `/dipole/dipole` (n_rows) say which component and
//! which dipole of it a row is; `/dipole/positions_mm` and `/dipole/moments`
//! (n_rows × 3), `/dipole/covariance_mm2` (n_rows × 3 × 3),
//! `/dipole/ci95_radius_mm` (n_rows), `/dipole/ci95_semi_axes_mm`
//! (n_rows × 3), `/dipole/nearest_region` (n_rows strings),
//! `/dipole/distance_to_cortex_mm` (n_rows), `/dipole/residual_variance` and
//! `/dipole/noise_sd` (k); with an attribution in the same file also
//! `/dipole/distance_to_patch_peak_mm` (n_rows) from `/attribution/peak_mm`.

use std::path::Path;

use super::error::IoError;
use super::result_file::{insert_patterns, insert_provenance};
use super::store::{Array, Attr, Dataset, Store};
use super::table::{format_fixed, write_table, Delimiter, TableError};

/// One fitted dipole as the files hold it.
#[derive(Debug, Clone, PartialEq)]
pub struct DipoleRow {
    /// Component index (0-based).
    pub component: usize,
    /// Dipole of the component: 0, or 1 for the mirrored one of a pair.
    pub dipole: usize,
    /// Position (mm).
    pub position_mm: [f64; 3],
    /// Moment (A·m).
    pub moment: [f64; 3],
    /// Residual variance of the component's fit.
    pub residual_variance: f64,
    /// Region of the nearest cortex vertex (`none` when it has none).
    pub region: String,
    /// Distance to the nearest cortex vertex (mm).
    pub distance_to_cortex_mm: f64,
    /// Distance to the peak (largest |source|) of the same component's
    /// patch fit (mm); NaN without an attribution beside the dipoles.
    pub distance_to_patch_peak_mm: f64,
    /// Radius of the 95 % confidence region (mm).
    pub ci95_radius_mm: f64,
    /// Semi-axes of the 95 % ellipsoid (mm), largest first.
    pub ci95_semi_axes_mm: [f64; 3],
    /// Position covariance (mm²).
    pub covariance_mm2: [[f64; 3]; 3],
}

/// Everything of one dipole run that goes into `result.h5`.
#[derive(Debug, Clone)]
pub struct DipoleRecord<'a> {
    /// The rows, component by component.
    pub rows: &'a [DipoleRow],
    /// Number of components.
    pub k: usize,
    /// Residual variance per component.
    pub residual_variance: &'a [f64],
    /// Noise standard deviation per component (units of the patterns).
    pub noise_sd: &'a [f64],
    /// Whether the noise level was estimated from the residual.
    pub noise_sd_estimated: bool,
    /// `single` or `symmetric-pair`.
    pub model: &'a str,
    /// Search constraint: distance kept inside the innermost sphere (mm).
    pub margin_mm: f64,
    /// Search grid spacing (mm).
    pub grid_spacing_mm: f64,
}

/// Patterns written with a new `result.h5` (none from an attribution).
#[derive(Debug, Clone)]
pub struct PatternsRecord<'a> {
    /// Channel labels.
    pub labels: &'a [String],
    /// Average-referenced patterns, n_ch × k row-major.
    pub values: &'a [f64],
    /// `patterns` or `weights+covariance`.
    pub source: &'a str,
    /// Component names.
    pub component_names: &'a [String],
}

/// Each row's distance (mm) to its component's patch-fit peak in `peaks_mm`
/// (one per component, mm; NaN where a component has no peak).
pub fn set_distance_to_patch_peak(rows: &mut [DipoleRow], peaks_mm: &[[f64; 3]]) {
    for r in rows {
        r.distance_to_patch_peak_mm = match peaks_mm.get(r.component) {
            Some(p) => (0..3)
                .map(|a| (r.position_mm[a] - p[a]).powi(2))
                .sum::<f64>()
                .sqrt(),
            None => f64::NAN,
        };
    }
}

/// Write `dipoles.csv` atomically; with `pairs` a `dipole` column follows
/// `component`. `distance_to_patch_peak_mm` is `n/a` without an attribution
/// beside the dipoles; `component_name` ends each row, as in regions.csv.
pub fn write_dipoles_csv(
    path: &Path,
    rows: &[DipoleRow],
    pairs: bool,
    names: &[String],
) -> Result<(), TableError> {
    let mut header = vec!["component"];
    if pairs {
        header.push("dipole");
    }
    header.extend([
        "x_mm",
        "y_mm",
        "z_mm",
        "moment_x",
        "moment_y",
        "moment_z",
        "residual_variance",
        "region",
        "distance_to_cortex_mm",
        "ci95_radius_mm",
        "distance_to_patch_peak_mm",
        "component_name",
    ]);
    let lines: Vec<Vec<String>> = rows
        .iter()
        .map(|r| {
            let mut f = vec![r.component.to_string()];
            if pairs {
                f.push(r.dipole.to_string());
            }
            f.extend(r.position_mm.iter().map(|v| format_fixed(*v, 3, "n/a")));
            f.extend(r.moment.iter().map(|v| format!("{v:.6e}")));
            f.push(format!("{:.6e}", r.residual_variance));
            f.push(r.region.clone());
            f.push(format_fixed(r.distance_to_cortex_mm, 3, "n/a"));
            f.push(format_fixed(r.ci95_radius_mm, 3, "n/a"));
            f.push(format_fixed(r.distance_to_patch_peak_mm, 3, "n/a"));
            f.push(names.get(r.component).cloned().unwrap_or_default());
            f
        })
        .collect();
    write_table(path, Delimiter::Comma, &header, &lines)
}

/// What an attribution's `result.h5` holds that the dipole run uses.
#[derive(Debug, Clone)]
pub struct ExistingResult {
    /// The whole file.
    pub store: Store,
    /// `/attribution/peak_mm`, one row per component (NaN where no peak);
    /// `None` when the file holds no attribution (e.g. an earlier dipole run).
    pub peaks_mm: Option<Vec<[f64; 3]>>,
    /// `/patterns/component_names`, when present.
    pub component_names: Option<Vec<String>>,
}

/// Read a `result.h5` already in the output folder (an attribution's, or an
/// earlier dipole run's) and check that it holds the same channels
/// (`/patterns/labels`, in order) and, where it has an attribution, `k` peaks.
pub fn read_existing_result(
    path: &Path,
    labels: &[String],
    k: usize,
) -> Result<ExistingResult, IoError> {
    let store = Store::read(path)?;
    let found = store.strings(path, "/patterns/labels", None)?;
    if found != labels {
        return Err(IoError::Value {
            path: path.to_path_buf(),
            object: "/patterns/labels".to_string(),
            message: format!(
                "holds {} channels that differ from the decoder's {} (or their order): the attribution was made from other patterns",
                found.len(),
                labels.len()
            ),
        });
    }
    let peaks_mm = if store.contains("/attribution/peak_mm") {
        Some(peaks(&store, path, k)?)
    } else {
        None
    };
    let component_names = if store.contains("/patterns/component_names") {
        Some(store.strings(path, "/patterns/component_names", Some(k))?)
    } else {
        None
    };
    Ok(ExistingResult {
        store,
        peaks_mm,
        component_names,
    })
}

/// `/attribution/peak_mm` as k rows (NaN allowed: a component without a peak).
fn peaks(store: &Store, path: &Path, k: usize) -> Result<Vec<[f64; 3]>, IoError> {
    let ds = store.dataset(path, "/attribution/peak_mm")?;
    let values = match &ds.data {
        Array::F64(v) if ds.shape == [k, 3] => v.clone(),
        Array::F64(_) => {
            return Err(IoError::Shape {
                path: path.to_path_buf(),
                dataset: "/attribution/peak_mm".to_string(),
                found: ds.shape.clone(),
                expected: format!("[k = {k}, 3]: one peak per decoder component"),
            })
        }
        other => {
            return Err(IoError::Type {
                path: path.to_path_buf(),
                object: "/attribution/peak_mm".to_string(),
                found: other.kind(),
                expected: "floats".to_string(),
            })
        }
    };
    Ok(values.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect())
}

/// Replace the `/dipole` group of `store` by `record`; with `peaks_mm` (one
/// per component) also write `/dipole/distance_to_patch_peak_mm`.
pub fn insert_dipole_group(
    store: &mut Store,
    record: &DipoleRecord<'_>,
    peaks_mm: Option<&[[f64; 3]]>,
) {
    store
        .datasets
        .retain(|name, _| !name.starts_with("/dipole/"));
    store.group_attrs.remove("/dipole");
    let rows = record.rows;
    let n = rows.len();
    let ints = |f: &dyn Fn(&DipoleRow) -> usize| rows.iter().map(|r| f(r) as i64).collect();
    let triples = |f: &dyn Fn(&DipoleRow) -> [f64; 3]| rows.iter().flat_map(f).collect();
    store.insert(
        "/dipole/component",
        Dataset::i64(vec![n], ints(&|r| r.component)),
    );
    store.insert("/dipole/dipole", Dataset::i64(vec![n], ints(&|r| r.dipole)));
    store.insert(
        "/dipole/positions_mm",
        Dataset::f64(vec![n, 3], triples(&|r| r.position_mm)),
    );
    let mut moments = Dataset::f64(vec![n, 3], triples(&|r| r.moment));
    moments.attrs.insert(
        "unit".to_string(),
        Attr::Str("A·m (when the patterns are in V)".to_string()),
    );
    store.insert("/dipole/moments", moments);
    store.insert(
        "/dipole/covariance_mm2",
        Dataset::f64(
            vec![n, 3, 3],
            rows.iter()
                .flat_map(|r| {
                    r.covariance_mm2
                        .iter()
                        .flatten()
                        .copied()
                        .collect::<Vec<_>>()
                })
                .collect(),
        ),
    );
    store.insert(
        "/dipole/ci95_radius_mm",
        Dataset::f64(vec![n], rows.iter().map(|r| r.ci95_radius_mm).collect()),
    );
    store.insert(
        "/dipole/ci95_semi_axes_mm",
        Dataset::f64(vec![n, 3], triples(&|r| r.ci95_semi_axes_mm)),
    );
    store.insert(
        "/dipole/nearest_region",
        Dataset::strings(rows.iter().map(|r| r.region.clone()).collect()),
    );
    store.insert(
        "/dipole/distance_to_cortex_mm",
        Dataset::f64(
            vec![n],
            rows.iter().map(|r| r.distance_to_cortex_mm).collect(),
        ),
    );
    store.insert(
        "/dipole/residual_variance",
        Dataset::f64(vec![record.k], record.residual_variance.to_vec()),
    );
    store.insert(
        "/dipole/noise_sd",
        Dataset::f64(vec![record.k], record.noise_sd.to_vec()),
    );
    if let Some(peaks) = peaks_mm {
        let mut rows = rows.to_vec();
        set_distance_to_patch_peak(&mut rows, peaks);
        store.insert(
            "/dipole/distance_to_patch_peak_mm",
            Dataset::f64(
                vec![n],
                rows.iter().map(|r| r.distance_to_patch_peak_mm).collect(),
            ),
        );
    }
    let attrs = [
        ("model", Attr::Str(record.model.to_string())),
        ("chi2_3dof_95", Attr::F64(crate::dipole::CHI2_3DOF_95)),
        ("margin_mm", Attr::F64(record.margin_mm)),
        ("grid_spacing_mm", Attr::F64(record.grid_spacing_mm)),
        (
            "noise_sd_estimated",
            Attr::I64(i64::from(record.noise_sd_estimated)),
        ),
    ];
    for (name, value) in attrs {
        store.set_group_attr("/dipole", name, value);
    }
}

/// A new `result.h5` holding the patterns and the `/dipole` group, written atomically.
pub fn write_new_result(
    path: &Path,
    patterns: &PatternsRecord<'_>,
    record: &DipoleRecord<'_>,
) -> Result<(), IoError> {
    let mut s = Store::new();
    insert_provenance(&mut s);
    insert_patterns(
        &mut s,
        patterns.labels,
        patterns.values,
        record.k,
        patterns.source,
        patterns.component_names,
    );
    insert_dipole_group(&mut s, record, None);
    s.write_atomic(path)
}

/// Add (or replace) the `/dipole` group in an attribution's `result.h5`
/// read by [`read_existing_result`], writing the whole file atomically to `path`.
pub fn write_into_result(
    path: &Path,
    existing: &ExistingResult,
    record: &DipoleRecord<'_>,
) -> Result<(), IoError> {
    let mut s = existing.store.clone();
    insert_dipole_group(&mut s, record, existing.peaks_mm.as_deref());
    s.write_atomic(path)
}
