//! Checks of activation patterns, average referencing and whitening against
//! Haufe et al. 2014 (NeuroImage 87:96) and linear-algebra identities.

use patchwise::patterns::{activation_patterns, average_reference, PatternsError, Whitener};

/// xorshift64* (Vigna 2016, ACM TOMS 42:30, multiplier from memory), seeded: test data only.
struct Rng(u64);

impl Rng {
    fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let x = self.0.wrapping_mul(0x2545_F491_4F6C_DD1D);
        (x >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
    }
    fn matrix(&mut self, rows: usize, cols: usize) -> Vec<f64> {
        (0..rows * cols).map(|_| self.uniform()).collect()
    }
}

/// Row-major product of `a` (n × m) and `b` (m × p).
fn matmul(a: &[f64], b: &[f64], n: usize, m: usize, p: usize) -> Vec<f64> {
    let mut c = vec![0.0; n * p];
    for i in 0..n {
        for l in 0..m {
            for j in 0..p {
                c[i * p + j] += a[i * m + l] * b[l * p + j];
            }
        }
    }
    c
}

fn transpose(a: &[f64], n: usize, m: usize) -> Vec<f64> {
    let mut t = vec![0.0; n * m];
    for i in 0..n {
        for j in 0..m {
            t[j * n + i] = a[i * m + j];
        }
    }
    t
}

/// Σ = M diag(var) Mᵀ for a mixing matrix M (n × s).
fn mixed_covariance(mixing: &[f64], var: &[f64], n: usize) -> Vec<f64> {
    let s = var.len();
    let mut scaled = mixing.to_vec();
    for i in 0..n {
        for j in 0..s {
            scaled[i * s + j] *= var[j];
        }
    }
    matmul(&scaled, &transpose(mixing, n, s), n, s, n)
}

fn max_abs_diff(a: &[f64], b: &[f64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(x, y)| (x - y).abs())
        .fold(0.0, f64::max)
}

/// Solve the square system M X = B by Gauss–Jordan with partial pivoting (test helper,
/// independent of the library's eigen-based solve).
fn solve(mut m: Vec<f64>, mut b: Vec<f64>, n: usize, p: usize) -> Vec<f64> {
    for col in 0..n {
        let piv = (col..n)
            .max_by(|&i, &j| m[i * n + col].abs().total_cmp(&m[j * n + col].abs()))
            .unwrap();
        for j in 0..n {
            m.swap(col * n + j, piv * n + j);
        }
        for j in 0..p {
            b.swap(col * p + j, piv * p + j);
        }
        for i in 0..n {
            if i != col {
                let f = m[i * n + col] / m[col * n + col];
                for j in 0..n {
                    m[i * n + j] -= f * m[col * n + j];
                }
                for j in 0..p {
                    b[i * p + j] -= f * b[col * p + j];
                }
            }
        }
    }
    for i in 0..n {
        for j in 0..p {
            b[i * p + j] /= m[i * n + i];
        }
    }
    b
}

#[test]
fn matches_haufe_2014_two_channel_example() {
    // Haufe et al. 2014, the two-channel example (references.md, Patterns): x1 = s + d, x2 = d,
    // s and d independent. The filter w = (1, −1) extracts s exactly; its pattern is
    // Σ w / (wᵀ Σ w) = (1, 0). Variances 2 and 3 chosen freely. Tolerance 1e-12.
    let (vs, vd) = (2.0, 3.0);
    let cov = [vs + vd, vd, vd, vd];
    let (a, info) = activation_patterns(&[1.0, -1.0], &cov, 2, 1).unwrap();
    assert!((a[0] - 1.0).abs() < 1e-12 && a[1].abs() < 1e-12, "{a:?}");
    assert!((info.source_covariance_condition - 1.0).abs() < 1e-12);
}

#[test]
fn filters_times_patterns_is_identity() {
    // Wᵀ A = Wᵀ Σ W (Wᵀ Σ W)⁻¹ = I (Haufe et al. 2014, from the definition). Random
    // 12-channel covariance (M Mᵀ + 0.1 I) and 3 random filters. Tolerance 1e-10.
    let (n, k) = (12, 3);
    let mut rng = Rng(7);
    let m = rng.matrix(n, n);
    let mut cov = matmul(&m, &transpose(&m, n, n), n, n, n);
    for i in 0..n {
        cov[i * n + i] += 0.1;
    }
    let w = rng.matrix(n, k);
    let (a, _) = activation_patterns(&w, &cov, n, k).unwrap();
    let wt_a = matmul(&transpose(&w, n, k), &a, k, n, k);
    let eye: Vec<f64> = (0..k * k)
        .map(|i| if i % (k + 1) == 0 { 1.0 } else { 0.0 })
        .collect();
    assert!(max_abs_diff(&wt_a, &eye) < 1e-10, "{wt_a:?}");
    // Same as an independent solve A = (Σ W) (Wᵀ Σ W)⁻¹ by Gauss–Jordan (tolerance 1e-10).
    let sw = matmul(&cov, &w, n, n, k);
    let s_hat = matmul(&transpose(&w, n, k), &sw, k, n, k);
    let expected = transpose(&solve(s_hat, transpose(&sw, n, k), k, n), k, n);
    assert!(max_abs_diff(&a, &expected) < 1e-10);
}

