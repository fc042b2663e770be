//! The `leadfield.h5` layout of design.md: montage, sources and gain, read
//! into and written from the model [`crate::forward::LeadField`].
//!
//! Positions are millimetres in the file (`*_mm`), metres in memory; areas
//! are mm² in the file, m² in memory; the gain is V/(A·m) in both.

use std::path::Path;

use super::error::IoError;
use super::store::{Attr, Dataset, Store};
use crate::forward::LeadField;
use crate::geometry::{SourceSpace, Vec3};

const MM: f64 = 1e3;

fn points_mm(points: &[Vec3]) -> Vec<f64> {
    points
        .iter()
        .flat_map(|p| p.iter().map(|v| v * MM))
        .collect()
}

fn points_from(values: &[f64], scale: f64) -> Vec<Vec3> {
    values
        .chunks_exact(3)
        .map(|c| [c[0] * scale, c[1] * scale, c[2] * scale])
        .collect()
}

/// Put `/montage/labels` and `/montage/positions_mm` into `store`.
pub fn insert_montage(store: &mut Store, labels: &[String], positions: &[Vec3]) {
    store.insert("/montage/labels", Dataset::strings(labels.to_vec()));
    store.insert(
        "/montage/positions_mm",
        Dataset::f64(vec![positions.len(), 3], points_mm(positions)),
    );
}

/// Put the `/sources/...` datasets of a source space into `store`.
pub fn insert_sources(store: &mut Store, s: &SourceSpace) {
    let n_src = s.len();
    store.insert(
        "/sources/positions_mm",
        Dataset::f64(vec![n_src, 3], points_mm(&s.positions)),
    );
    store.insert(
        "/sources/normals",
        Dataset::f64(
            vec![n_src, 3],
            s.normals.iter().flatten().copied().collect(),
        ),
    );
    store.insert(
        "/sources/areas_mm2",
        Dataset::f64(vec![n_src], s.areas.iter().map(|a| a * MM * MM).collect()),
    );
    store.insert(
        "/sources/triangles",
        Dataset::i64(
            vec![s.triangles.len(), 3],
            s.triangles.iter().flatten().map(|&v| v as i64).collect(),
        ),
    );
    store.insert(
        "/sources/region",
        Dataset::i64(vec![n_src], s.region.iter().map(|&r| r as i64).collect()),
    );
    store.insert(
        "/sources/region_names",
        Dataset::strings(s.region_names.clone()),
    );
}

/// Put the lead-field datasets into `store` (used by the dictionary file too).
pub fn insert_leadfield(store: &mut Store, lf: &LeadField) {
    let n_ch = lf.n_channels();
    let n_src = lf.n_sources();
    insert_montage(store, &lf.labels, &lf.electrode_positions);
    insert_sources(store, &lf.sources);
    let mut gain = Dataset::f64(vec![n_ch, n_src], lf.gain.clone());
    gain.attrs
        .insert("unit".to_string(), Attr::Str("V/(A*m)".to_string()));
    gain.attrs
        .insert("reference".to_string(), Attr::Str(lf.reference.clone()));
    gain.attrs
        .insert("head_model".to_string(), Attr::Str(lf.head_model.clone()));
    store.insert("/leadfield/gain", gain);
    if let Some(xyz) = &lf.gain_xyz {
        store.insert(
            "/leadfield/gain_xyz",
            Dataset::f64(vec![n_ch, n_src, 3], xyz.clone()),
        );
    }
}

/// Write `leadfield.h5` atomically.
pub fn write_leadfield(path: &Path, lf: &LeadField) -> Result<(), IoError> {
    let mut store = Store::new();
    insert_leadfield(&mut store, lf);
    super::cache::seal(&mut store);
    store.write_atomic(path)
}

/// Read `leadfield.h5` (or the lead-field part of `dictionary.h5`),
/// checking shapes, finiteness, unit normals and region indices.
pub fn read_leadfield(path: &Path) -> Result<LeadField, IoError> {
    let store = Store::read_only(path, &|name| in_groups(name, LEADFIELD_GROUPS))?;
    leadfield_from_store(&store, path)
}

/// The groups a lead field is read from.
pub(crate) const LEADFIELD_GROUPS: &[&str] = &["/montage", "/sources", "/leadfield"];

/// True when the dataset `name` lies in one of `groups`.
pub(crate) fn in_groups(name: &str, groups: &[&str]) -> bool {
    groups.iter().any(|g| {
        name.strip_prefix(g)
            .is_some_and(|rest| rest.starts_with('/'))
    })
}

fn value_error(path: &Path, object: &str, message: String) -> IoError {
    IoError::Value {
        path: path.to_path_buf(),
        object: object.to_string(),
        message,
    }
}

