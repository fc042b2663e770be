//! The shipped template cortex files in `meshes/`: a GIFTI surface (float64
//! millimetres, gzip-compressed base64) and a GIFTI label array per
//! resolution, made by our own generator.

use std::path::{Path, PathBuf};

use super::error::IoError;
use super::gifti::{
    write_gifti_labels, write_gifti_surface_with, GiftiDataType, GiftiEncoding, GiftiLayout,
};
use crate::geometry::{template, TemplateResolution};

/// The surface and label file names of a resolution inside `dir`.
pub fn template_paths(dir: &Path, res: TemplateResolution) -> (PathBuf, PathBuf) {
    (
        dir.join(format!("{}.surf.gii", res.name())),
        dir.join(format!("{}.label.gii", res.name())),
    )
}

/// Generate and write both resolutions into `dir`; returns the paths.
pub fn write_template_files(dir: &Path) -> Result<Vec<PathBuf>, IoError> {
    std::fs::create_dir_all(dir).map_err(|source| IoError::File {
        path: dir.to_path_buf(),
        source,
    })?;
    let mut written = Vec::new();
    for res in TemplateResolution::ALL {
        let t = template(res);
        let (surf, labels) = template_paths(dir, res);
        write_gifti_surface_with(
            &surf,
            &t.mesh,
            GiftiLayout::new(GiftiEncoding::GZipBase64Binary, GiftiDataType::Float64),
            GiftiLayout::new(GiftiEncoding::GZipBase64Binary, GiftiDataType::Int32),
        )?;
        write_gifti_labels(
            &labels,
            &t.region,
            &t.region_names,
            GiftiEncoding::GZipBase64Binary,
        )?;
        written.push(surf);
        written.push(labels);
    }
    Ok(written)
}
