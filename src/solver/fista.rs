//! FISTA with gradient-based adaptive restart on a working set of groups.
//!
//! Beck & Teboulle 2009 (SIAM J Imaging Sci 2:183), FISTA with constant step
//! 1/L: x⁺ = prox_{λ/L}(z + Dᵀ(Y − Dz)/L), t⁺ = (1 + √(1 + 4t²))/2,
//! z⁺ = x⁺ + ((t − 1)/t⁺)(x⁺ − x). Restart: O'Donoghue & Candès 2015 (Found
//! Comput Math 15:715), the gradient scheme: reset t = 1 and z = x⁺ whenever
//! ⟨z − x⁺, x⁺ − x⟩ > 0, i.e. the momentum points uphill. The gradient
//! scheme needs no objective value, so it costs nothing extra.

use super::certificate::Certificate;
use super::kernels::{dot, norm_sq, LANES};
use super::operator::DenseDictionary;

/// Iterations between two duality-gap checks of the sub-problem.
const CHECK_EVERY: usize = 10;

/// A column of the iterate with fewer than 1/this of its entries nonzero
/// takes the sparse route of [`gram_residual_gradient`] (same result).
const SPARSE_FACTOR: usize = 3;

/// Safety margin on the power-iteration estimate of L = ‖D‖₂², which
/// converges from below.
const LIPSCHITZ_MARGIN: f64 = 1.02;

/// The group-LASSO restricted to a working set: its atoms copied
/// contiguously, group `g` of the sub-problem is `atoms[offsets[g]..offsets[g+1]]`.
pub(crate) struct SubProblem {
    pub dict: DenseDictionary,
    pub offsets: Vec<usize>,
    pub local: Vec<usize>,
}

impl SubProblem {
    pub fn n_groups(&self) -> usize {
        self.offsets.len() - 1
    }

    fn group(&self, g: usize) -> &[usize] {
        &self.local[self.offsets[g]..self.offsets[g + 1]]
    }
}

/// Result of a sub-problem solve.
pub(crate) struct SubResult {
    pub iterations: usize,
    /// Atoms of the sub-problem read by products with its dictionary
    /// (an adjoint counts every atom, a forward product the nonzero rows).
    pub atom_reads: usize,
}

/// Largest eigenvalue of a positive semidefinite m x m operator by power
/// iteration from a deterministic start; `apply(v, w)` sets w = A v. Stops at
/// a relative change of 1e-10 or after 300 steps (an estimate from below).
/// Returns the estimate and the number of steps.
fn power_iteration(m: usize, mut apply: impl FnMut(&[f64], &mut [f64])) -> (f64, usize) {
    let mut v: Vec<f64> = (0..m)
        .map(|j| 1.0 + 0.5 * ((j as f64) * 0.7).sin())
        .collect();
    let mut w = vec![0.0; m];
    let mut estimate = 0.0;
    let mut steps = 0;
    for _ in 0..300 {
        steps += 1;
        let vn = norm_sq(&v).sqrt();
        if vn == 0.0 {
            break;
        }
        v.iter_mut().for_each(|e| *e /= vn);
        apply(&v, &mut w);
        let next = dot(&v, &w);
        std::mem::swap(&mut v, &mut w);
        let converged = (next - estimate).abs() <= 1e-10 * next;
        estimate = next;
        if converged {
            break;
        }
    }
    (estimate, steps)
}

/// L = ‖D‖₂² by power iteration on DᵀD, with a margin and capped by
/// ‖D‖_F², which is always an upper bound; and the atoms read on the way.
pub(crate) fn lipschitz(dict: &DenseDictionary) -> (f64, usize) {
    let frobenius_sq = norm_sq(dict.as_column_major());
    let mut u = vec![0.0; dict.n_channels()];
    let mut reads = dict.n_atoms();
    let (estimate, _) = power_iteration(dict.n_atoms(), |v, w| {
        reads += dict.apply_into(v, 1, &mut u) + dict.n_atoms();
        dict.adjoint_into(&u, 1, w);
    });
    let l = (LIPSCHITZ_MARGIN * estimate)
        .min(frobenius_sq)
        .max(f64::MIN_POSITIVE);
    (l, reads)
}

