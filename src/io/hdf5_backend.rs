//! Reading and writing a [`Store`] as an HDF5 file through the pure-Rust
//! `hdf5` crate (hdf5-pure): strings as variable-length UTF-8 (h5py returns
//! `str`), numbers as 64-bit floats and integers, any rank, with group and
//! dataset attributes. Files with a user block (MATLAB v7.3) are read too.

use std::collections::BTreeMap;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::Path;

use hdf5::{AttrValue, DType, FileBuilder};

use super::atomic;
use super::error::IoError;
use super::store::{Array, Attr, Dataset, Store, Stored};
use crate::limits::{declared_bytes, MAX_INFLATE_RATIO, MEMORY_BUDGET_BYTES};

/// A MATLAB v7.3 file starts with a text header in its 512-byte user block.
const MATLAB_MAGIC: &[u8] = b"MATLAB 7.3 MAT-file";

/// MATLAB's older MAT-files (v5, v6 and v7, which are not HDF5) start with this.
const MATLAB_V5_MAGIC: &[u8] = b"MATLAB 5.0 MAT-file";

/// What to do with an older MAT-file.
const MATLAB_V5_HELP: &str = "a MATLAB MAT-file of version 5 to 7 (not HDF5), which patchwise does not read; save it again in MATLAB with save(FILE, 'channels', 'patterns', ..., '-v7.3')";

impl Store {
    /// Read a whole HDF5 file into memory.
    ///
    /// Every dataset is read: floats (32- or 64-bit) as [`Array::F64`],
    /// integers of every width as [`Array::I64`], fixed- and variable-length
    /// strings as [`Array::Str`]; other element types become
    /// [`Array::Unsupported`]. A missing, truncated or non-HDF5 file gives an
    /// error naming the file, never a panic.
    pub fn read(path: &Path) -> Result<Store, IoError> {
        Store::read_only(path, &|_| true)
    }

    /// Read the datasets of an HDF5 file whose absolute paths `wanted`
    /// accepts (group attributes are always read), so that a command never
    /// reads, nor sizes, a dataset it has no use for.
    ///
    /// Before a dataset is read its declared size (shape × element size) is
    /// checked: contiguous and compact data must lie within the file, and
    /// chunked (possibly compressed) data, or contiguous data that was never
    /// written, must fit [`MEMORY_BUDGET_BYTES`] and
    /// [`MAX_INFLATE_RATIO`] times the file size. A dataset declaring more is
    /// refused with an error naming it, before anything is allocated.
    pub fn read_only(path: &Path, wanted: &dyn Fn(&str) -> bool) -> Result<Store, IoError> {
        let bytes = super::input::read_input(path).map_err(|e| IoError::file(path, e))?;
        // The backend is a large parser of untrusted bytes; a panic inside it
        // on a damaged file must become an error, not abort the caller.
        let outcome = catch_unwind(AssertUnwindSafe(|| read_bytes(bytes, wanted)));
        match outcome {
            Ok(Ok(store)) => {
                super::cache::verify(&store, path)?;
                Ok(store)
            }
            Ok(Err(ReadFailure::Backend(message))) => Err(IoError::Hdf5 {
                path: path.to_path_buf(),
                message,
            }),
            Ok(Err(ReadFailure::TooLarge { dataset, message })) => Err(IoError::Value {
                path: path.to_path_buf(),
                object: dataset,
                message,
            }),
            Err(_) => Err(IoError::Hdf5 {
                path: path.to_path_buf(),
                message: "the HDF5 reader failed on damaged data".to_string(),
            }),
        }
    }

    /// True when `path` starts with the MATLAB v7.3 MAT-file header, so that
    /// its matrices are stored transposed (MATLAB is column-major).
    pub fn is_matlab_file(path: &Path) -> Result<bool, IoError> {
        use std::io::Read;
        let mut head = [0u8; 19];
        let mut file = super::input::open_input(path).map_err(|e| IoError::file(path, e))?;
        match file.read_exact(&mut head) {
            Ok(()) => Ok(head == MATLAB_MAGIC),
            Err(e) if e.kind() == std::io::ErrorKind::UnexpectedEof => Ok(false),
            Err(e) => Err(IoError::file(path, e)),
        }
    }

