//! `patchwise leadfield`: compute a lead field, or import one made elsewhere.

use std::path::{Path, PathBuf};

use patchwise::forward::Orientation;
use patchwise::io::leadfield_file::write_leadfield;
use patchwise::job::forward::compute_leadfield;
use patchwise::job::leadfield_import::{import_leadfield, ImportParams};
use patchwise::job::ForwardParams;

use crate::cli_error::OrExit;
use crate::progress::Console;
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
    #[command(flatten)]
    pub params: ImportParams,
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
    // A boundary-element head's system is cached where attribute caches.
    let cache = patchwise::io::cache::default_cache_dir();
    let lf = compute_leadfield(
        &montage,
        &sources,
        &head,
        args.orientation.into(),
        Some(&cache),
        &console,
    )?;
    write_leadfield(&out, &lf).compute(format!("writing {}", out.display()))?;
    outln!(
        "wrote {}: {} channels x {} sources, average reference, V/(A·m)",
        out.display(),
        lf.n_channels(),
        lf.n_sources()
    );
    Ok(())
}

fn import(args: ImportArgs) -> Result<(), CliError> {
    patchwise::io::staging::check_output_file(&args.out, "--out")?;
    patchwise::io::staging::refuse_input_as_output(&args.out, "--out", &args.params.input_files())?;
    let lf = import_leadfield(&args.params, &Console::default())?;
    write_leadfield(&args.out, &lf).compute(format!("writing {}", args.out.display()))?;
    outln!(
        "wrote {}: imported {} channels x {} sources",
        args.out.display(),
        lf.n_channels(),
        lf.n_sources()
    );
    Ok(())
}
