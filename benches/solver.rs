//! Benchmarks of the group-LASSO solver on a coherent 64 x 60 000 patch-like dictionary.
//!
//! The dictionary is a documented formula, rebuilt identically in NumPy by
//! benches/reference/solver_peers.py:
//! - channel c (0..64) on the unit sphere by a Fibonacci spiral:
//!   z = 1 − 1.2 (c + ½)/64, ρ = √(1 − z²), φ = c · π(3 − √5), e_c = (ρ cos φ, ρ sin φ, z);
//! - seed s (0..20 000) on the sphere of radius 0.85 by the same spiral with
//!   z = 1 − 1.3 (s + ½)/20 000;
//! - atom j = 3s + w (w = 0, 1, 2): d_c = exp(−‖e_c − p_s‖² / (2σ_w²)) with
//!   σ = (0.15, 0.25, 0.40), minus its channel mean, scaled to unit norm; one atom per group;
//! - pattern column q (0..k): Σ_t a_t · atom((7919 (3q + t) + 12345) mod 60 000) with
//!   a = (1, −0.7, 0.5), plus 0.02 · sin(1.3 c + 0.7 q + 1) on channel c.

use divan::Bencher;
use patchwise::solver::{
    fit, fit_warm, fit_warm_block, path, BlockProblem, DenseDictionary, Groups, Lambda,
    LinearOperator, NoObserver, Params, PathSpec,
};
use rayon::prelude::*;

const N_CH: usize = 64;
const N_SEEDS: usize = 20_000;
const SIGMAS: [f64; 3] = [0.15, 0.25, 0.40];

fn spiral(i: usize, n: usize, span: f64, radius: f64) -> [f64; 3] {
    let golden = std::f64::consts::PI * (3.0 - 5f64.sqrt());
    let z = 1.0 - span * (i as f64 + 0.5) / n as f64;
    let rho = (1.0 - z * z).max(0.0).sqrt();
    let phi = i as f64 * golden;
    [
        radius * rho * phi.cos(),
        radius * rho * phi.sin(),
        radius * z,
    ]
}

fn dictionary() -> DenseDictionary {
    let electrodes: Vec<[f64; 3]> = (0..N_CH).map(|c| spiral(c, N_CH, 1.2, 1.0)).collect();
    let n_atoms = 3 * N_SEEDS;
    let mut atoms = Vec::with_capacity(N_CH * n_atoms);
    for s in 0..N_SEEDS {
        let p = spiral(s, N_SEEDS, 1.3, 0.85);
        for sigma in SIGMAS {
            let mut a: Vec<f64> = electrodes
                .iter()
                .map(|e| {
                    let d2 = (e[0] - p[0]).powi(2) + (e[1] - p[1]).powi(2) + (e[2] - p[2]).powi(2);
                    (-d2 / (2.0 * sigma * sigma)).exp()
                })
                .collect();
            let mean = a.iter().sum::<f64>() / N_CH as f64;
            a.iter_mut().for_each(|v| *v -= mean);
            let norm = a.iter().map(|v| v * v).sum::<f64>().sqrt();
            atoms.extend(a.iter().map(|v| v / norm));
        }
    }
    DenseDictionary::from_column_major(N_CH, n_atoms, atoms).unwrap()
}

/// Row-major n_ch x k patterns.
fn patterns(dict: &DenseDictionary, k: usize) -> Vec<f64> {
    let mut y = vec![0.0; N_CH * k];
    for q in 0..k {
        for (t, a) in [1.0, -0.7, 0.5].into_iter().enumerate() {
            let j = (7919 * (3 * q + t) + 12345) % dict.n_atoms();
            for c in 0..N_CH {
                y[c * k + q] += a * dict.atom(j)[c];
            }
        }
        for c in 0..N_CH {
            y[c * k + q] += 0.02 * (1.3 * c as f64 + 0.7 * q as f64 + 1.0).sin();
        }
    }
    y
}

fn main() {
    divan::main();
}

/// A path of 20 λ values log-spaced from λ_max to 0.05 λ_max, relative gap 1e-6.
#[divan::bench(args = [1, 4], sample_count = 3, sample_size = 1)]
fn path_20_lambdas_to_0_05(bencher: Bencher, k: usize) {
    let dict = dictionary();
    let groups = Groups::singletons(dict.n_atoms()).unwrap();
    let y = patterns(&dict, k);
    let params = Params {
        tol: 1e-6,
        ..Params::default()
    }
    .validate()
    .unwrap();
    let spec = PathSpec::LogSpaced {
        n_lambdas: 20,
        min_ratio: 0.05,
    };
    let points = path(&dict, &groups, &y, k, &spec, &params, &mut NoObserver).unwrap();
    let last = &points[points.len() - 1];
    eprintln!(
        "k={k}: last λ active groups {}, explained variance {:.4}, FISTA iterations {} (all λ: {})",
        last.info.n_active_groups,
        last.explained_variance_total,
        last.info.iterations,
        points.iter().map(|p| p.info.iterations).sum::<usize>()
    );
    bencher.bench_local(|| path(&dict, &groups, &y, k, &spec, &params, &mut NoObserver).unwrap());
}

/// One Dᵀ R over all 60 000 atoms (reads 64 · 60 000 · 8 B = 30.7 MB).
#[divan::bench(args = [1, 4], sample_count = 50)]
fn adjoint_apply_full(bencher: Bencher, k: usize) {
    let dict = dictionary();
    let r: Vec<f64> = (0..N_CH * k).map(|i| (i as f64 * 0.37).sin()).collect();
    let mut out = vec![0.0; dict.n_atoms() * k];
    bencher.bench_local(|| {
        dict.adjoint_apply(divan::black_box(&r), k, &mut out)
            .unwrap()
    });
}

