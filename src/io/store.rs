//! An in-memory picture of an HDF5 file: named datasets with shapes and
//! attributes. The HDF5 backend (see `hdf5_backend`) reads and writes it.

use std::collections::BTreeMap;

/// The values of one dataset, flattened in row-major (C) order.
#[derive(Debug, Clone, PartialEq)]
pub enum Array {
    /// 64-bit floats.
    F64(Vec<f64>),
    /// 64-bit signed integers.
    I64(Vec<i64>),
    /// Variable-length UTF-8 strings.
    Str(Vec<String>),
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
