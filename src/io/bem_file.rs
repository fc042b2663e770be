//! The cache entry of a boundary-element system: the factorised matrices of
//! one set of surfaces and conductivities, keyed by their content hash, so
//! a second run on the same head skips the build and the factorisation.
//!
//! Layout (HDF5, sealed with CRC-32 per dataset like every cache entry):
//! `/bem/inner_lu` (n₁ × n₁), `/bem/inner_perm` (n₁), `/bem/full_lu`
//! (N × N), `/bem/full_perm` (N), `/bem/omega_inner` (N × n₁), each float
//! array dimensionless (LU factors of the system in S/m, Ω in steradians);
//! attribute `vertices` of `/bem` (the vertices per surface, innermost
//! first). One surface: the `full` and `omega` arrays are absent.

use std::path::Path;

use super::error::IoError;
use super::store::{Array, Attr, Dataset, Store};
use crate::head::bem::BemSystemParts;

/// Write the factorised system atomically, taking the arrays (so the
/// largest of them is not copied once more on its way to the file) and
/// giving them back afterwards, written or not: the caller keeps one copy
/// of the system in memory instead of two while the file is encoded.
pub fn write_bem_system(
    path: &Path,
    parts: BemSystemParts,
    vertices: &[usize],
) -> (Result<(), IoError>, BemSystemParts) {
    let n_inner = parts.inner_perm.len();
    let n_total = parts.full_perm.len();
    let ints = |v: &[usize]| v.iter().map(|&x| x as i64).collect::<Vec<i64>>();
    let mut store = Store::new();
    store.insert(
        "/bem/inner_lu",
        Dataset::f64(vec![n_inner, n_inner], parts.inner_lu),
    );
    store.insert(
        "/bem/inner_perm",
        Dataset::i64(vec![n_inner], ints(&parts.inner_perm)),
    );
    // One surface: no full system (empty arrays are not written).
    if n_total > 0 {
        store.insert(
            "/bem/full_lu",
            Dataset::f64(vec![n_total, n_total], parts.full_lu),
        );
        store.insert(
            "/bem/full_perm",
            Dataset::i64(vec![n_total], ints(&parts.full_perm)),
        );
        store.insert(
            "/bem/omega_inner",
            Dataset::f64(vec![n_total, n_inner], parts.omega_inner),
        );
    }
    let counts: Vec<String> = vertices.iter().map(|v| v.to_string()).collect();
    store.set_group_attr("/bem", "vertices", Attr::Str(counts.join(",")));
    super::cache::seal(&mut store);
    let written = store.write_atomic(path);
    let mut floats = |name: &str| match store.datasets.remove(name).map(|d| d.data) {
        Some(Array::F64(v)) => v,
        _ => Vec::new(),
    };
    let (inner_lu, full_lu, omega_inner) = (
        floats("/bem/inner_lu"),
        floats("/bem/full_lu"),
        floats("/bem/omega_inner"),
    );
    let parts = BemSystemParts {
        inner_lu,
        inner_perm: parts.inner_perm,
        full_lu,
        full_perm: parts.full_perm,
        omega_inner,
    };
    (written, parts)
}

/// Read a factorised system written by [`write_bem_system`], checking the
/// seal; the caller checks that the sizes fit its surfaces.
pub fn read_bem_system(path: &Path) -> Result<BemSystemParts, IoError> {
    let store = Store::read(path)?;
    super::cache::verify(&store, path)?;
    let index = |name: &str| -> Result<Vec<usize>, IoError> {
        store
            .i64s(path, name, None)?
            .into_iter()
            .map(|v| {
                usize::try_from(v).map_err(|_| IoError::Value {
                    path: path.to_path_buf(),
                    object: name.to_string(),
                    message: format!("index {v} is negative"),
                })
            })
            .collect()
    };
    let floats = |name: &str| -> Result<Vec<f64>, IoError> {
        if store.contains(name) {
            Ok(store.f64_array(path, name)?.0)
        } else {
            Ok(Vec::new())
        }
    };
    let full_perm = if store.contains("/bem/full_perm") {
        index("/bem/full_perm")?
    } else {
        Vec::new()
    };
    Ok(BemSystemParts {
        inner_lu: store.f64_array(path, "/bem/inner_lu")?.0,
        inner_perm: index("/bem/inner_perm")?,
        full_lu: floats("/bem/full_lu")?,
        full_perm,
        omega_inner: floats("/bem/omega_inner")?,
    })
}
