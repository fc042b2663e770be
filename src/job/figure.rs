//! One figure of a result folder as a file, for a paper: read result.h5,
//! draw the figure (`render::figure_export`), write it and its caption
//! atomically.

use std::path::{Path, PathBuf};

use super::error::{ErrorKind, JobError, JobResult};
use crate::io::result_file::read_result;
use crate::render::figure_export::{export_figure, FigureFormat, FigureKind, FigureRequest};

/// What [`write_figure`] wrote.
#[derive(Debug, Clone)]
pub struct WrittenFigure {
    /// The figure file.
    pub path: PathBuf,
    /// The caption file beside it (`<stem>.caption.txt`).
    pub caption_path: PathBuf,
    /// Width × height (px).
    pub size: (u32, u32),
}

/// The format an output file's extension asks for (`.png` or `.svg`, any
/// case), or an input error naming the file.
pub fn format_of(out: &Path) -> Result<FigureFormat, JobError> {
    match out
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase)
        .as_deref()
    {
        Some("png") => Ok(FigureFormat::Png),
        Some("svg") => Ok(FigureFormat::Svg),
        _ => Err(JobError::input(format!(
            "{}: expected a file name ending in .png or .svg (the format follows the extension)",
            out.display()
        ))),
    }
}

/// The caption file of a figure file: `fig.png` → `fig.caption.txt`.
pub fn caption_path(out: &Path) -> PathBuf {
    let stem = out
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    out.with_file_name(format!("{stem}.caption.txt"))
}

/// What to draw: the figure, the component as the user wrote it (a 1-based
/// number or a name), the width (px) and the resolution of a PNG (dpi).
#[derive(Debug, Clone)]
pub struct FigureSpec {
    /// Which figure.
    pub kind: FigureKind,
    /// A 1-based component number or a component name.
    pub component: String,
    /// Width (px).
    pub width: u32,
    /// Dots per inch stored in a PNG.
    pub dpi: f64,
}

/// The 0-based index of `given` (a 1-based number or a component name)
/// among `names` (`k` components), or an input error listing them.
pub fn component_index(given: &str, names: &[String], k: usize) -> Result<usize, JobError> {
    if let Ok(n) = given.trim().parse::<usize>() {
        if (1..=k).contains(&n) {
            return Ok(n - 1);
        }
        return Err(JobError::input(format!(
            "--component {given}: the result has {k} component(s), numbered 1 to {k}"
        )));
    }
    names.iter().position(|n| n == given).ok_or_else(|| {
        JobError::input(format!(
            "--component {given:?}: no component of that name (the result's components: {})",
            names.join(", ")
        ))
    })
}

/// Read `dir`/result.h5, draw `spec` and write it to `out` (format by its
/// extension) with its caption beside it, each atomically. A missing or bad
/// result is an input error, as is a figure the result cannot give; a
/// failure to write is a compute error.
pub fn write_figure(dir: &Path, spec: &FigureSpec, out: &Path) -> Result<WrittenFigure, JobError> {
    let format = format_of(out)?;
    let result_path = dir.join("result.h5");
    if !result_path.is_file() {
        return Err(JobError::input(format!(
            "{}: not found (a result folder holds the result.h5 that `patchwise attribute` or `patchwise demo` writes)",
            result_path.display()
        )));
    }
    let result = read_result(&result_path).input("reading the result")?;
    let req = FigureRequest {
        kind: spec.kind,
        component: component_index(&spec.component, &result.component_names, result.k)?,
        width: spec.width,
        dpi: spec.dpi,
        format,
    };
    let figure = export_figure(&result, &req)
        .map_err(|e| JobError::wrap(ErrorKind::Input, "drawing the figure", e))?;
    let caption_path = caption_path(out);
    crate::io::atomic::write_atomic(out, &figure.bytes)
        .compute(format!("writing {}", out.display()))?;
    let mut caption = figure.caption;
    caption.push_str(&format!(
        "\n\nDrawn by patchwise {} from {} ({} x {} px). Research interpretation of a decoding model; not a medical device and not for clinical decisions.\n",
        env!("CARGO_PKG_VERSION"),
        result_path.display(),
        figure.width,
        figure.height
    ));
    crate::io::atomic::write_atomic(&caption_path, caption.as_bytes())
        .compute(format!("writing {}", caption_path.display()))?;
    Ok(WrittenFigure {
        path: out.to_path_buf(),
        caption_path,
        size: (figure.width, figure.height),
    })
}
