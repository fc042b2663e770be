//! The boundary-element system of nested surfaces: linear collocation at the
//! vertices of the innermost surface, Galerkin-tested rows on the others,
//! deflated, with the isolated-problem approach, built and factorised once
//! per head.
//!
//! # Equations
//! Surface k separates σₖ⁻ (inside) from σₖ⁺ (outside, 0 beyond the scalp).
//! At a vertex rᵢ of surface l the potential satisfies (Geselowitz's integral
//! equation, in the form of Hämäläinen & Sarvas 1989, IEEE Trans Biomed Eng
//! 36:165; the form recalled from memory, its constant null space
//! checked below)
//!
//! cₗ V(rᵢ) − Σₖ αₖ/(4π) ∫_{Sₖ} V dΩᵢ = g(rᵢ),  cₗ = (σₗ⁻+σₗ⁺)/2, αₖ = σₖ⁻ − σₖ⁺,
//!
//! with g = σ₁V₀ = q·(r − r₀)/(4π|r − r₀|³) the source's infinite-medium
//! potential times its compartment's conductivity. V is linear on each
//! triangle (hat functions at the vertices), and the weights Ωᵢⱼ of
//! [`super::integrals::linear_double_layer`] are exact for flat triangles
//! (de Munck 1992, IEEE Trans Biomed Eng 39:986). The weight of a vertex on
//! its own surface is set so that its row sums to 2π there (common practice,
//! no source); then constants solve the homogeneous system exactly (solid
//! angles of closed polyhedra are exact), and the singular matrix is
//! deflated by adding (s/N) to every entry (Lynn & Timlake 1968, IEEE
//! Trans Biomed Eng 15:126, from memory), which fixes the constant without
//! changing anything an average reference sees.
//!
//! # Galerkin rows outside the innermost surface
//! The rows of the vertices of every surface but the innermost are the
//! equation tested with the vertex's hat function, divided by its integral
//! ([`super::galerkin`]): cₗ Σⱼ (Mᵢⱼ/mᵢ) Vⱼ in place of cₗ Vᵢ, the tested Ω
//! in place of Ω at the vertex. With a poorly conducting skull the
//! collocated outer-skull and scalp rows left a magnitude bias of 0.7 % at
//! 2 562 vertices per surface (2.7 % at 642); the tested rows remove it
//! (docs/head_model.md). The innermost surface keeps collocation, so the
//! isolated problem and the transfer matrix keep their form; its
//! right-hand side below takes the tested Ω for the rows of the outer
//! vertices (the identity g = −σ₁/(4π) Ω u outside holds pointwise, hence
//! tested).
//!
//! # The isolated problem
//! A poorly conducting skull makes the inner surface's share of g nearly
//! cancel (Hämäläinen & Sarvas 1989). We solve first the isolated problem
//! u: the inner compartment alone in an insulator, σ₁/2 u − σ₁/(4π) Ω₁₁ u = g₁.
//! Writing V₁ = w + u and using that the isolated potential vanishes
//! outside (g(rᵢ) = −σ₁/(4π) (Ω u)ᵢ at outer vertices), the full system keeps
//! its matrix and gets the right-hand side
//! b = −σ₂/(4π) [(2π I + Ω₁₁) u ; Ωₗ₁ u], proportional to the conductivity
//! outside the inner surface (our own derivation of their idea; their
//! equations recalled from memory, not copied). Only the inner surface's g enters.

use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::lu::partial_pivoting::{factor, solve};
use faer::{Conj, MatMut, MatRef, Par};
use rayon::prelude::*;

use super::galerkin::{tested_row, SourceTriangles};
use super::integrals::linear_double_layer;
use super::{BemError, BemGeometry};
use crate::geometry::{norm, sub, Vec3};

const FOUR_PI: f64 = 4.0 * std::f64::consts::PI;
const TWO_PI: f64 = 2.0 * std::f64::consts::PI;

/// Rows per progress step while the matrix is built.
const ROW_CHUNK: usize = 64;

/// A dense LU factorisation with partial pivoting of a square matrix Bᵀ
/// (stored column-major, which is the row-major storage of the matrix B we
/// build), so that plain solves with it are solves with Bᵀ and transposed
/// solves are solves with B.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Factorised {
    n: usize,
    lu: Vec<f64>,
    perm: Vec<usize>,
    perm_inv: Vec<usize>,
}

