//! The patchwise command line: parses arguments, calls the library, maps
//! errors to exit codes (0 done, 1 failed while computing, 2 bad input).

// First: its `outln!`/`errln!` macros are visible only in the modules
// declared after it.
#[macro_use]
mod console;

mod cli_error;
mod commands;
mod outputs;
mod progress;

use clap::{Parser, Subcommand};

pub use cli_error::CliError;

/// Which cortical regions does a linear EEG decoder rely on?
///
/// Research tool; not for clinical decisions.
#[derive(Parser, Debug)]
#[command(
    name = "patchwise",
    version,
    about = "Which cortical regions does a linear EEG decoder rely on? Research tool; not for clinical decisions."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
#[allow(clippy::large_enum_variant)]
enum Command {
    /// Run the whole job on the embedded default, on an invented scenario with known generators.
    Demo(commands::demo::Args),
    /// Standard electrode layouts: list, show, export.
    Montage(commands::montage::Args),
    /// Validate a file and say what it holds.
    Check(commands::check::Args),
    /// Compute a lead field (or import one made elsewhere).
    Leadfield(commands::leadfield::Args),
    /// Build the multi-scale patch dictionary of a lead field.
    Dictionary(commands::dictionary::Args),
    /// Which cortical regions does a decoder rely on? Fit its patterns and attribute them.
    ///
    /// A region's share is the projection of its patches' part of the fitted pattern onto the whole
    /// fitted pattern, <D_g x_g, D x> / ||D x||^2, spread over regions by source amplitude; shares
    /// and the unassigned share sum to 1, and a negative share means the region's patches cancel
    /// part of the fitted pattern. Intervals are 95 % bootstrap intervals that hold the share and
    /// the range of the resampled shares.
    /// A component whose explained variance is below 50 % is flagged "poorly explained".
    Attribute(Box<commands::attribute::Args>),
    /// Equivalent-dipole fits of a decoder's patterns (single dipoles or symmetric pairs).
    Dipole(commands::dipole::Args),
    /// The template cortex: regenerate its GIFTI files.
    Template(commands::template::Args),
    /// One self-contained HTML page for a result folder.
    Report(commands::report::Args),
    /// One figure of a result folder as a PNG or SVG file at a chosen size, with its caption.
    Figure(commands::figure::Args),

    /// Many attributions from a job script: in parallel, resumable, in shards.
    Batch(commands::batch::Args),
    /// Compare attributions across subjects on one template cortex.
    Compare(Box<commands::compare::Args>),
    /// The cache of lead fields, dictionaries and smoothing kernels: list its entries, clean it.
    Cache(commands::cache::Args),
}

fn main() {
    let cli = Cli::parse();
    let outcome = match cli.command {
        Command::Demo(args) => commands::demo::exec(args),
        Command::Montage(args) => commands::montage::exec(args),
        Command::Check(args) => commands::check::exec(args),
        Command::Leadfield(args) => commands::leadfield::exec(args),
        Command::Dictionary(args) => commands::dictionary::exec(args),
        Command::Attribute(args) => commands::attribute::exec(*args),
        Command::Dipole(args) => commands::dipole::exec(args),
        Command::Template(args) => commands::template::exec(args),
        Command::Report(args) => commands::report::exec(args),
        Command::Figure(args) => commands::figure::exec(args),

        Command::Batch(args) => commands::batch::exec(args),
        Command::Cache(args) => commands::cache::exec(args),
        Command::Compare(args) => commands::compare::exec(*args),
    };
    if let Err(err) = outcome {
        errln!("error: {err}");
        std::process::exit(err.exit_code());
    }
}
