//! The linear-operator trait and the dense dictionary that stores atoms contiguously.

use rayon::prelude::*;

use super::error::{check_finite_row_major, check_len, SolverError};
use super::kernels::{axpy, dot, norm_sq};

/// A linear map `A` (n_rows x n_cols) applied into caller-provided buffers.
///
/// Blocks of `k` vectors use the layouts of the fit: on the channel side
/// (`n_rows x k`) the `k` columns are each contiguous (column-major), on the
/// coefficient side (`n_cols x k`) the rows are contiguous (row-major, the
/// layout of `/fit/coefficients`). For `k = 1` both are plain vectors. The
/// dense implementation needs no workspace, so there is no scratch size.
pub trait LinearOperator: Sync {
    /// Number of rows (channels).
    fn n_rows(&self) -> usize;
    /// Number of columns (atoms).
    fn n_cols(&self) -> usize;
    /// `out = A x`: `x` is `n_cols x k` row-major, `out` is `n_rows x k`
    /// column-major and is overwritten.
    fn apply(&self, x: &[f64], k: usize, out: &mut [f64]) -> Result<(), SolverError>;
    /// `out = Aᵀ r`: `r` is `n_rows x k` column-major, `out` is `n_cols x k`
    /// row-major and is overwritten.
    fn adjoint_apply(&self, r: &[f64], k: usize, out: &mut [f64]) -> Result<(), SolverError>;
}

/// Atoms per parallel task in [`DenseDictionary::adjoint_apply`]. The chunking
/// is fixed, and each output is one atom's own dot product, so the result does
/// not depend on the number of threads.
const ATOM_CHUNK: usize = 256;

/// Atoms per parallel task in [`DenseDictionary::adjoint_stacked_into`] (fixed, so
/// the result does not depend on the number of threads).
pub(crate) const STACKED_CHUNK: usize = 1024;

/// Atoms per block of the transposition in [`DenseDictionary::from_row_major`].
const TRANSPOSE_BLOCK: usize = 64;

/// Below this many matrix entries times `k`, the adjoint runs on one thread.
const PARALLEL_MIN_WORK: usize = 1 << 17;

/// One problem's share of [`DenseDictionary::adjoint_stacked_into`]: its
/// row-major `n_atoms x k` block, its `k`, the offset of its columns among
/// the stacked ones, and the atoms it keeps (all when `None`).
pub(crate) struct StackedOut<'a> {
    pub block: &'a mut [f64],
    pub k: usize,
    pub offset: usize,
    pub keep: Option<&'a [bool]>,
}

/// A dense dictionary: `n_ch x n_atoms`, stored column-major so that atom `j`
/// is the contiguous slice `atoms[j * n_ch..(j + 1) * n_ch]`.
///
/// Columns are accepted as given (the dictionary stage scales them to unit
/// norm; the solver does not assume it).
#[derive(Debug, Clone, PartialEq)]
pub struct DenseDictionary {
    n_channels: usize,
    n_atoms: usize,
    atoms: Vec<f64>,
    /// ‖d_j‖₂ of every atom, computed once (every fit needs them).
    norms: Vec<f64>,
}

impl DenseDictionary {
    /// Builds the dictionary from the row-major `n_ch x n_atoms` layout of
    /// `/dictionary/atoms` (entry `(c, j)` at `c * n_atoms + j`).
    pub fn from_row_major(
        n_channels: usize,
        n_atoms: usize,
        values: &[f64],
    ) -> Result<Self, SolverError> {
        Self::check_dims(
            n_channels,
            n_atoms,
            values.len(),
            "n_ch x n_atoms, row-major",
        )?;
        check_finite_row_major("dictionary atoms", values, n_atoms)?;
        let mut atoms = vec![0.0; n_channels * n_atoms];
        // One transpose here lets every later pass read each atom
        // contiguously. It runs over blocks of atoms whose columns stay in
        // the cache while every channel's row segment is spread over them.
        for (block, out) in atoms.chunks_mut(TRANSPOSE_BLOCK * n_channels).enumerate() {
            let j0 = block * TRANSPOSE_BLOCK;
            let width = out.len() / n_channels;
            for (c, row) in values.chunks_exact(n_atoms).enumerate() {
                for (jj, &v) in row[j0..j0 + width].iter().enumerate() {
                    out[jj * n_channels + c] = v;
                }
            }
        }
        Ok(Self::assemble(n_channels, n_atoms, atoms))
    }

    fn assemble(n_channels: usize, n_atoms: usize, atoms: Vec<f64>) -> Self {
        let norms = atoms
            .chunks_exact(n_channels)
            .map(|a| norm_sq(a).sqrt())
            .collect();
        Self {
            n_channels,
            n_atoms,
            atoms,
            norms,
        }
    }

    /// Builds the dictionary from atoms already stored one after another
    /// (column-major `n_ch x n_atoms`).
    pub fn from_column_major(
        n_channels: usize,
        n_atoms: usize,
        atoms: Vec<f64>,
    ) -> Result<Self, SolverError> {
        Self::check_dims(
            n_channels,
            n_atoms,
            atoms.len(),
            "n_ch x n_atoms, column-major",
        )?;
        if let Some(i) = atoms.iter().position(|v| !v.is_finite()) {
            return Err(SolverError::NonFinite {
                what: "dictionary atoms",
                row: i % n_channels,
                column: i / n_channels,
                value: atoms[i],
            });
        }
        Ok(Self::assemble(n_channels, n_atoms, atoms))
    }

