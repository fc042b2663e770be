//! `leadfield import` as a library call: a lead field made elsewhere, read
//! from .npy files or one .npz/.h5, checked (shapes, unit normals, triangle
//! indices, one label per gain row), turned into SI units (positions mm ->
//! m, areas from the triangles or the point-source area) and re-referenced
//! to the common average when asked.
//!
//! A job rather than `io`: the file reading is `io`'s (`npy`, `Store`,
//! `electrodes`, `sources_file`); what is here is the checking, the unit
//! conversion, the areas and the re-referencing that make a lead field of
//! those arrays, and the note it gives.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::error::{JobError, JobResult};
use super::forward::point_source_note;
use super::observer::JobObserver;
use crate::dictionary::POINT_SOURCE_AREA_M2;
use crate::forward::LeadField;
use crate::geometry::{norm, normalize, SourceSpace};
use crate::io::electrodes::read_channel_list;
use crate::io::npy::{read_npy_f64, read_npz, NpyData};
use crate::io::sources_file::read_regions;
use crate::io::{Dataset, Store};

/// The inputs of `leadfield import` (paths; positions inside are mm).
#[derive(clap::Args, Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct ImportParams {
    /// One .npz or .h5 holding gain, positions, normals, channels (and optionally triangles).
    #[arg(long)]
    pub from: Option<PathBuf>,
    /// Gain, n_ch x n_src, V/(A·m) (.npy).
    #[arg(long)]
    pub gain: Option<PathBuf>,
    /// Source positions, n_src x 3, mm (.npy).
    #[arg(long)]
    pub positions: Option<PathBuf>,
    /// Source normals, n_src x 3, unit (.npy).
    #[arg(long)]
    pub normals: Option<PathBuf>,
    /// Channel labels (one a line, or a BIDS channels.tsv).
    #[arg(long)]
    pub channels: Option<PathBuf>,
    /// Triangles, n_tri x 3, 0-based (.npy).
    #[arg(long)]
    pub triangles: Option<PathBuf>,
    /// Region label per source.
    #[arg(long)]
    pub regions: Option<PathBuf>,
    /// The gain's reference: average (default; re-referenced if not already) or none.
    #[arg(long, default_value = "average")]
    pub reference: String,
}

super::params::declared_default!(ImportParams);

impl ImportParams {
    /// The input files given, as (what, path).
    pub fn input_files(&self) -> Vec<(&'static str, &Path)> {
        [
            ("--from file", &self.from),
            ("gain", &self.gain),
            ("positions", &self.positions),
            ("normals", &self.normals),
            ("channel list", &self.channels),
            ("triangles", &self.triangles),
            ("regions", &self.regions),
        ]
        .into_iter()
        .filter_map(|(w, p)| p.as_deref().map(|p| (w, p)))
        .collect()
    }
}

fn bad(message: String) -> JobError {
    JobError::input(message)
}

/// The `--from` file as a store: an .npz's arrays under `/name`, or an HDF5 file.
fn read_from(path: &Path) -> Result<Store, JobError> {
    if path.extension().is_none_or(|e| e != "npz") {
        return Store::read(path).input("importing");
    }
    let arrays = read_npz(path).input("importing")?;
    let mut store = Store::new();
    for (name, a) in arrays {
        let name = name.trim_end_matches(".npy").to_string();
        let ds = match &a.data {
            NpyData::Str(v) => Dataset::strings(v.clone()),
            _ => Dataset::f64(a.shape.clone(), a.to_f64().unwrap_or_default()),
        };
        store.insert(&format!("/{name}"), ds);
    }
    Ok(store)
}

/// A matrix from the `--from` store, else from its own .npy file; with its
/// shape and the name messages give it.
fn matrix(
    store: Option<(&Store, &Path)>,
    file: Option<&PathBuf>,
    name: &str,
) -> Result<(Vec<f64>, Vec<usize>, String), JobError> {
    if let Some((s, p)) = store {
        let (v, shape) = s.f64_array(p, name).input("importing")?;
        return Ok((v, shape, format!("{} {name}", p.display())));
    }
    let path = file.ok_or_else(|| bad(format!("missing --{name} FILE.npy (or --from FILE)")))?;
    let (v, shape) = read_npy_f64(path).input("importing")?;
    if v.iter().any(|x| !x.is_finite()) {
        return Err(bad(format!("{}: holds a non-finite value", path.display())));
    }
    Ok((v, shape, path.display().to_string()))
}