#[test]
fn pattern_of_the_unmixing_filter_is_the_mixing_column() {
    // Noise-free generative model x = M s, sources independent with variances d_j.
    // The filter W = M^{-T} extracts the sources, and its patterns are the columns of M:
    // Σ W = M D, Wᵀ Σ W = D, so A = M (Haufe et al. 2014: for a square invertible model
    // the patterns are the mixing matrix; as with ICA, references.md). Tolerance 1e-9 relative to
    // max |M| (the inversion of a random 8 × 8 matrix costs a few digits).
    let n = 8;
    let mut rng = Rng(42);
    let mixing = rng.matrix(n, n);
    let var: Vec<f64> = (0..n).map(|j| 0.5 + j as f64).collect();
    let cov = mixed_covariance(&mixing, &var, n);
    let eye: Vec<f64> = (0..n * n)
        .map(|i| if i % (n + 1) == 0 { 1.0 } else { 0.0 })
        .collect();
    let unmixing_t = solve(transpose(&mixing, n, n), eye, n, n); // M^{-T}
                                                                 // One filter alone (k = 1): the other sources act as independent distractors.
    let w0: Vec<f64> = (0..n).map(|i| unmixing_t[i * n]).collect();
    let (a0, _) = activation_patterns(&w0, &cov, n, 1).unwrap();
    let m0: Vec<f64> = (0..n).map(|i| mixing[i * n]).collect();
    assert!(max_abs_diff(&a0, &m0) < 1e-9, "{a0:?} vs {m0:?}");
    // All filters together (k = n).
    let (a, _) = activation_patterns(&unmixing_t, &cov, n, n).unwrap();
    assert!(max_abs_diff(&a, &mixing) < 1e-9);
}

#[test]
fn invalid_inputs_name_the_matrix() {
    let cov = [2.0, 0.5, 0.5, 1.0];
    match activation_patterns(&[1.0, 0.0, 0.0], &cov, 2, 1) {
        Err(PatternsError::Shape {
            matrix: "weights",
            expected: 2,
            found: 3,
            ..
        }) => {}
        other => panic!("{other:?}"),
    }
    match activation_patterns(&[1.0, 0.0], &cov[..3], 2, 1) {
        Err(PatternsError::Shape {
            matrix: "covariance",
            expected: 4,
            found: 3,
            ..
        }) => {}
        other => panic!("{other:?}"),
    }
    match activation_patterns(&[1.0, f64::NAN], &cov, 2, 1) {
        Err(PatternsError::NotFinite {
            matrix: "weights",
            row: 1,
            col: 0,
            ..
        }) => {}
        other => panic!("{other:?}"),
    }
    match activation_patterns(&[1.0, 0.0], &[2.0, 0.5, 0.4, 1.0], 2, 1) {
        Err(PatternsError::NotSymmetric {
            matrix: "covariance",
            row: 0,
            col: 1,
            ..
        }) => {}
        other => panic!("{other:?}"),
    }
    // Eigenvalues 3 and −1: clearly indefinite.
    match activation_patterns(&[1.0, 0.0], &[1.0, 2.0, 2.0, 1.0], 2, 1) {
        Err(PatternsError::NotPositiveSemidefinite {
            matrix: "covariance",
            min_eigenvalue,
            ..
        }) => {
            assert!((min_eigenvalue + 1.0).abs() < 1e-12)
        }
        other => panic!("{other:?}"),
    }
    // A filter in the null space of Σ (rank-1 Σ = (1,1)(1,1)ᵀ, w = (1, −1)): Wᵀ Σ W = 0.
    match activation_patterns(&[1.0, -1.0], &[1.0, 1.0, 1.0, 1.0], 2, 1) {
        Err(PatternsError::Singular {
            matrix: "Wᵀ Σ W",
        ..
        }) => {}
        other => panic!("{other:?}"),
    }
    // Two identical filters: Wᵀ Σ W singular.
    match activation_patterns(&[1.0, 1.0, 0.0, 0.0], &cov, 2, 2) {
        Err(PatternsError::Singular { .. }) => {}
        other => panic!("{other:?}"),
    }
    assert!(matches!(
        activation_patterns(&[], &[], 0, 1),
        Err(PatternsError::EmptyDimension { .. })
    ));
    // Rounding-level asymmetry and a rank-deficient PSD covariance are accepted.
    let eps = 1e-14;
    assert!(activation_patterns(&[1.0, 0.0], &[1.0, 1.0 + eps, 1.0, 1.0], 2, 1).is_ok());
}