    fn check_dims(
        n_channels: usize,
        n_atoms: usize,
        got: usize,
        layout: &'static str,
    ) -> Result<(), SolverError> {
        if n_channels == 0 {
            return Err(SolverError::EmptyDimension { what: "n_ch" });
        }
        if n_atoms == 0 {
            return Err(SolverError::EmptyDimension { what: "n_atoms" });
        }
        check_len(
            "dictionary atoms",
            || format!("{n_channels} x {n_atoms}, {layout}"),
            n_channels * n_atoms,
            got,
        )
    }

    /// Number of channels (rows).
    pub fn n_channels(&self) -> usize {
        self.n_channels
    }

    /// Number of atoms (columns).
    pub fn n_atoms(&self) -> usize {
        self.n_atoms
    }

    /// Atom `j` as a contiguous slice of `n_ch` values (panics if `j` is out of range).
    pub fn atom(&self, j: usize) -> &[f64] {
        &self.atoms[j * self.n_channels..(j + 1) * self.n_channels]
    }

    /// All atoms, column-major.
    pub fn as_column_major(&self) -> &[f64] {
        &self.atoms
    }

    /// The 2-norm of every atom.
    pub fn atom_norms(&self) -> Vec<f64> {
        self.norms.clone()
    }

    /// The 2-norm of atom `j` (panics if `j` is out of range).
    pub fn atom_norm(&self, j: usize) -> f64 {
        self.norms[j]
    }

    /// Copies the atoms `indices` (in that order) into a new dictionary.
    pub(crate) fn select(&self, indices: &[usize]) -> DenseDictionary {
        let mut atoms = Vec::with_capacity(indices.len() * self.n_channels);
        for &j in indices {
            atoms.extend_from_slice(self.atom(j));
        }
        DenseDictionary {
            n_channels: self.n_channels,
            n_atoms: indices.len(),
            atoms,
            norms: indices.iter().map(|&j| self.norms[j]).collect(),
        }
    }

    /// `out = Dᵀ r` without shape checks (the hot loop of the solver).
    pub(crate) fn adjoint_into(&self, r: &[f64], k: usize, out: &mut [f64]) {
        self.adjoint_rows(r, k, None, out);
    }

    /// `out = Dᵀ r` on the atoms with `keep[j]` only; the other rows of
    /// `out` are set to zero. The kept rows equal [`Self::adjoint_into`]'s
    /// bit for bit.
    pub(crate) fn adjoint_kept_into(&self, r: &[f64], k: usize, keep: &[bool], out: &mut [f64]) {
        self.adjoint_rows(r, k, Some(keep), out);
    }

    /// Both adjoints: every output is one atom's own dot product and the
    /// chunking is fixed, so the result does not depend on the number of
    /// threads. Atoms outside `keep` (when given) get zero rows.
    fn adjoint_rows(&self, r: &[f64], k: usize, keep: Option<&[bool]>, out: &mut [f64]) {
        let n = self.n_channels;
        let atoms = &self.atoms;
        let work = |(chunk, out_chunk): (usize, &mut [f64])| {
            let j0 = chunk * ATOM_CHUNK;
            for (jj, out_row) in out_chunk.chunks_exact_mut(k).enumerate() {
                let j = j0 + jj;
                if keep.is_some_and(|m| !m[j]) {
                    out_row.fill(0.0);
                    continue;
                }
                let atom = &atoms[j * n..(j + 1) * n];
                for (c, o) in out_row.iter_mut().enumerate() {
                    *o = dot(atom, &r[c * n..(c + 1) * n]);
                }
            }
        };
        let kept = keep.map_or(self.n_atoms, |m| m.iter().filter(|&&b| b).count());
        if kept * n * k >= PARALLEL_MIN_WORK {
            out.par_chunks_mut(ATOM_CHUNK * k)
                .enumerate()
                .for_each(work);
        } else {
            out.chunks_mut(ATOM_CHUNK * k).enumerate().for_each(work);
        }
    }

