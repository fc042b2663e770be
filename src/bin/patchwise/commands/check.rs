//! `patchwise check FILE`: validate a mesh, label file, electrodes file,
//! NumPy file or HDF5 store and say what it holds (`patchwise::job::check`).

use std::path::PathBuf;

use crate::CliError;

/// Arguments of `patchwise check`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The file to check (.gii, .ply, .off, .tsv, .csv, .npy, .npz, .h5, .mat).
    pub file: PathBuf,
}

/// Run `patchwise check`.
pub fn exec(args: Args) -> Result<(), CliError> {
    for line in patchwise::job::check::check_file(&args.file)? {
        outln!("{line}");
    }
    Ok(())
}
