//! `patchwise template export --out DIR`: write the template cortex files.

use std::path::PathBuf;

use patchwise::io::template_files::write_template_files;

use crate::cli_error::OrExit;
use crate::CliError;

/// Arguments of `patchwise template`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// What to do.
    #[command(subcommand)]
    pub action: Action,
}

/// Template actions.
#[derive(clap::Subcommand, Debug)]
pub enum Action {
    /// Regenerate the template cortex (both resolutions) as GIFTI surface and label files.
    Export {
        /// Output folder (the repository ships them in meshes/).
        #[arg(long, default_value = "meshes")]
        out: PathBuf,
    },
}

/// Run `patchwise template`.
pub fn exec(args: Args) -> Result<(), CliError> {
    match args.action {
        Action::Export { out } => {
            patchwise::io::staging::check_folder_path(&out, "--out")?;
            let files = write_template_files(&out).compute(format!("writing {}", out.display()))?;
            for f in files {
                outln!("wrote {}", f.display());
            }
            Ok(())
        }
    }
}
