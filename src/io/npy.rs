//! NumPy `.npy` and `.npz` files.
//!
//! Reading parses the `.npy` format itself (version 1, 2 and 3 headers;
//! little- and big-endian `f4 f8 i1 i2 i4 i8 u1 u2 u4 u8 b1` and unicode
//! strings `<U n`, UTF-32 fixed width; C and Fortran order), because
//! ndarray-npy 0.10 reads no string arrays; `.npz` archives (stored or
//! deflated, with or without ZIP64 records, as `numpy.savez` and
//! `numpy.savez_compressed` write them) are unpacked here too. Writing
//! numbers goes through ndarray-npy; string arrays are written by this module
//! (`.npy` only).

use std::collections::BTreeMap;
use std::io::{Cursor, Read};
use std::path::Path;

use ndarray::{ArrayD, IxDyn};
use ndarray_npy::{NpzWriter, WriteNpyExt};

use super::atomic;
use super::error::IoError;
use crate::limits::{MAX_INFLATE_RATIO, MEMORY_BUDGET_BYTES};

/// The values of a NumPy array, row-major (C order) whatever the file's
/// order. Integer types other than int32/int64 are widened to `I64`, and
/// booleans become 0/1 in `I64`.
#[derive(Debug, Clone, PartialEq)]
pub enum NpyData {
    /// float32.
    F32(Vec<f32>),
    /// float64.
    F64(Vec<f64>),
    /// int32.
    I32(Vec<i32>),
    /// int64 (and the widened integer types).
    I64(Vec<i64>),
    /// Unicode strings (`<U n`), trailing NULs removed.
    Str(Vec<String>),
}

/// A NumPy array: shape and row-major values.
#[derive(Debug, Clone, PartialEq)]
pub struct NpyArray {
    /// Shape (empty for a 0-dimensional array).
    pub shape: Vec<usize>,
    /// Values in row-major order.
    pub data: NpyData,
}

impl NpyArray {
    /// The values as floats (integers converted), or `None` for strings.
    pub fn to_f64(&self) -> Option<Vec<f64>> {
        match &self.data {
            NpyData::F32(v) => Some(v.iter().map(|&x| f64::from(x)).collect()),
            NpyData::F64(v) => Some(v.clone()),
            NpyData::I32(v) => Some(v.iter().map(|&x| f64::from(x)).collect()),
            NpyData::I64(v) => Some(v.iter().map(|&x| x as f64).collect()),
            NpyData::Str(_) => None,
        }
    }

    fn kind(&self) -> &'static str {
        match &self.data {
            NpyData::F32(_) => "float32",
            NpyData::F64(_) => "float64",
            NpyData::I32(_) => "int32",
            NpyData::I64(_) => "int64",
            NpyData::Str(_) => "unicode strings",
        }
    }
}

/// Read a `.npy` file.
pub fn read_npy(path: &Path) -> Result<NpyArray, IoError> {
    let bytes = crate::io::input::read_input(path).map_err(|e| IoError::file(path, e))?;
    parse_npy(&bytes).map_err(|(loc, msg)| IoError::format(path, loc, msg))
}

/// Read a numeric `.npy` file as floats: row-major values and shape.
pub fn read_npy_f64(path: &Path) -> Result<(Vec<f64>, Vec<usize>), IoError> {
    let a = read_npy(path)?;
    let values = a.to_f64().ok_or_else(|| IoError::Type {
        path: path.to_path_buf(),
        object: "the array".to_string(),
        found: a.kind().to_string(),
        expected: "numbers".to_string(),
    })?;
    Ok((values, a.shape))
}

/// Read a unicode string `.npy` file: row-major strings and shape.
pub fn read_npy_strings(path: &Path) -> Result<(Vec<String>, Vec<usize>), IoError> {
    let a = read_npy(path)?;
    match a.data {
        NpyData::Str(v) => Ok((v, a.shape)),
        _ => Err(IoError::Type {
            path: path.to_path_buf(),
            object: "the array".to_string(),
            found: a.kind().to_string(),
            expected: "unicode strings".to_string(),
        }),
    }
}

