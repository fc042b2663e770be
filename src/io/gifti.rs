//! GIFTI 1.0 files: surfaces (NIFTI_INTENT_POINTSET + NIFTI_INTENT_TRIANGLE)
//! and vertex labels (NIFTI_INTENT_LABEL with a LabelTable), read and write.
//!
//! Supported: encodings ASCII, Base64Binary and GZipBase64Binary (a zlib
//! stream, gzip-wrapped data is accepted too); data types NIFTI_TYPE_FLOAT32,
//! NIFTI_TYPE_FLOAT64, NIFTI_TYPE_INT32 and NIFTI_TYPE_UINT8; RowMajorOrder
//! and ColumnMajorOrder; LittleEndian and BigEndian. External data files are
//! not supported. Positions in GIFTI files are millimetres; [`Mesh`] holds
//! metres.

use std::collections::BTreeMap;
use std::io::Read;
use std::path::Path;

use base64::Engine;
use quick_xml::events::Event;

use super::atomic;
use super::error::IoError;
use crate::geometry::Mesh;

/// Metres per millimetre.
const M_PER_MM: f64 = 1e-3;

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
    let text = std::fs::read(path).map_err(|e| IoError::file(path, e))?;
    let text = String::from_utf8(text)
        .map_err(|e| IoError::format(path, "file", format!("not UTF-8 XML: {e}")))?;
    parse(path, &text)
}

#[derive(Default)]
struct RawArray {
    attrs: BTreeMap<String, String>,
    data: String,
}

fn parse(path: &Path, text: &str) -> Result<Gifti, IoError> {
    let xml_err = |pos: u64, e: &dyn std::fmt::Display| {
        IoError::format(
            path,
            format!("byte {pos}"),
            format!("not well-formed XML: {e}"),
        )
    };
    let mut reader = quick_xml::Reader::from_str(text);
    let mut stack: Vec<String> = Vec::new();
    let mut raw_arrays: Vec<RawArray> = Vec::new();
    let mut labels = BTreeMap::new();
    let mut label_key: Option<i64> = None;
    let mut label_text = String::new();
    let mut saw_root = false;
    loop {
        let pos = reader.buffer_position();
        let event = reader.read_event().map_err(|e| xml_err(pos, &e))?;
        // Text is collected only inside <Data> of a DataArray and inside <Label>.
        let in_data = stack.last().is_some_and(|s| s == "Data")
            && stack.iter().rev().nth(1).is_some_and(|s| s == "DataArray");
        let in_label = stack.last().is_some_and(|s| s == "Label");
        match event {
            Event::Start(e) => {
                let name = String::from_utf8_lossy(e.name().as_ref()).into_owned();
                if stack.is_empty() {
                    if name != "GIFTI" {
                        return Err(IoError::format(
                            path,
                            "root element",
                            format!("found <{name}>, expected <GIFTI>"),
                        ));
                    }
                    saw_root = true;
                }
                handle_open(
                    path,
                    &name,
                    &e,
                    &mut raw_arrays,
                    &mut label_key,
                    &mut label_text,
                )?;
                stack.push(name);
            }
            Event::Empty(e) => {
                let name = String::from_utf8_lossy(e.name().as_ref()).into_owned();
                if stack.is_empty() {
                    return Err(IoError::format(path, "root element", "expected <GIFTI>"));
                }
                handle_open(
                    path,
                    &name,
                    &e,
                    &mut raw_arrays,
                    &mut label_key,
                    &mut label_text,
                )?;
                if name == "Label" {
                    if let Some(k) = label_key.take() {
                        labels.insert(k, String::new());
                    }
                }
            }
            Event::End(_) => {
                if let Some(name) = stack.pop() {
                    if name == "Label" {
                        if let Some(k) = label_key.take() {
                            labels.insert(k, label_text.trim().to_string());
                        }
                    }
                }
            }
            Event::Text(t) => {
                let s = t.decode().map_err(|e| xml_err(pos, &e))?;
                if in_data {
                    if let Some(a) = raw_arrays.last_mut() {
                        a.data.push_str(&s);
                    }
                } else if in_label {
                    label_text.push_str(&s);
                }
            }
            Event::CData(t) => {
                let s = t.decode().map_err(|e| xml_err(pos, &e))?;
                if in_data {
                    if let Some(a) = raw_arrays.last_mut() {
                        a.data.push_str(&s);
                    }
                } else if in_label {
                    label_text.push_str(&s);
                }
            }
            Event::GeneralRef(r) => {
                let resolved = match r.resolve_char_ref().map_err(|e| xml_err(pos, &e))? {
                    Some(c) => c.to_string(),
                    None => {
                        let name = r.decode().map_err(|e| xml_err(pos, &e))?;
                        match name.as_ref() {
                            "lt" => "<".to_string(),
                            "gt" => ">".to_string(),
                            "amp" => "&".to_string(),
                            "quot" => "\"".to_string(),
                            "apos" => "'".to_string(),
                            other => {
                                return Err(xml_err(pos, &format!("unknown entity &{other};")))
                            }
                        }
                    }
                };
                if in_label {
                    label_text.push_str(&resolved);
                } else if in_data {
                    if let Some(a) = raw_arrays.last_mut() {
                        a.data.push_str(&resolved);
                    }
                }
            }
            Event::Eof => break,
            _ => {}
        }
    }
    if !saw_root || !stack.is_empty() {
        return Err(IoError::format(
            path,
            "file",
            "not a complete GIFTI XML document (expected <GIFTI> ... </GIFTI>)",
        ));
    }
    let arrays = raw_arrays
        .iter()
        .enumerate()
        .map(|(i, raw)| decode_array(path, i, raw))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Gifti { arrays, labels })
}

