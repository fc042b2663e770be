//! `patchwise check FILE`: validate a file and say what it holds
//! (`patchwise::batch::inspect`, which hands all but job scripts and head
//! files to `patchwise::job::check`).

use std::path::PathBuf;

use crate::CliError;

/// Arguments of `patchwise check`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The file to check (.gii, .ply, .off, .tsv, .csv, .txt, .json, .npy, .npz, .h5, .mat,
    /// or a .toml job script or head file).
    pub file: PathBuf,
}

/// Run `patchwise check`.
pub fn exec(args: Args) -> Result<(), CliError> {
    for line in patchwise::batch::inspect::check_any(&args.file)? {
        outln!("{line}");
    }
    Ok(())
}