/// Read every array of a `.npz` archive, keyed by name (without `.npy`).
pub fn read_npz(path: &Path) -> Result<BTreeMap<String, NpyArray>, IoError> {
    let bytes = crate::io::input::read_input(path).map_err(|e| IoError::file(path, e))?;
    let entries = unzip(&bytes).map_err(|(loc, msg)| IoError::format(path, loc, msg))?;
    let mut out = BTreeMap::new();
    for (name, data) in entries {
        let key = name.strip_suffix(".npy").unwrap_or(&name).to_string();
        let array = parse_npy(&data)
            .map_err(|(loc, msg)| IoError::format(path, format!("entry {name}, {loc}"), msg))?;
        out.insert(key, array);
    }
    Ok(out)
}

fn check_shape(path: &Path, len: usize, shape: &[usize]) -> Result<(), IoError> {
    let n: usize = shape.iter().product();
    if n != len {
        return Err(IoError::Shape {
            path: path.to_path_buf(),
            dataset: "the array".to_string(),
            found: shape.to_vec(),
            expected: format!("a shape with {len} elements, as many as the values"),
        });
    }
    Ok(())
}

/// Write floats (row-major, with `shape`) as a C-order float64 `.npy` file.
pub fn write_npy_f64(path: &Path, values: &[f64], shape: &[usize]) -> Result<(), IoError> {
    write_npy(
        path,
        &NpyArray {
            shape: shape.to_vec(),
            data: NpyData::F64(values.to_vec()),
        },
    )
}

/// Write any array as a C-order `.npy` file (strings as `<U n`, n the
/// longest string in code points).
pub fn write_npy(path: &Path, array: &NpyArray) -> Result<(), IoError> {
    let bytes = npy_bytes(path, array)?;
    atomic::write_atomic(path, &bytes).map_err(|e| IoError::file(path, e))
}

fn to_ndarray<T: Clone>(path: &Path, shape: &[usize], v: &[T]) -> Result<ArrayD<T>, IoError> {
    check_shape(path, v.len(), shape)?;
    ArrayD::from_shape_vec(IxDyn(shape), v.to_vec())
        .map_err(|e| IoError::format(path, "the array", e.to_string()))
}

fn npy_bytes(path: &Path, array: &NpyArray) -> Result<Vec<u8>, IoError> {
    let mut out = Vec::new();
    let err = |e: ndarray_npy::WriteNpyError| IoError::format(path, "the array", e.to_string());
    match &array.data {
        NpyData::F32(v) => to_ndarray(path, &array.shape, v)?
            .write_npy(&mut out)
            .map_err(err)?,
        NpyData::F64(v) => to_ndarray(path, &array.shape, v)?
            .write_npy(&mut out)
            .map_err(err)?,
        NpyData::I32(v) => to_ndarray(path, &array.shape, v)?
            .write_npy(&mut out)
            .map_err(err)?,
        NpyData::I64(v) => to_ndarray(path, &array.shape, v)?
            .write_npy(&mut out)
            .map_err(err)?,
        NpyData::Str(v) => {
            check_shape(path, v.len(), &array.shape)?;
            out = string_npy(v, &array.shape);
        }
    }
    Ok(out)
}

fn string_npy(values: &[String], shape: &[usize]) -> Vec<u8> {
    let width = values
        .iter()
        .map(|s| s.chars().count())
        .max()
        .unwrap_or(0)
        .max(1);
    let shape_text = match shape {
        [n] => format!("({n},)"),
        dims => format!(
            "({})",
            dims.iter()
                .map(|d| d.to_string())
                .collect::<Vec<_>>()
                .join(", ")
        ),
    };
    let mut header =
        format!("{{'descr': '<U{width}', 'fortran_order': False, 'shape': {shape_text}, }}");
    // Pad so that the data starts on a 64-byte boundary, ending in a newline.
    let total = 10 + header.len() + 1;
    header.push_str(&" ".repeat((64 - total % 64) % 64));
    header.push('\n');
    let mut out = b"\x93NUMPY\x01\x00".to_vec();
    out.extend_from_slice(&(header.len() as u16).to_le_bytes());
    out.extend_from_slice(header.as_bytes());
    for s in values {
        let mut n = 0;
        for c in s.chars() {
            out.extend_from_slice(&(c as u32).to_le_bytes());
            n += 1;
        }
        for _ in n..width {
            out.extend_from_slice(&[0; 4]);
        }
    }
    out
}

