//! Problems solved in lockstep on one dictionary (`fit_warm_block`, the
//! resampling stage's solver) against the same problems fitted one by one.

use crate::support::solver::{random_dictionary, random_targets, Rng};
use patchwise::solver::{
    fit, fit_warm, fit_warm_block, BlockProblem, DenseDictionary, Groups, Lambda, NoObserver,
    Params, SolverError, StopReason, ValidParams,
};

fn params(tol: f64) -> ValidParams {
    Params {
        tol,
        ..Params::default()
    }
    .validate()
    .unwrap()
}

/// A base pattern, its fit, and resamples of it: the base plus Gaussian
/// noise of 5 % of its size, widths 1 and 2 mixed, one at λ_max.
struct Case {
    dict: DenseDictionary,
    groups: Groups,
    ys: Vec<(Vec<f64>, usize)>,
    warm: Vec<Vec<f64>>,
    lambdas: Vec<Lambda>,
}

fn case() -> Case {
    let mut rng = Rng::new(25);
    let (n_ch, n_atoms) = (32, 6000);
    let dict = random_dictionary(&mut rng, n_ch, n_atoms, 0.7);
    let assignment: Vec<i64> = (0..n_atoms as i64).map(|j| (j * 7) % 2500).collect();
    let groups = Groups::new(2500, &assignment).unwrap();
    let mut ys = Vec::new();
    let mut warm = Vec::new();
    let mut lambdas = Vec::new();
    for (i, k) in [1usize, 2, 1, 2, 1, 1, 2, 1].into_iter().enumerate() {
        let base = random_targets(&mut rng, &dict, k, 5, 0.05);
        let p = Params {
            lambda: Lambda::Ratio(0.15),
            tol: 1e-10,
            ..Params::default()
        }
        .validate()
        .unwrap();
        let (f, info) = fit(&dict, &groups, &base, k, &p, &mut NoObserver).unwrap();
        let size = base.iter().map(|v| v.abs()).fold(0.0, f64::max);
        let y: Vec<f64> = base
            .iter()
            .map(|v| v + 0.05 * size * rng.normal())
            .collect();
        ys.push((y, k));
        warm.push(f.coefficients);
        lambdas.push(if i == 3 {
            Lambda::Ratio(1.0)
        } else {
            Lambda::Absolute(info.lambda)
        });
    }
    Case {
        dict,
        groups,
        ys,
        warm,
        lambdas,
    }
}

fn problems(c: &Case) -> Vec<BlockProblem<'_>> {
    c.ys.iter()
        .zip(&c.warm)
        .zip(&c.lambdas)
        .map(|(((y, k), x0), &lambda)| BlockProblem {
            y,
            k: *k,
            x0,
            lambda,
        })
        .collect()
}

/// Lockstep changes only the order of the sums inside the stacked adjoint,
/// so each problem takes the same route and reaches the one-by-one
/// solution: coefficients within 1e-12 of the largest (the thread rule of
/// the project's rules, common practice, no source), both certified at a
/// relative duality gap ≤ 1e-9 (weak duality: Ndiaye, Fercoq, Gramfort &
/// Salmon 2017, JMLR 18(128)); λ at λ_max gives exact zero.
#[test]
fn block_fits_equal_one_by_one_fits() {
    let c = case();
    let p = params(1e-9);
    let block = fit_warm_block(&c.dict, &c.groups, &problems(&c), &p).unwrap();
    assert_eq!(block.fits.len(), c.ys.len());
    let mut single_passes = 0.0;
    for (i, ((y, k), x0)) in c.ys.iter().zip(&c.warm).enumerate() {
        let pi = p.with_lambda(c.lambdas[i]).unwrap();
        let (f, info) = fit_warm(&c.dict, &c.groups, y, *k, x0, &pi, &mut NoObserver).unwrap();
        let (x, binfo) = &block.fits[i];
        let scale = f.coefficients.iter().map(|v| v.abs()).fold(0.0, f64::max);
        let diff = f
            .coefficients
            .iter()
            .zip(x)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        assert!(
            diff <= 1e-12 * scale.max(f64::MIN_POSITIVE),
            "problem {i}: {diff} of {scale}"
        );
        assert!(
            binfo.duality_gap <= 1e-9,
            "problem {i}: gap {}",
            binfo.duality_gap
        );
        assert_eq!(binfo.stop_reason, info.stop_reason, "problem {i}");
        assert!((binfo.lambda - info.lambda).abs() <= 1e-12 * info.lambda);
        single_passes += info.dictionary_passes;
    }
    let (zero, zero_info) = &block.fits[3];
    assert!(zero.iter().all(|&v| v == 0.0));
    assert_eq!(zero_info.stop_reason, StopReason::ZeroSolution);
    // Each stacked pass reads the dictionary once for all live problems.
    assert!(
        (block.stacked_passes as f64) < 0.5 * single_passes,
        "{} stacked passes against {single_passes} one by one",
        block.stacked_passes
    );
}

/// The same numbers bit for bit with one and two threads (fixed chunks of
/// atoms in the stacked product, every problem's own arithmetic sequential).
#[test]
fn block_fits_identical_for_one_and_two_threads() {
    let c = case();
    let p = params(1e-8);
    let run = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| fit_warm_block(&c.dict, &c.groups, &problems(&c), &p).unwrap())
    };
    assert_eq!(run(1), run(2));
}

/// A warm start of the wrong length is a shape error naming the array.
#[test]
fn block_rejects_a_warm_start_of_the_wrong_length() {
    let c = case();
    let mut probs = problems(&c);
    probs[2].x0 = &c.warm[2][..10];
    let err = fit_warm_block(&c.dict, &c.groups, &probs, &params(1e-8)).unwrap_err();
    assert!(
        matches!(err, SolverError::Shape { what, .. } if what.contains("warm start")),
        "{err}"
    );
}
