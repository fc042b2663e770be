//! `patchwise montage list | show NAME | export NAME --out FILE.tsv`.

use std::path::PathBuf;

use patchwise::head::SphereHead;
use patchwise::io::electrodes::write_electrodes_tsv;
use patchwise::montage::{standard, standard_names, Montage};

use crate::cli_error::OrExit;
use crate::CliError;

/// Arguments of `patchwise montage`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// What to do.
    #[command(subcommand)]
    pub action: Action,
}

/// Montage actions.
#[derive(clap::Subcommand, Debug)]
pub enum Action {
    /// List the built-in layouts.
    List,
    /// Print a layout's labels and positions (mm) on the default head's scalp.
    Show {
        /// Layout name: 10-20, 10-10 or 10-5.
        name: String,
    },
    /// Write a layout as a BIDS-style electrodes.tsv (name, x, y, z in mm).
    Export {
        /// Layout name: 10-20, 10-10 or 10-5.
        name: String,
        /// Output file.
        #[arg(long)]
        out: PathBuf,
    },
}

/// A standard layout on the scalp sphere of the default head.
pub fn standard_on_default_head(name: &str) -> Result<Montage, CliError> {
    let radius = SphereHead::default_adult().outer_radius();
    standard(name, radius).bad_input("choosing a montage")
}

/// Run `patchwise montage`.
pub fn exec(args: Args) -> Result<(), CliError> {
    let radius_mm = SphereHead::default_adult().outer_radius() * 1e3;
    match args.action {
        Action::List => {
            for name in standard_names() {
                let m = standard_on_default_head(name)?;
                outln!("{name:<6} {:>4} electrodes", m.len());
            }
            outln!("positions are computed on a sphere of radius {radius_mm:.0} mm (the default head's scalp)");
            Ok(())
        }
        Action::Show { name } => {
            let m = standard_on_default_head(&name)?;
            outln!("{:<8} {:>9} {:>9} {:>9}", "label", "x_mm", "y_mm", "z_mm");
            for (label, p) in m.labels.iter().zip(&m.positions) {
                outln!(
                    "{label:<8} {:>9.2} {:>9.2} {:>9.2}",
                    p[0] * 1e3,
                    p[1] * 1e3,
                    p[2] * 1e3
                );
            }
            Ok(())
        }
        Action::Export { name, out } => {
            patchwise::io::staging::check_output_file(&out, "--out")?;
            let m = standard_on_default_head(&name)?;
            write_electrodes_tsv(&out, &m).compute(format!("writing {}", out.display()))?;
            outln!(
                "wrote {} electrodes of {name} to {}",
                m.len(),
                out.display()
            );
            Ok(())
        }
    }
}
