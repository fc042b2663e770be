//! Atoms = lead field × patch profile: a parallel kernel over the raw CSC
//! arrays, then the average reference and the unit-norm scaling.
//!
//! Generic sparse × dense products were measured slow for this shape (many
//! short columns against a wide row-major gain), so the product is written out:
//! the gain is first copied source-major (each source's channel vector
//! contiguous), then every atom column is an independent sum of scaled source
//! vectors in CSC order. Each column is computed by one thread in a fixed
//! order, so results do not depend on the thread count.
//!
//! The lead-field checks (`check_gains`) are here too: the builder
//! (`build.rs`) and the channel-subset recomputation both use them.

use rayon::prelude::*;
use sprs::CsMat;

use super::{AtomComponent, DictionaryError};
use crate::numeric::average_reference_columns;

/// Borrowed raw CSC arrays (n_src × n_atoms) with one component per column.
#[derive(Clone, Copy)]
pub(crate) struct ProfileColumns<'a> {
    pub indptr: &'a [usize],
    pub indices: &'a [usize],
    pub data: &'a [f64],
    pub component: &'a [AtomComponent],
}

/// A lead field copied source-major: `normal[k·n_ch + i]` is channel `i` of
/// source `k`; `xyz[(3k + c)·n_ch + i]` is channel `i` of component `c`.
pub(crate) struct SourceMajorGain {
    pub n_channels: usize,
    pub normal: Vec<f64>,
    pub xyz: Option<Vec<f64>>,
}

impl SourceMajorGain {
    /// Transposes the row-major gains (n_ch × n_src, n_ch × n_src × 3).
    /// `xyz` is copied only when some atom needs it.
    pub fn new(gain: &[f64], gain_xyz: Option<&[f64]>, n_channels: usize, need_xyz: bool) -> Self {
        SourceMajorGain {
            n_channels,
            normal: transpose(gain, n_channels),
            xyz: gain_xyz
                .filter(|_| need_xyz)
                .map(|g| transpose(g, n_channels)),
        }
    }
}

/// Row-major `rows × cols` to row-major `cols × rows`, parallel over output rows.
fn transpose(a: &[f64], rows: usize) -> Vec<f64> {
    let cols = a.len() / rows.max(1);
    let mut out = vec![0.0; a.len()];
    out.par_chunks_mut(rows.max(1))
        .enumerate()
        .for_each(|(col, chunk)| {
            for (row, value) in chunk.iter_mut().enumerate() {
                *value = a[row * cols + col];
            }
        });
    out
}

/// The unnormalised atoms, column-major (atom `j` at `[j·n_ch, (j+1)·n_ch)`),
/// average-referenced if asked, and their 2-norms.
///
/// Requires: CSC arrays consistent, indices < n_src, `gain.xyz` present when a
/// component is x, y or z (the callers check).
pub(crate) fn atom_columns(
    profile: ProfileColumns<'_>,
    gain: &SourceMajorGain,
    average_reference: bool,
) -> (Vec<f64>, Vec<f64>) {
    let n_ch = gain.n_channels;
    let n_atoms = profile.component.len();
    let mut columns = vec![0.0; n_ch * n_atoms];
    let mut norms = vec![0.0; n_atoms];
    columns
        .par_chunks_mut(n_ch)
        .zip(norms.par_iter_mut())
        .enumerate()
        .for_each(|(j, (column, norm))| {
            let (source_vectors, stride, offset) = match profile.component[j].xyz_index() {
                None => (&gain.normal[..], 1, 0),
                Some(c) => (gain.xyz.as_deref().unwrap_or(&[]), 3, c),
            };
            for p in profile.indptr[j]..profile.indptr[j + 1] {
                let start = (profile.indices[p] * stride + offset) * n_ch;
                let source = &source_vectors[start..start + n_ch];
                let w = profile.data[p];
                for (out, &g) in column.iter_mut().zip(source) {
                    *out += w * g;
                }
            }
            if average_reference {
                average_reference_columns(column, 1);
            }
            *norm = column.iter().map(|v| v * v).sum::<f64>().sqrt();
        });
    (columns, norms)
}

/// Whether an atom of this norm is degenerate: zero, not finite, or at most
/// `drop_relative_norm` × the largest finite norm.
pub(crate) fn is_degenerate(norm: f64, max_norm: f64, drop_relative_norm: f64) -> bool {
    !(norm.is_finite() && norm > 0.0 && norm > drop_relative_norm * max_norm)
}

/// The largest finite norm (0 if none).
pub(crate) fn max_finite(norms: &[f64]) -> f64 {
    norms
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max)
}

/// Rows per block of the transposition: one 64-byte cache line of a
/// column-major atom is read once and spread over this many output rows.
const ROW_BLOCK: usize = 8;

/// Row-major `n_ch × keep.len()` matrix whose column `jn` is column
/// `keep[jn]` of the column-major `columns`, divided by its norm (or left at
/// zero where `norms[keep[jn]]` is 0). Parallel over blocks of rows.
pub(crate) fn normalised_row_major(
    columns: &[f64],
    norms: &[f64],
    keep: &[usize],
    n_ch: usize,
) -> Vec<f64> {
    let n_out = keep.len();
    let mut out = vec![0.0; n_ch * n_out];
    if n_out == 0 {
        return out;
    }
    out.par_chunks_mut(ROW_BLOCK * n_out)
        .enumerate()
        .for_each(|(block, rows)| {
            let first_row = block * ROW_BLOCK;
            let n_rows = rows.len() / n_out;
            for (jn, &j) in keep.iter().enumerate() {
                if norms[j] > 0.0 {
                    let source = &columns[j * n_ch + first_row..j * n_ch + first_row + n_rows];
                    for (r, &value) in source.iter().enumerate() {
                        rows[r * n_out + jn] = value / norms[j];
                    }
                }
            }
        });
    out
}

