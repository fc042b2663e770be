//! `patchwise dictionary`: build the multi-scale patch dictionary of a lead field.

use std::path::PathBuf;

use patchwise::io::dictionary_file::write_dictionary;
use patchwise::io::leadfield_file::read_leadfield;
use patchwise::job::forward::build_dictionary;
use patchwise::job::PatchParams;

use crate::cli_error::OrExit;
use crate::progress::Console;
use crate::CliError;

/// Arguments of `patchwise dictionary`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// The lead field (leadfield.h5).
    #[arg(long)]
    pub leadfield: PathBuf,
    #[command(flatten)]
    pub options: PatchParams,
    /// Output file (.h5).
    #[arg(long)]
    pub out: PathBuf,
}

/// Run `patchwise dictionary`.
pub fn exec(args: Args) -> Result<(), CliError> {
    patchwise::io::staging::check_output_file(&args.out, "--out")?;
    patchwise::io::staging::refuse_input_as_output(
        &args.out,
        "--out",
        &[("lead field", args.leadfield.as_path())],
    )?;
    let lf = read_leadfield(&args.leadfield).bad_input("reading the lead field")?;
    let (d, info) = build_dictionary(&lf, &args.options, &Console::default())?;
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
