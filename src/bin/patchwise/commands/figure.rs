//! `patchwise figure`: one figure of a result folder as a PNG or SVG file at
//! a chosen size, with a caption file beside it.

use std::path::{Path, PathBuf};

use patchwise::job::figure::{caption_path, format_of, write_figure, FigureSpec};
use patchwise::render::figure_export::FigureKind;

use crate::CliError;

/// Arguments of `patchwise figure`.
#[derive(clap::Args, Debug)]
pub struct Args {
    /// Result folder written by `attribute` or `demo` (holds result.h5).
    pub result_dir: PathBuf,
    /// Which figure: cortex (the source map on seven cortex views), gain (the
    /// filter's gain on the same views), scalp (the pattern), shares (the
    /// leading regions' chart, SVG only) or path (the regularisation path,
    /// SVG only).
    #[arg(long, value_parser = ["cortex", "gain", "scalp", "shares", "path"])]
    pub kind: String,
    /// Component: its number (1 for the first) or its name.
    #[arg(long, default_value = "1")]
    pub component: String,
    /// Width of the figure in pixels (200 to 8000).
    #[arg(long, default_value_t = 2400)]
    pub width: u32,
    /// Resolution stored in a PNG, dots per inch (50 to 2400); with the
    /// default width, 2400 px at 300 dpi print 20.3 cm wide.
    #[arg(long, default_value_t = 300.0)]
    pub dpi: f64,
    /// Output file, .png or .svg (the format follows the extension); the
    /// caption goes beside it as <name>.caption.txt.
    #[arg(long)]
    pub out: PathBuf,
}

/// Run `patchwise figure`.
pub fn exec(args: Args) -> Result<(), CliError> {
    let dir = &args.result_dir;
    format_of(&args.out)?;
    let caption = caption_path(&args.out);
    let sources: Vec<PathBuf> = ["result.h5", "summary.json", "report.html"]
        .iter()
        .map(|f| dir.join(f))
        .collect();
    let inputs: Vec<(&str, &Path)> = sources.iter().map(|p| ("input", p.as_path())).collect();
    for file in [args.out.as_path(), caption.as_path()] {
        patchwise::io::staging::check_output_file(file, "--out")?;
        patchwise::io::staging::refuse_input_as_output(file, "--out", &inputs)?;
    }
    let kind = FigureKind::from_name(&args.kind).ok_or_else(|| {
        CliError::bad_input(anyhow::anyhow!("--kind {}: unknown figure", args.kind))
    })?;
    let spec = FigureSpec {
        kind,
        component: args.component.clone(),
        width: args.width,
        dpi: args.dpi,
    };
    let written = write_figure(dir, &spec, &args.out)?;
    outln!(
        "figure in {} ({} x {} px), caption in {}",
        written.path.display(),
        written.size.0,
        written.size.1,
        written.caption_path.display()
    );
    Ok(())
}
