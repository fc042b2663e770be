//! The `dictionary.h5` layout of design.md: the lead field plus the atoms,
//! their groups, seeds, radii, norms, components and the CSC profile matrix,
//! read into the model [`crate::dictionary::PatchDictionary`] (validated
//! here, once) and written from the dictionary the build returns.
//!
//! A dictionary made elsewhere needs only `/dictionary/atoms` (n_ch ×
//! n_atoms) and `/dictionary/group` (n_atoms, 0..n_groups−1, every group
//! used); everything else is optional, and without the source datasets no
//! region table can be made.

use std::path::Path;

use sprs::CsMat;

use super::error::IoError;
use super::leadfield_file::{in_groups, insert_leadfield, leadfield_from_store, LEADFIELD_GROUPS};
use super::store::{Attr, Dataset, Store};
use crate::dictionary::{AtomComponent, Dictionary, PatchDictionary};
use crate::forward::LeadField;

fn component_code(c: AtomComponent) -> i64 {
    match c {
        AtomComponent::Normal => 0,
        AtomComponent::X => 1,
        AtomComponent::Y => 2,
        AtomComponent::Z => 3,
    }
}

fn value_error(path: &Path, object: &str, message: String) -> IoError {
    IoError::Value {
        path: path.to_path_buf(),
        object: object.to_string(),
        message,
    }
}

/// Write `dictionary.h5` atomically: the lead field, then the dictionary.
pub fn write_dictionary(
    path: &Path,
    leadfield: &LeadField,
    dict: &Dictionary,
    params_json: &str,
) -> Result<(), IoError> {
    let mut store = Store::new();
    insert_leadfield(&mut store, leadfield);
    let n = dict.n_atoms;
    // Atoms and profile values as 32-bit floats, profile indices in the
    // narrowest integer that holds a source index: 98 MB instead of 224 MB
    // for the 20k template with 64 channels, with region shares within
    // 2e-7 of the 64-bit file's (docs/benchmarks.md). Readers widen them
    // back to 64 bits; the fit runs in 64 bits.
    store.insert(
        "/dictionary/atoms",
        Dataset::f64_as_f32(vec![dict.n_channels, n], &dict.atoms),
    );
    store.insert(
        "/dictionary/atom_norms",
        Dataset::f64(vec![n], dict.atom_norms.clone()),
    );
    store.insert(
        "/dictionary/group",
        Dataset::i64(vec![n], dict.group.iter().map(|&g| g as i64).collect()),
    );
    store.insert(
        "/dictionary/seed",
        Dataset::i64(vec![n], dict.seed.iter().map(|&g| g as i64).collect()),
    );
    store.insert(
        "/dictionary/radius_mm",
        Dataset::f64(vec![n], dict.radius_mm.clone()),
    );
    store.insert(
        "/dictionary/component",
        Dataset::i64(
            vec![n],
            dict.component.iter().map(|&c| component_code(c)).collect(),
        ),
    );
    let csc = dict.profile.to_csc();
    let (indptr, indices, data) = (
        csc.indptr().raw_storage().to_vec(),
        csc.indices().to_vec(),
        csc.data().to_vec(),
    );
    let mut ip = Dataset::i64(
        vec![indptr.len()],
        indptr.iter().map(|&v| v as i64).collect(),
    );
    ip.attrs.insert(
        "shape".to_string(),
        Attr::I64Array(vec![csc.rows() as i64, csc.cols() as i64]),
    );
    ip.attrs
        .insert("format".to_string(), Attr::Str("csc".to_string()));
    store.insert("/dictionary/profile/indptr", ip);
    store.insert(
        "/dictionary/profile/indices",
        Dataset::index_array(
            vec![indices.len()],
            indices.iter().map(|&v| v as i64).collect(),
            csc.rows(),
        ),
    );
    store.insert(
        "/dictionary/profile/data",
        Dataset::f64_as_f32(vec![data.len()], &data),
    );
    store.set_group_attr("/dictionary", "params", Attr::Str(params_json.to_string()));
    store.set_group_attr(
        "/dictionary/profile",
        "unit",
        Attr::Str("m^2 (source moment per unit peak moment density)".to_string()),
    );
    super::cache::seal(&mut store);
    store.write_atomic(path)
}