/// STREAM-style triad a = b + s·c on 3 arrays of 4 Mi doubles (32 MiB each;
/// 24 B moved per element), in fixed chunks over the rayon pool; the bandwidth
/// reference for Dᵀ R.
#[divan::bench(sample_count = 50)]
fn stream_triad_4mi(bencher: Bencher) {
    let n = 4 << 20;
    let b = vec![1.0f64; n];
    let c = vec![2.0f64; n];
    let mut a = vec![0.0f64; n];
    bencher.bench_local(|| {
        a.par_chunks_mut(1 << 16)
            .zip(b.par_chunks(1 << 16))
            .zip(c.par_chunks(1 << 16))
            .for_each(|((a, b), c)| {
                for ((ai, bi), ci) in a.iter_mut().zip(b).zip(c) {
                    *ai = bi + 3.0 * ci;
                }
            });
        divan::black_box(&a);
    });
}

/// Resamples of the bootstrap's shape: the 4 pattern columns fitted alone at
/// 0.1 λ_max, then 25 resamples of each (the fit's reconstruction plus
/// white noise of 5 % of its largest value, seeded), warm-started from the
/// fit at the same λ, relative gap 1e-4 (the resampling stage's): 100
/// problems, as one forward model's share of 100 resamples × 4 components.
struct Resamples {
    dict: DenseDictionary,
    groups: Groups,
    ys: Vec<Vec<f64>>,
    warm: Vec<Vec<f64>>,
    lambdas: Vec<f64>,
}

fn resamples() -> Resamples {
    let dict = dictionary();
    let groups = Groups::singletons(dict.n_atoms()).unwrap();
    let y4 = patterns(&dict, 4);
    let p = Params {
        lambda: Lambda::Ratio(0.1),
        tol: 1e-6,
        ..Params::default()
    }
    .validate()
    .unwrap();
    let mut state = 0x2545_f491_4f6c_dd1du64;
    let mut uniform = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5
    };
    let (mut ys, mut warm, mut lambdas) = (Vec::new(), Vec::new(), Vec::new());
    let mut base = Vec::new();
    for q in 0..4 {
        let y: Vec<f64> = (0..N_CH).map(|c| y4[c * 4 + q]).collect();
        let (f, info) = fit(&dict, &groups, &y, 1, &p, &mut NoObserver).unwrap();
        let y_hat: Vec<f64> = y.iter().zip(&f.residual).map(|(a, r)| a - r).collect();
        base.push((y_hat, f.coefficients, info.lambda));
    }
    for _ in 0..25 {
        for (y_hat, x, lambda) in &base {
            let size = y_hat.iter().map(|v| v.abs()).fold(0.0, f64::max);
            ys.push(y_hat.iter().map(|v| v + 0.1 * size * uniform()).collect());
            warm.push(x.clone());
            lambdas.push(*lambda);
        }
    }
    Resamples {
        dict,
        groups,
        ys,
        warm,
        lambdas,
    }
}

fn resample_params() -> patchwise::solver::ValidParams {
    Params {
        tol: 1e-4,
        ..Params::default()
    }
    .validate()
    .unwrap()
}

/// The 100 resampled fits one by one (`fit_warm`, in parallel over the
/// resamples as the resampling stage did before blocks).
#[divan::bench(sample_count = 5, sample_size = 1)]
fn resample_100_one_by_one(bencher: Bencher) {
    let r = resamples();
    let params = resample_params();
    let run = || {
        (0..r.ys.len())
            .into_par_iter()
            .map(|i| {
                let p = params.with_lambda(Lambda::Absolute(r.lambdas[i])).unwrap();
                fit_warm(
                    &r.dict,
                    &r.groups,
                    &r.ys[i],
                    1,
                    &r.warm[i],
                    &p,
                    &mut NoObserver,
                )
                .unwrap()
                .1
                .dictionary_passes
            })
            .collect::<Vec<f64>>()
    };
    let passes = run();
    eprintln!(
        "one by one: {:.2} passes per fit, {:.0} in all",
        passes.iter().sum::<f64>() / passes.len() as f64,
        passes.iter().sum::<f64>()
    );
    bencher.bench_local(run);
}

/// The same 100 fits in one lockstep block (`fit_warm_block`).
#[divan::bench(sample_count = 5, sample_size = 1)]
fn resample_100_block(bencher: Bencher) {
    let r = resamples();
    let params = resample_params();
    let problems: Vec<BlockProblem<'_>> = (0..r.ys.len())
        .map(|i| BlockProblem {
            y: &r.ys[i],
            k: 1,
            x0: &r.warm[i],
            lambda: Lambda::Absolute(r.lambdas[i]),
        })
        .collect();
    let fits = fit_warm_block(&r.dict, &r.groups, &problems, &params).unwrap();
    eprintln!(
        "block: {} stacked passes for {} fits ({:.2} passes per fit counted alone)",
        fits.stacked_passes,
        fits.fits.len(),
        fits.fits.iter().map(|f| f.1.dictionary_passes).sum::<f64>() / fits.fits.len() as f64
    );
    bencher.bench_local(|| fit_warm_block(&r.dict, &r.groups, &problems, &params).unwrap());
}
