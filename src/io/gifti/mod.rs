//! GIFTI 1.0 files: surfaces (NIFTI_INTENT_POINTSET + NIFTI_INTENT_TRIANGLE)
//! and vertex labels (NIFTI_INTENT_LABEL with a LabelTable), read and write.
//!
//! Supported: encodings ASCII, Base64Binary and GZipBase64Binary (a zlib
//! stream, gzip-wrapped data is accepted too); data types NIFTI_TYPE_FLOAT32,
//! NIFTI_TYPE_FLOAT64, NIFTI_TYPE_INT32 and NIFTI_TYPE_UINT8; RowMajorOrder
//! and ColumnMajorOrder; LittleEndian and BigEndian. External data files are
//! not supported. Positions in GIFTI files are millimetres; [`Mesh`] holds
//! metres.
//!
//! The reading is split by stage: `parse` walks the XML, `decode` turns a
//! data array's text into numbers, `write` makes a document; this file holds
//! the types and the surface and label readers.

mod decode;
mod parse;
mod write;

use std::collections::BTreeMap;
use std::path::Path;

use super::error::IoError;
use crate::geometry::Mesh;

pub use write::{write_gifti_labels, write_gifti_surface, write_gifti_surface_with};

/// Metres per millimetre.
pub(super) const M_PER_MM: f64 = 1e-3;

/// How a DataArray's values are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GiftiEncoding {
    /// Whitespace-separated decimal numbers.
    Ascii,
    /// Little-endian binary, Base64-encoded.
    Base64Binary,
    /// Little-endian binary, zlib-compressed, Base64-encoded.
    GZipBase64Binary,
}

impl GiftiEncoding {
    fn name(self) -> &'static str {
        match self {
            GiftiEncoding::Ascii => "ASCII",
            GiftiEncoding::Base64Binary => "Base64Binary",
            GiftiEncoding::GZipBase64Binary => "GZipBase64Binary",
        }
    }
}

/// The element type of a DataArray.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GiftiDataType {
    /// NIFTI_TYPE_FLOAT32.
    Float32,
    /// NIFTI_TYPE_FLOAT64.
    Float64,
    /// NIFTI_TYPE_INT32.
    Int32,
    /// NIFTI_TYPE_UINT8.
    Uint8,
}

impl GiftiDataType {
    fn name(self) -> &'static str {
        match self {
            GiftiDataType::Float32 => "NIFTI_TYPE_FLOAT32",
            GiftiDataType::Float64 => "NIFTI_TYPE_FLOAT64",
            GiftiDataType::Int32 => "NIFTI_TYPE_INT32",
            GiftiDataType::Uint8 => "NIFTI_TYPE_UINT8",
        }
    }

    fn parse(s: &str) -> Option<GiftiDataType> {
        match s {
            "NIFTI_TYPE_FLOAT32" => Some(GiftiDataType::Float32),
            "NIFTI_TYPE_FLOAT64" => Some(GiftiDataType::Float64),
            "NIFTI_TYPE_INT32" => Some(GiftiDataType::Int32),
            "NIFTI_TYPE_UINT8" => Some(GiftiDataType::Uint8),
            _ => None,
        }
    }

    fn size(self) -> usize {
        match self {
            GiftiDataType::Float32 | GiftiDataType::Int32 => 4,
            GiftiDataType::Float64 => 8,
            GiftiDataType::Uint8 => 1,
        }
    }
}

/// How a DataArray is laid out on disk (reading accepts every combination;
/// writing uses these options so that every combination can be produced).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct GiftiLayout {
    /// Text or binary encoding.
    pub encoding: GiftiEncoding,
    /// Element type on disk.
    pub data_type: GiftiDataType,
    /// ColumnMajorOrder when true, RowMajorOrder otherwise.
    pub column_major: bool,
    /// BigEndian when true, LittleEndian otherwise (binary encodings only).
    pub big_endian: bool,
}

impl GiftiLayout {
    /// Row-major little-endian with the given encoding and type.
    pub fn new(encoding: GiftiEncoding, data_type: GiftiDataType) -> GiftiLayout {
        GiftiLayout {
            encoding,
            data_type,
            column_major: false,
            big_endian: false,
        }
    }
}

/// One DataArray, values converted to `f64` and put in row-major order.
#[derive(Debug, Clone, PartialEq)]
pub struct GiftiArray {
    /// The Intent attribute, e.g. `NIFTI_INTENT_POINTSET`.
    pub intent: String,
    /// Dim0, Dim1, ... (row-major).
    pub shape: Vec<usize>,
    /// Values in row-major order (exact for the integer types).
    pub values: Vec<f64>,
}

/// The contents of a GIFTI file that this reader understands.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Gifti {
    /// The DataArrays in file order.
    pub arrays: Vec<GiftiArray>,
    /// The LabelTable, key to label name.
    pub labels: BTreeMap<i64, String>,
}

/// Read every DataArray and the LabelTable of a GIFTI file.
pub fn read_gifti(path: &Path) -> Result<Gifti, IoError> {
    let text = crate::io::input::read_input(path).map_err(|e| IoError::file(path, e))?;
    let text = String::from_utf8(text)
        .map_err(|e| IoError::format(path, "file", format!("not UTF-8 XML: {e}")))?;
    parse::parse(path, &text)
}