impl Factorised {
    /// Factorises the transpose of the row-major `n × n` matrix `rows`.
    fn new(mut rows: Vec<f64>, n: usize, par: Par) -> Result<Self, BemError> {
        let mut perm = vec![0usize; n];
        let mut perm_inv = vec![0usize; n];
        {
            let a = MatMut::from_column_major_slice_mut(&mut rows, n, n);
            let mut buf = MemBuffer::new(factor::lu_in_place_scratch::<usize, f64>(
                n,
                n,
                par,
                Default::default(),
            ));
            factor::lu_in_place(
                a,
                &mut perm,
                &mut perm_inv,
                par,
                MemStack::new(&mut buf),
                Default::default(),
            );
        }
        let largest = (0..n).map(|i| rows[i * n + i].abs()).fold(0.0, f64::max);
        if let Some(pivot) = (0..n).find(|&i| {
            let v = rows[i * n + i];
            v.abs().is_nan() || v.abs() <= 1e-14 * largest
        }) {
            return Err(BemError::Singular {
                pivot,
                value: rows[pivot * n + pivot],
            });
        }
        Ok(Self {
            n,
            lu: rows,
            perm,
            perm_inv,
        })
    }

    /// Solves with the matrix built row-major (`transposed = true`) or
    /// with its transpose, in place on the column-major `n × k` `rhs`.
    /// Sequential, so the bits do not depend on the thread count.
    fn solve(&self, rhs: &mut [f64], k: usize, transposed: bool) {
        let n = self.n;
        let lu = MatRef::from_column_major_slice(&self.lu, n, n);
        let perm = faer::perm::PermRef::new_checked(&self.perm, &self.perm_inv, n);
        let rhs = MatMut::from_column_major_slice_mut(rhs, n, k);
        let par = Par::Seq;
        let mut buf = MemBuffer::new(solve::solve_in_place_scratch::<usize, f64>(n, k, par));
        let stack = MemStack::new(&mut buf);
        if transposed {
            solve::solve_transpose_in_place_with_conj(lu, lu, perm, Conj::No, rhs, par, stack);
        } else {
            solve::solve_in_place_with_conj(lu, lu, perm, Conj::No, rhs, par, stack);
        }
    }
}

/// The factorised boundary-element system of one head: everything that does
/// not depend on the electrodes or the sources.
#[derive(Debug, Clone, PartialEq)]
pub struct BemSystem {
    geometry: BemGeometry,
    /// First global vertex index of each surface, and the total at the end.
    offsets: Vec<usize>,
    /// The isolated inner problem, factorised (n₁ × n₁).
    inner: Factorised,
    /// The full system (N × N), for two surfaces or more.
    full: Option<Factorised>,
    /// Ω of the inner surface at every vertex, N × n₁ row-major (its own
    /// diagonal fixed; tested rows for the vertices of the outer
    /// surfaces), for two surfaces or more.
    omega_inner: Vec<f64>,
}

