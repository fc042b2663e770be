//! `patchwise check FILE`: validate a mesh, label file, electrodes file,
//! NumPy file or HDF5 store and say what it holds.

use std::path::{Path, PathBuf};

use patchwise::geometry::{validate, Mesh, MeshReport};
use patchwise::io::{electrodes, gifti, leadfield_file, npy, off, ply, table, Array, Store};

use crate::cli_error::OrExit;
use crate::CliError;

/// Arguments of `patchwise check`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The file to check (.gii, .ply, .off, .tsv, .csv, .npy, .npz, .h5, .mat).
    pub file: PathBuf,
}

fn extension(path: &Path) -> String {
    path.extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default()
}

fn print_mesh(path: &Path, mesh: &Mesh) -> Result<(), CliError> {
    let report = validate(mesh).bad_input(format!("{}: mesh is not sound", path.display()))?;
    print_report(path, &report);
    Ok(())
}

fn print_report(path: &Path, r: &MeshReport) {
    outln!("{}: triangle mesh, sound", path.display());
    outln!(
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
    );
    outln!(
        "  area {:.1} cm², Euler characteristic {}{}",
        r.area_m2 * 1e4,
        r.euler_characteristic,
        r.volume_m3
            .map(|v| format!(", enclosed volume {:.1} cm³", v * 1e6))
            .unwrap_or_default()
    );
    if r.n_isolated_vertices > 0 {
        outln!(
            "  note: {} vertices belong to no triangle",
            r.n_isolated_vertices
        );
    }
}

fn check_gifti(path: &Path) -> Result<(), CliError> {
    let g = gifti::read_gifti(path).bad_input("reading GIFTI")?;
    if g.arrays.iter().any(|a| a.intent == "NIFTI_INTENT_POINTSET") {
        let mesh = gifti::read_gifti_surface(path).bad_input("reading GIFTI surface")?;
        return print_mesh(path, &mesh);
    }
    if g.arrays.iter().any(|a| a.intent == "NIFTI_INTENT_LABEL") {
        let (labels, names) = gifti::read_gifti_labels(path).bad_input("reading GIFTI labels")?;
        let unlabelled = labels.iter().filter(|&&l| l < 0).count();
        outln!(
            "{}: label array, {} vertices, {} named labels, {} unlabelled vertices",
            path.display(),
            labels.len(),
            names.len(),
            unlabelled
        );
        return Ok(());
    }
    outln!(
        "{}: GIFTI with {} data arrays (no surface or label array)",
        path.display(),
        g.arrays.len()
    );
    Ok(())
}

fn check_table(path: &Path) -> Result<(), CliError> {
    let t = table::read_table(path).bad_input("reading table")?;
    let has = |n: &str| t.header.iter().any(|h| h.eq_ignore_ascii_case(n));
    if has("x") || has("y") || has("z") {
        let m = electrodes::read_electrodes(path).bad_input("reading electrodes")?;
        outln!(
            "{}: electrodes file, {} electrodes (positions in mm): {}",
            path.display(),
            m.len(),
            m.labels.join(" ")
        );
    } else {
        let ch = electrodes::read_channel_list(path).bad_input("reading channel list")?;
        outln!("{}: channel list, {} channels", path.display(), ch.len());
    }
    Ok(())
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

fn check_store(path: &Path) -> Result<(), CliError> {
    let store = Store::read(path).bad_input("reading HDF5")?;
    outln!(
        "{}: HDF5 store, {} datasets",
        path.display(),
        store.datasets.len()
    );
    for (name, ds) in &store.datasets {
        let kind = match &ds.data {
            Array::F64(_) => "float".to_string(),
            Array::I64(_) => "integer".to_string(),
            Array::Str(_) => "strings".to_string(),
            Array::Unsupported(t) => format!("unsupported ({t})"),
        };
        outln!("  {name}: {kind} {:?}", ds.shape);
    }
    if store.contains("/leadfield/gain") {
        let lf =
            leadfield_file::leadfield_from_store(&store, path).bad_input("checking lead field")?;
        outln!(
            "  lead field sound: {} channels x {} sources, reference {}",
            lf.n_channels(),
            lf.n_sources(),
            lf.reference
        );
    }
    Ok(())
}

/// Run `patchwise check`.
pub fn exec(args: Args) -> Result<(), CliError> {
    let path = args.file.as_path();
    if !path.is_file() {
        return Err(CliError::bad_input(anyhow::anyhow!(
            "{}: no such file",
            path.display()
        )));
    }
    match extension(path).as_str() {
        "gii" => check_gifti(path),
        "ply" => print_mesh(path, &ply::read_ply(path).bad_input("reading PLY")?),
        "off" => print_mesh(path, &off::read_off(path).bad_input("reading OFF")?),
        "tsv" | "csv" | "txt" => check_table(path),
        "npy" => {
            let a = npy::read_npy(path).bad_input("reading NumPy file")?;
            outln!("{}: {}", path.display(), describe_npy(&a));
            Ok(())
        }
        "npz" => {
            let arrays = npy::read_npz(path).bad_input("reading NumPy archive")?;
            outln!("{}: NumPy archive, {} arrays", path.display(), arrays.len());
            for (name, a) in &arrays {
                outln!("  {name}: {}", describe_npy(a));
            }
            Ok(())
        }
        "h5" | "hdf5" | "mat" => check_store(path),
        other => Err(CliError::bad_input(anyhow::anyhow!(
            "{}: unknown file kind {other:?}; expected .gii, .ply, .off, .tsv, .csv, .npy, .npz, .h5 or .mat",
            path.display()
        ))),
    }
}