    /// Write the store as an HDF5 file, atomically: the bytes go to a
    /// temporary file beside `path` that is renamed over it when complete, so
    /// a failed write leaves neither a partial file nor the temporary behind.
    pub fn write_atomic(&self, path: &Path) -> Result<(), IoError> {
        let bytes = self.to_hdf5_bytes(path)?;
        atomic::write_atomic(path, &bytes).map_err(|e| IoError::file(path, e))
    }

    /// Encode the store as the bytes of an HDF5 file (`path` only names the
    /// file in errors).
    pub fn to_hdf5_bytes(&self, path: &Path) -> Result<Vec<u8>, IoError> {
        let tree = build_tree(self, path)?;
        let mut builder = FileBuilder::new();
        for (name, value) in &tree.attrs {
            builder.set_attr(name, attr_to_hdf5(value));
        }
        for (name, ds) in &tree.datasets {
            configure(builder.create_dataset(name), ds, path, &tree.path_of(name))?;
        }
        for (name, child) in &tree.groups {
            let mut g = builder.create_group(name);
            fill_group(&mut g, child, path)?;
            builder.add_group(g.finish());
        }
        let outcome = catch_unwind(AssertUnwindSafe(|| builder.finish()));
        match outcome {
            Ok(Ok(bytes)) => Ok(bytes),
            Ok(Err(e)) => Err(IoError::Hdf5 {
                path: path.to_path_buf(),
                message: format!("cannot encode: {e}"),
            }),
            Err(_) => Err(IoError::Hdf5 {
                path: path.to_path_buf(),
                message: "the HDF5 writer failed".to_string(),
            }),
        }
    }
}

/// Why reading an HDF5 file failed: the backend refused it, or a dataset
/// declares more data than the limits allow.
enum ReadFailure {
    Backend(String),
    TooLarge { dataset: String, message: String },
}

impl From<String> for ReadFailure {
    fn from(message: String) -> Self {
        ReadFailure::Backend(message)
    }
}

/// Name the object an HDF5 error happened at.
fn at_object(at: &str) -> impl Fn(hdf5::Error) -> ReadFailure + '_ {
    move |e| ReadFailure::Backend(format!("{at}: {}", describe(&e)))
}

/// The backend's message, except where it reads a link without an object
/// address: soft and external links have none, and the backend then asks
/// for 2^64 - 1 bytes, which says nothing to a user.
fn describe(e: &hdf5::Error) -> String {
    let text = e.to_string();
    if text.contains(&u64::MAX.to_string()) {
        "a member is a soft or external link, which is not supported; expected datasets and groups stored in the file (copy the linked data in, e.g. with h5py's `f[name] = f[target][()]`)".to_string()
    } else {
        text
    }
}

/// What a traversal needs beside the group: the filter of wanted datasets
/// and the file size the declared sizes are checked against.
struct Visit<'a> {
    wanted: &'a dyn Fn(&str) -> bool,
    file_bytes: u64,
}

fn read_bytes(bytes: Vec<u8>, wanted: &dyn Fn(&str) -> bool) -> Result<Store, ReadFailure> {
    if bytes.starts_with(MATLAB_V5_MAGIC) {
        return Err(ReadFailure::Backend(MATLAB_V5_HELP.to_string()));
    }
    let file_bytes = bytes.len() as u64;
    let file = hdf5::File::from_bytes(bytes).map_err(|e| describe(&e))?;
    let mut store = Store::default();
    let visit = Visit { wanted, file_bytes };
    visit_group(&file.root(), "/", &mut store, 0, &visit)?;
    Ok(store)
}

fn join(parent: &str, name: &str) -> String {
    if parent == "/" {
        format!("/{name}")
    } else {
        format!("{parent}/{name}")
    }
}

/// Deeper nesting than this is taken for a cycle of hard links.
const MAX_DEPTH: usize = 64;