/// Block soft-thresholding of every group of `v` in place:
/// prox(v_g) = max(0, 1 − τ/‖v_g‖_F) v_g.
fn block_soft_threshold(sub: &SubProblem, k: usize, tau: f64, v: &mut [f64]) {
    for g in 0..sub.n_groups() {
        let atoms = sub.group(g);
        let norm = atoms
            .iter()
            .map(|&j| norm_sq(&v[j * k..(j + 1) * k]))
            .sum::<f64>()
            .sqrt();
        let shrink = if norm > tau { 1.0 - tau / norm } else { 0.0 };
        for &j in atoms {
            v[j * k..(j + 1) * k].iter_mut().for_each(|e| *e *= shrink);
        }
    }
}

/// How the gradient of the sub-problem is formed: with its Gram matrix when
/// that is cheaper (m² k against 2 n m k operations per iteration), else with
/// two products by D.
enum Gradient {
    /// G = DᵀD (row-major m x m) and DᵀY (row-major m x k).
    Gram { gram: Vec<f64>, dty: Vec<f64> },
    /// Products by D; D z is tracked by linearity.
    Direct,
}

/// L = ‖G‖₂ for the row-major Gram matrix `gram` (m x m); same margin as
/// [`lipschitz`], capped by trace(G) ≥ ‖G‖₂ (G is positive semidefinite).
fn lipschitz_gram(gram: &[f64], m: usize) -> f64 {
    let trace: f64 = (0..m).map(|i| gram[i * m + i]).sum();
    let (estimate, _) = power_iteration(m, |v, w| {
        for (i, wi) in w.iter_mut().enumerate() {
            *wi = dot(&gram[i * m..(i + 1) * m], v);
        }
    });
    (LIPSCHITZ_MARGIN * estimate)
        .min(trace)
        .max(f64::MIN_POSITIVE)
}

/// `out = b − G z` for row-major G (m x m), z and b (m x k). `columns` is
/// workspace of m·k values: z is copied into k contiguous columns first so
/// that every entry is one vectorisable dot product in a fixed order.
///
/// When a column of z is mostly zero (FISTA's iterates are sparse: block
/// soft-thresholding zeroes most groups) the products are summed over its
/// nonzero entries only, in the same order and into the same partial sums as
/// [`dot`] uses: the terms left out are exact zeros, whose addition never
/// changes a partial sum (the partial sums start at +0, so none is ever −0),
/// and G is symmetric bit for bit, so G[j][i]·z_j is the term G[i][j]·z_j of
/// row i. The result is the dense one, bit for bit, at a fraction of the
/// m² work. `lanes` is workspace of (LANES + 1)·m values.
#[allow(clippy::too_many_arguments)]
fn gram_residual_gradient(
    gram: &[f64],
    dty: &[f64],
    z: &[f64],
    m: usize,
    k: usize,
    columns: &mut [f64],
    lanes: &mut [f64],
    out: &mut [f64],
) {
    for (j, row) in z.chunks_exact(k).enumerate() {
        for (c, &v) in row.iter().enumerate() {
            columns[c * m + j] = v;
        }
    }
    // Atoms in the full chunks of `dot`'s lanes; the rest go to its tail.
    let in_lanes = m - m % LANES;
    for c in 0..k {
        let column = &columns[c * m..(c + 1) * m];
        let nonzero = column.iter().filter(|&&v| v != 0.0).count();
        if SPARSE_FACTOR * nonzero >= m {
            for i in 0..m {
                out[i * k + c] = dty[i * k + c] - dot(&gram[i * m..(i + 1) * m], column);
            }
            continue;
        }
        // lanes[l·m + i]: partial sum l of row i; lanes[LANES·m + i]: its tail.
        lanes.fill(0.0);
        for (j, &zj) in column.iter().enumerate() {
            if zj == 0.0 {
                continue;
            }
            let lane = if j < in_lanes { j % LANES } else { LANES };
            let acc = &mut lanes[lane * m..(lane + 1) * m];
            for (a, &g) in acc.iter_mut().zip(&gram[j * m..(j + 1) * m]) {
                *a += g * zj;
            }
        }
        for i in 0..m {
            let l = |lane: usize| lanes[lane * m + i];
            let sum = ((l(0) + l(4)) + (l(1) + l(5))) + ((l(2) + l(6)) + (l(3) + l(7))) + l(LANES);
            out[i * k + c] = dty[i * k + c] - sum;
        }
    }
}