fn handle_open(
    path: &Path,
    name: &str,
    e: &quick_xml::events::BytesStart<'_>,
    raw_arrays: &mut Vec<RawArray>,
    label_key: &mut Option<i64>,
    label_text: &mut String,
) -> Result<(), IoError> {
    let mut attrs = BTreeMap::new();
    for a in e.attributes() {
        let a = a.map_err(|err| {
            IoError::format(path, format!("<{name}>"), format!("bad attribute: {err}"))
        })?;
        let key = String::from_utf8_lossy(a.key.as_ref()).into_owned();
        let value = a
            .unescape_value()
            .map_err(|err| {
                IoError::format(
                    path,
                    format!("<{name}>"),
                    format!("bad attribute {key}: {err}"),
                )
            })?
            .into_owned();
        attrs.insert(key, value);
    }
    match name {
        "DataArray" => raw_arrays.push(RawArray {
            attrs,
            data: String::new(),
        }),
        "Label" => {
            let key = attrs.get("Key").or_else(|| attrs.get("Index"));
            let key = key
                .and_then(|k| k.trim().parse::<i64>().ok())
                .ok_or_else(|| {
                    IoError::format(
                        path,
                        "LabelTable",
                        "a <Label> lacks an integer Key attribute",
                    )
                })?;
            *label_key = Some(key);
            label_text.clear();
        }
        _ => {}
    }
    Ok(())
}

