//! `patchwise leadfield`: compute a lead field, or import one made elsewhere.

use std::path::{Path, PathBuf};

use patchwise::dictionary::POINT_SOURCE_AREA_M2;
use patchwise::forward::{LeadField, Orientation};
use patchwise::geometry::{norm, normalize, SourceSpace};
use patchwise::io::electrodes::read_channel_list;
use patchwise::io::leadfield_file::write_leadfield;
use patchwise::io::npy::read_npy_f64;
use patchwise::io::sources_file::read_regions;
use patchwise::io::Store;

use crate::cli_error::OrExit;
use patchwise::job::forward::{compute_leadfield, point_source_note};
use patchwise::job::ForwardParams;

use crate::progress::{note, Console};
use crate::CliError;

/// Arguments of `patchwise leadfield`.
#[derive(clap::Args, Debug)]
#[command(args_conflicts_with_subcommands = true)]
pub struct Args {
    /// Import a lead field made elsewhere instead of computing one.
    #[command(subcommand)]
    pub import: Option<Import>,
    #[command(flatten)]
    pub forward: ForwardParams,
    /// Source orientation: along the cortex normals, or free (also x, y, z).
    #[arg(long, value_enum, default_value_t = OrientationArg::Normal)]
    pub orientation: OrientationArg,
    /// Output file (.h5).
    #[arg(long)]
    pub out: Option<PathBuf>,
}

/// Source orientation on the command line.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum OrientationArg {
    /// Along the normals.
    Normal,
    /// Free: x, y and z as well.
    Free,
}

impl From<OrientationArg> for Orientation {
    fn from(o: OrientationArg) -> Self {
        match o {
            OrientationArg::Normal => Orientation::Normal,
            OrientationArg::Free => Orientation::Free,
        }
    }
}

/// `patchwise leadfield import`.
#[derive(clap::Subcommand, Debug)]
pub enum Import {
    /// Import gain, positions, normals and channels from .npy files, or one .npz/.h5 holding them.
    Import(ImportArgs),
}

/// Arguments of `patchwise leadfield import`.
#[derive(clap::Args, Debug)]
pub struct ImportArgs {
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
    /// Output file (.h5).
    #[arg(long)]
    pub out: PathBuf,
}

fn required(out: &Option<PathBuf>, what: &str) -> Result<PathBuf, CliError> {
    out.clone()
        .ok_or_else(|| CliError::bad_input(anyhow::anyhow!("missing {what}")))
}

/// Run `patchwise leadfield`.
pub fn exec(args: Args) -> Result<(), CliError> {
    if let Some(Import::Import(imp)) = args.import {
        return import(imp);
    }
    let out = required(&args.out, "--out FILE.h5")?;
    patchwise::io::staging::check_output_file(&out, "--out")?;
    let inputs = args.forward.input_files();
    let inputs: Vec<(&str, &Path)> = inputs.iter().map(|(w, p)| (*w, p.as_path())).collect();
    patchwise::io::staging::refuse_input_as_output(&out, "--out", &inputs)?;
    let console = Console::default();
    let (montage, sources, head) = args.forward.resolve(None, &console)?;
    let lf = compute_leadfield(&montage, &sources, &head, args.orientation.into(), &console)?;
    write_leadfield(&out, &lf).compute(format!("writing {}", out.display()))?;
    outln!(
        "wrote {}: {} channels x {} sources, average reference, V/(A·m)",
        out.display(),
        lf.n_channels(),
        lf.n_sources()
    );
    Ok(())
}

fn matrix(
    store: Option<(&Store, &Path)>,
    file: Option<&PathBuf>,
    name: &str,
) -> Result<(Vec<f64>, Vec<usize>, String), CliError> {
    if let Some((s, p)) = store {
        let (v, shape) = s.f64_array(p, name).bad_input("importing")?;
        return Ok((v, shape, format!("{} {name}", p.display())));
    }
    let path = file.ok_or_else(|| {
        CliError::bad_input(anyhow::anyhow!(
            "missing --{name} FILE.npy (or --from FILE)"
        ))
    })?;
    let (v, shape) = read_npy_f64(path).bad_input("importing")?;
    if v.iter().any(|x| !x.is_finite()) {
        return Err(CliError::bad_input(anyhow::anyhow!(
            "{}: holds a non-finite value",
            path.display()
        )));
    }
    Ok((v, shape, path.display().to_string()))
}

