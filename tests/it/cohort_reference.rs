//! The cohort statistics against independent computations: the sign-flip
//! test against exact enumeration in NumPy, the bootstrap interval against
//! NumPy's percentile on the same resamples, the smoothing kernel and cosine
//! against great-circle Gaussians on a sphere, Sinkhorn against an exact
//! linear program (SciPy's linprog).

use crate::support;
use patchwise::attribution::rng::SplitMix64;
use patchwise::cohort::{
    bootstrap_draw, bootstrap_mean_interval, cosine, sign_flip_max_test, sinkhorn, SinkhornParams,
    SmoothingKernel,
};
use patchwise::geometry::{GeodesicSolver, Mesh};
use patchwise::io::npy::write_npy_f64;

fn random_values(n: usize, seed: u64, shift: &[f64]) -> Vec<f64> {
    let mut rng = SplitMix64::new(seed, 0);
    let m = shift.len();
    (0..n * m).map(|i| rng.normal() + shift[i % m]).collect()
}

/// Exact enumeration of all 2^n sign vectors in NumPy (Nichols & Holmes
/// 2002, Hum Brain Mapp 15:1: p = share of relabellings whose statistic
/// reaches the observed one; corrected p uses the maximum over regions).
/// Tolerance 1e-12 for the enumerated case (both sides count the same
/// vectors); for random flips, 4 Monte-Carlo standard deviations
/// √(p(1 − p)/B) ≤ 0.02 with B = 10 000.
const SIGN_FLIP_SCRIPT: &str = r#"
import sys, itertools, numpy as np
x = np.load(sys.argv[1]); ours = np.load(sys.argv[2]); tol = float(np.load(sys.argv[3])[0])
n, m = x.shape
def t(v):
    mean = v.mean(axis=-2)
    sd = v.std(axis=-2, ddof=1)
    return np.abs(mean / (sd / np.sqrt(n)))
obs = t(x)
signs = np.array(list(itertools.product([1.0, -1.0], repeat=n)))
flipped = signs[:, :, None] * x[None, :, :]
tf = t(flipped)
reach = tf >= obs[None, :] * (1 - 1e-10)
p_raw = reach.mean(axis=0)
p_cor = (tf.max(axis=1)[:, None] >= obs[None, :] * (1 - 1e-10)).mean(axis=0)
assert np.abs(ours[0] - p_raw).max() <= tol, (ours[0], p_raw)
assert np.abs(ours[1] - p_cor).max() <= tol, (ours[1], p_cor)
assert np.abs(ours[2] - obs).max() <= 1e-9 * obs.max()
"#;