fn decode_array(path: &Path, index: usize, raw: &RawArray) -> Result<GiftiArray, IoError> {
    let loc = format!("DataArray {index}");
    let err = |msg: String| IoError::format(path, loc.clone(), msg);
    let get = |key: &str| -> Result<&str, IoError> {
        raw.attrs
            .get(key)
            .map(|s| s.trim())
            .ok_or_else(|| err(format!("attribute {key} is missing")))
    };
    let intent = get("Intent")?.to_string();
    let dtype_name = get("DataType")?;
    let data_type = GiftiDataType::parse(dtype_name).ok_or_else(|| {
        err(format!(
            "DataType {dtype_name} is not supported (expected NIFTI_TYPE_FLOAT32, FLOAT64, INT32 or UINT8)"
        ))
    })?;
    let rank: usize = get("Dimensionality")?
        .parse()
        .map_err(|_| err("Dimensionality is not a whole number".to_string()))?;
    if rank == 0 || rank > 6 {
        return Err(err(format!("Dimensionality {rank}, expected 1 to 6")));
    }
    let mut shape = Vec::with_capacity(rank);
    for d in 0..rank {
        let v: usize = get(&format!("Dim{d}"))?
            .parse()
            .map_err(|_| err(format!("Dim{d} is not a whole number")))?;
        shape.push(v);
    }
    let n = shape
        .iter()
        .try_fold(1usize, |acc, &d| acc.checked_mul(d))
        .ok_or_else(|| err("the dimensions overflow".to_string()))?;
    if raw
        .attrs
        .get("ExternalFileName")
        .is_some_and(|s| !s.trim().is_empty())
    {
        return Err(IoError::Unsupported {
            path: path.to_path_buf(),
            what: format!("{loc}: data in an external file"),
        });
    }
    let column_major = match raw.attrs.get("ArrayIndexingOrder").map(|s| s.trim()) {
        None | Some("RowMajorOrder") => false,
        Some("ColumnMajorOrder") => true,
        Some(other) => {
            return Err(err(format!(
                "ArrayIndexingOrder {other}, expected RowMajorOrder or ColumnMajorOrder"
            )))
        }
    };
    let big_endian = match raw.attrs.get("Endian").map(|s| s.trim()) {
        None | Some("LittleEndian") => false,
        Some("BigEndian") => true,
        Some(other) => {
            return Err(err(format!(
                "Endian {other}, expected LittleEndian or BigEndian"
            )))
        }
    };
    let dims = shape
        .iter()
        .map(|d| d.to_string())
        .collect::<Vec<_>>()
        .join("×");
    let values = match get("Encoding")? {
        "ASCII" => {
            let values = raw
                .data
                .split_whitespace()
                .enumerate()
                .map(|(i, tok)| {
                    tok.parse::<f64>()
                        .map_err(|_| err(format!("ASCII value {i} ({tok:?}) is not a number")))
                })
                .collect::<Result<Vec<f64>, _>>()?;
            if values.len() != n {
                return Err(err(format!(
                    "truncated data: {} ASCII values, expected {dims} = {n}",
                    values.len()
                )));
            }
            if matches!(data_type, GiftiDataType::Int32 | GiftiDataType::Uint8)
                && values.iter().any(|v| v.fract() != 0.0)
            {
                return Err(err(format!("{dtype_name} data holds a non-integer value")));
            }
            values
        }
        enc @ ("Base64Binary" | "GZipBase64Binary") => {
            let cleaned: String = raw.data.chars().filter(|c| !c.is_whitespace()).collect();
            let bytes = base64::engine::general_purpose::STANDARD
                .decode(cleaned.as_bytes())
                .map_err(|e| err(format!("bad {enc} encoding: not Base64 ({e})")))?;
            let bytes = if enc == "GZipBase64Binary" {
                inflate(&bytes)
                    .map_err(|e| err(format!("bad {enc} encoding: cannot decompress ({e})")))?
            } else {
                bytes
            };
            let expected = n * data_type.size();
            if bytes.len() != expected {
                return Err(err(format!(
                    "truncated data: {} bytes, expected {dims} × {} = {expected}",
                    bytes.len(),
                    data_type.size()
                )));
            }
            decode_binary(&bytes, data_type, big_endian)
        }
        "ExternalFileBinary" => {
            return Err(IoError::Unsupported {
                path: path.to_path_buf(),
                what: format!("{loc}: Encoding ExternalFileBinary"),
            })
        }
        other => {
            return Err(err(format!(
                "bad encoding {other}, expected ASCII, Base64Binary or GZipBase64Binary"
            )))
        }
    };
    let values = if column_major && rank > 1 {
        column_to_row_major(&values, &shape)
    } else {
        values
    };
    Ok(GiftiArray {
        intent,
        shape,
        values,
    })
}

fn inflate(bytes: &[u8]) -> std::io::Result<Vec<u8>> {
    let mut out = Vec::new();
    if bytes.starts_with(&[0x1f, 0x8b]) {
        flate2::read::GzDecoder::new(bytes).read_to_end(&mut out)?;
    } else {
        flate2::read::ZlibDecoder::new(bytes).read_to_end(&mut out)?;
    }
    Ok(out)
}

fn decode_binary(bytes: &[u8], data_type: GiftiDataType, big_endian: bool) -> Vec<f64> {
    let size = data_type.size();
    bytes
        .chunks_exact(size)
        .map(|c| {
            let mut b = [0u8; 8];
            b[..size].copy_from_slice(c);
            if big_endian {
                b[..size].reverse();
            }
            match data_type {
                GiftiDataType::Float32 => f64::from(f32::from_le_bytes([b[0], b[1], b[2], b[3]])),
                GiftiDataType::Float64 => f64::from_le_bytes(b),
                GiftiDataType::Int32 => f64::from(i32::from_le_bytes([b[0], b[1], b[2], b[3]])),
                GiftiDataType::Uint8 => f64::from(b[0]),
            }
        })
        .collect()
}