/// Write a compressed `.npz` archive (deflate) of numeric arrays through
/// ndarray-npy; string arrays are refused (ndarray-npy cannot write them).
pub fn write_npz(path: &Path, arrays: &BTreeMap<String, NpyArray>) -> Result<(), IoError> {
    let mut npz = NpzWriter::new_compressed(Cursor::new(Vec::new()));
    let err = |name: &str, e: ndarray_npy::WriteNpzError| {
        IoError::format(path, format!("entry {name}.npy"), e.to_string())
    };
    for (name, a) in arrays {
        match &a.data {
            NpyData::F32(v) => npz.add_array(name.as_str(), &to_ndarray(path, &a.shape, v)?),
            NpyData::F64(v) => npz.add_array(name.as_str(), &to_ndarray(path, &a.shape, v)?),
            NpyData::I32(v) => npz.add_array(name.as_str(), &to_ndarray(path, &a.shape, v)?),
            NpyData::I64(v) => npz.add_array(name.as_str(), &to_ndarray(path, &a.shape, v)?),
            NpyData::Str(_) => {
                return Err(IoError::Unsupported {
                    path: path.to_path_buf(),
                    what: format!("writing the string array {name} into an .npz archive"),
                })
            }
        }
        .map_err(|e| err(name, e))?;
    }
    let bytes = npz.finish().map_err(|e| err("(archive)", e))?.into_inner();
    atomic::write_atomic(path, &bytes).map_err(|e| IoError::file(path, e))
}

type Failure = (String, String);

fn fail(loc: &str, msg: impl Into<String>) -> Failure {
    (loc.to_string(), msg.into())
}

/// Parse the header dictionary, e.g.
/// `{'descr': '<f8', 'fortran_order': False, 'shape': (3, 4), }`.
fn parse_header(text: &str) -> Result<(String, bool, Vec<usize>), Failure> {
    let h = "header";
    let field = |key: &str| -> Result<&str, Failure> {
        let pat_single = format!("'{key}'");
        let pat_double = format!("\"{key}\"");
        let at = text
            .find(&pat_single)
            .or_else(|| text.find(&pat_double))
            .ok_or_else(|| fail(h, format!("no '{key}' entry in {text:?}")))?;
        let rest = &text[at + key.len() + 2..];
        let rest = rest
            .trim_start()
            .strip_prefix(':')
            .ok_or_else(|| fail(h, format!("no ':' after '{key}'")))?;
        Ok(rest.trim_start())
    };
    let descr_raw = field("descr")?;
    let quote = descr_raw
        .chars()
        .next()
        .filter(|c| *c == '\'' || *c == '"')
        .ok_or_else(|| {
            fail(
                h,
                "descr is not a simple type string (structured dtypes are not supported)",
            )
        })?;
    let descr_end = descr_raw[1..]
        .find(quote)
        .ok_or_else(|| fail(h, "descr string is not closed"))?;
    let descr = descr_raw[1..1 + descr_end].to_string();
    let fortran_raw = field("fortran_order")?;
    let fortran = if fortran_raw.starts_with("True") {
        true
    } else if fortran_raw.starts_with("False") {
        false
    } else {
        return Err(fail(h, "fortran_order is neither True nor False"));
    };
    let shape_raw = field("shape")?;
    let inner = shape_raw
        .strip_prefix('(')
        .and_then(|s| s.split(')').next())
        .ok_or_else(|| fail(h, "shape is not a tuple"))?;
    let shape = inner
        .split(',')
        .map(str::trim)
        .filter(|s| !s.is_empty())
        .map(|s| s.trim_end_matches('L').parse::<usize>())
        .collect::<Result<Vec<_>, _>>()
        .map_err(|_| fail(h, format!("shape ({inner}) holds a non-integer")))?;
    Ok((descr, fortran, shape))
}