impl BemSystem {
    /// Builds and factorises the system of `geometry`. `progress` advances
    /// by one per vertex whose row is built (N in all) and may stop the
    /// build between chunks of rows.
    ///
    /// Memory: about 8 (N² + N n₁ + n₁²) bytes (N the vertices of all
    /// surfaces, n₁ those of the innermost): 0.7 GB for three surfaces of
    /// 2 562 vertices.
    pub fn build(
        geometry: BemGeometry,
        progress: &dyn crate::numeric::Progress,
    ) -> Result<Self, BemError> {
        let surfaces = geometry.surfaces();
        let (offsets, n_total, n_inner) = vertex_offsets(&geometry);
        let needed = 8 * (n_total * n_total + n_total * n_inner + n_inner * n_inner) as u64;
        let budget = crate::limits::MEMORY_BUDGET_BYTES;
        if needed > budget {
            return Err(BemError::TooLarge {
                vertices: n_total,
                needed_mb: needed >> 20,
                budget_mb: budget >> 20,
            });
        }
        let sigma = geometry.conductivities();
        let n_surf = surfaces.len();
        // Conductivity inside and outside each surface.
        let inside = |k: usize| sigma[k];
        let outside = |k: usize| if k + 1 < n_surf { sigma[k + 1] } else { 0.0 };
        let positions: Vec<(usize, Vec3)> = surfaces
            .iter()
            .enumerate()
            .flat_map(|(k, s)| s.vertices.iter().map(move |&v| (k, v)))
            .collect();

        // Ω rows of every vertex, over all surfaces, then A's rows.
        let deflation = 0.5 * sigma[n_surf - 1] / n_total as f64;
        let mut full_rows = if n_surf > 1 {
            vec![0.0; n_total * n_total]
        } else {
            Vec::new()
        };
        let mut omega_inner = vec![0.0; n_total * n_inner];
        // The rows of every surface but the innermost are Galerkin-tested.
        let sources = SourceTriangles::new(&geometry);
        let fill = |start: usize, full_chunk: &mut [f64], inner_chunk: &mut [f64]| {
            let mut omega = vec![0.0; n_total];
            for (r, inner_row) in inner_chunk.chunks_mut(n_inner).enumerate() {
                let i = start + r;
                let (l, point) = positions[i];
                let local = i - offsets[l];
                let mass = if l > 0 && sources.supports(l, local) {
                    Some(tested_row(
                        &geometry, &sources, &offsets, l, local, &mut omega,
                    ))
                } else {
                    omega_row(&geometry, &offsets, i, l, point, &mut omega);
                    None
                };
                inner_row.copy_from_slice(&omega[..n_inner]);
                if n_surf > 1 {
                    let row = &mut full_chunk[r * n_total..(r + 1) * n_total];
                    for k in 0..n_surf {
                        let weight = (inside(k) - outside(k)) / FOUR_PI;
                        for j in offsets[k]..offsets[k + 1] {
                            row[j] = deflation - weight * omega[j];
                        }
                    }
                    let c_l = 0.5 * (inside(l) + outside(l));
                    match &mass {
                        Some(mass) => {
                            for &(j, m) in mass {
                                row[offsets[l] + j] += c_l * m;
                            }
                        }
                        None => row[i] += c_l,
                    }
                }
            }
        };
        let chunks: Vec<(usize, &mut [f64], &mut [f64])> = if n_surf > 1 {
            full_rows
                .chunks_mut(ROW_CHUNK * n_total)
                .zip(omega_inner.chunks_mut(ROW_CHUNK * n_inner))
                .enumerate()
                .map(|(c, (f, o))| (c * ROW_CHUNK, f, o))
                .collect()
        } else {
            omega_inner
                .chunks_mut(ROW_CHUNK * n_inner)
                .enumerate()
                .map(|(c, o)| (c * ROW_CHUNK, &mut [][..], o))
                .collect()
        };
        let outcomes: Vec<Result<(), BemError>> = chunks
            .into_par_iter()
            .map(|(start, f, o)| {
                if progress.cancelled() {
                    return Err(BemError::Cancelled);
                }
                let rows = o.len() / n_inner;
                fill(start, f, o);
                progress.advance(rows);
                Ok(())
            })
            .collect();
        for outcome in outcomes {
            outcome?;
        }

        // The isolated inner problem: σ₁/2 δ − σ₁/(4π) Ω₁₁, deflated.
        let s1 = sigma[0];
        let inner_deflation = 0.5 * s1 / n_inner as f64;
        let mut inner_rows = vec![0.0; n_inner * n_inner];
        for (i, row) in inner_rows.chunks_mut(n_inner).enumerate() {
            for (j, v) in row.iter_mut().enumerate() {
                *v = inner_deflation - s1 / FOUR_PI * omega_inner[i * n_inner + j];
            }
            row[i] += 0.5 * s1;
        }
        if progress.cancelled() {
            return Err(BemError::Cancelled);
        }
        let par = lu_parallelism();
        let inner = Factorised::new(inner_rows, n_inner, par)?;
        let full = if n_surf > 1 {
            Some(Factorised::new(full_rows, n_total, par)?)
        } else {
            None
        };
        Ok(Self {
            geometry,
            offsets,
            inner,
            full,
            omega_inner: if n_surf > 1 { omega_inner } else { Vec::new() },
        })
    }

    /// The checked surfaces and conductivities.
    pub fn geometry(&self) -> &BemGeometry {
        &self.geometry
    }

    /// Vertices of all surfaces.
    pub fn n_vertices(&self) -> usize {
        self.offsets[self.offsets.len() - 1]
    }

    /// First global vertex index of surface `k` (innermost 0); `k` = the
    /// number of surfaces gives the total.
    pub fn offset(&self, k: usize) -> usize {
        self.offsets[k]
    }