fn find<'a>(path: &Path, g: &'a Gifti, intent: &str) -> Result<(usize, &'a GiftiArray), IoError> {
    g.arrays
        .iter()
        .enumerate()
        .find(|(_, a)| a.intent == intent)
        .ok_or_else(|| {
            let found: Vec<String> = g
                .arrays
                .iter()
                .enumerate()
                .map(|(i, a)| format!("DataArray {i} has intent {}", a.intent))
                .collect();
            IoError::format(
                path,
                "DataArrays",
                format!(
                    "no DataArray with intent {intent} ({})",
                    if found.is_empty() {
                        "the file has no DataArray".to_string()
                    } else {
                        found.join(", ")
                    }
                ),
            )
        })
}

/// Read a surface: the first NIFTI_INTENT_POINTSET array (n×3, millimetres)
/// and the first NIFTI_INTENT_TRIANGLE array (m×3, 0-based indices).
pub fn read_gifti_surface(path: &Path) -> Result<Mesh, IoError> {
    let g = read_gifti(path)?;
    let (pi, points) = find(path, &g, "NIFTI_INTENT_POINTSET")?;
    let (ti, tris) = find(path, &g, "NIFTI_INTENT_TRIANGLE")?;
    for (i, a) in [(pi, points), (ti, tris)] {
        if a.shape.len() != 2 || a.shape[1] != 3 {
            return Err(IoError::format(
                path,
                format!("DataArray {i}"),
                format!("shape {:?}, expected [n, 3]", a.shape),
            ));
        }
    }
    let mut vertices = Vec::with_capacity(points.shape[0]);
    for (v, c) in points.values.chunks_exact(3).enumerate() {
        if c.iter().any(|x| !x.is_finite()) {
            return Err(IoError::Value {
                path: path.to_path_buf(),
                object: format!("DataArray {pi} vertex {v}"),
                message: format!("coordinates {c:?} are not finite"),
            });
        }
        vertices.push([c[0] * M_PER_MM, c[1] * M_PER_MM, c[2] * M_PER_MM]);
    }
    let n = vertices.len();
    let mut triangles = Vec::with_capacity(tris.shape[0]);
    for (t, c) in tris.values.chunks_exact(3).enumerate() {
        let mut tri = [0u32; 3];
        for k in 0..3 {
            let x = c[k];
            if !(x >= 0.0 && x < n as f64 && x.fract() == 0.0) {
                return Err(IoError::Value {
                    path: path.to_path_buf(),
                    object: format!("DataArray {ti} triangle {t}"),
                    message: format!(
                        "vertex index {x} out of range, expected 0 to {}",
                        n.saturating_sub(1)
                    ),
                });
            }
            tri[k] = x as u32;
        }
        triangles.push(tri);
    }
    Ok(Mesh {
        vertices,
        triangles,
    })
}

fn is_unlabelled_name(name: &str) -> bool {
    let n = name.trim().to_ascii_lowercase();
    n.is_empty() || n == "???" || n == "unknown"
}

/// Read vertex labels: the first NIFTI_INTENT_LABEL array and the
/// LabelTable.
///
/// Returns, per vertex, a 0-based index into the returned names, or -1 for
/// an unlabelled vertex. Labels named `???`, `unknown` (any case) or empty
/// mark unlabelled vertices and are left out of the names; the other labels
/// become the names in order of their keys. A vertex whose key is not in the
/// table is an error.
pub fn read_gifti_labels(path: &Path) -> Result<(Vec<i32>, Vec<String>), IoError> {
    let g = read_gifti(path)?;
    let (li, array) = find(path, &g, "NIFTI_INTENT_LABEL")?;
    if array.shape.len() != 1 && !(array.shape.len() == 2 && array.shape[1] == 1) {
        return Err(IoError::format(
            path,
            format!("DataArray {li}"),
            format!("shape {:?}, expected [n_vertices]", array.shape),
        ));
    }
    let mut names: Vec<String> = Vec::new();
    let mut index_of_key: BTreeMap<i64, i32> = BTreeMap::new();
    for (&key, name) in &g.labels {
        if is_unlabelled_name(name) {
            index_of_key.insert(key, -1);
        } else {
            // Two keys with one name would make two rows of one region,
            // each with part of its share.
            if let Some(first) = names.iter().position(|n| n == name) {
                let first_key = index_of_key
                    .iter()
                    .find(|(_, &i)| i == first as i32)
                    .map_or(0, |(&k, _)| k);
                return Err(IoError::Value {
                    path: path.to_path_buf(),
                    object: "LabelTable".to_string(),
                    message: format!(
                        "region name {name:?} is given to keys {first_key} and {key}; expected each name once"
                    ),
                });
            }
            index_of_key.insert(key, names.len() as i32);
            names.push(name.clone());
        }
    }
    let mut out = Vec::with_capacity(array.values.len());
    for (v, &x) in array.values.iter().enumerate() {
        let found = if x.fract() == 0.0 {
            index_of_key.get(&(x as i64)).copied()
        } else {
            None
        };
        match found {
            Some(i) => out.push(i),
            None => {
                return Err(IoError::Value {
                    path: path.to_path_buf(),
                    object: format!("DataArray {li} vertex {v}"),
                    message: format!("label key {x} is not in the LabelTable"),
                })
            }
        }
    }
    Ok((out, names))
}