/// Read, check and assemble an imported lead field. Notes (point sources)
/// go to `observer`; every failure is the input's.
pub fn import_leadfield(
    params: &ImportParams,
    observer: &dyn JobObserver,
) -> Result<LeadField, JobError> {
    let from_store = params.from.as_deref().map(read_from).transpose()?;
    let store = from_store.as_ref().zip(params.from.as_deref());
    let (gain, gshape, gname) = matrix(store, params.gain.as_ref(), "gain")?;
    let (pos, pshape, pname) = matrix(store, params.positions.as_ref(), "positions")?;
    let (nrm, nshape, nname) = matrix(store, params.normals.as_ref(), "normals")?;
    if gshape.len() != 2 {
        return Err(bad(format!(
            "{gname}: shape {gshape:?}, expected [n_ch, n_src]"
        )));
    }
    let (n_ch, n_src) = (gshape[0], gshape[1]);
    if pshape != [n_src, 3] {
        return Err(bad(format!(
            "{pname}: shape {pshape:?}, expected [{n_src}, 3] (mm)"
        )));
    }
    if nshape != [n_src, 3] {
        return Err(bad(format!(
            "{nname}: shape {nshape:?}, expected [{n_src}, 3]"
        )));
    }
    let channels = match (store, &params.channels) {
        (_, Some(c)) => read_channel_list(c).input("importing channels")?,
        (Some((s, p)), None) => s.strings(p, "/channels", Some(n_ch)).input("importing")?,
        (None, None) => return Err(bad("missing --channels FILE".to_string())),
    };
    if channels.len() != n_ch {
        return Err(bad(format!(
            "{} channel labels but the gain has {n_ch} rows",
            channels.len()
        )));
    }
    let mut normals = Vec::with_capacity(n_src);
    for (i, c) in nrm.chunks_exact(3).enumerate() {
        let n = [c[0], c[1], c[2]];
        if (norm(n) - 1.0).abs() > 1e-3 {
            return Err(bad(format!(
                "{nname}: row {i} has length {:.6}, expected a unit vector",
                norm(n)
            )));
        }
        normals.push(normalize(n));
    }
    let positions: Vec<_> = pos
        .chunks_exact(3)
        .map(|c| [c[0] * 1e-3, c[1] * 1e-3, c[2] * 1e-3])
        .collect();
    let triangles = match (store, &params.triangles) {
        (_, Some(t)) => {
            let (v, s, name) = matrix(None, Some(t), "triangles")?;
            to_triangles(&v, &s, n_src, &name)?
        }
        (Some((s, p)), None) if s.contains("/triangles") => {
            let (v, shape) = s.f64_array(p, "/triangles").input("importing")?;
            to_triangles(&v, &shape, n_src, "triangles")?
        }
        _ => Vec::new(),
    };
    let mut sources = SourceSpace {
        positions,
        normals,
        areas: vec![0.0; n_src],
        triangles,
        region: vec![-1; n_src],
        region_names: Vec::new(),
    };
    if sources.triangles.is_empty() {
        sources.areas = vec![POINT_SOURCE_AREA_M2; n_src];
        let given = params
            .from
            .clone()
            .or_else(|| params.positions.clone())
            .unwrap_or_default();
        observer.note(&point_source_note(&given));
    } else {
        sources.areas = sources.mesh().vertex_areas();
    }
    if let Some(r) = &params.regions {
        let (region, names) = read_regions(r, n_src).input("reading regions")?;
        sources.region = region;
        sources.region_names = names;
    }
    // Re-reference to the common average (idempotent if it already is).
    let mut gain = gain;
    if params.reference == "average" {
        crate::numeric::average_reference_columns(&mut gain, n_src);
    } else if params.reference != "none" {
        return Err(bad(format!(
            "--reference {:?}: expected average or none",
            params.reference
        )));
    }
    Ok(LeadField {
        labels: channels,
        electrode_positions: vec![[0.0; 3]; n_ch],
        sources,
        gain,
        gain_xyz: None,
        reference: params.reference.clone(),
        head_model: "{\"model\":\"imported\"}".to_string(),
    })
}

/// Triangles from an n_tri x 3 array of 0-based vertex indices below `n_src`.
fn to_triangles(
    v: &[f64],
    shape: &[usize],
    n_src: usize,
    name: &str,
) -> Result<Vec<[u32; 3]>, JobError> {
    if shape.len() != 2 || shape[1] != 3 {
        return Err(bad(format!("{name}: shape {shape:?}, expected [n_tri, 3]")));
    }
    let mut out = Vec::with_capacity(shape[0]);
    for (t, c) in v.chunks_exact(3).enumerate() {
        let mut tri = [0u32; 3];
        for d in 0..3 {
            if c[d] < 0.0 || c[d] as usize >= n_src || c[d].fract() != 0.0 {
                return Err(bad(format!(
                    "{name}: triangle {t} has index {}, expected an integer in 0..{n_src}",
                    c[d]
                )));
            }
            tri[d] = c[d] as u32;
        }
        out.push(tri);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // The defaults are the flags' (common practice, no source): the gain is
    // re-referenced to the common average unless told otherwise.
    #[test]
    fn defaults_are_the_declared_ones() {
        let p = ImportParams::default();
        assert_eq!(p.reference, "average");
        assert!(p.input_files().is_empty());
    }

    // Triangle indices must be whole numbers below the source count.
    #[test]
    fn triangles_out_of_range_are_refused() {
        let e = to_triangles(&[0.0, 1.0, 3.0], &[1, 3], 3, "t.npy").unwrap_err();
        assert!(e.is_input());
        assert_eq!(
            e.to_string(),
            "t.npy: triangle 0 has index 3, expected an integer in 0..3"
        );
        let e = to_triangles(&[0.0, 1.5, 2.0], &[1, 3], 3, "t.npy").unwrap_err();
        assert!(e.to_string().contains("index 1.5"));
        assert_eq!(
            to_triangles(&[0.0, 1.0, 2.0], &[1, 3], 3, "t.npy").unwrap(),
            vec![[0, 1, 2]]
        );
    }
}