/// Reorder values stored with the first index fastest into row-major order.
fn column_to_row_major(values: &[f64], shape: &[usize]) -> Vec<f64> {
    let n = values.len();
    let mut out = vec![0.0; n];
    let rank = shape.len();
    let mut idx = vec![0usize; rank];
    for v in values {
        // `idx` walks the column-major order: the first index moves fastest.
        let mut row_major = 0;
        for d in 0..rank {
            row_major = row_major * shape[d] + idx[d];
        }
        out[row_major] = *v;
        for d in 0..rank {
            idx[d] += 1;
            if idx[d] < shape[d] {
                break;
            }
            idx[d] = 0;
        }
    }
    out
}

fn row_to_column_major(values: &[f64], shape: &[usize]) -> Vec<f64> {
    let n = values.len();
    let mut out = vec![0.0; n];
    let rank = shape.len();
    let mut idx = vec![0usize; rank];
    for slot in out.iter_mut() {
        let mut row_major = 0;
        for d in 0..rank {
            row_major = row_major * shape[d] + idx[d];
        }
        *slot = values[row_major];
        for d in 0..rank {
            idx[d] += 1;
            if idx[d] < shape[d] {
                break;
            }
            idx[d] = 0;
        }
    }
    out
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
    let mut names = Vec::new();
    let mut index_of_key: BTreeMap<i64, i32> = BTreeMap::new();
    for (&key, name) in &g.labels {
        if is_unlabelled_name(name) {
            index_of_key.insert(key, -1);
        } else {
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

/// One array to write.
struct OutArray<'a> {
    intent: &'a str,
    shape: Vec<usize>,
    values: Vec<f64>,
    layout: GiftiLayout,
}

fn encode_values(a: &OutArray<'_>) -> Result<String, String> {
    let values = if a.layout.column_major && a.shape.len() > 1 {
        row_to_column_major(&a.values, &a.shape)
    } else {
        a.values.clone()
    };
    let dt = a.layout.data_type;
    if a.layout.encoding == GiftiEncoding::Ascii {
        let per_line = a.shape.get(1).copied().unwrap_or(1).max(1);
        let mut s = String::new();
        for (i, v) in values.iter().enumerate() {
            let text = match dt {
                GiftiDataType::Float32 => format!("{}", *v as f32),
                GiftiDataType::Float64 => format!("{v}"),
                _ => format!("{}", *v as i64),
            };
            s.push_str(&text);
            s.push(if (i + 1) % per_line == 0 { '\n' } else { ' ' });
        }
        return Ok(s);
    }
    let mut bytes = Vec::with_capacity(values.len() * dt.size());
    for &v in &values {
        let mut b: Vec<u8> = match dt {
            GiftiDataType::Float32 => (v as f32).to_le_bytes().to_vec(),
            GiftiDataType::Float64 => v.to_le_bytes().to_vec(),
            GiftiDataType::Int32 => (v as i32).to_le_bytes().to_vec(),
            GiftiDataType::Uint8 => vec![v as u8],
        };
        if a.layout.big_endian {
            b.reverse();
        }
        bytes.extend_from_slice(&b);
    }
    if a.layout.encoding == GiftiEncoding::GZipBase64Binary {
        use std::io::Write;
        let mut enc = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::default());
        enc.write_all(&bytes).map_err(|e| e.to_string())?;
        bytes = enc.finish().map_err(|e| e.to_string())?;
    }
    Ok(base64::engine::general_purpose::STANDARD.encode(&bytes))
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

fn document(
    path: &Path,
    arrays: &[OutArray<'_>],
    labels: Option<&[(i64, String, [f32; 4])]>,
) -> Result<String, IoError> {
    let mut s = String::from("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    s.push_str(&format!(
        "<GIFTI Version=\"1.0\" NumberOfDataArrays=\"{}\">\n<MetaData/>\n",
        arrays.len()
    ));
    match labels {
        None => s.push_str("<LabelTable/>\n"),
        Some(table) => {
            s.push_str("<LabelTable>\n");
            for (key, name, [r, g, b, a]) in table {
                s.push_str(&format!(
                    "<Label Key=\"{key}\" Red=\"{r}\" Green=\"{g}\" Blue=\"{b}\" Alpha=\"{a}\">{}</Label>\n",
                    xml_escape(name)
                ));
            }
            s.push_str("</LabelTable>\n");
        }
    }
    for (i, a) in arrays.iter().enumerate() {
        let data = encode_values(a).map_err(|e| {
            IoError::format(
                path,
                format!("DataArray {i}"),
                format!("cannot encode: {e}"),
            )
        })?;
        let dims: String = a
            .shape
            .iter()
            .enumerate()
            .map(|(d, n)| format!(" Dim{d}=\"{n}\""))
            .collect();
        s.push_str(&format!(
            "<DataArray Intent=\"{}\" DataType=\"{}\" ArrayIndexingOrder=\"{}\" Dimensionality=\"{}\"{dims} Encoding=\"{}\" Endian=\"{}\" ExternalFileName=\"\" ExternalFileOffset=\"\">\n<MetaData/>\n<Data>{data}</Data>\n</DataArray>\n",
            a.intent,
            a.layout.data_type.name(),
            if a.layout.column_major { "ColumnMajorOrder" } else { "RowMajorOrder" },
            a.shape.len(),
            a.layout.encoding.name(),
            if a.layout.big_endian { "BigEndian" } else { "LittleEndian" },
        ));
    }
    s.push_str("</GIFTI>\n");
    Ok(s)
}

/// Write a surface with float32 positions (millimetres) and int32
/// triangles, row-major little-endian, in the given encoding.
pub fn write_gifti_surface(
    path: &Path,
    mesh: &Mesh,
    encoding: GiftiEncoding,
) -> Result<(), IoError> {
    write_gifti_surface_with(
        path,
        mesh,
        GiftiLayout::new(encoding, GiftiDataType::Float32),
        GiftiLayout::new(encoding, GiftiDataType::Int32),
    )
}

/// Write a surface with explicit layouts for the positions and the
/// triangles (e.g. float64, column-major or big-endian).
pub fn write_gifti_surface_with(
    path: &Path,
    mesh: &Mesh,
    points: GiftiLayout,
    triangles: GiftiLayout,
) -> Result<(), IoError> {
    super::error::check_finite_vertices(path, mesh)?;
    let arrays = [
        OutArray {
            intent: "NIFTI_INTENT_POINTSET",
            shape: vec![mesh.vertices.len(), 3],
            values: mesh
                .vertices
                .iter()
                .flat_map(|p| p.iter().map(|x| x / M_PER_MM))
                .collect(),
            layout: points,
        },
        OutArray {
            intent: "NIFTI_INTENT_TRIANGLE",
            shape: vec![mesh.triangles.len(), 3],
            values: mesh
                .triangles
                .iter()
                .flat_map(|t| t.iter().map(|&i| f64::from(i)))
                .collect(),
            layout: triangles,
        },
    ];
    let text = document(path, &arrays, None)?;
    atomic::write_atomic(path, text.as_bytes()).map_err(|e| IoError::file(path, e))
}

/// Write vertex labels: `indices[v]` is an index into `names` or -1 for an
/// unlabelled vertex. Key 0 is `???` (transparent) for unlabelled vertices
/// and key i+1 is `names[i]`, stored as int32 in the given encoding.
pub fn write_gifti_labels(
    path: &Path,
    indices: &[i32],
    names: &[String],
    encoding: GiftiEncoding,
) -> Result<(), IoError> {
    if let Some((v, i)) = indices
        .iter()
        .enumerate()
        .find(|(_, &i)| i < -1 || i >= names.len() as i32)
    {
        return Err(IoError::Value {
            path: path.to_path_buf(),
            object: format!("vertex {v}"),
            message: format!(
                "label index {i} out of range, expected -1 to {}",
                names.len() as i64 - 1
            ),
        });
    }
    let mut table = vec![(0i64, "???".to_string(), [0.0f32, 0.0, 0.0, 0.0])];
    for (i, name) in names.iter().enumerate() {
        // Colours spread around the hue circle so neighbouring indices differ.
        let h = (i as f32 * 0.618_034).fract();
        table.push((i as i64 + 1, name.clone(), hue_to_rgba(h)));
    }
    let arrays = [OutArray {
        intent: "NIFTI_INTENT_LABEL",
        shape: vec![indices.len()],
        values: indices.iter().map(|&i| f64::from(i + 1)).collect(),
        layout: GiftiLayout::new(encoding, GiftiDataType::Int32),
    }];
    let text = document(path, &arrays, Some(&table))?;
    atomic::write_atomic(path, text.as_bytes()).map_err(|e| IoError::file(path, e))
}

fn hue_to_rgba(h: f32) -> [f32; 4] {
    let x = h * 6.0;
    let f = |offset: f32| {
        let k = (x + offset) % 6.0;
        let v = 1.0 - (k.min(4.0 - k).clamp(0.0, 1.0));
        (v * 1000.0).round() / 1000.0
    };
    [f(5.0), f(3.0), f(1.0), 1.0]
}