/// Extract the lead-field layout from a store read from `path`.
pub fn leadfield_from_store(store: &Store, path: &Path) -> Result<LeadField, IoError> {
    let labels = store.strings(path, "/montage/labels", None)?;
    let n_ch = labels.len();
    let (gain, _, n_src) = store.f64_matrix(path, "/leadfield/gain", Some(n_ch), None)?;
    if !gain.is_empty() && gain.iter().all(|&g| g == 0.0) {
        return Err(value_error(
            path,
            "/leadfield/gain",
            "every value is zero; expected a lead field with a scalp field".to_string(),
        ));
    }
    let (epos, _, _) = store.f64_matrix(path, "/montage/positions_mm", Some(n_ch), Some(3))?;
    let sources = sources_from_store(store, path, Some(n_src))?;
    let gain_xyz = if store.contains("/leadfield/gain_xyz") {
        let (v, shape) = store.f64_array(path, "/leadfield/gain_xyz")?;
        if shape != [n_ch, n_src, 3] {
            return Err(IoError::Shape {
                path: path.to_path_buf(),
                dataset: "/leadfield/gain_xyz".to_string(),
                found: shape,
                expected: format!("[{n_ch}, {n_src}, 3]"),
            });
        }
        Some(v)
    } else {
        None
    };
    let attr_or = |name: &str, default: &str| {
        store
            .attr_str(path, "/leadfield/gain", name)
            .unwrap_or_else(|_| default.to_string())
    };
    Ok(LeadField {
        labels,
        electrode_positions: points_from(&epos, 1.0 / MM),
        sources,
        gain,
        gain_xyz,
        reference: attr_or("reference", "unknown"),
        head_model: attr_or("head_model", "{}"),
    })
}

/// Read the `/sources/...` datasets from a store read from `path` (positions,
/// normals; areas, triangles and regions when present), checking shapes,
/// unit normals and indices. `expected` is the source count when known.
pub fn sources_from_store(
    store: &Store,
    path: &Path,
    expected: Option<usize>,
) -> Result<SourceSpace, IoError> {
    let (spos, n_src, _) = store.f64_matrix(path, "/sources/positions_mm", expected, Some(3))?;
    let (normals, _, _) = store.f64_matrix(path, "/sources/normals", Some(n_src), Some(3))?;
    let normals = points_from(&normals, 1.0);
    for (i, n) in normals.iter().enumerate() {
        let len = crate::geometry::norm(*n);
        if (len - 1.0).abs() > 1e-6 {
            return Err(value_error(
                path,
                "/sources/normals",
                format!("row {i} has length {len}, expected a unit vector"),
            ));
        }
    }
    let areas = if store.contains("/sources/areas_mm2") {
        store
            .f64s(path, "/sources/areas_mm2", Some(n_src))?
            .iter()
            .map(|a| a / (MM * MM))
            .collect()
    } else {
        vec![0.0; n_src]
    };
    let triangles = if store.contains("/sources/triangles") {
        let (t, _, _) = store.i64_matrix(path, "/sources/triangles", None, Some(3))?;
        let mut out = Vec::with_capacity(t.len() / 3);
        for (i, c) in t.chunks_exact(3).enumerate() {
            let mut tri = [0u32; 3];
            for d in 0..3 {
                if c[d] < 0 || c[d] as usize >= n_src {
                    return Err(value_error(
                        path,
                        "/sources/triangles",
                        format!(
                            "triangle {i} has vertex index {}, expected 0..{}",
                            c[d], n_src
                        ),
                    ));
                }
                tri[d] = c[d] as u32;
            }
            out.push(tri);
        }
        out
    } else {
        Vec::new()
    };
    let region_names = if store.contains("/sources/region_names") {
        store.strings(path, "/sources/region_names", None)?
    } else {
        Vec::new()
    };
    let region = if store.contains("/sources/region") {
        let r = store.i64s(path, "/sources/region", Some(n_src))?;
        let mut out = Vec::with_capacity(n_src);
        for (i, &v) in r.iter().enumerate() {
            if v < -1 || v >= region_names.len() as i64 {
                return Err(value_error(
                    path,
                    "/sources/region",
                    format!(
                        "source {i} has region {v}, expected -1 or 0..{}",
                        region_names.len()
                    ),
                ));
            }
            out.push(v as i32);
        }
        out
    } else {
        vec![-1; n_src]
    };
    Ok(SourceSpace {
        positions: points_from(&spos, 1.0 / MM),
        normals,
        areas,
        triangles,
        region,
        region_names,
    })
}

/// Channel labels with their electrode positions (m).
pub type LabelledPositions = (Vec<String>, Vec<Vec3>);

/// Read `/montage/labels` and `/montage/positions_mm` (metres) when both are present.
pub fn montage_from_store(
    store: &Store,
    path: &Path,
) -> Result<Option<LabelledPositions>, IoError> {
    if !(store.contains("/montage/labels") && store.contains("/montage/positions_mm")) {
        return Ok(None);
    }
    let labels = store.strings(path, "/montage/labels", None)?;
    let (epos, _, _) =
        store.f64_matrix(path, "/montage/positions_mm", Some(labels.len()), Some(3))?;
    Ok(Some((labels, points_from(&epos, 1.0 / MM))))
}
