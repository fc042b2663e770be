//! The patchwise command line: parses arguments, calls the library, maps
//! errors to exit codes (0 done, 1 failed while computing, 2 bad input).

mod cli_error;
mod commands;

use clap::{Parser, Subcommand};

pub use cli_error::CliError;

/// Which cortical regions does a linear EEG decoder rely on?
///
/// Research tool; not for clinical decisions.
#[derive(Parser, Debug)]
#[command(name = "patchwise", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Standard electrode layouts: list, show, export.
    Montage(commands::montage::Args),
    /// Validate a file and say what it holds.
    Check(commands::check::Args),
}

fn main() {
    let cli = Cli::parse();
    let outcome = match cli.command {
        Command::Montage(args) => commands::montage::exec(args),
        Command::Check(args) => commands::check::exec(args),
    };
    if let Err(err) = outcome {
        eprintln!("error: {err}");
        std::process::exit(err.exit_code());
    }
}
