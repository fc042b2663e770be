//! The cache entry of a dictionary's atoms under a perturbed forward model
//! (the resamples' heads, `job::perturb`): one HDF5 file per dictionary and
//! perturbed lead field, so that a warm run reads the atoms instead of
//! multiplying the profile by the perturbed lead field again.
//!
//! Layout: `/atoms/values` (float, n_ch × n_atoms, row-major: entry
//! `(c, j)` at `c · n_atoms + j`), the atoms average-referenced over the
//! channels and scaled to unit 2-norm, hence without unit (a dropped atom is
//! a zero column). Stored in 64 bits, so an atom read back is the atom
//! computed, bit for bit (32 bits would move the resamples' numbers).

use std::path::Path;

use super::error::IoError;
use super::store::{Dataset, Store};

/// Write the atoms (row-major `n_ch x n_atoms`) atomically, sealed with a
/// checksum.
pub fn write_atoms(
    path: &Path,
    n_channels: usize,
    n_atoms: usize,
    atoms: &[f64],
) -> Result<(), IoError> {
    let mut store = Store::new();
    store.insert(
        "/atoms/values",
        Dataset::f64(vec![n_channels, n_atoms], atoms.to_vec()),
    );
    super::cache::seal(&mut store);
    store.write_atomic(path)
}

/// Read the atoms of a dictionary of `n_channels x n_atoms` (row-major),
/// checking the shape and that every value is finite.
pub fn read_atoms(path: &Path, n_channels: usize, n_atoms: usize) -> Result<Vec<f64>, IoError> {
    let store = Store::read(path)?;
    let (values, _, _) =
        store.f64_matrix(path, "/atoms/values", Some(n_channels), Some(n_atoms))?;
    Ok(values)
}