/// Read a dictionary file, ours or one made elsewhere, validating shapes,
/// finiteness and the group partition.
pub fn read_dictionary(path: &Path) -> Result<PatchDictionary, IoError> {
    let store = Store::read_only(path, &|name| {
        in_groups(name, LEADFIELD_GROUPS) || in_groups(name, &["/dictionary"])
    })?;
    let (atoms, n_channels, n_atoms) = store.f64_matrix(path, "/dictionary/atoms", None, None)?;
    if n_atoms == 0 || n_channels == 0 {
        return Err(value_error(
            path,
            "/dictionary/atoms",
            "is empty; expected n_ch × n_atoms with both at least 1".to_string(),
        ));
    }
    if atoms.iter().all(|&a| a == 0.0) {
        return Err(value_error(
            path,
            "/dictionary/atoms",
            "every value is zero; expected atoms with a scalp field".to_string(),
        ));
    }
    let groups = store.i64s(path, "/dictionary/group", Some(n_atoms))?;
    // Every group holds at least one atom, so a valid index is below the atom
    // count; checking that before sizing anything keeps a damaged index
    // (2^40, say) from allocating by it.
    if let Some((j, &g)) = groups
        .iter()
        .enumerate()
        .find(|(_, &g)| g < 0 || g as u64 >= n_atoms as u64)
    {
        return Err(value_error(
            path,
            "/dictionary/group",
            format!(
                "atom {j} has group {g}; expected 0..n_groups-1 with n_groups at most the {n_atoms} atoms"
            ),
        ));
    }
    let n_groups = groups.iter().copied().max().unwrap_or(-1) + 1;
    let mut used = vec![false; n_groups.max(0) as usize];
    let mut group = Vec::with_capacity(n_atoms);
    for &g in &groups {
        used[g as usize] = true;
        group.push(g as usize);
    }
    if let Some(missing) = used.iter().position(|u| !u) {
        return Err(value_error(
            path,
            "/dictionary/group",
            format!(
                "group {missing} has no atom; expected every index 0..{} to be used",
                n_groups - 1
            ),
        ));
    }
    let leadfield = if store.contains("/leadfield/gain") {
        let lf = leadfield_from_store(&store, path)?;
        if lf.n_channels() != n_channels {
            return Err(value_error(
                path,
                "/dictionary/atoms",
                format!(
                    "has {n_channels} rows but /montage/labels names {} channels",
                    lf.n_channels()
                ),
            ));
        }
        Some(lf)
    } else {
        None
    };
    let opt_f64 = |name: &str| -> Result<Option<Vec<f64>>, IoError> {
        if store.contains(name) {
            store.f64s(path, name, Some(n_atoms)).map(Some)
        } else {
            Ok(None)
        }
    };
    let atom_norms = opt_f64("/dictionary/atom_norms")?;
    let radius_mm = opt_f64("/dictionary/radius_mm")?;
    let seed = if store.contains("/dictionary/seed") {
        let s = store.i64s(path, "/dictionary/seed", Some(n_atoms))?;
        let n_src = leadfield.as_ref().map_or(usize::MAX, |l| l.n_sources());
        let mut out = Vec::with_capacity(n_atoms);
        for (j, &v) in s.iter().enumerate() {
            if v < 0 || v as usize >= n_src {
                return Err(value_error(
                    path,
                    "/dictionary/seed",
                    format!("atom {j} has seed {v}, outside the sources"),
                ));
            }
            out.push(v as usize);
        }
        Some(out)
    } else {
        None
    };
    let component = if store.contains("/dictionary/component") {
        let c = store.i64s(path, "/dictionary/component", Some(n_atoms))?;
        let mut out = Vec::with_capacity(n_atoms);
        for (j, &v) in c.iter().enumerate() {
            out.push(match v {
                0 => AtomComponent::Normal,
                1 => AtomComponent::X,
                2 => AtomComponent::Y,
                3 => AtomComponent::Z,
                _ => {
                    return Err(value_error(
                        path,
                        "/dictionary/component",
                        format!("atom {j} has component {v}; expected 0 (normal) or 1-3 (x, y, z)"),
                    ))
                }
            });
        }
        Some(out)
    } else {
        None
    };
    let profile = if store.contains("/dictionary/profile/indptr") {
        Some(read_profile(&store, path, n_atoms, leadfield.as_ref())?)
    } else {
        None
    };
    let params_json = store
        .group_attrs
        .get("/dictionary")
        .and_then(|a| a.get("params"))
        .and_then(|a| match a {
            Attr::Str(s) => Some(s.clone()),
            _ => None,
        })
        .unwrap_or_else(|| "{}".to_string());
    Ok(PatchDictionary {
        leadfield,
        n_channels,
        n_atoms,
        atoms,
        group,
        atom_norms,
        seed,
        radius_mm,
        component,
        profile,
        params_json,
    })
}

fn read_profile(
    store: &Store,
    path: &Path,
    n_atoms: usize,
    leadfield: Option<&LeadField>,
) -> Result<CsMat<f64>, IoError> {
    let obj = "/dictionary/profile";
    let indptr = store.i64s(path, "/dictionary/profile/indptr", Some(n_atoms + 1))?;
    let indices = store.i64s(path, "/dictionary/profile/indices", None)?;
    let data = store.f64s(path, "/dictionary/profile/data", Some(indices.len()))?;
    let n_src = match leadfield {
        Some(lf) => lf.n_sources(),
        None => indices.iter().copied().max().map_or(0, |m| m as usize + 1),
    };
    let mut ip = Vec::with_capacity(indptr.len());
    for (j, &v) in indptr.iter().enumerate() {
        if v < 0 || v as usize > indices.len() || (j > 0 && (v as usize) < ip[j - 1]) {
            return Err(value_error(
                path,
                obj,
                format!("indptr[{j}] = {v} is not a non-decreasing offset into indices"),
            ));
        }
        ip.push(v as usize);
    }
    let mut idx = Vec::with_capacity(indices.len());
    for (i, &v) in indices.iter().enumerate() {
        if v < 0 || v as usize >= n_src {
            return Err(value_error(
                path,
                obj,
                format!("indices[{i}] = {v}, expected 0..{n_src}"),
            ));
        }
        idx.push(v as usize);
    }
    CsMat::try_new_csc((n_src, n_atoms), ip, idx, data).map_err(|(_, _, _, e)| {
        value_error(
            path,
            obj,
            format!("is not a valid CSC matrix ({e}); expected sorted row indices per column"),
        )
    })
}
