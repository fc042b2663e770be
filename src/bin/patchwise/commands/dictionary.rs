//! `patchwise dictionary`: build the multi-scale patch dictionary of a lead field.

use patchwise::limits::MAX_PATCH_LENGTH_MM;
use std::path::PathBuf;

use patchwise::dictionary::{
    AtomOrientation, Dictionary, DictionaryInfo, DictionaryParams, Profile,
};
use patchwise::io::dictionary_file::write_dictionary;
use patchwise::io::leadfield_file::{read_leadfield, LeadFieldFile};
use patchwise::pipeline::{dictionary_for, DistanceKind};

use crate::cli_error::OrExit;
use crate::progress::{bar, note};
use crate::CliError;

/// Arguments of `patchwise dictionary`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The lead field (leadfield.h5).
    #[arg(long)]
    pub leadfield: PathBuf,
    #[command(flatten)]
    pub options: DictionaryOptions,
    /// Output file (.h5).
    #[arg(long)]
    pub out: PathBuf,
}

/// Dictionary options shared with `attribute`.
#[derive(clap::Args, Debug, Clone)]
pub struct DictionaryOptions {
    /// Geodesic patch radii in mm, comma-separated.
    #[arg(long, value_delimiter = ',', default_value = "5,10,20")]
    pub radii_mm: Vec<f64>,
    /// Seed spacing in mm (farthest-point sampling); default: every source is a seed.
    #[arg(long)]
    pub spacing_mm: Option<f64>,
    /// Patch profile over geodesic distance.
    #[arg(long, value_enum, default_value_t = ProfileArg::Gaussian)]
    pub profile: ProfileArg,
    /// Atom orientation: along the normals, or free (x, y, z; needs a free-orientation lead field).
    #[arg(long = "atom-orientation", value_enum, default_value_t = AtomOrientationArg::Normal)]
    pub atom_orientation: AtomOrientationArg,
}

/// Patch profile on the command line.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum ProfileArg {
    /// Gaussian in geodesic distance (sigma = radius / 2), cut at the radius.
    Gaussian,
    /// Uniform within the radius.
    Flat,
}

/// Atom orientation on the command line.
#[derive(clap::ValueEnum, Clone, Copy, Debug, PartialEq, Eq)]
pub enum AtomOrientationArg {
    /// One atom per patch, along the normals.
    Normal,
    /// Three atoms per patch (x, y, z) in one group.
    Free,
}

impl DictionaryOptions {
    /// Validated library parameters (radii in metres).
    pub fn params(&self) -> Result<DictionaryParams, CliError> {
        if let Some(s) = self.spacing_mm {
            if !(s.is_finite() && s > 0.0 && s <= MAX_PATCH_LENGTH_MM) {
                return Err(CliError::bad_input(anyhow::anyhow!(
                    "--spacing-mm {s}: expected a positive length in mm, at most {MAX_PATCH_LENGTH_MM}"
                )));
            }
        }
        if let Some(r) = self
            .radii_mm
            .iter()
            .find(|r| !(r.is_finite() && **r > 0.0 && **r <= MAX_PATCH_LENGTH_MM))
        {
            return Err(CliError::bad_input(anyhow::anyhow!(
                "--radii-mm {r}: expected positive lengths in mm, at most {MAX_PATCH_LENGTH_MM}"
            )));
        }
        let params = DictionaryParams {
            radii_m: self.radii_mm.iter().map(|r| r * 1e-3).collect(),
            profile: match self.profile {
                ProfileArg::Gaussian => Profile::Gaussian,
                ProfileArg::Flat => Profile::Flat,
            },
            orientation: match self.atom_orientation {
                AtomOrientationArg::Normal => AtomOrientation::Normal,
                AtomOrientationArg::Free => AtomOrientation::Free,
            },
            ..DictionaryParams::default()
        };
        params.validate().bad_input("dictionary options")?;
        Ok(params)
    }

    /// The options as JSON (stored with the dictionary and hashed for the cache).
    pub fn to_json(&self) -> String {
        serde_json::json!({
            "radii_mm": self.radii_mm,
            "spacing_mm": self.spacing_mm,
            "profile": format!("{:?}", self.profile).to_lowercase(),
            "orientation": format!("{:?}", self.atom_orientation).to_lowercase(),
            "average_reference": true,
        })
        .to_string()
    }
}

/// Build the dictionary of a lead field with a progress bar.
pub fn build(
    lf: &LeadFieldFile,
    options: &DictionaryOptions,
) -> Result<(Dictionary, DictionaryInfo), CliError> {
    let params = options.params()?;
    let pb = bar(lf.n_sources(), "patch dictionary");
    let spacing = options.spacing_mm.map(|s| s * 1e-3);
    let (d, info, kind) = dictionary_for(lf, &params, spacing, &|n| pb.inc(n as u64))
        .bad_input("building the dictionary")?;
    pb.finish_and_clear();
    if kind == DistanceKind::Euclidean {
        note("note: the sources have no triangles; patch distances are Euclidean, not geodesic");
    }
    if !info.dropped.is_empty() {
        note(format!(
            "note: {} atoms with a negligible scalp field were dropped",
            info.dropped.len()
        ));
    }
    Ok((d, info))
}

/// Run `patchwise dictionary`.
pub fn exec(args: Args) -> Result<(), CliError> {
    crate::staging::check_output_file(&args.out, "--out")?;
    crate::staging::refuse_input_as_output(
        &args.out,
        "--out",
        &[("lead field", args.leadfield.as_path())],
    )?;
    let lf = read_leadfield(&args.leadfield).bad_input("reading the lead field")?;
    let (d, info) = build(&lf, &args.options)?;
    write_dictionary(&args.out, &lf, &d, &args.options.to_json())
        .compute(format!("writing {}", args.out.display()))?;
    outln!(
        "wrote {}: {} atoms in {} groups from {} seeds ({} channels)",
        args.out.display(),
        info.n_atoms,
        info.n_groups,
        info.n_seeds,
        d.n_channels
    );
    Ok(())
}