fn parse_npy(bytes: &[u8]) -> Result<NpyArray, Failure> {
    if bytes.len() < 10 || &bytes[..6] != b"\x93NUMPY" {
        return Err(fail("header", "not a .npy file (no \\x93NUMPY magic)"));
    }
    let (header_len, start): (usize, usize) = match bytes[6] {
        1 => (usize::from(u16::from_le_bytes([bytes[8], bytes[9]])), 10),
        2 | 3 => {
            if bytes.len() < 12 {
                return Err(fail("header", "truncated header"));
            }
            (
                u32::from_le_bytes([bytes[8], bytes[9], bytes[10], bytes[11]]) as usize,
                12,
            )
        }
        v => {
            return Err(fail(
                "header",
                format!("format version {v} is not supported (expected 1, 2 or 3)"),
            ))
        }
    };
    let end = start
        .checked_add(header_len)
        .filter(|&e| e <= bytes.len())
        .ok_or_else(|| fail("header", "truncated header"))?;
    let text = std::str::from_utf8(&bytes[start..end])
        .map_err(|_| fail("header", "header is not text"))?;
    let (descr, fortran, shape) = parse_header(text)?;
    let data = &bytes[end..];
    let n = shape
        .iter()
        .try_fold(1usize, |a, &d| a.checked_mul(d))
        .ok_or_else(|| fail("header", "shape overflows"))?;
    let (order, kind, size) = {
        let mut chars = descr.chars();
        let first = chars.next().ok_or_else(|| fail("header", "empty descr"))?;
        let (order, rest) = if "<>|=".contains(first) {
            (first, chars.as_str())
        } else {
            ('=', descr.as_str())
        };
        let kind = rest
            .chars()
            .next()
            .ok_or_else(|| fail("header", "descr has no type"))?;
        let size: usize = rest[kind.len_utf8()..]
            .parse()
            .map_err(|_| fail("header", format!("descr {descr:?} has no item size")))?;
        (order, kind, size)
    };
    let supported = matches!(
        (kind, size),
        ('f', 4 | 8) | ('i', 1 | 2 | 4 | 8) | ('u', 1 | 2 | 4 | 8) | ('b', 1) | ('U', _)
    );
    if !supported {
        return Err(fail("header", format!("dtype {descr:?} is not supported")));
    }
    let big = order == '>' || (order == '=' && cfg!(target_endian = "big"));
    let item = if kind == 'U' { 4 * size } else { size };
    let expected = n
        .checked_mul(item)
        .ok_or_else(|| fail("header", "shape overflows"))?;
    if data.len() != expected {
        return Err(fail(
            "data",
            format!(
                "{} bytes of data, expected {expected} for shape {shape:?} of {descr} (truncated or damaged)",
                data.len()
            ),
        ));
    }
    let word = |c: &[u8]| -> [u8; 8] {
        let mut a = [0u8; 8];
        a[..c.len()].copy_from_slice(c);
        if big {
            a[..c.len()].reverse();
        }
        a
    };
    let chunks = || data.chunks_exact(item.max(1)).take(n);
    let values = match (kind, size) {
        ('f', 4) => NpyData::F32(
            chunks()
                .map(|c| {
                    let a = word(c);
                    f32::from_le_bytes([a[0], a[1], a[2], a[3]])
                })
                .collect(),
        ),
        ('f', 8) => NpyData::F64(chunks().map(|c| f64::from_le_bytes(word(c))).collect()),
        ('i', 4) => NpyData::I32(
            chunks()
                .map(|c| {
                    let a = word(c);
                    i32::from_le_bytes([a[0], a[1], a[2], a[3]])
                })
                .collect(),
        ),
        ('i', 8) => NpyData::I64(chunks().map(|c| i64::from_le_bytes(word(c))).collect()),
        ('i', 1) => NpyData::I64(chunks().map(|c| i64::from(c[0] as i8)).collect()),
        ('i', 2) => NpyData::I64(
            chunks()
                .map(|c| {
                    let a = word(c);
                    i64::from(i16::from_le_bytes([a[0], a[1]]))
                })
                .collect(),
        ),
        ('u' | 'b', 1) => NpyData::I64(chunks().map(|c| i64::from(c[0])).collect()),
        ('u', 2) => NpyData::I64(
            chunks()
                .map(|c| {
                    let a = word(c);
                    i64::from(u16::from_le_bytes([a[0], a[1]]))
                })
                .collect(),
        ),
        ('u', 4) => NpyData::I64(
            chunks()
                .map(|c| {
                    let a = word(c);
                    i64::from(u32::from_le_bytes([a[0], a[1], a[2], a[3]]))
                })
                .collect(),
        ),
        ('u', 8) => {
            let v: Option<Vec<i64>> = chunks()
                .map(|c| i64::try_from(u64::from_le_bytes(word(c))).ok())
                .collect();
            NpyData::I64(v.ok_or_else(|| fail("data", "a uint64 value exceeds the int64 range"))?)
        }
        ('U', _) => {
            let mut out = Vec::with_capacity(n);
            for (i, c) in chunks().enumerate() {
                let mut s = String::new();
                for unit in c.chunks_exact(4) {
                    let a = word(unit);
                    let code = u32::from_le_bytes([a[0], a[1], a[2], a[3]]);
                    if code == 0 {
                        break;
                    }
                    s.push(char::from_u32(code).ok_or_else(|| {
                        fail(
                            "data",
                            format!("element {i} holds an invalid code point {code:#x}"),
                        )
                    })?);
                }
                out.push(s);
            }
            NpyData::Str(out)
        }
        _ => return Err(fail("header", format!("dtype {descr:?} is not supported"))),
    };
    let values = if fortran && shape.len() > 1 {
        match values {
            NpyData::F32(v) => NpyData::F32(fortran_to_c(&v, &shape)),
            NpyData::F64(v) => NpyData::F64(fortran_to_c(&v, &shape)),
            NpyData::I32(v) => NpyData::I32(fortran_to_c(&v, &shape)),
            NpyData::I64(v) => NpyData::I64(fortran_to_c(&v, &shape)),
            NpyData::Str(v) => NpyData::Str(fortran_to_c(&v, &shape)),
        }
    } else {
        values
    };
    Ok(NpyArray {
        shape,
        data: values,
    })
}

