//! `check`: validate a mesh, label file, electrodes file, table, NumPy file,
//! JSON summary or HDF5 store and say what it holds, in lines for a person
//! to read (tables and JSON in `check_tables`; job scripts and head files
//! in `batch::inspect`, which sits above the jobs).

use std::path::Path;

use super::error::{JobError, JobResult};
use crate::geometry::{validate, Mesh, MeshReport};
use crate::io::{gifti, leadfield_file, npy, off, ply, Array, Store};

fn extension(path: &Path) -> String {
    path.extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default()
}

fn mesh_lines(path: &Path, mesh: &Mesh) -> Result<Vec<String>, JobError> {
    let r = validate(mesh).input(format!("{}: mesh is not sound", path.display()))?;
    Ok(report_lines(path, &r))
}

fn report_lines(path: &Path, r: &MeshReport) -> Vec<String> {
    let mut lines = vec![
        format!("{}: triangle mesh, sound", path.display()),
        format!(
            "  {} vertices, {} triangles, {} edges, {} component(s), {}",
            r.n_vertices,
            r.n_triangles,
            r.n_edges,
            r.n_components(),
            if r.closed {
                "closed".to_string()
            } else {
                format!("open ({} boundary edges)", r.n_boundary_edges)
            }
        ),
        format!(
            "  area {:.1} cm², Euler characteristic {}{}",
            r.area_m2 * 1e4,
            r.euler_characteristic,
            r.volume_m3
                .map(|v| format!(", enclosed volume {:.1} cm³", v * 1e6))
                .unwrap_or_default()
        ),
    ];
    if r.n_isolated_vertices > 0 {
        lines.push(format!(
            "  note: {} vertices belong to no triangle",
            r.n_isolated_vertices
        ));
    }
    lines
}

fn gifti_lines(path: &Path) -> Result<Vec<String>, JobError> {
    let g = gifti::read_gifti(path).input("reading GIFTI")?;
    if g.arrays.iter().any(|a| a.intent == "NIFTI_INTENT_POINTSET") {
        let mesh = gifti::read_gifti_surface(path).input("reading GIFTI surface")?;
        return mesh_lines(path, &mesh);
    }
    if g.arrays.iter().any(|a| a.intent == "NIFTI_INTENT_LABEL") {
        let (labels, names) = gifti::read_gifti_labels(path).input("reading GIFTI labels")?;
        let unlabelled = labels.iter().filter(|&&l| l < 0).count();
        return Ok(vec![format!(
            "{}: label array, {} vertices, {} named labels, {} unlabelled vertices",
            path.display(),
            labels.len(),
            names.len(),
            unlabelled
        )]);
    }
    Ok(vec![format!(
        "{}: GIFTI with {} data arrays (no surface or label array)",
        path.display(),
        g.arrays.len()
    )])
}

fn describe_npy(a: &npy::NpyArray) -> String {
    let kind = match &a.data {
        npy::NpyData::F32(_) => "float32",
        npy::NpyData::F64(_) => "float64",
        npy::NpyData::I32(_) => "int32",
        npy::NpyData::I64(_) => "int64",
        _ => "strings",
    };
    format!("{kind} array of shape {:?}", a.shape)
}

fn store_lines(path: &Path) -> Result<Vec<String>, JobError> {
    let store = Store::read(path).input("reading HDF5")?;
    let mut lines = vec![format!(
        "{}: HDF5 store, {} datasets",
        path.display(),
        store.datasets.len()
    )];
    for (name, ds) in &store.datasets {
        let kind = match &ds.data {
            Array::F64(_) => "float".to_string(),
            Array::I64(_) => "integer".to_string(),
            Array::Str(_) => "strings".to_string(),
            Array::Unsupported(t) => format!("unsupported ({t})"),
        };
        lines.push(format!("  {name}: {kind} {:?}", ds.shape));
    }
    if store.contains("/leadfield/gain") {
        let lf = leadfield_file::leadfield_from_store(&store, path).input("checking lead field")?;
        lines.push(format!(
            "  lead field sound: {} channels x {} sources, reference {}",
            lf.n_channels(),
            lf.n_sources(),
            lf.reference
        ));
    }
    Ok(lines)
}

/// Read `path` by its extension, check it, and describe what it holds.
pub fn check_file(path: &Path) -> Result<Vec<String>, JobError> {
    if !path.is_file() {
        return Err(JobError::input(format!("{}: no such file", path.display())));
    }
    match extension(path).as_str() {
        "gii" => gifti_lines(path),
        "ply" => mesh_lines(path, &ply::read_ply(path).input("reading PLY")?),
        "off" => mesh_lines(path, &off::read_off(path).input("reading OFF")?),
        "tsv" | "csv" | "txt" => super::check_tables::table_lines(path),
        "json" => super::check_tables::json_lines(path),
        "npy" => {
            let a = npy::read_npy(path).input("reading NumPy file")?;
            Ok(vec![format!("{}: {}", path.display(), describe_npy(&a))])
        }
        "npz" => {
            let arrays = npy::read_npz(path).input("reading NumPy archive")?;
            let mut lines = vec![format!(
                "{}: NumPy archive, {} arrays",
                path.display(),
                arrays.len()
            )];
            lines.extend(
                arrays
                    .iter()
                    .map(|(name, a)| format!("  {name}: {}", describe_npy(a))),
            );
            Ok(lines)
        }
        "h5" | "hdf5" | "mat" => store_lines(path),
        other => Err(JobError::input(format!(
            "{}: unknown file kind {other:?}; expected .gii, .ply, .off, .tsv, .csv, .txt, .json, .npy, .npz, .h5 or .mat (or a .toml job script or head file)",
            path.display()
        ))),
    }
}