#[test]
fn average_reference_removes_the_channel_mean() {
    // Common average reference: each column minus its mean over channels (common
    // practice, no source); the result sums to zero per column. Tolerance 1e-15.
    let v = [1.0, 10.0, 2.0, 20.0, 6.0, 60.0];
    let r = average_reference(&v, 3, 2).unwrap();
    assert_eq!(r.len(), 6);
    let expected = [-2.0, -20.0, -1.0, -10.0, 3.0, 30.0];
    assert!(max_abs_diff(&r, &expected) < 1e-13);
    assert!(matches!(
        average_reference(&v, 4, 2),
        Err(PatternsError::Shape { .. })
    ));
}

#[test]
fn whitening_makes_the_noise_covariance_the_identity() {
    // W_n C W_n = I for W_n = C^{-1/2} (definition of whitening; symmetric root). Random
    // 10-channel full-rank C; tolerance 1e-10.
    let n = 10;
    let mut rng = Rng(3);
    let m = rng.matrix(n, n);
    let mut cov = matmul(&m, &transpose(&m, n, n), n, n, n);
    for i in 0..n {
        cov[i * n + i] += 0.05;
    }
    let w = Whitener::new(&cov, n).unwrap();
    assert_eq!(w.rank(), n);
    let wm = w.matrix();
    assert!(
        max_abs_diff(wm, &transpose(wm, n, n)) < 1e-12,
        "W_n symmetric"
    );
    let whitened = matmul(&matmul(wm, &cov, n, n, n), wm, n, n, n);
    let eye: Vec<f64> = (0..n * n)
        .map(|i| if i % (n + 1) == 0 { 1.0 } else { 0.0 })
        .collect();
    assert!(max_abs_diff(&whitened, &eye) < 1e-10);
    // apply() is W_n X, for patterns and a lead-field-like matrix alike.
    let x = rng.matrix(n, 4);
    assert!(max_abs_diff(&w.apply(&x, 4).unwrap(), &matmul(wm, &x, n, n, 4)) < 1e-13);
    assert!(matches!(
        w.apply(&x, 3),
        Err(PatternsError::Shape {
            matrix: "matrix to whiten",
            ..
        })
    ));
}

#[test]
fn whitening_an_average_referenced_covariance_drops_the_null_direction() {
    // An average-referenced C = H S H (H = I − 11ᵀ/n) has the constant vector as an exact
    // null direction. The whitener discards it (eigenvalue floor), so W_n C W_n is the
    // projector H: identity on the zero-mean subspace (tolerance 1e-9).
    let n = 6;
    let mut rng = Rng(11);
    let m = rng.matrix(n, n);
    let s = matmul(&m, &transpose(&m, n, n), n, n, n);
    let h: Vec<f64> = (0..n * n)
        .map(|i| if i % (n + 1) == 0 { 1.0 } else { 0.0 } - 1.0 / n as f64)
        .collect();
    let cov = matmul(&matmul(&h, &s, n, n, n), &h, n, n, n);
    let cov = {
        let t = transpose(&cov, n, n);
        cov.iter()
            .zip(&t)
            .map(|(a, b)| 0.5 * (a + b))
            .collect::<Vec<_>>()
    };
    let w = Whitener::new(&cov, n).unwrap();
    assert_eq!(w.rank(), n - 1);
    let whitened = matmul(&matmul(w.matrix(), &cov, n, n, n), w.matrix(), n, n, n);
    assert!(max_abs_diff(&whitened, &h) < 1e-9);
    assert!(matches!(
        Whitener::with_floor(&cov, n, 1.5),
        Err(PatternsError::InvalidFloor { .. })
    ));
    assert!(matches!(
        Whitener::new(&[1.0, 2.0, 2.0, 1.0], 2),
        Err(PatternsError::NotPositiveSemidefinite {
            matrix: "noise covariance",
            ..
        })
    ));
}