fn import(args: ImportArgs) -> Result<(), CliError> {
    patchwise::io::staging::check_output_file(&args.out, "--out")?;
    let inputs: Vec<(&str, &Path)> = [
        ("--from file", &args.from),
        ("gain", &args.gain),
        ("positions", &args.positions),
        ("normals", &args.normals),
        ("channel list", &args.channels),
        ("triangles", &args.triangles),
        ("regions", &args.regions),
    ]
    .into_iter()
    .filter_map(|(w, p)| p.as_deref().map(|p| (w, p)))
    .collect();
    patchwise::io::staging::refuse_input_as_output(&args.out, "--out", &inputs)?;
    let npz_store;
    let store = match &args.from {
        Some(p) if p.extension().is_some_and(|e| e == "npz") => {
            let arrays = patchwise::io::npy::read_npz(p).bad_input("importing")?;
            let mut s = Store::new();
            for (name, a) in arrays {
                let name = name.trim_end_matches(".npy").to_string();
                let ds = match &a.data {
                    patchwise::io::npy::NpyData::Str(v) => {
                        patchwise::io::Dataset::strings(v.clone())
                    }
                    _ => {
                        patchwise::io::Dataset::f64(a.shape.clone(), a.to_f64().unwrap_or_default())
                    }
                };
                s.insert(&format!("/{name}"), ds);
            }
            npz_store = Some(s);
            npz_store.as_ref().map(|s| (s, p.as_path()))
        }
        Some(p) => {
            npz_store = Some(Store::read(p).bad_input("importing")?);
            npz_store.as_ref().map(|s| (s, p.as_path()))
        }
        None => None,
    };
    let (gain, gshape, gname) = matrix(store, args.gain.as_ref(), "gain")?;
    let (pos, pshape, pname) = matrix(store, args.positions.as_ref(), "positions")?;
    let (nrm, nshape, nname) = matrix(store, args.normals.as_ref(), "normals")?;
    let bad = |m: String| CliError::bad_input(anyhow::anyhow!(m));
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
    let channels = match (store, &args.channels) {
        (_, Some(c)) => read_channel_list(c).bad_input("importing channels")?,
        (Some((s, p)), None) => s
            .strings(p, "/channels", Some(n_ch))
            .bad_input("importing")?,
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
    let triangles = match (store, &args.triangles) {
        (_, Some(t)) => {
            let (v, s, name) = matrix(None, Some(t), "triangles")?;
            to_triangles(&v, &s, n_src, &name)?
        }
        (Some((s, p)), None) if s.contains("/triangles") => {
            let (v, shape) = s.f64_array(p, "/triangles").bad_input("importing")?;
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
        let given = args
            .from
            .clone()
            .or_else(|| args.positions.clone())
            .unwrap_or_default();
        note(point_source_note(&given));
    } else {
        sources.areas = sources.mesh().vertex_areas();
    }
    if let Some(r) = &args.regions {
        let (region, names) = read_regions(r, n_src).bad_input("reading regions")?;
        sources.region = region;
        sources.region_names = names;
    }
    // Re-reference to the common average (idempotent if it already is).
    let mut gain = gain;
    if args.reference == "average" {
        patchwise::numeric::average_reference_columns(&mut gain, n_src);
    } else if args.reference != "none" {
        return Err(bad(format!(
            "--reference {:?}: expected average or none",
            args.reference
        )));
    }
    let lf = LeadField {
        labels: channels,
        electrode_positions: vec![[0.0; 3]; n_ch],
        sources,
        gain,
        gain_xyz: None,
        reference: args.reference.clone(),
        head_model: "{\"model\":\"imported\"}".to_string(),
    };
    write_leadfield(&args.out, &lf).compute(format!("writing {}", args.out.display()))?;
    outln!(
        "wrote {}: imported {n_ch} channels x {n_src} sources",
        args.out.display()
    );
    Ok(())
}

fn to_triangles(
    v: &[f64],
    shape: &[usize],
    n_src: usize,
    name: &str,
) -> Result<Vec<[u32; 3]>, CliError> {
    if shape.len() != 2 || shape[1] != 3 {
        return Err(CliError::bad_input(anyhow::anyhow!(
            "{name}: shape {shape:?}, expected [n_tri, 3]"
        )));
    }
    let mut out = Vec::with_capacity(shape[0]);
    for (t, c) in v.chunks_exact(3).enumerate() {
        let mut tri = [0u32; 3];
        for d in 0..3 {
            if c[d] < 0.0 || c[d] as usize >= n_src || c[d].fract() != 0.0 {
                return Err(CliError::bad_input(anyhow::anyhow!(
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