fn visit_group(
    group: &hdf5::Group,
    at: &str,
    store: &mut Store,
    depth: usize,
    visit: &Visit<'_>,
) -> Result<(), ReadFailure> {
    if depth > MAX_DEPTH {
        return Err(ReadFailure::Backend(format!(
            "groups nested deeper than {MAX_DEPTH} at {at} (a cycle of links?)"
        )));
    }
    let attrs = convert_attrs(group.attrs().map_err(at_object(at))?);
    if !attrs.is_empty() {
        store.group_attrs.insert(at.to_string(), attrs);
    }
    let mut names = group.datasets().map_err(at_object(at))?;
    names.sort();
    for name in names {
        let full = join(at, &name);
        if !(visit.wanted)(&full) {
            continue;
        }
        let ds = group.dataset(&name).map_err(at_object(&full))?;
        check_declared_size(&ds, &full, visit.file_bytes)?;
        let dataset = if matches!(ds.dtype(), Ok(DType::ObjectReference)) {
            read_cell(&ds, &full, visit.file_bytes)?
        } else {
            read_dataset(&ds).map_err(at_object(&full))?
        };
        store.datasets.insert(full, dataset);
    }
    let mut groups = group.groups().map_err(at_object(at))?;
    groups.sort();
    for name in groups {
        let child = group.group(&name).map_err(at_object(&join(at, &name)))?;
        visit_group(&child, &join(at, &name), store, depth + 1, visit)?;
    }
    Ok(())
}

/// Refuse a dataset whose declared shape × element size cannot be stored in
/// the file (contiguous or compact data) or exceeds the memory limits
/// (chunked data, which may be compressed, and contiguous data never
/// written, which would be made of fill values).
fn check_declared_size(ds: &hdf5::Dataset, at: &str, file_bytes: u64) -> Result<(), ReadFailure> {
    let shape = ds.shape().map_err(at_object(at))?;
    let element = ds.element_size().map_err(at_object(at))?;
    // Strings become `String`s of at least 24 bytes in memory.
    let in_memory = match ds.dtype().map_err(at_object(at))? {
        DType::String | DType::VariableLengthString => element.max(24),
        _ => element.max(8),
    };
    let too_large = |message: String| ReadFailure::TooLarge {
        dataset: at.to_string(),
        message,
    };
    let dims = shape
        .iter()
        .map(|d| d.to_string())
        .collect::<Vec<_>>()
        .join(" × ");
    let (Some(stored), Some(memory)) = (
        declared_bytes(&shape, element),
        declared_bytes(&shape, in_memory),
    ) else {
        return Err(too_large(format!(
            "declares shape {dims}, whose size overflows 64 bits"
        )));
    };
    let layout = ds.layout().map_err(at_object(at))?;
    let in_file = matches!(
        layout,
        hdf5::Layout::Compact { .. }
            | hdf5::Layout::Contiguous {
                address: Some(_),
                ..
            }
    );
    if in_file && stored > file_bytes {
        return Err(too_large(format!(
            "declares {dims} values of {element} bytes ({stored} bytes), more than the file's {file_bytes} bytes"
        )));
    }
    let ratio_bound = file_bytes
        .saturating_mul(MAX_INFLATE_RATIO)
        .saturating_add(1 << 20);
    let bound = MEMORY_BUDGET_BYTES.min(ratio_bound);
    if !in_file && memory > bound {
        return Err(too_large(format!(
            "declares {dims} values ({memory} bytes in memory), more than {bound} bytes: the smaller of the memory budget ({} GiB) and {MAX_INFLATE_RATIO} times the file size plus 1 MiB",
            MEMORY_BUDGET_BYTES >> 30
        )));
    }
    if memory > MEMORY_BUDGET_BYTES {
        return Err(too_large(format!(
            "declares {dims} values ({memory} bytes in memory), more than the memory budget of {} GiB",
            MEMORY_BUDGET_BYTES >> 30
        )));
    }
    Ok(())
}

