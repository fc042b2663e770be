//! Shared helpers of the solver tests: a seeded generator and random problems.

use patchwise::numeric::SplitMix64;
use patchwise::solver::DenseDictionary;

/// The library's SplitMix64 (Steele, Lea & Flood 2014, OOPSLA), stream 0
/// of `seed`: the same numbers the tests' own copy used to draw.
pub struct Rng(SplitMix64);

impl Rng {
    pub fn new(seed: u64) -> Self {
        Self(SplitMix64::new(seed, 0))
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0.next_u64()
    }

    /// Standard normal by Box–Muller.
    pub fn normal(&mut self) -> f64 {
        self.0.normal()
    }

    pub fn normals(&mut self, n: usize) -> Vec<f64> {
        (0..n).map(|_| self.normal()).collect()
    }
}

/// A random dictionary with unit-norm atoms; neighbouring atoms have
/// correlation about `rho` (AR(1) across atoms).
pub fn random_dictionary(rng: &mut Rng, n_ch: usize, n_atoms: usize, rho: f64) -> DenseDictionary {
    let mut cols = vec![0.0; n_ch * n_atoms];
    for j in 0..n_atoms {
        for c in 0..n_ch {
            let fresh = rng.normal();
            cols[j * n_ch + c] = if j == 0 {
                fresh
            } else {
                rho * cols[(j - 1) * n_ch + c] + (1.0 - rho * rho).sqrt() * fresh
            };
        }
    }
    for a in cols.chunks_exact_mut(n_ch) {
        let norm = a.iter().map(|v| v * v).sum::<f64>().sqrt();
        a.iter_mut().for_each(|v| *v /= norm);
    }
    DenseDictionary::from_column_major(n_ch, n_atoms, cols).unwrap()
}

/// Row-major n_ch x k patterns from a few atoms plus noise.
pub fn random_targets(
    rng: &mut Rng,
    dict: &DenseDictionary,
    k: usize,
    n_true: usize,
    noise: f64,
) -> Vec<f64> {
    let n_ch = dict.n_channels();
    let mut y = vec![0.0; n_ch * k];
    for _ in 0..n_true {
        let j = (rng.next_u64() % dict.n_atoms() as u64) as usize;
        for col in 0..k {
            let w = rng.normal();
            for c in 0..n_ch {
                y[c * k + col] += w * dict.atom(j)[c];
            }
        }
    }
    for v in y.iter_mut() {
        *v += noise * rng.normal();
    }
    y
}

/// Dᵀ R for row-major R (n_ch x k), row-major n_atoms x k, computed plainly.
pub fn correlation(dict: &DenseDictionary, r: &[f64], k: usize) -> Vec<f64> {
    let n_ch = dict.n_channels();
    let mut out = vec![0.0; dict.n_atoms() * k];
    for j in 0..dict.n_atoms() {
        for col in 0..k {
            out[j * k + col] = (0..n_ch).map(|c| dict.atom(j)[c] * r[c * k + col]).sum();
        }
    }
    out
}
