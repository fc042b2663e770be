//! An in-memory picture of an HDF5 file: named datasets with shapes and
//! attributes. The HDF5 backend (see `hdf5_backend`) reads and writes it;
//! `store_access` adds typed accessors that check shapes and values.

use std::collections::BTreeMap;

/// The values of one dataset, flattened in row-major (C) order.
#[derive(Debug, Clone, PartialEq)]
pub enum Array {
    /// 64-bit floats (also what 32-bit float datasets are read as).
    F64(Vec<f64>),
    /// 64-bit signed integers (also what every other integer width is read as;
    /// an unsigned 64-bit value above `i64::MAX` is refused).
    I64(Vec<i64>),
    /// Strings (written as variable-length UTF-8; fixed-length strings are
    /// read into this too).
    Str(Vec<String>),
    /// A dataset whose element type the store cannot represent (compound,
    /// reference, ...). Kept so that its path and shape are known; the typed
    /// accessors refuse it, and writing a store holding one fails.
    Unsupported(String),
}

impl Array {
    /// The number of elements.
    pub fn len(&self) -> usize {
        match self {
            Array::F64(v) => v.len(),
            Array::I64(v) => v.len(),
            Array::Str(v) => v.len(),
            Array::Unsupported(_) => 0,
        }
    }

    /// True when there are no elements.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// A short name of the element type, for error messages.
    pub fn kind(&self) -> String {
        match self {
            Array::F64(_) => "floats".to_string(),
            Array::I64(_) => "integers".to_string(),
            Array::Str(_) => "strings".to_string(),
            // A described layout ("a cell array whose ...") reads as is.
            Array::Unsupported(t) if t.starts_with("a ") => t.clone(),
            Array::Unsupported(t) => format!("unsupported type {t}"),
        }
    }
}

/// An attribute value.
#[derive(Debug, Clone, PartialEq)]
pub enum Attr {
    /// A string (written as a variable-length string so h5py returns `str`).
    Str(String),
    /// A float.
    F64(f64),
    /// An integer.
    I64(i64),
    /// A one-dimensional array of strings.
    StrArray(Vec<String>),
    /// A one-dimensional array of floats.
    F64Array(Vec<f64>),
    /// A one-dimensional array of integers.
    I64Array(Vec<i64>),
}

/// A dataset: shape (row-major) and values.
#[derive(Debug, Clone, PartialEq)]
pub struct Dataset {
    /// Shape, C order (e.g. `[n_ch, n_src]`).
    pub shape: Vec<usize>,
    /// Values, row-major.
    pub data: Array,
    /// Attributes of this dataset.
    pub attrs: BTreeMap<String, Attr>,
    /// The element type written to a file (readers widen every width to
    /// `F64` or `I64`, so a dataset read back is [`Stored::Native`]).
    pub stored: Stored,
}

/// How a dataset's values are written: in their own 64-bit type, or
/// narrowed to save space (the cached dictionary's atoms and profile).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Stored {
    /// 64-bit floats or integers, as held.
    #[default]
    Native,
    /// Floats as 32-bit floats: the values must already be rounded to
    /// `f32` (see [`Dataset::f64_as_f32`]), so the file holds them exactly.
    F32,
    /// Integers as 16-bit unsigned integers (every value in 0..=65535).
    U16,
    /// Integers as 32-bit signed integers.
    I32,
}

impl Dataset {
    /// A dataset of floats written as 32-bit floats: the values are
    /// rounded to `f32` here, so the dataset holds what a reader gets back
    /// (and its checksum, [`super::cache::seal`], matches the file).
    pub fn f64_as_f32(shape: Vec<usize>, values: &[f64]) -> Dataset {
        Dataset {
            stored: Stored::F32,
            ..Dataset::f64(shape, values.iter().map(|&v| v as f32 as f64).collect())
        }
    }

    /// A dataset of non-negative integers below `bound`, written in the
    /// narrowest of 16-bit unsigned and 32-bit signed integers that holds
    /// `0..bound`, else as 64-bit integers.
    pub fn index_array(shape: Vec<usize>, values: Vec<i64>, bound: usize) -> Dataset {
        let stored = if bound <= 1 << 16 {
            Stored::U16
        } else if bound <= 1 << 31 {
            Stored::I32
        } else {
            Stored::Native
        };
        Dataset {
            stored,
            ..Dataset::i64(shape, values)
        }
    }

    /// A dataset of floats with the given shape and no attributes.
    pub fn f64(shape: Vec<usize>, values: Vec<f64>) -> Dataset {
        Dataset {
            shape,
            data: Array::F64(values),
            attrs: BTreeMap::new(),
            stored: Stored::Native,
        }
    }

    /// A dataset of integers with the given shape and no attributes.
    pub fn i64(shape: Vec<usize>, values: Vec<i64>) -> Dataset {
        Dataset {
            shape,
            data: Array::I64(values),
            attrs: BTreeMap::new(),
            stored: Stored::Native,
        }
    }

    /// A one-dimensional dataset of strings with no attributes.
    pub fn strings(values: Vec<String>) -> Dataset {
        Dataset {
            shape: vec![values.len()],
            data: Array::Str(values),
            attrs: BTreeMap::new(),
            stored: Stored::Native,
        }
    }
}

/// An HDF5 file in memory: datasets by absolute path (`/leadfield/gain`),
/// and attributes on groups by group path (`/` for the root).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Store {
    /// Datasets by absolute path.
    pub datasets: BTreeMap<String, Dataset>,
    /// Group attributes by group path.
    pub group_attrs: BTreeMap<String, BTreeMap<String, Attr>>,
}

impl Store {
    /// An empty store.
    pub fn new() -> Store {
        Store::default()
    }

    /// Insert (or replace) a dataset at an absolute path such as `/fit/lambda`.
    pub fn insert(&mut self, path: &str, dataset: Dataset) {
        self.datasets.insert(normalise_path(path), dataset);
    }

    /// Set an attribute on a group (`/` for the root).
    pub fn set_group_attr(&mut self, group: &str, name: &str, value: Attr) {
        self.group_attrs
            .entry(normalise_path(group))
            .or_default()
            .insert(name.to_string(), value);
    }
}

/// `a/b` and `/a/b/` both become `/a/b`; the root is `/`.
pub(crate) fn normalise_path(path: &str) -> String {
    let parts: Vec<&str> = path.split('/').filter(|p| !p.is_empty()).collect();
    format!("/{}", parts.join("/"))
}