/// A dataset of object references, as MATLAB v7.3 stores a cell array: a
/// cell array of char (labels, `{'Fz', 'Cz'}`) becomes strings, one per
/// cell in storage order (MATLAB's column-major order), a vector cell
/// array a one-dimensional dataset. Any other cell array is
/// [`Array::Unsupported`], saying what was found. The members' declared
/// sizes are checked one by one and in sum (a member may be referenced
/// many times), against the same limits as any dataset.
fn read_cell(ds: &hdf5::Dataset, at: &str, file_bytes: u64) -> Result<Dataset, ReadFailure> {
    let mut shape: Vec<usize> = ds
        .shape()
        .map_err(at_object(at))?
        .iter()
        .map(|&d| d as usize)
        .collect();
    let attrs = convert_attrs(ds.attrs().map_err(at_object(at))?);
    let unsupported = |what: String, shape: Vec<usize>, attrs| Dataset {
        shape,
        data: Array::Unsupported(what),
        attrs,
        stored: Stored::Native,
    };
    let members = ds.dereference().map_err(at_object(at))?;
    let bound = MEMORY_BUDGET_BYTES.min(
        file_bytes
            .saturating_mul(MAX_INFLATE_RATIO)
            .saturating_add(1 << 20),
    );
    let mut total: u64 = 0;
    let mut strings = Vec::with_capacity(members.len());
    for (i, member) in members.into_iter().enumerate() {
        let member_at = format!("{at} cell {i}");
        let hdf5::Object::Dataset(d) = member else {
            return Ok(unsupported(
                format!("a cell array whose cell {i} is a struct or group (expected a cell array of char, e.g. {{'Fz', 'Cz'}})"),
                shape,
                attrs,
            ));
        };
        check_declared_size(&d, &member_at, file_bytes)?;
        let cell_shape = d.shape().map_err(at_object(&member_at))?;
        let element = d.element_size().map_err(at_object(&member_at))?;
        total =
            total.saturating_add(declared_bytes(&cell_shape, element.max(8)).unwrap_or(u64::MAX));
        if total > bound {
            return Err(ReadFailure::TooLarge {
                dataset: at.to_string(),
                message: format!(
                    "its cells declare more than {bound} bytes in all: the smaller of the memory budget and {MAX_INFLATE_RATIO} times the file size plus 1 MiB"
                ),
            });
        }
        let cell = read_dataset(&d).map_err(at_object(&member_at))?;
        match cell_text(&cell) {
            Some(text) => strings.push(text),
            None => {
                return Ok(unsupported(
                    format!("a cell array whose cell {i} holds {} (expected a cell array of char, e.g. {{'Fz', 'Cz'}})", cell.data.kind()),
                    shape,
                    attrs,
                ))
            }
        }
    }
    // A vector of cells (MATLAB 1×n or n×1) reads as a list.
    if shape.iter().filter(|&&d| d != 1).count() <= 1 {
        shape = vec![strings.len()];
    }
    Ok(Dataset {
        shape,
        data: Array::Str(strings),
        attrs,
        stored: Stored::Native,
    })
}

/// The text of one cell of a MATLAB cell array: a char vector (UTF-16 code
/// units with `MATLAB_class` = `char`, trailing blanks removed), the empty
/// char `''` (stored as its dimensions with `MATLAB_empty`), or a string
/// written by another tool; `None` for anything else.
fn cell_text(cell: &Dataset) -> Option<String> {
    let class = match cell.attrs.get("MATLAB_class") {
        Some(Attr::Str(s)) => Some(s.as_str()),
        _ => None,
    };
    let empty = matches!(cell.attrs.get("MATLAB_empty"), Some(Attr::I64(1)));
    match (&cell.data, class) {
        (_, Some("char")) if empty => Some(String::new()),
        (Array::I64(codes), Some("char")) => {
            let units: Option<Vec<u16>> = codes.iter().map(|&c| u16::try_from(c).ok()).collect();
            let text = char::decode_utf16(units?)
                .collect::<Result<String, _>>()
                .ok()?;
            Some(text.trim_end_matches(' ').to_string())
        }
        (Array::Str(v), _) if v.len() == 1 => v.first().cloned(),
        _ => None,
    }
}