/// Recomputes unit-norm atoms from a profile and a lead field restricted to
/// some channels (for example the channels a decoder has): normalising
/// happens after restricting, so this cannot be done from stored unit atoms.
///
/// - `profile`: CSC, n_src × n_atoms (as in [`crate::dictionary::Dictionary::profile`]).
/// - `component`: per atom, which lead field it uses (`Normal`: `gain`; `X`,
///   `Y`, `Z`: `gain_xyz`).
/// - `gain`: row-major n_ch × n_src (V/(A·m), along the normals), the rows of
///   the kept channels only; `gain_xyz`: row-major n_ch × n_src × 3, needed
///   only for x, y, z atoms.
/// - `average_reference`: subtract each atom's mean over these channels.
/// - `drop_relative_norm`: an atom whose norm is at most this fraction of the
///   largest (or zero) becomes a zero column with norm 0, so atom indices stay
///   aligned with the dictionary; the caller sees it through the 0 norm.
///
/// Returns `(atoms, norms)`: atoms row-major n_ch × n_atoms with unit (or zero)
/// columns, norms the scale removed (unnormalised atom = atom × norm).
pub fn atoms_for_channels(
    profile: &CsMat<f64>,
    component: &[AtomComponent],
    gain: &[f64],
    gain_xyz: Option<&[f64]>,
    n_channels: usize,
    average_reference: bool,
    drop_relative_norm: f64,
) -> Result<(Vec<f64>, Vec<f64>), DictionaryError> {
    if !profile.is_csc() {
        return Err(DictionaryError::BadProfile(
            "expected compressed sparse columns (CSC), got rows (CSR)".into(),
        ));
    }
    if profile.cols() != component.len() {
        return Err(DictionaryError::BadProfile(format!(
            "{} columns but {} atom components: expected one component per column",
            profile.cols(),
            component.len()
        )));
    }
    if let Some(p) = profile.data().iter().position(|v| !v.is_finite()) {
        return Err(DictionaryError::BadProfile(format!(
            "non-finite value at stored entry {p}"
        )));
    }
    if !(drop_relative_norm.is_finite() && (0.0..1.0).contains(&drop_relative_norm)) {
        return Err(DictionaryError::BadDropThreshold(drop_relative_norm));
    }
    let n_src = profile.rows();
    let need_xyz = component.iter().any(|c| c.xyz_index().is_some());
    check_gains(gain, gain_xyz, n_channels, n_src, need_xyz)?;
    let indptr = profile.proper_indptr();
    let columns = ProfileColumns {
        indptr: &indptr,
        indices: profile.indices(),
        data: profile.data(),
        component,
    };
    let source_major = SourceMajorGain::new(gain, gain_xyz, n_channels, need_xyz);
    let (columns, mut norms) = atom_columns(columns, &source_major, average_reference);
    let max_norm = max_finite(&norms);
    for norm in norms.iter_mut() {
        if is_degenerate(*norm, max_norm, drop_relative_norm) {
            *norm = 0.0;
        }
    }
    let all: Vec<usize> = (0..component.len()).collect();
    let atoms = normalised_row_major(&columns, &norms, &all, n_channels);
    Ok((atoms, norms))
}

/// Checks lead-field shapes and values: `gain` n_ch × n_src, `gain_xyz`
/// n_ch × n_src × 3 if given (required when `need_xyz`), all finite.
pub(crate) fn check_gains(
    gain: &[f64],
    gain_xyz: Option<&[f64]>,
    n_channels: usize,
    n_sources: usize,
    need_xyz: bool,
) -> Result<(), DictionaryError> {
    if n_channels == 0 {
        return Err(DictionaryError::NoChannels);
    }
    if n_sources == 0 {
        return Err(DictionaryError::NoSources);
    }
    check_gain("gain", gain, n_channels, n_sources, 1)?;
    match gain_xyz {
        Some(g) => check_gain("gain_xyz", g, n_channels, n_sources, 3),
        None if need_xyz => Err(DictionaryError::MissingFreeGain),
        None => Ok(()),
    }
}

fn check_gain(
    name: &'static str,
    values: &[f64],
    n_channels: usize,
    n_sources: usize,
    per_source: usize,
) -> Result<(), DictionaryError> {
    let n_cols = n_sources * per_source;
    let expected = n_channels * n_cols;
    if values.len() != expected {
        return Err(DictionaryError::GainShape {
            name,
            expected,
            found: values.len(),
            n_channels,
            n_sources,
            per_source: if per_source == 3 { " x 3" } else { "" },
        });
    }
    if let Some(p) = values.iter().position(|v| !v.is_finite()) {
        return Err(DictionaryError::NonFiniteGain {
            name,
            channel: p / n_cols,
            column: p % n_cols,
        });
    }
    Ok(())
}
