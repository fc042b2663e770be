//! A data array's text to numbers: encodings, compression, byte order,
//! data types and the array order.

use std::collections::BTreeMap;
use std::io::Read;
use std::path::Path;

use base64::Engine;

use super::{GiftiArray, GiftiDataType};
use crate::io::error::IoError;
use crate::limits::MEMORY_BUDGET_BYTES;

/// One `<DataArray>` as parsed: its attributes and the text of its `<Data>`.
#[derive(Default)]
pub(super) struct RawArray {
    pub(super) attrs: BTreeMap<String, String>,
    pub(super) data: String,
}

pub(super) fn decode_array(
    path: &Path,
    index: usize,
    raw: &RawArray,
) -> Result<GiftiArray, IoError> {
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
            let expected = n
                .checked_mul(data_type.size())
                .filter(|&b| b as u64 <= MEMORY_BUDGET_BYTES)
                .ok_or_else(|| {
                    err(format!(
                        "declares {dims} values, more than the memory budget of {} GiB",
                        MEMORY_BUDGET_BYTES >> 30
                    ))
                })?;
            let bytes = if enc == "GZipBase64Binary" {
                inflate(&bytes, expected)
                    .map_err(|e| err(format!("bad {enc} encoding: cannot decompress ({e})")))?
            } else {
                bytes
            };
            if bytes.len() != expected {
                let found = if bytes.len() > expected {
                    format!("too much data: more than {expected} bytes")
                } else {
                    format!("truncated data: {} bytes", bytes.len())
                };
                return Err(err(format!(
                    "{found}, expected {dims} × {} = {expected}",
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

/// Inflate at most one byte more than the `expected` size: data that
/// inflates to more is refused by the size check without ever being held.
fn inflate(bytes: &[u8], expected: usize) -> std::io::Result<Vec<u8>> {
    let mut out = Vec::new();
    let limit = expected as u64 + 1;
    if bytes.starts_with(&[0x1f, 0x8b]) {
        flate2::read::GzDecoder::new(bytes)
            .take(limit)
            .read_to_end(&mut out)?;
    } else {
        flate2::read::ZlibDecoder::new(bytes)
            .take(limit)
            .read_to_end(&mut out)?;
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
    let mut out = vec![0.0; values.len()];
    for (v, at) in values.iter().zip(column_major_offsets(shape)) {
        out[at] = *v;
    }
    out
}

pub(super) fn row_to_column_major(values: &[f64], shape: &[usize]) -> Vec<f64> {
    column_major_offsets(shape)
        .take(values.len())
        .map(|at| values[at])
        .collect()
}

/// The row-major offset of each element of an array of `shape`, taken in
/// column-major order (the first index moves fastest).
fn column_major_offsets(shape: &[usize]) -> impl Iterator<Item = usize> + '_ {
    let n: usize = shape.iter().product();
    let mut idx = vec![0usize; shape.len()];
    (0..n).map(move |_| {
        let at = idx.iter().zip(shape).fold(0, |acc, (&i, &s)| acc * s + i);
        for (i, &s) in idx.iter_mut().zip(shape) {
            *i += 1;
            if *i < s {
                break;
            }
            *i = 0;
        }
        at
    })
}