/// Reorder values stored first-index-fastest (Fortran order) into C order.
fn fortran_to_c<T: Clone>(values: &[T], shape: &[usize]) -> Vec<T> {
    let rank = shape.len();
    // C-order strides.
    let mut strides = vec![1usize; rank];
    for d in (0..rank.saturating_sub(1)).rev() {
        strides[d] = strides[d + 1] * shape[d + 1];
    }
    let mut out: Vec<Option<T>> = vec![None; values.len()];
    let mut idx = vec![0usize; rank];
    for v in values {
        let at: usize = idx.iter().zip(&strides).map(|(i, s)| i * s).sum();
        out[at] = Some(v.clone());
        for d in 0..rank {
            idx[d] += 1;
            if idx[d] < shape[d] {
                break;
            }
            idx[d] = 0;
        }
    }
    out.into_iter().flatten().collect()
}

fn le16(b: &[u8], at: usize) -> Option<u64> {
    b.get(at..at + 2)
        .map(|s| u64::from(u16::from_le_bytes([s[0], s[1]])))
}

fn le32(b: &[u8], at: usize) -> Option<u64> {
    b.get(at..at + 4)
        .map(|s| u64::from(u32::from_le_bytes([s[0], s[1], s[2], s[3]])))
}

fn le64(b: &[u8], at: usize) -> Option<u64> {
    b.get(at..at + 8).map(|s| {
        let mut a = [0u8; 8];
        a.copy_from_slice(s);
        u64::from_le_bytes(a)
    })
}

/// The entries of a zip archive (stored or deflated), by name, in order.
/// The most bytes a deflate stream of `compressed` bytes may declare: the
/// smaller of [`MAX_INFLATE_RATIO`] times its size plus 1 KiB and the memory
/// budget.
pub(crate) fn inflate_bound(compressed: u64) -> u64 {
    compressed
        .saturating_mul(MAX_INFLATE_RATIO)
        .saturating_add(1024)
        .min(MEMORY_BUDGET_BYTES)
}

