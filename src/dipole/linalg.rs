//! Small dense kernels of the dipole fit: a thin QR by twice-iterated
//! Gram–Schmidt and a 3 × 3 symmetric solve.

// Index loops read like the textbook formulas of these tiny triangular solves.
#![allow(clippy::needless_range_loop)]

use crate::solver::kernels::{dot, norm_sq};

fn norm(a: &[f64]) -> f64 {
    norm_sq(a).sqrt()
}

/// A thin QR factorisation of an `n × m` matrix (m ≤ 6) held column-major.
#[derive(Debug, Clone)]
pub(crate) struct ThinQr {
    /// Orthonormal columns, column-major `n × m`.
    pub(crate) q: Vec<f64>,
    /// Upper-triangular `m × m`, row-major.
    pub(crate) r: Vec<f64>,
    pub(crate) n: usize,
    pub(crate) m: usize,
}

/// Relative size of a diagonal entry of R below which the columns count as
/// linearly dependent.
const RANK_TOLERANCE: f64 = 1e-10;

/// QR of the column-major `n × m` matrix `a` by classical Gram–Schmidt with
/// one reorthogonalisation ("twice is enough": Giraud, Langou & Rozložník
/// 2005, Comput Math Appl 50:1069, from memory), which keeps Q orthonormal
/// to rounding. `None` when the columns are (numerically) dependent.
pub(crate) fn thin_qr(a: &[f64], n: usize, m: usize) -> Option<ThinQr> {
    let mut q = a.to_vec();
    let mut r = vec![0.0; m * m];
    let scale = (0..m)
        .map(|j| norm(&a[j * n..(j + 1) * n]))
        .fold(0.0, f64::max);
    if scale == 0.0 || !scale.is_finite() {
        return None;
    }
    for j in 0..m {
        for _pass in 0..2 {
            for i in 0..j {
                let (done, rest) = q.split_at_mut(j * n);
                let qi = &done[i * n..(i + 1) * n];
                let qj = &mut rest[..n];
                let c = dot(qi, qj);
                for (x, y) in qj.iter_mut().zip(qi) {
                    *x -= c * y;
                }
                r[i * m + j] += c;
            }
        }
        let col = &mut q[j * n..(j + 1) * n];
        let len = norm(col);
        if len <= RANK_TOLERANCE * scale {
            return None;
        }
        for x in col.iter_mut() {
            *x /= len;
        }
        r[j * m + j] = len;
    }
    Some(ThinQr { q, r, n, m })
}

impl ThinQr {
    /// Qᵀ y.
    pub(crate) fn qt(&self, y: &[f64]) -> Vec<f64> {
        (0..self.m)
            .map(|j| dot(&self.q[j * self.n..(j + 1) * self.n], y))
            .collect()
    }

    /// The least-squares coefficients R⁻¹ Qᵀ y.
    pub(crate) fn solve(&self, y: &[f64]) -> Vec<f64> {
        let mut x = self.qt(y);
        let m = self.m;
        for j in (0..m).rev() {
            let mut s = x[j];
            for l in j + 1..m {
                s -= self.r[j * m + l] * x[l];
            }
            x[j] = s / self.r[j * m + j];
        }
        x
    }

    /// (I − Q Qᵀ) v: the part of `v` outside the column space.
    pub(crate) fn project_out(&self, v: &[f64]) -> Vec<f64> {
        let c = self.qt(v);
        let mut out = v.to_vec();
        for (j, cj) in c.iter().enumerate() {
            for (o, qv) in out.iter_mut().zip(&self.q[j * self.n..(j + 1) * self.n]) {
                *o -= cj * qv;
            }
        }
        out
    }
}

/// Solves the symmetric positive definite 3 × 3 system `a x = b` by
/// Cholesky; `None` when `a` is not positive definite.
pub(crate) fn solve_spd3(a: &[[f64; 3]; 3], b: [f64; 3]) -> Option<[f64; 3]> {
    let mut l = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..=i {
            let mut s = a[i][j];
            for k in 0..j {
                s -= l[i][k] * l[j][k];
            }
            if i == j {
                if !(s > 0.0 && s.is_finite()) {
                    return None;
                }
                l[i][i] = s.sqrt();
            } else {
                l[i][j] = s / l[j][j];
            }
        }
    }
    let mut y = [0.0; 3];
    for i in 0..3 {
        let mut s = b[i];
        for k in 0..i {
            s -= l[i][k] * y[k];
        }
        y[i] = s / l[i][i];
    }
    let mut x = [0.0; 3];
    for i in (0..3).rev() {
        let mut s = y[i];
        for k in i + 1..3 {
            s -= l[k][i] * x[k];
        }
        x[i] = s / l[i][i];
    }
    Some(x)
}

/// The inverse of a symmetric positive definite 3 × 3 matrix, column by column.
pub(crate) fn inverse_spd3(a: &[[f64; 3]; 3]) -> Option<[[f64; 3]; 3]> {
    let mut inv = [[0.0; 3]; 3];
    for c in 0..3 {
        let mut e = [0.0; 3];
        e[c] = 1.0;
        let x = solve_spd3(a, e)?;
        for r in 0..3 {
            inv[r][c] = x[r];
        }
    }
    // Symmetrise against rounding.
    for r in 0..3 {
        for c in r + 1..3 {
            let m = 0.5 * (inv[r][c] + inv[c][r]);
            inv[r][c] = m;
            inv[c][r] = m;
        }
    }
    Some(inv)
}