    /// The potential (V) at every vertex of every surface (global order,
    /// innermost surface first) of a dipole `moment` (A·m) at `source` (m)
    /// inside the innermost surface, by one solve of each system: the
    /// direct way, for checks (the lead field goes through
    /// [`BemSystem::transfer`] instead).
    pub fn potentials(&self, source: Vec3, moment: Vec3) -> Vec<f64> {
        let inner = &self.geometry.surfaces()[0];
        let n_inner = inner.n_vertices();
        let mut u: Vec<f64> = inner
            .vertices
            .iter()
            .map(|&r| {
                let g = primary_xyz(r, source);
                g[0] * moment[0] + g[1] * moment[1] + g[2] * moment[2]
            })
            .collect();
        self.inner.solve(&mut u, 1, true);
        let Some(full) = &self.full else {
            return u;
        };
        let n_total = self.n_vertices();
        let sigma2 = self.geometry.conductivities()[1];
        let mut b: Vec<f64> = (0..n_total)
            .map(|i| {
                let row = &self.omega_inner[i * n_inner..(i + 1) * n_inner];
                let mut v: f64 = row.iter().zip(&u).map(|(o, x)| o * x).sum();
                if i < n_inner {
                    v += TWO_PI * u[i];
                }
                -sigma2 / FOUR_PI * v
            })
            .collect();
        full.solve(&mut b, 1, true);
        for (v, x) in b.iter_mut().zip(&u) {
            *v += x;
        }
        b
    }

    /// The transfer matrix of `weights`: rows of interpolation weights over
    /// the global vertices (column-major N × k, one column per electrode),
    /// to row-major k × n₁ (per electrode, the weights of the inner surface's
    /// g). Sequential, so the bits do not depend on the thread count.
    pub(crate) fn transfer_of(&self, mut weights: Vec<f64>, k: usize) -> Vec<f64> {
        let n_inner = self.geometry.surfaces()[0].n_vertices();
        let Some(full) = &self.full else {
            self.inner.solve(&mut weights, k, false);
            return weights;
        };
        let n_total = self.n_vertices();
        // X = A⁻ᵀ Eᵀ (N × k).
        full.solve(&mut weights, k, false);
        // Zᵀ = Mᵀ X = −σ₂/(4π) (Ω₁ᵀ X + 2π X[..n₁]) (n₁ × k).
        let sigma2 = self.geometry.conductivities()[1];
        let mut z = vec![0.0; n_inner * k];
        {
            let omega_t = MatRef::from_column_major_slice(&self.omega_inner, n_inner, n_total);
            let x = MatRef::from_column_major_slice(&weights, n_total, k);
            let out = MatMut::from_column_major_slice_mut(&mut z, n_inner, k);
            faer::linalg::matmul::matmul(
                out,
                faer::Accum::Replace,
                omega_t,
                x,
                -sigma2 / FOUR_PI,
                Par::Seq,
            );
        }
        for c in 0..k {
            for i in 0..n_inner {
                z[c * n_inner + i] -= sigma2 / FOUR_PI * TWO_PI * weights[c * n_total + i];
            }
        }
        // Tᵀ = A₁⁻ᵀ Zᵀ.
        self.inner.solve(&mut z, k, false);
        z
    }
}

/// Threads for the two factorisations: faer's blocked LU gives the same
/// bits on one thread and on many (checked by `head_bem::` tests), so it
/// may use rayon's pool.
fn lu_parallelism() -> Par {
    Par::rayon(0)
}

/// The Ω row of global vertex `i` (on surface `l`, at `point`) over all
/// surfaces, with the own-surface weight of `i` set so that the row sums to
/// 2π over its own surface.
fn omega_row(
    geometry: &BemGeometry,
    offsets: &[usize],
    i: usize,
    l: usize,
    point: Vec3,
    omega: &mut [f64],
) {
    omega.fill(0.0);
    let local = (i - offsets[l]) as u32;
    for (k, surface) in geometry.surfaces().iter().enumerate() {
        let base = offsets[k];
        for (t, tri) in surface.triangles.iter().enumerate() {
            if k == l && tri.contains(&local) {
                continue;
            }
            let w = linear_double_layer(point, &surface.corners(t));
            for (c, &v) in tri.iter().enumerate() {
                omega[base + v as usize] += w[c];
            }
        }
    }
    let own = &mut omega[offsets[l]..offsets[l + 1]];
    let others: f64 = own.iter().sum::<f64>() - own[local as usize];
    own[local as usize] = TWO_PI - others;
}