/// Runs FISTA from `x` (row-major `m x k`) until the sub-problem's relative
/// gap is at most `tol` (checked every few iterations, at least one check),
/// `max_iter` iterations are spent, or `deadline` passes (checked with the gap).
#[allow(clippy::too_many_arguments)]
pub(crate) fn solve_sub(
    sub: &SubProblem,
    y_cols: &[f64],
    y_half_sq: f64,
    k: usize,
    lambda: f64,
    x: &mut [f64],
    tol: f64,
    max_iter: usize,
    deadline: Option<std::time::Instant>,
) -> SubResult {
    let n = sub.dict.n_channels();
    let m = sub.dict.n_atoms();
    let gradient = if m <= 2 * n {
        let mut gram = vec![0.0; m * m];
        for i in 0..m {
            for j in 0..=i {
                let v = dot(sub.dict.atom(i), sub.dict.atom(j));
                gram[i * m + j] = v;
                gram[j * m + i] = v;
            }
        }
        let mut dty = vec![0.0; m * k];
        sub.dict.adjoint_into(y_cols, k, &mut dty);
        Gradient::Gram { gram, dty }
    } else {
        Gradient::Direct
    };
    // The Gram matrix and DᵀY read every atom of the sub-problem once
    // (the m² products run from cache); the Gram iterations read none.
    let mut atom_reads = 0;
    let step = match &gradient {
        Gradient::Gram { gram, .. } => {
            atom_reads += m;
            1.0 / lipschitz_gram(gram, m)
        }
        Gradient::Direct => {
            let (l, reads) = lipschitz(&sub.dict);
            atom_reads += reads;
            1.0 / l
        }
    };
    let mut cert = Certificate::new(n, m, sub.n_groups(), k);
    let mut dx = vec![0.0; n * k];
    let direct = matches!(gradient, Gradient::Direct);
    if direct {
        atom_reads += sub.dict.apply_into(x, k, &mut dx);
    }
    let mut z = x.to_vec();
    let mut dz = dx.clone();
    let mut x_new = vec![0.0; m * k];
    let mut dx_new = vec![0.0; n * k];
    let mut resid = vec![0.0; n * k];
    let mut grad = vec![0.0; m * k];
    let mut columns = vec![0.0; m * k];
    let mut lanes = vec![0.0; (LANES + 1) * m];
    let mut t = 1.0f64;
    let mut iterations = 0;
    while iterations < max_iter {
        iterations += 1;
        match &gradient {
            Gradient::Gram { gram, dty } => {
                gram_residual_gradient(gram, dty, &z, m, k, &mut columns, &mut lanes, &mut grad)
            }
            Gradient::Direct => {
                for ((r, &yv), &d) in resid.iter_mut().zip(y_cols).zip(&dz) {
                    *r = yv - d;
                }
                sub.dict.adjoint_into(&resid, k, &mut grad);
                atom_reads += m;
            }
        }
        for ((xn, &zv), &gv) in x_new.iter_mut().zip(&z).zip(&grad) {
            *xn = zv + step * gv;
        }
        block_soft_threshold(sub, k, lambda * step, &mut x_new);
        if direct {
            atom_reads += sub.dict.apply_into(&x_new, k, &mut dx_new);
        }
        // ⟨z − x⁺, x⁺ − x⟩ > 0 means the last momentum step went uphill.
        let uphill: f64 = z
            .iter()
            .zip(&x_new)
            .zip(x.iter())
            .map(|((&zv, &xn), &xo)| (zv - xn) * (xn - xo))
            .sum();
        if uphill > 0.0 {
            t = 1.0;
            z.copy_from_slice(&x_new);
            dz.copy_from_slice(&dx_new);
        } else {
            let t_next = 0.5 * (1.0 + (1.0 + 4.0 * t * t).sqrt());
            let beta = (t - 1.0) / t_next;
            for ((zv, &xn), &xo) in z.iter_mut().zip(&x_new).zip(x.iter()) {
                *zv = xn + beta * (xn - xo);
            }
            if direct {
                // D z follows by linearity from D x⁺ and D x, without another product.
                for ((dzv, &dn), &dold) in dz.iter_mut().zip(&dx_new).zip(&dx) {
                    *dzv = dn + beta * (dn - dold);
                }
            }
            t = t_next;
        }
        x.copy_from_slice(&x_new);
        std::mem::swap(&mut dx, &mut dx_new);
        if iterations % CHECK_EVERY == 0 || iterations == max_iter {
            atom_reads += m + x
                .chunks_exact(k)
                .filter(|r| r.iter().any(|&v| v != 0.0))
                .count();
            cert.compute(
                &sub.dict,
                sub.n_groups(),
                |g| sub.group(g),
                y_cols,
                y_half_sq,
                k,
                lambda,
                x,
            );
            if cert.relative_gap <= tol || deadline.is_some_and(|d| std::time::Instant::now() >= d)
            {
                break;
            }
        }
    }
    SubResult {
        iterations,
        atom_reads,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::numeric::SplitMix64;

    // The sparse route of the Gram gradient leaves out exact zeros only and
    // keeps `dot`'s partial sums and their order, so it must equal the dense
    // formula b − G z, entry by entry, bit for bit (floating-point identity,
    // common practice, no source), for iterates of every sparsity, with
    // negative zeros, and for a size with a tail after the lanes.
    #[test]
    fn sparse_gram_gradient_equals_the_dense_one_bit_for_bit() {
        let (m, k) = (21, 2);
        let mut rng = SplitMix64::new(7, 0);
        let atoms: Vec<Vec<f64>> = (0..m)
            .map(|_| (0..9).map(|_| rng.normal()).collect())
            .collect();
        let mut gram = vec![0.0; m * m];
        for i in 0..m {
            for j in 0..=i {
                let v = dot(&atoms[i], &atoms[j]);
                gram[i * m + j] = v;
                gram[j * m + i] = v;
            }
        }
        let dty: Vec<f64> = (0..m * k).map(|_| rng.normal()).collect();
        for nonzero in [0, 1, 3, 6, 21] {
            let mut z = vec![0.0; m * k];
            for (i, v) in z.iter_mut().enumerate() {
                let (row, c) = (i / k, i % k);
                if (row * 5 + c * 3) % m < nonzero {
                    *v = rng.normal();
                } else if row % 4 == 0 {
                    *v = -0.0;
                }
            }
            let mut columns = vec![0.0; m * k];
            let mut lanes = vec![0.0; (LANES + 1) * m];
            let mut out = vec![0.0; m * k];
            gram_residual_gradient(&gram, &dty, &z, m, k, &mut columns, &mut lanes, &mut out);
            for i in 0..m {
                for c in 0..k {
                    let column: Vec<f64> = (0..m).map(|j| z[j * k + c]).collect();
                    let dense = dty[i * k + c] - dot(&gram[i * m..(i + 1) * m], &column);
                    assert_eq!(
                        out[i * k + c].to_bits(),
                        dense.to_bits(),
                        "{nonzero} {i} {c}"
                    );
                }
            }
        }
    }
}
