//! The cache entry of the smoothing kernel of `patchwise compare`: one HDF5
//! file per mesh, σ and cut-off, holding the kernel's rows (CSR).
//!
//! Layout: `/kernel/row_start` (int, n_vertices + 1, from 0 to n_weights),
//! `/kernel/columns` (int, n_weights, vertex indices 0..n_vertices−1),
//! `/kernel/weights` (float, n_weights, each row adding up to 1);
//! attributes `sigma_m` and `cutoff_m` of `/kernel` (metres).

use std::path::Path;

use super::error::IoError;
use super::store::{Attr, Dataset, Store};
use crate::cohort::SmoothingKernel;

fn value_error(path: &Path, object: &str, message: String) -> IoError {
    IoError::Value {
        path: path.to_path_buf(),
        object: object.to_string(),
        message,
    }
}

/// Write the kernel atomically.
pub fn write_kernel(path: &Path, kernel: &SmoothingKernel) -> Result<(), IoError> {
    let mut store = Store::new();
    store.insert(
        "/kernel/row_start",
        Dataset::i64(
            vec![kernel.row_start.len()],
            kernel.row_start.iter().map(|&v| v as i64).collect(),
        ),
    );
    store.insert(
        "/kernel/columns",
        Dataset::i64(
            vec![kernel.columns.len()],
            kernel.columns.iter().map(|&v| i64::from(v)).collect(),
        ),
    );
    store.insert(
        "/kernel/weights",
        Dataset::f64(vec![kernel.weights.len()], kernel.weights.clone()),
    );
    store.set_group_attr("/kernel", "sigma_m", Attr::F64(kernel.sigma_m));
    store.set_group_attr("/kernel", "cutoff_m", Attr::F64(kernel.cutoff_m));
    super::cache::seal(&mut store);
    store.write_atomic(path)
}

/// Read a kernel for a mesh of `n_vertices` vertices, checking that the rows
/// are well formed (monotone offsets, indices in range, finite weights).
pub fn read_kernel(path: &Path, n_vertices: usize) -> Result<SmoothingKernel, IoError> {
    let store = Store::read(path)?;
    let starts = store.i64s(path, "/kernel/row_start", Some(n_vertices + 1))?;
    let n_weights = starts.last().copied().unwrap_or(0);
    if starts.first() != Some(&0) || starts.windows(2).any(|w| w[1] < w[0]) {
        return Err(value_error(
            path,
            "/kernel/row_start",
            "expected non-decreasing offsets starting at 0".to_string(),
        ));
    }
    let n_weights = usize::try_from(n_weights).unwrap_or(0);
    let columns = store.i64s(path, "/kernel/columns", Some(n_weights))?;
    if let Some(c) = columns.iter().find(|&&c| c < 0 || c as usize >= n_vertices) {
        return Err(value_error(
            path,
            "/kernel/columns",
            format!(
                "vertex index {c}; expected 0..{}",
                n_vertices.saturating_sub(1)
            ),
        ));
    }
    let weights = store.f64s(path, "/kernel/weights", Some(n_weights))?;
    Ok(SmoothingKernel {
        sigma_m: store.attr_f64(path, "/kernel", "sigma_m")?,
        cutoff_m: store.attr_f64(path, "/kernel", "cutoff_m")?,
        row_start: starts.iter().map(|&v| v as usize).collect(),
        columns: columns.iter().map(|&v| v as u32).collect(),
        weights,
    })
}