/// g = (r − r₀)/(4π|r − r₀|³): σ times the infinite-medium potential (V)
/// at `r` of unit dipoles along x, y, z at `source` (per A·m).
pub(crate) fn primary_xyz(r: Vec3, source: Vec3) -> Vec3 {
    let d = sub(r, source);
    let len = norm(d);
    let f = 1.0 / (FOUR_PI * len * len * len);
    [d[0] * f, d[1] * f, d[2] * f]
}

/// The factorised system as plain arrays, for the cache (`io::bem_file`):
/// the LU factors (column-major, of the transposed matrices) with their row
/// permutations, and Ω of the inner surface.
#[derive(Debug, Clone, PartialEq)]
pub struct BemSystemParts {
    /// LU of the isolated inner problem, n₁ × n₁.
    pub inner_lu: Vec<f64>,
    /// Its row permutation (forward).
    pub inner_perm: Vec<usize>,
    /// LU of the full system, N × N (empty for one surface).
    pub full_lu: Vec<f64>,
    /// Its row permutation (forward; empty for one surface).
    pub full_perm: Vec<usize>,
    /// Ω of the inner surface at every vertex, N × n₁ row-major (empty for
    /// one surface).
    pub omega_inner: Vec<f64>,
}

/// The first global vertex index of each surface (and the total at the
/// end), the total, and the inner surface's vertex count.
fn vertex_offsets(geometry: &BemGeometry) -> (Vec<usize>, usize, usize) {
    let surfaces = geometry.surfaces();
    let mut offsets = vec![0];
    for s in surfaces {
        offsets.push(offsets[offsets.len() - 1] + s.n_vertices());
    }
    let n_total = offsets[surfaces.len()];
    (offsets, n_total, surfaces[0].n_vertices())
}

/// The inverse of a permutation, or `None` when `perm` is not one of 0..n.
fn inverse_permutation(perm: &[usize]) -> Option<Vec<usize>> {
    let mut inv = vec![usize::MAX; perm.len()];
    for (i, &p) in perm.iter().enumerate() {
        if p >= perm.len() || inv[p] != usize::MAX {
            return None;
        }
        inv[p] = i;
    }
    Some(inv)
}

impl BemSystem {
    /// The geometry and the arrays of the factorised system (see
    /// [`BemSystemParts`]), taken without a copy; [`BemSystem::from_parts`]
    /// puts them back together.
    pub fn into_parts(self) -> (BemGeometry, BemSystemParts) {
        let (full_lu, full_perm) = self
            .full
            .map_or_else(|| (Vec::new(), Vec::new()), |f| (f.lu, f.perm));
        let parts = BemSystemParts {
            inner_lu: self.inner.lu,
            inner_perm: self.inner.perm,
            full_lu,
            full_perm,
            omega_inner: self.omega_inner,
        };
        (self.geometry, parts)
    }

    /// The system of `geometry` from arrays made by [`BemSystem::into_parts`]
    /// for the same geometry; `None` when their sizes or permutations do not
    /// fit it (a cache entry of another head, or damaged).
    pub fn from_parts(geometry: BemGeometry, parts: BemSystemParts) -> Option<Self> {
        let surfaces = geometry.surfaces();
        let (offsets, n_total, n_inner) = vertex_offsets(&geometry);
        let several = surfaces.len() > 1;
        let sizes_fit = parts.inner_lu.len() == n_inner * n_inner
            && parts.inner_perm.len() == n_inner
            && parts.full_lu.len() == if several { n_total * n_total } else { 0 }
            && parts.full_perm.len() == if several { n_total } else { 0 }
            && parts.omega_inner.len() == if several { n_total * n_inner } else { 0 };
        if !sizes_fit
            || !parts
                .inner_lu
                .iter()
                .chain(&parts.full_lu)
                .all(|v| v.is_finite())
        {
            return None;
        }
        let inner = Factorised {
            n: n_inner,
            perm_inv: inverse_permutation(&parts.inner_perm)?,
            perm: parts.inner_perm,
            lu: parts.inner_lu,
        };
        let full = if several {
            Some(Factorised {
                n: n_total,
                perm_inv: inverse_permutation(&parts.full_perm)?,
                perm: parts.full_perm,
                lu: parts.full_lu,
            })
        } else {
            None
        };
        Some(Self {
            geometry,
            offsets,
            inner,
            full,
            omega_inner: parts.omega_inner,
        })
    }
}