fn unzip(b: &[u8]) -> Result<Vec<(String, Vec<u8>)>, Failure> {
    let z = "zip archive";
    let short = || fail(z, "truncated or damaged archive");
    // The end-of-central-directory record is in the last 64 KiB + 22 bytes.
    let lowest = b.len().saturating_sub(65_557);
    let eocd = (lowest..b.len().saturating_sub(21))
        .rev()
        .find(|&i| b[i..i + 4] == [0x50, 0x4b, 0x05, 0x06])
        .ok_or_else(|| fail(z, "not a zip archive (no end-of-central-directory record)"))?;
    let mut count = le16(b, eocd + 10).ok_or_else(short)?;
    let mut cd_offset = le32(b, eocd + 16).ok_or_else(short)?;
    if count == 0xFFFF || cd_offset == 0xFFFF_FFFF {
        // ZIP64: the locator sits just before the classic record.
        let loc = eocd.checked_sub(20).ok_or_else(short)?;
        if le32(b, loc) != Some(0x0706_4b50) {
            return Err(fail(z, "ZIP64 locator missing"));
        }
        let rec = le64(b, loc + 8).ok_or_else(short)? as usize;
        if le32(b, rec) != Some(0x0606_4b50) {
            return Err(fail(z, "ZIP64 end record missing"));
        }
        count = le64(b, rec + 32).ok_or_else(short)?;
        cd_offset = le64(b, rec + 48).ok_or_else(short)?;
    }
    let mut at = usize::try_from(cd_offset).map_err(|_| short())?;
    let mut out = Vec::new();
    for _ in 0..count {
        if le32(b, at) != Some(0x0201_4b50) {
            return Err(fail(z, "damaged central directory"));
        }
        let method = le16(b, at + 10).ok_or_else(short)?;
        let crc = le32(b, at + 16).ok_or_else(short)? as u32;
        let mut csize = le32(b, at + 20).ok_or_else(short)?;
        let mut usize_ = le32(b, at + 24).ok_or_else(short)?;
        let name_len = le16(b, at + 28).ok_or_else(short)? as usize;
        let extra_len = le16(b, at + 30).ok_or_else(short)? as usize;
        let comment_len = le16(b, at + 32).ok_or_else(short)? as usize;
        let mut local = le32(b, at + 42).ok_or_else(short)?;
        let name_bytes = b.get(at + 46..at + 46 + name_len).ok_or_else(short)?;
        let name = String::from_utf8_lossy(name_bytes).into_owned();
        let extra = b
            .get(at + 46 + name_len..at + 46 + name_len + extra_len)
            .ok_or_else(short)?;
        // ZIP64 extended information: only the fields saturated above appear.
        let mut e = 0;
        while e + 4 <= extra.len() {
            let id = le16(extra, e).ok_or_else(short)?;
            let len = le16(extra, e + 2).ok_or_else(short)? as usize;
            if id == 1 {
                let mut f = e + 4;
                for field in [&mut usize_, &mut csize, &mut local] {
                    if *field == 0xFFFF_FFFF {
                        *field = le64(extra, f).ok_or_else(short)?;
                        f += 8;
                    }
                }
            }
            e += 4 + len;
        }
        at += 46 + name_len + extra_len + comment_len;
        let local = usize::try_from(local).map_err(|_| short())?;
        if le32(b, local) != Some(0x0403_4b50) {
            return Err(fail(&format!("entry {name}"), "damaged local header"));
        }
        let lname = le16(b, local + 26).ok_or_else(short)? as usize;
        let lextra = le16(b, local + 28).ok_or_else(short)? as usize;
        let start = local + 30 + lname + lextra;
        let raw = usize::try_from(csize)
            .ok()
            .and_then(|c| b.get(start..start.checked_add(c)?))
            .ok_or_else(|| fail(&format!("entry {name}"), "truncated data"))?;
        let data = match method {
            0 => raw.to_vec(),
            8 => {
                let entry = format!("entry {name}");
                let bound = inflate_bound(raw.len() as u64);
                if usize_ > bound {
                    return Err(fail(
                        &entry,
                        format!(
                            "declares {usize_} bytes uncompressed from {} compressed, more than the limit of {bound} bytes (the smaller of {MAX_INFLATE_RATIO} times the compressed size plus 1 KiB and the memory budget of {} GiB)",
                            raw.len(),
                            MEMORY_BUDGET_BYTES >> 30
                        ),
                    ));
                }
                // Inflate one byte past the declared size at the most: an
                // entry that inflates to more is refused below without ever
                // holding more than that.
                let mut v = Vec::new();
                flate2::read::DeflateDecoder::new(raw)
                    .take(usize_ + 1)
                    .read_to_end(&mut v)
                    .map_err(|e| fail(&entry, format!("cannot decompress: {e}")))?;
                v
            }
            m => {
                return Err(fail(
                    &format!("entry {name}"),
                    format!("compression method {m} is not supported"),
                ))
            }
        };
        if data.len() as u64 != usize_ {
            return Err(fail(
                &format!("entry {name}"),
                format!(
                    "inflates to {}{} bytes, but declares {usize_}",
                    if data.len() as u64 > usize_ {
                        "more than "
                    } else {
                        ""
                    },
                    usize_.min(data.len() as u64)
                ),
            ));
        }
        let mut check = flate2::Crc::new();
        check.update(&data);
        if check.sum() != crc {
            return Err(fail(
                &format!("entry {name}"),
                "CRC mismatch (damaged data)",
            ));
        }
        out.push((name, data));
    }
    Ok(out)
}