    /// `Dᵀ [R_1 … R_b]` for `total` stacked columns (`cols`, each `n_ch`
    /// contiguous values), written straight into each problem's own
    /// row-major `n_atoms x k` block: `outs` holds, per problem, its block,
    /// its `k`, the offset of its columns among the stacked ones, and the
    /// atoms to keep (rows of the others are set to zero, as
    /// [`Self::adjoint_kept_into`] does). One read of the dictionary for all
    /// columns, as a matrix product (faer) per fixed chunk of
    /// [`STACKED_CHUNK`] atoms, sequential within a chunk, so the numbers do
    /// not depend on the number of threads; the `n_atoms x total` product is
    /// never held whole (one chunk's at a time per thread). The sums run in
    /// faer's order, not [`super::kernels::dot`]'s, so they may differ from
    /// [`Self::adjoint_into`] in the last bits.
    pub(crate) fn adjoint_stacked_into(
        &self,
        cols: &[f64],
        total: usize,
        outs: Vec<StackedOut<'_>>,
    ) {
        use faer::linalg::matmul::matmul;
        use faer::{Accum, MatMut, MatRef, Par};
        let n = self.n_channels;
        if total == 0 {
            return;
        }
        let n_chunks = self.n_atoms.div_ceil(STACKED_CHUNK);
        // Per chunk of atoms, the pieces of every problem's block it fills.
        let mut pieces: Vec<Vec<StackedOut<'_>>> = (0..n_chunks)
            .map(|_| Vec::with_capacity(outs.len()))
            .collect();
        for out in outs {
            for (chunk, piece) in out.block.chunks_mut(STACKED_CHUNK * out.k).enumerate() {
                pieces[chunk].push(StackedOut {
                    block: piece,
                    k: out.k,
                    offset: out.offset,
                    keep: out.keep,
                });
            }
        }
        let rhs = MatRef::from_column_major_slice(cols, n, total);
        pieces.into_par_iter().enumerate().for_each_init(
            Vec::new,
            |product: &mut Vec<f64>, (chunk, targets)| {
                let j0 = chunk * STACKED_CHUNK;
                let rows = STACKED_CHUNK.min(self.n_atoms - j0);
                product.clear();
                product.resize(rows * total, 0.0);
                let atoms =
                    MatRef::from_column_major_slice(&self.atoms[j0 * n..(j0 + rows) * n], n, rows);
                let dst = MatMut::from_column_major_slice_mut(product, rows, total);
                matmul(dst, Accum::Replace, atoms.transpose(), rhs, 1.0, Par::Seq);
                for StackedOut {
                    block: piece,
                    k,
                    offset,
                    keep,
                } in targets
                {
                    for c in 0..k {
                        let column = &product[(offset + c) * rows..(offset + c + 1) * rows];
                        for (i, &v) in column.iter().enumerate() {
                            piece[i * k + c] = v;
                        }
                    }
                    if let Some(m) = keep {
                        for (i, row) in piece.chunks_exact_mut(k).enumerate() {
                            if !m[j0 + i] {
                                row.fill(0.0);
                            }
                        }
                    }
                }
            },
        );
    }

    /// `out = D x` without shape checks; skips zero rows of `x`. Returns the
    /// number of atoms read (the nonzero rows).
    pub(crate) fn apply_into(&self, x: &[f64], k: usize, out: &mut [f64]) -> usize {
        self.apply_rows_into(x, k, None, out)
    }

    /// [`Self::apply_into`] looking only at the rows `rows` of `x`
    /// (increasing; all when `None`): the other rows must be zero. The
    /// nonzero rows are added in the same order either way, so the result is
    /// the same bits; a caller that knows where `x` can be nonzero saves the
    /// scan of the rest.
    pub(crate) fn apply_rows_into(
        &self,
        x: &[f64],
        k: usize,
        rows: Option<&[usize]>,
        out: &mut [f64],
    ) -> usize {
        let n = self.n_channels;
        out.fill(0.0);
        let mut touched = 0;
        let mut add = |j: usize, row: &[f64]| {
            if row.iter().all(|&v| v == 0.0) {
                return;
            }
            touched += 1;
            let atom = self.atom(j);
            for (c, &v) in row.iter().enumerate() {
                if v != 0.0 {
                    axpy(v, atom, &mut out[c * n..(c + 1) * n]);
                }
            }
        };
        match rows {
            Some(rows) => rows.iter().for_each(|&j| add(j, &x[j * k..(j + 1) * k])),
            None => x
                .chunks_exact(k)
                .enumerate()
                .for_each(|(j, row)| add(j, row)),
        }
        touched
    }

    fn check_block(
        &self,
        k: usize,
        side_len: usize,
        what: &'static str,
        got: usize,
    ) -> Result<(), SolverError> {
        if k == 0 {
            return Err(SolverError::EmptyDimension { what: "k" });
        }
        check_len(what, || format!("{side_len} x {k}"), side_len * k, got)
    }
}

impl LinearOperator for DenseDictionary {
    fn n_rows(&self) -> usize {
        self.n_channels
    }

    fn n_cols(&self) -> usize {
        self.n_atoms
    }

    fn apply(&self, x: &[f64], k: usize, out: &mut [f64]) -> Result<(), SolverError> {
        self.check_block(k, self.n_atoms, "x (n_atoms x k, row-major)", x.len())?;
        self.check_block(
            k,
            self.n_channels,
            "out (n_ch x k, column-major)",
            out.len(),
        )?;
        let _ = self.apply_into(x, k, out);
        Ok(())
    }

    fn adjoint_apply(&self, r: &[f64], k: usize, out: &mut [f64]) -> Result<(), SolverError> {
        self.check_block(k, self.n_channels, "r (n_ch x k, column-major)", r.len())?;
        self.check_block(k, self.n_atoms, "out (n_atoms x k, row-major)", out.len())?;
        self.adjoint_into(r, k, out);
        Ok(())
    }
}