fn check_sign_flip(n: usize, flips: usize, tol: f64, name: &str) {
    let py = support::python::python();
    let dir = support::scratch(name);
    let shift = [0.0, 0.4, 0.9, -0.6];
    let x = random_values(n, 7 + n as u64, &shift);
    let test = sign_flip_max_test(&x, n, shift.len(), flips, 11);
    assert_eq!(test.exact, (1usize << n) <= flips);
    let mut ours = test.p_raw.clone();
    ours.extend(&test.p_corrected);
    ours.extend(test.statistic.iter().map(|t| t.abs()));
    write_npy_f64(&dir.join("x.npy"), &x, &[n, shift.len()]).unwrap();
    write_npy_f64(&dir.join("ours.npy"), &ours, &[3, shift.len()]).unwrap();
    write_npy_f64(&dir.join("tol.npy"), &[tol], &[1]).unwrap();
    support::python::run(
        &py,
        SIGN_FLIP_SCRIPT,
        &[
            &dir.join("x.npy"),
            &dir.join("ours.npy"),
            &dir.join("tol.npy"),
        ],
    );
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn sign_flip_enumeration_matches_numpy_exactly() {
    check_sign_flip(9, 10_000, 1e-12, "cohort_sign_flip_exact");
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn random_sign_flips_agree_with_exact_enumeration() {
    check_sign_flip(15, 10_000, 0.02, "cohort_sign_flip_random");
}

/// NumPy 2.4 `np.percentile` (default "linear" method) of the resampled
/// means, on the very resamples our bootstrap drew (Efron & Tibshirani
/// 1993, An Introduction to the Bootstrap, §13.3, percentile interval).
/// Tolerance 1e-12.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn bootstrap_interval_matches_numpy_percentile() {
    let py = support::python::python();
    let dir = support::scratch("cohort_bootstrap");
    let (n, m, b) = (13, 3, 500);
    let x = random_values(n, 3, &[0.1, 0.5, -0.2]);
    let (mean, low, high) = bootstrap_mean_interval(&x, n, m, b, 0.9, 99);
    let draws: Vec<f64> = (0..b)
        .flat_map(|i| bootstrap_draw(n, 99, i))
        .map(|i| i as f64)
        .collect();
    let ours: Vec<f64> = mean.iter().chain(&low).chain(&high).copied().collect();
    write_npy_f64(&dir.join("x.npy"), &x, &[n, m]).unwrap();
    write_npy_f64(&dir.join("draws.npy"), &draws, &[b, n]).unwrap();
    write_npy_f64(&dir.join("ours.npy"), &ours, &[3, m]).unwrap();
    let script = r#"
import sys, numpy as np
x = np.load(sys.argv[1]); d = np.load(sys.argv[2]).astype(int); ours = np.load(sys.argv[3])
means = x[d].mean(axis=1)
lo, hi = np.percentile(means, [5, 95], axis=0)
assert np.abs(ours[0] - x.mean(axis=0)).max() < 1e-12
assert np.abs(ours[1] - lo).max() < 1e-12, (ours[1], lo)
assert np.abs(ours[2] - hi).max() < 1e-12, (ours[2], hi)
"#;
    support::python::run(
        &py,
        script,
        &[
            &dir.join("x.npy"),
            &dir.join("draws.npy"),
            &dir.join("ours.npy"),
        ],
    );
}

/// The smoothing kernel on an icosphere (level 4, radius 80 mm) against a
/// Gaussian of the great-circle distance d = R atan2(|u × v|, u·v)
/// (references.md), and the cosine of smoothed maps against NumPy.
/// Tolerances: the fast-marching distances err by at most about 0.05 % on
/// such a sphere (tests/it/geometry_geodesic.rs), which moves a weight by less
/// than 2·(d/σ)²·5e-4 ≤ 1 % relative at the 3σ cut, but a vertex that close
/// to the cut may fall on either side of it, and its weight is exp(−4.5) ≈
/// 1.1 % of the row's largest; we allow 1.5 % of the row's largest weight. The cosine of our own smoothed maps matches
/// NumPy's to 1e-12; against great-circle smoothing to 1e-3.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn smoothing_kernel_and_cosine_match_great_circle_gaussians() {
    let py = support::python::python();
    let dir = support::scratch("cohort_kernel");
    let radius = 0.08;
    let mesh = Mesh::icosphere(4, radius);
    let solver = GeodesicSolver::new(&mesh).unwrap();
    let sigma = 0.010;
    let kernel = SmoothingKernel::new(&solver, sigma, 3.0).unwrap();
    let n = mesh.n_vertices();
    let mut rng = SplitMix64::new(5, 0);
    let a: Vec<f64> = (0..n)
        .map(|v| (-(mesh.vertices[v][2] - 0.06).powi(2) / 2e-4).exp() + 0.1 * rng.uniform())
        .collect();
    let b: Vec<f64> = (0..n)
        .map(|v| (-(mesh.vertices[v][2] - 0.05).powi(2) / 2e-4).exp() + 0.1 * rng.uniform())
        .collect();
    let (sa, sb) = (kernel.apply(&a), kernel.apply(&b));
    let ours = [cosine(&sa, &sb)];
    let pos: Vec<f64> = mesh.vertices.iter().flatten().copied().collect();
    let rows: Vec<f64> = (0..n)
        .flat_map(|v| std::iter::repeat_n(v as f64, kernel.row_start[v + 1] - kernel.row_start[v]))
        .collect();
    let cols: Vec<f64> = kernel.columns.iter().map(|&c| c as f64).collect();
    let nnz = cols.len();
    write_npy_f64(&dir.join("pos.npy"), &pos, &[n, 3]).unwrap();
    write_npy_f64(&dir.join("rows.npy"), &rows, &[nnz]).unwrap();
    write_npy_f64(&dir.join("cols.npy"), &cols, &[nnz]).unwrap();
    write_npy_f64(&dir.join("w.npy"), &kernel.weights, &[nnz]).unwrap();
    write_npy_f64(&dir.join("ab.npy"), &[a, b].concat(), &[2, n]).unwrap();
    write_npy_f64(&dir.join("ours.npy"), &ours, &[1]).unwrap();
    let script = r#"
import sys, numpy as np
pos, rows, cols, w, ab, ours = [np.load(p) for p in sys.argv[1:7]]
rows = rows.astype(int); cols = cols.astype(int)
R, sigma = 0.08, 0.010
n = len(pos)
u = pos / np.linalg.norm(pos, axis=1)[:, None]
d = R * np.arctan2(np.linalg.norm(np.cross(u[:, None, :], u[None, :, :]), axis=2), u @ u.T)
g = np.exp(-0.5 * (d / sigma) ** 2) * (d <= 3 * sigma)
g /= g.sum(axis=1)[:, None]
K = np.zeros((n, n)); K[rows, cols] = w
assert (np.abs(K - g).max(axis=1) <= 1.5e-2 * g.max(axis=1)).all(), (np.abs(K - g).max(axis=1) / g.max(axis=1)).max()
a, b = np.abs(ab[0]), np.abs(ab[1])
ka, kb = K @ a, K @ b
c_ours = ka @ kb / (np.linalg.norm(ka) * np.linalg.norm(kb))
assert abs(c_ours - ours[0]) < 1e-12, (c_ours, ours[0])
ga, gb = g @ a, g @ b
c_gc = ga @ gb / (np.linalg.norm(ga) * np.linalg.norm(gb))
assert abs(c_gc - ours[0]) < 1e-3, (c_gc, ours[0])
"#;
    let names = ["pos", "rows", "cols", "w", "ab", "ours"];
    let paths: Vec<_> = names.iter().map(|s| dir.join(format!("{s}.npy"))).collect();
    let refs: Vec<&std::path::Path> = paths.iter().map(|p| p.as_path()).collect();
    support::python::run(&py, script, &refs);
}