fn read_dataset(ds: &hdf5::Dataset) -> Result<Dataset, hdf5::Error> {
    let shape: Vec<usize> = ds.shape()?.iter().map(|&d| d as usize).collect();
    let data = match ds.dtype()? {
        DType::F32 | DType::F64 => Array::F64(ds.read_f64()?),
        DType::I8 | DType::I16 | DType::I32 | DType::I64 | DType::U8 | DType::U16 | DType::U32 => {
            Array::I64(ds.read_i64()?)
        }
        DType::U64 => {
            let values = ds.read_u64()?;
            let converted: Option<Vec<i64>> =
                values.iter().map(|&v| i64::try_from(v).ok()).collect();
            match converted {
                Some(v) => Array::I64(v),
                None => Array::Unsupported("u64 values above i64::MAX".to_string()),
            }
        }
        DType::String | DType::VariableLengthString => Array::Str(ds.read_string()?),
        other => Array::Unsupported(other.to_string()),
    };
    Ok(Dataset {
        shape,
        data,
        attrs: convert_attrs(ds.attrs()?),
        stored: super::store::Stored::Native,
    })
}

fn convert_attrs(attrs: std::collections::HashMap<String, AttrValue>) -> BTreeMap<String, Attr> {
    attrs
        .into_iter()
        .filter_map(|(k, v)| attr_from_hdf5(&v).map(|a| (k, a)))
        .collect()
}

/// Map an attribute to the store's value type; `None` for kinds it has no
/// variant for (those attributes are left out).
fn attr_from_hdf5(value: &AttrValue) -> Option<Attr> {
    match value {
        AttrValue::F32(x) => Some(Attr::F64(f64::from(*x))),
        AttrValue::F64(x) => Some(Attr::F64(*x)),
        AttrValue::I8(_)
        | AttrValue::I16(_)
        | AttrValue::I32(_)
        | AttrValue::I64(_)
        | AttrValue::U8(_)
        | AttrValue::U16(_)
        | AttrValue::U32(_)
        | AttrValue::U64(_) => value.as_i64().map(Attr::I64),
        AttrValue::F32Array(_) | AttrValue::F64Array(_) => value.to_f64s().map(Attr::F64Array),
        AttrValue::String(_)
        | AttrValue::StringSized { .. }
        | AttrValue::AsciiString(_)
        | AttrValue::AsciiStringSized { .. }
        | AttrValue::VarLenString(_)
        | AttrValue::VarLenAsciiString(_) => value.as_str().map(|s| Attr::Str(s.to_string())),
        _ => {
            if let Some(strings) = value.as_strings() {
                Some(Attr::StrArray(strings.to_vec()))
            } else {
                value.to_i64s().map(Attr::I64Array)
            }
        }
    }
}

fn attr_to_hdf5(value: &Attr) -> AttrValue {
    match value {
        Attr::Str(s) => AttrValue::VarLenString(s.clone()),
        Attr::F64(x) => AttrValue::F64(*x),
        Attr::I64(x) => AttrValue::I64(*x),
        Attr::StrArray(v) => AttrValue::VarLenStringArray(v.clone()),
        Attr::F64Array(v) => AttrValue::F64Array(v.clone()),
        Attr::I64Array(v) => AttrValue::I64Array(v.clone()),
    }
}

/// The group hierarchy of a store, built from its absolute dataset paths.
#[derive(Default)]
struct Node<'a> {
    path: String,
    datasets: BTreeMap<String, &'a Dataset>,
    groups: BTreeMap<String, Node<'a>>,
    attrs: BTreeMap<String, Attr>,
}

impl Node<'_> {
    fn path_of(&self, name: &str) -> String {
        join(&self.path, name)
    }
}

fn build_tree<'a>(store: &'a Store, file: &Path) -> Result<Node<'a>, IoError> {
    let mut root = Node {
        path: "/".to_string(),
        ..Node::default()
    };
    for (full, ds) in &store.datasets {
        let parts: Vec<&str> = full.split('/').filter(|p| !p.is_empty()).collect();
        let Some((name, parents)) = parts.split_last() else {
            return Err(IoError::format(
                file,
                full.clone(),
                "a dataset needs a name",
            ));
        };
        let node = descend(&mut root, parents, file, full)?;
        if node.groups.contains_key(*name) {
            return Err(IoError::format(
                file,
                full.clone(),
                "this path is both a dataset and a group",
            ));
        }
        node.datasets.insert((*name).to_string(), ds);
    }
    for (group, attrs) in &store.group_attrs {
        let parts: Vec<&str> = group.split('/').filter(|p| !p.is_empty()).collect();
        let node = descend(&mut root, &parts, file, group)?;
        node.attrs
            .extend(attrs.iter().map(|(k, v)| (k.clone(), v.clone())));
    }
    Ok(root)
}

