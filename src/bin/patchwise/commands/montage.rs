//! `patchwise montage list | show NAME | export NAME --out FILE.tsv`.

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
}

/// Run `patchwise montage`.
pub fn exec(args: Args) -> Result<(), CliError> {
    match args.action {
        Action::List => {
            println!("10-20\n10-10\n10-05");
            Ok(())
        }
    }
}