/// Sinkhorn with a small ε against the exact transport cost from SciPy's
/// linprog (HiGHS) on a 6 × 7 problem. The entropic plan's cost exceeds the
/// optimum by at most ε·log(n·m) (the entropy of any plan is at most
/// log(n·m); Cuturi 2013, NIPS 26, §3, from memory); with ε = 1e-3 of the
/// largest cost the tolerance is ε·log(42) + 1e-9.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn sinkhorn_approaches_the_exact_transport_cost() {
    let py = support::python::python();
    let dir = support::scratch("cohort_sinkhorn");
    let (n, m) = (6, 7);
    let mut rng = SplitMix64::new(17, 0);
    let a: Vec<f64> = (0..n).map(|_| 0.1 + rng.uniform()).collect();
    let b: Vec<f64> = (0..m).map(|_| 0.1 + rng.uniform()).collect();
    let xa: Vec<f64> = (0..n).map(|_| rng.uniform()).collect();
    let xb: Vec<f64> = (0..m).map(|_| rng.uniform()).collect();
    let cost: Vec<f64> = (0..n * m).map(|i| (xa[i / m] - xb[i % m]).abs()).collect();
    let cmax = cost.iter().fold(0.0f64, |x, &y| x.max(y));
    let eps = 1e-3 * cmax;
    let params = SinkhornParams {
        epsilon: eps,
        max_iterations: 20_000,
        tolerance: 1e-10,
    };
    let r = sinkhorn(&a, &b, &cost, &params).unwrap();
    assert!(r.marginal_error < 1e-8, "{r:?}");
    // A larger ε runs in the kernel domain and must cost at least as much.
    let loose = sinkhorn(
        &a,
        &b,
        &cost,
        &SinkhornParams {
            epsilon: 0.05 * cmax,
            ..params
        },
    )
    .unwrap();
    let tol = eps * ((n * m) as f64).ln() + 1e-9;
    write_npy_f64(&dir.join("a.npy"), &a, &[n]).unwrap();
    write_npy_f64(&dir.join("b.npy"), &b, &[m]).unwrap();
    write_npy_f64(&dir.join("c.npy"), &cost, &[n, m]).unwrap();
    write_npy_f64(&dir.join("ours.npy"), &[r.cost, tol, loose.cost], &[3]).unwrap();
    let script = r#"
import sys, numpy as np
from scipy.optimize import linprog
a, b, C, ours = [np.load(p) for p in sys.argv[1:5]]
a = a / a.sum(); b = b / b.sum()
n, m = C.shape
A = np.zeros((n + m, n * m))
for i in range(n): A[i, i * m:(i + 1) * m] = 1
for j in range(m): A[n + j, j::m] = 1
res = linprog(C.ravel(), A_eq=A, b_eq=np.concatenate([a, b]), bounds=(0, None), method="highs")
assert res.status == 0
opt = res.fun
assert ours[0] >= opt - 1e-9 and ours[0] - opt <= ours[1], (ours[0], opt, ours[1])
assert ours[2] >= ours[0] - 1e-9, (ours[2], ours[0])
"#;
    let paths: Vec<_> = ["a", "b", "c", "ours"]
        .iter()
        .map(|s| dir.join(format!("{s}.npy")))
        .collect();
    let refs: Vec<&std::path::Path> = paths.iter().map(|p| p.as_path()).collect();
    support::python::run(&py, script, &refs);
}
