//! Vertex correspondence files: one template vertex index (0-based) per
//! subject vertex, as a NumPy `.npy` integer vector or a text file
//! (`.csv`/`.txt`/`.tsv`) with one index per line.
//!
//! Text files may start with one header line (any non-numeric first line)
//! and may hold blank lines and `#` comments; a CSV row's first field is the
//! index.

use std::path::Path;

use super::error::IoError;
use super::npy::{read_npy, NpyData};

/// Read a vertex map: the template vertex of each subject vertex.
pub fn read_vertex_map(path: &Path) -> Result<Vec<i64>, IoError> {
    let is_npy = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("npy"));
    if is_npy {
        let a = read_npy(path)?;
        if a.shape.len() > 2 || (a.shape.len() == 2 && a.shape[1] != 1) {
            return Err(IoError::Shape {
                path: path.to_path_buf(),
                dataset: "the array".to_string(),
                found: a.shape.clone(),
                expected: "[n_subject_vertices] (one template index each)".to_string(),
            });
        }
        return match a.data {
            NpyData::I64(v) => Ok(v),
            NpyData::I32(v) => Ok(v.into_iter().map(i64::from).collect()),
            NpyData::F32(_) | NpyData::F64(_) | NpyData::Str(_) => Err(IoError::Type {
                path: path.to_path_buf(),
                object: "the array".to_string(),
                found: "non-integer values".to_string(),
                expected: "integers (template vertex indices)".to_string(),
            }),
        };
    }
    let text = crate::io::input::read_input_string(path).map_err(|e| IoError::file(path, e))?;
    let mut out = Vec::new();
    let mut seen_line = false;
    for (n, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let field = line
            .split([',', '\t', ' ', ';'])
            .next()
            .unwrap_or("")
            .trim();
        match field.parse::<i64>() {
            Ok(v) => out.push(v),
            Err(_) if !seen_line => {} // a header line
            Err(_) => {
                return Err(IoError::format(
                    path,
                    format!("line {}", n + 1),
                    format!("{field:?} is not an integer template vertex index"),
                ))
            }
        }
        seen_line = true;
    }
    if out.is_empty() {
        return Err(IoError::format(
            path,
            "file",
            "no vertex indices (expected one integer per line)",
        ));
    }
    Ok(out)
}