fn descend<'n, 'a>(
    root: &'n mut Node<'a>,
    parents: &[&str],
    file: &Path,
    full: &str,
) -> Result<&'n mut Node<'a>, IoError> {
    let mut node = root;
    for part in parents {
        if node.datasets.contains_key(*part) {
            return Err(IoError::format(
                file,
                full.to_string(),
                format!("{part} is a dataset, expected a group"),
            ));
        }
        let path = node.path_of(part);
        node = node
            .groups
            .entry((*part).to_string())
            .or_insert_with(|| Node {
                path,
                ..Node::default()
            });
    }
    Ok(node)
}

fn fill_group(g: &mut hdf5::GroupBuilder, node: &Node<'_>, file: &Path) -> Result<(), IoError> {
    for (name, value) in &node.attrs {
        g.set_attr(name, attr_to_hdf5(value));
    }
    for (name, ds) in &node.datasets {
        configure(g.create_dataset(name), ds, file, &node.path_of(name))?;
    }
    for (name, child) in &node.groups {
        let mut cg = g.create_group(name);
        fill_group(&mut cg, child, file)?;
        g.add_group(cg.finish());
    }
    Ok(())
}

fn configure(
    builder: &mut hdf5::DatasetBuilder,
    ds: &Dataset,
    file: &Path,
    dataset: &str,
) -> Result<(), IoError> {
    let n: usize = ds.shape.iter().product();
    if n != ds.data.len() {
        return Err(IoError::Shape {
            path: file.to_path_buf(),
            dataset: dataset.to_string(),
            found: ds.shape.clone(),
            expected: format!(
                "a shape with {} elements, as many as the values",
                ds.data.len()
            ),
        });
    }
    let shape: Vec<u64> = ds.shape.iter().map(|&d| d as u64).collect();
    let narrowing = |what: &str| IoError::Value {
        path: file.to_path_buf(),
        object: dataset.to_string(),
        message: format!("holds a value that does not fit {what}; not written"),
    };
    match (&ds.data, ds.stored) {
        (Array::F64(v), Stored::F32) if !v.is_empty() => {
            let narrow: Vec<f32> = v.iter().map(|&x| x as f32).collect();
            if narrow.iter().zip(v).any(|(&n, &x)| f64::from(n) != x) {
                return Err(narrowing("a 32-bit float exactly"));
            }
            builder.with_f32_data(&narrow);
        }
        (Array::I64(v), Stored::U16) if !v.is_empty() => {
            let narrow: Vec<u16> = v
                .iter()
                .map(|&x| u16::try_from(x).map_err(|_| narrowing("a 16-bit unsigned integer")))
                .collect::<Result<_, _>>()?;
            builder.with_u16_data(&narrow);
        }
        (Array::I64(v), Stored::I32) if !v.is_empty() => {
            let narrow: Vec<i32> = v
                .iter()
                .map(|&x| i32::try_from(x).map_err(|_| narrowing("a 32-bit integer")))
                .collect::<Result<_, _>>()?;
            builder.with_i32_data(&narrow);
        }
        (Array::F64(v), _) => {
            if v.is_empty() {
                builder.with_dtype(hdf5::make_f64_type());
            } else {
                builder.with_f64_data(v);
            }
        }
        (Array::I64(v), _) => {
            if v.is_empty() {
                builder.with_dtype(hdf5::make_i64_type());
            } else {
                builder.with_i64_data(v);
            }
        }
        (Array::Str(v), _) => {
            let refs: Vec<&str> = v.iter().map(String::as_str).collect();
            builder.with_vlen_strings(&refs);
        }
        (Array::Unsupported(t), _) => {
            return Err(IoError::Unsupported {
                path: file.to_path_buf(),
                what: format!("writing dataset {dataset} of type {t}"),
            })
        }
    }
    builder.with_shape(&shape);
    for (name, value) in &ds.attrs {
        builder.set_attr(name, attr_to_hdf5(value));
    }
    Ok(())
}
