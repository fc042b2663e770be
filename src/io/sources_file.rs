//! Source spaces and region labels from files: a GIFTI/PLY/OFF surface
//! (one source per vertex, normals from the mesh) or a TSV/CSV table with
//! columns x, y, z (mm) and optionally nx, ny, nz; per-vertex region labels
//! from a GIFTI label array or a one-column text file.

use std::collections::BTreeMap;
use std::path::Path;

use super::error::IoError;
use super::table::{read_table, TableError};
use super::{gifti, off, ply};
use crate::geometry::{normalize, validate, Mesh, MeshError, SourceSpace};

/// The area each point source stands for when the sources have no
/// triangles (a table of points, or an imported lead field without
/// triangles), in mm²: the dictionary's
/// [`POINT_SOURCE_AREA_M2`](crate::dictionary::POINT_SOURCE_AREA_M2).
pub const POINT_SOURCE_AREA_MM2: f64 = 1.0;

/// Errors reading a source space or region file.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum InputError {
    /// A file-format error.
    #[error(transparent)]
    Io(#[from] IoError),
    /// A table error.
    #[error(transparent)]
    Table(#[from] TableError),
    /// The mesh is not sound.
    #[error("{path}: {source}")]
    Mesh {
        /// The file.
        path: String,
        /// What is wrong.
        #[source]
        source: MeshError,
    },
    /// Other content errors.
    #[error("{path}: {message}")]
    Content {
        /// The file.
        path: String,
        /// What is wrong and what was expected.
        message: String,
    },
}

fn ext(path: &Path) -> String {
    path.extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default()
}

/// Read sources from a surface or a table (positions in mm in the file).
pub fn read_sources(path: &Path) -> Result<SourceSpace, InputError> {
    if matches!(ext(path).as_str(), "tsv" | "csv") {
        return read_source_table(path);
    }
    let mesh = read_surface(path, "source file kind", ", .tsv or .csv")?;
    validate(&mesh).map_err(|source| InputError::Mesh {
        path: path.display().to_string(),
        source,
    })?;
    Ok(SourceSpace::from_mesh(&mesh))
}

/// Read a triangle surface from GIFTI, PLY or OFF (positions in mm in the
/// file, metres in the mesh), unchecked; `what` and `also` word the error
/// for another extension ("unknown {what} …; expected .gii, .ply, .off{also}").
pub fn read_surface(path: &Path, what: &str, also: &str) -> Result<Mesh, InputError> {
    Ok(match ext(path).as_str() {
        "gii" => gifti::read_gifti_surface(path)?,
        "ply" => ply::read_ply(path)?,
        "off" => off::read_off(path)?,
        other => {
            return Err(InputError::Content {
                path: path.display().to_string(),
                message: format!("unknown {what} {other:?}; expected .gii, .ply, .off{also}"),
            })
        }
    })
}

fn read_source_table(path: &Path) -> Result<SourceSpace, InputError> {
    let table = read_table(path)?;
    let cols: Vec<usize> = ["x", "y", "z"]
        .iter()
        .map(|c| table.column(&[c]))
        .collect::<Result<_, _>>()?;
    let ncols: Option<Vec<usize>> = ["nx", "ny", "nz"]
        .iter()
        .map(|c| table.column(&[c]).ok())
        .collect();
    let number = |row: &super::table::Row, c: usize| -> Result<f64, InputError> {
        let field = &row.fields[c];
        field
            .trim()
            .parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .ok_or_else(|| InputError::Content {
                path: path.display().to_string(),
                message: format!(
                    "line {}, column {}: {:?} is not a finite number",
                    row.line, table.header[c], field
                ),
            })
    };
    let mut positions = Vec::with_capacity(table.rows.len());
    let mut normals = Vec::with_capacity(table.rows.len());
    for row in &table.rows {
        positions.push([
            number(row, cols[0])? * 1e-3,
            number(row, cols[1])? * 1e-3,
            number(row, cols[2])? * 1e-3,
        ]);
        let n = match &ncols {
            Some(nc) => {
                let n = [
                    number(row, nc[0])?,
                    number(row, nc[1])?,
                    number(row, nc[2])?,
                ];
                let len = crate::geometry::norm(n);
                if len == 0.0 {
                    return Err(InputError::Content {
                        path: path.display().to_string(),
                        message: format!("line {}: the normal is zero", row.line),
                    });
                }
                normalize(n)
            }
            // Without normals, point radially outward from the origin (the
            // head centre): the usual orientation of cortical sources seen
            // from a spherical head.
            None => normalize(*positions.last().unwrap_or(&[0.0, 0.0, 1.0])),
        };
        normals.push(n);
    }
    if positions.is_empty() {
        return Err(InputError::Content {
            path: path.display().to_string(),
            message: "has no source rows".to_string(),
        });
    }
    let n = positions.len();
    Ok(SourceSpace {
        positions,
        normals,
        areas: vec![crate::dictionary::POINT_SOURCE_AREA_M2; n],
        triangles: Vec::new(),
        region: vec![-1; n],
        region_names: Vec::new(),
    })
}

/// Per-vertex region labels from a GIFTI label array or a text file with
/// one label a line (empty, `-`, `none` or `???` = no region); `n_sources`
/// labels are expected. Names are returned in order of first appearance for
/// text files, in label-table order for GIFTI.
pub fn read_regions(path: &Path, n_sources: usize) -> Result<(Vec<i32>, Vec<String>), InputError> {
    let (region, names) = if ext(path) == "gii" {
        gifti::read_gifti_labels(path)?
    } else {
        let text = crate::io::input::read_input_string(path).map_err(|source| IoError::File {
            path: path.to_path_buf(),
            source,
        })?;
        let mut names: Vec<String> = Vec::new();
        let mut index: BTreeMap<String, i32> = BTreeMap::new();
        let mut region = Vec::new();
        for line in text.lines() {
            let label = line.trim();
            if matches!(label, "" | "-" | "none" | "???") {
                region.push(-1);
                continue;
            }
            let next = names.len() as i32;
            let r = *index.entry(label.to_string()).or_insert_with(|| {
                names.push(label.to_string());
                next
            });
            region.push(r);
        }
        (region, names)
    };
    if region.len() != n_sources {
        return Err(InputError::Content {
            path: path.display().to_string(),
            message: format!(
                "has {} labels, expected one per source ({n_sources})",
                region.len()
            ),
        });
    }
    Ok((region, names))
}
