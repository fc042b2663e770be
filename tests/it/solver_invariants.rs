//! Invariants of the group-LASSO solver: adjoint identity, optimality
//! conditions, closed forms, duality gap, thread independence, errors.

use crate::support::solver::{correlation, random_dictionary, random_targets, Rng};
use patchwise::solver::{
    fit, fit_separately, path, refit, DenseDictionary, Groups, Lambda, LinearOperator, NoObserver,
    Params, PathSpec, Recorder, SolverError, StopReason, ValidParams,
};

fn params(lambda: Lambda, tol: f64) -> ValidParams {
    Params {
        lambda,
        tol,
        ..Params::default()
    }
    .validate()
    .unwrap()
}

/// Groups that are not contiguous: atom j goes to group (j * 7) mod n_groups
/// (n_groups coprime to 7), so members are spread over the dictionary.
fn scattered_groups(n_atoms: usize, n_groups: usize) -> Groups {
    let assignment: Vec<i64> = (0..n_atoms).map(|j| ((j * 7) % n_groups) as i64).collect();
    Groups::new(n_groups, &assignment).unwrap()
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

/// ⟨Dx, r⟩ = ⟨x, Dᵀr⟩ for random x, r (the definition of the adjoint; style.md
/// item 5). Tolerance 1e-12 relative to ‖Dx‖‖r‖, rounding of sums of 40 terms.
#[test]
fn adjoint_identity_on_random_vectors() {
    let mut rng = Rng::new(1);
    let (n_ch, n_atoms, k) = (37, 300, 3);
    let values = rng.normals(n_ch * n_atoms);
    let dict = DenseDictionary::from_row_major(n_ch, n_atoms, &values).unwrap();
    // Row-major input: entry (c, j) at c * n_atoms + j must be atom j, channel c.
    assert_eq!(dict.atom(5)[7], values[7 * n_atoms + 5]);
    let x = rng.normals(n_atoms * k);
    let r = rng.normals(n_ch * k);
    let mut dx = vec![0.0; n_ch * k];
    let mut dtr = vec![0.0; n_atoms * k];
    dict.apply(&x, k, &mut dx).unwrap();
    dict.adjoint_apply(&r, k, &mut dtr).unwrap();
    let lhs = dot(&dx, &r);
    let rhs = dot(&x, &dtr);
    let scale = dot(&dx, &dx).sqrt() * dot(&r, &r).sqrt();
    assert!((lhs - rhs).abs() <= 1e-12 * scale, "{lhs} vs {rhs}");
    // Wrong buffer sizes are errors, not panics.
    assert!(matches!(
        dict.apply(&x[1..], k, &mut dx),
        Err(SolverError::Shape { .. })
    ));
    assert!(matches!(
        dict.adjoint_apply(&r, k, &mut dtr[1..]),
        Err(SolverError::Shape { .. })
    ));
}

/// Optimality (KKT) conditions of the group LASSO (Yuan & Lin 2006, JRSS-B
/// 68:49, eq. 2.1 with the subdifferential of ‖·‖_F): for an active group
/// D_gᵀR = λ X_g/‖X_g‖_F, for an inactive one ‖D_gᵀR‖_F ≤ λ. Groups of 2–3
/// atoms, k = 2, correlated atoms; tolerance 1e-6 · λ after a relative gap of 1e-14.
#[test]
fn kkt_conditions_hold_for_groups_of_two_and_three_atoms() {
    let mut rng = Rng::new(2);
    let (n_ch, n_atoms, n_groups, k) = (30, 100, 40, 2);
    let dict = random_dictionary(&mut rng, n_ch, n_atoms, 0.6);
    let groups = scattered_groups(n_atoms, n_groups);
    assert!((0..n_groups).all(|g| (2..=3).contains(&groups.atoms(g).len())));
    let y = random_targets(&mut rng, &dict, k, 6, 0.05);
    let (result, info) = fit(
        &dict,
        &groups,
        &y,
        k,
        &params(Lambda::Ratio(0.15), 1e-14),
        &mut NoObserver,
    )
    .unwrap();
    assert!(info.n_active_groups >= 2, "too sparse a test: {info:?}");
    let lambda = info.lambda;
    let corr = correlation(&dict, &result.residual, k);
    for g in 0..n_groups {
        let atoms = groups.atoms(g);
        let xg: Vec<f64> = atoms
            .iter()
            .flat_map(|&j| result.coefficients[j * k..(j + 1) * k].to_vec())
            .collect();
        let cg: Vec<f64> = atoms
            .iter()
            .flat_map(|&j| corr[j * k..(j + 1) * k].to_vec())
            .collect();
        let xn = dot(&xg, &xg).sqrt();
        if xn > 0.0 {
            for (c, x) in cg.iter().zip(&xg) {
                assert!(
                    (c - lambda * x / xn).abs() <= 1e-6 * lambda,
                    "group {g}: {c} vs {}",
                    lambda * x / xn
                );
            }
        } else {
            assert!(
                dot(&cg, &cg).sqrt() <= lambda * (1.0 + 1e-6),
                "group {g} violates ‖D_gᵀR‖ ≤ λ"
            );
        }
    }
}

/// λ ≥ λ_max = max_g ‖D_gᵀY‖_F gives X = 0 exactly, with gap 0 (design.md,
/// "The fit"; the zero solution's dual point θ = Y/λ is feasible and optimal).
#[test]
fn lambda_at_or_above_lambda_max_gives_exact_zero() {
    let mut rng = Rng::new(3);
    let dict = random_dictionary(&mut rng, 20, 50, 0.3);
    let groups = scattered_groups(50, 20);
    let y = random_targets(&mut rng, &dict, 3, 4, 0.1);
    let (_, probe) = fit(
        &dict,
        &groups,
        &y,
        3,
        &params(Lambda::Ratio(1.0), 1e-8),
        &mut NoObserver,
    )
    .unwrap();
    for lambda in [Lambda::Ratio(1.0), Lambda::Absolute(probe.lambda_max * 1.5)] {
        let (result, info) = fit(
            &dict,
            &groups,
            &y,
            3,
            &params(lambda, 1e-8),
            &mut NoObserver,
        )
        .unwrap();
        assert!(result.coefficients.iter().all(|&v| v == 0.0));
        assert_eq!(info.duality_gap, 0.0);
        assert_eq!(info.stop_reason, StopReason::ZeroSolution);
        assert_eq!(info.iterations, 0);
    }
    // Just below λ_max the solution is nonzero.
    let (result, _) = fit(
        &dict,
        &groups,
        &y,
        3,
        &params(Lambda::Ratio(0.95), 1e-10),
        &mut NoObserver,
    )
    .unwrap();
    assert!(result.coefficients.iter().any(|&v| v != 0.0));
}

/// With orthonormal atoms the problem separates per group and the solution is
/// block soft-thresholding of Q_gᵀY: X_g = max(0, 1 − λ/‖Q_gᵀY‖_F) Q_gᵀY (the
/// proximal operator of λ‖·‖_F; Combettes & Wajs 2005, Multiscale Model Simul
/// 4:1168). Tolerance 1e-7 relative to max |Q_gᵀY| at a relative gap of 1e-14.
#[test]
fn orthonormal_dictionary_gives_block_soft_threshold() {
    let mut rng = Rng::new(4);
    let (n_ch, n_atoms, k) = (24, 18, 2);
    // Gram–Schmidt on random columns.
    let mut q: Vec<Vec<f64>> = Vec::new();
    while q.len() < n_atoms {
        let mut v = rng.normals(n_ch);
        for u in &q {
            let p = dot(&v, u);
            v.iter_mut().zip(u).for_each(|(a, b)| *a -= p * b);
        }
        let n = dot(&v, &v).sqrt();
        q.push(v.iter().map(|a| a / n).collect());
    }
    let dict = DenseDictionary::from_column_major(n_ch, n_atoms, q.concat()).unwrap();
    let groups = scattered_groups(n_atoms, 6);
    // Strong signal on the atoms of groups 0 and 1, weak noise elsewhere.
    let mut y: Vec<f64> = rng.normals(n_ch * k).iter().map(|v| 0.1 * v).collect();
    for &j in groups.atoms(0).iter().chain(groups.atoms(1)) {
        for c in 0..n_ch {
            for col in 0..k {
                y[c * k + col] += (1.0 + col as f64) * dict.atom(j)[c];
            }
        }
    }
    let (result, info) = fit(
        &dict,
        &groups,
        &y,
        k,
        &params(Lambda::Ratio(0.5), 1e-14),
        &mut NoObserver,
    )
    .unwrap();
    let qty = correlation(&dict, &y, k);
    let scale = qty.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let mut n_active = 0;
    for g in 0..6 {
        let atoms = groups.atoms(g);
        let norm = atoms
            .iter()
            .map(|&j| dot(&qty[j * k..(j + 1) * k], &qty[j * k..(j + 1) * k]))
            .sum::<f64>()
            .sqrt();
        let shrink = (1.0 - info.lambda / norm).max(0.0);
        n_active += usize::from(shrink > 0.0);
        for &j in atoms {
            for c in 0..k {
                let expected = shrink * qty[j * k + c];
                assert!((result.coefficients[j * k + c] - expected).abs() <= 1e-7 * scale);
            }
        }
    }
    assert!(
        n_active > 0 && n_active < 6,
        "test should have active and inactive groups"
    );
}

/// Weak duality: the gap from a feasible dual point is ≥ 0 (Ndiaye et al. 2017,
/// JMLR 18(128), the dual of the group LASSO); allowed rounding −1e-12. It
/// must reach the tolerance, and the primal objective decreases overall
/// (FISTA is a descent method on average: Beck & Teboulle 2009, Thm 4.4 bound).
#[test]
fn duality_gap_is_nonnegative_and_objective_decreases() {
    let mut rng = Rng::new(5);
    let dict = random_dictionary(&mut rng, 40, 400, 0.8);
    let groups = scattered_groups(400, 150);
    let y = random_targets(&mut rng, &dict, 2, 8, 0.05);
    for (screening, working_set) in [(true, true), (false, true), (true, false), (false, false)] {
        let p = Params {
            lambda: Lambda::Ratio(0.1),
            tol: 1e-9,
            screening,
            working_set,
            initial_working_set: 4,
            ..Params::default()
        }
        .validate()
        .unwrap();
        let mut rec = Recorder::default();
        let (_, info) = fit(&dict, &groups, &y, 2, &p, &mut rec).unwrap();
        let gaps = rec.series("gap");
        let primal = rec.series("primal");
        assert!(
            gaps.len() >= 2,
            "expected several outer passes, got {}",
            gaps.len()
        );
        assert!(gaps.iter().all(|&g| g >= -1e-12), "negative gap: {gaps:?}");
        assert!(info.duality_gap <= 1e-9);
        assert_eq!(*gaps.last().unwrap(), info.duality_gap);
        let first = primal[0];
        let last = *primal.last().unwrap();
        assert!(last < first, "objective did not decrease: {primal:?}");
        assert!(primal.iter().all(|&v| v <= first * (1.0 + 1e-12)));
    }
}

/// Screening and working sets change the route, not the answer: the solutions
/// with all four settings agree to 1e-5 relative (each at relative gap 1e-12;
/// common practice, no source).
#[test]
fn screening_and_working_sets_do_not_change_the_solution() {
    let mut rng = Rng::new(6);
    let dict = random_dictionary(&mut rng, 32, 300, 0.5);
    let groups = Groups::singletons(300).unwrap();
    let y = random_targets(&mut rng, &dict, 1, 5, 0.05);
    let mut solutions = Vec::new();
    for (screening, working_set) in [(true, true), (false, false)] {
        let p = Params {
            lambda: Lambda::Ratio(0.2),
            tol: 1e-12,
            screening,
            working_set,
            ..Params::default()
        }
        .validate()
        .unwrap();
        solutions.push(
            fit(&dict, &groups, &y, 1, &p, &mut NoObserver)
                .unwrap()
                .0
                .coefficients,
        );
    }
    let scale = solutions[0].iter().fold(0.0f64, |m, v| m.max(v.abs()));
    for (a, b) in solutions[0].iter().zip(&solutions[1]) {
        assert!((a - b).abs() <= 1e-5 * scale);
    }
}

/// Results do not depend on the number of rayon threads (BRIEF rule: within
/// 1e-12 relative; here bit for bit, since every sum has a fixed order). The
/// dictionary is large enough (32 x 6000 x k) for the parallel Dᵀ R path.
#[test]
fn results_identical_for_one_and_two_threads() {
    let mut rng = Rng::new(7);
    let dict = random_dictionary(&mut rng, 32, 6000, 0.7);
    let groups = scattered_groups(6000, 2500);
    let y = random_targets(&mut rng, &dict, 3, 6, 0.05);
    let p = params(Lambda::Ratio(0.2), 1e-8);
    let run = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| {
            let joint = fit(&dict, &groups, &y, 3, &p, &mut NoObserver).unwrap();
            let separate = fit_separately(&dict, &groups, &y, 3, &p, &mut NoObserver).unwrap();
            let spec = PathSpec::LogSpaced {
                n_lambdas: 4,
                min_ratio: 0.3,
            };
            let points = path(&dict, &groups, &y, 3, &spec, &p, &mut NoObserver).unwrap();
            (joint, separate, points)
        })
    };
    let one = run(1);
    let two = run(2);
    assert_eq!(one.0 .0.coefficients, two.0 .0.coefficients);
    assert_eq!(one.0 .1, two.0 .1);
    assert_eq!(one.1 .0.coefficients, two.1 .0.coefficients);
    assert_eq!(one.2, two.2);
}

/// fit_separately equals k single-column fits (the joint problem with k = 1 is
/// the separate problem; design.md "The fit"). Same code path per column, so
/// equality is exact.
#[test]
fn fit_separately_matches_column_by_column_fits() {
    let mut rng = Rng::new(8);
    let dict = random_dictionary(&mut rng, 20, 80, 0.5);
    let groups = scattered_groups(80, 30);
    let k = 3;
    let y = random_targets(&mut rng, &dict, k, 5, 0.05);
    let p = params(Lambda::Ratio(0.3), 1e-10);
    let (together, infos) = fit_separately(&dict, &groups, &y, k, &p, &mut NoObserver).unwrap();
    assert_eq!(infos.len(), k);
    for c in 0..k {
        let column: Vec<f64> = (0..20).map(|i| y[i * k + c]).collect();
        let (single, _) = fit(&dict, &groups, &column, 1, &p, &mut NoObserver).unwrap();
        for j in 0..80 {
            assert_eq!(together.coefficients[j * k + c], single.coefficients[j]);
        }
    }
}

/// The loss ½‖R(λ)‖² of a penalised least-squares solution is nondecreasing in
/// λ (compare the optimality of x_λ and x_μ for λ < μ and add the two
/// inequalities; from memory), so explained variance grows down the path.
/// Tolerance 1e-7 (solutions at relative gap 1e-10). The first point is λ_max: zero.
#[test]
fn path_is_warm_started_and_explained_variance_grows() {
    let mut rng = Rng::new(9);
    let dict = random_dictionary(&mut rng, 32, 500, 0.8);
    let groups = scattered_groups(500, 200);
    let y = random_targets(&mut rng, &dict, 2, 6, 0.05);
    let p = params(Lambda::Ratio(0.5), 1e-10);
    let spec = PathSpec::LogSpaced {
        n_lambdas: 8,
        min_ratio: 0.05,
    };
    let mut rec = Recorder::default();
    let points = path(&dict, &groups, &y, 2, &spec, &p, &mut rec).unwrap();
    assert_eq!(points.len(), 8);
    assert_eq!(rec.iterations.len(), 8);
    assert!(points[0].coefficients.atoms.is_empty());
    assert!(((points[7].ratio - 0.05) / 0.05).abs() < 1e-12);
    for w in points.windows(2) {
        assert!(w[1].ratio < w[0].ratio);
        assert!(w[1].explained_variance_total >= w[0].explained_variance_total - 1e-7);
        assert!(w[1].info.duality_gap <= 1e-10);
    }
    // The sparse coefficients of a point equal a direct fit at that λ to 1e-5.
    let direct = fit(
        &dict,
        &groups,
        &y,
        2,
        &params(Lambda::Ratio(points[5].ratio), 1e-12),
        &mut NoObserver,
    )
    .unwrap()
    .0;
    let from_path = points[5].coefficients.to_dense();
    let scale = direct
        .coefficients
        .iter()
        .fold(0.0f64, |m, v| m.max(v.abs()));
    for (a, b) in from_path.iter().zip(&direct.coefficients) {
        assert!((a - b).abs() <= 1e-5 * scale);
    }
}

/// The refit is the least-squares solution on the support: with Y = D_S X_S
/// exactly, it returns X_S (normal equations; Gauss), to 1e-9 relative.
/// A support larger than the channel count uses the documented ridge.
#[test]
fn refit_recovers_exact_least_squares_on_the_support() {
    let mut rng = Rng::new(10);
    let (n_ch, n_atoms, k) = (25, 60, 2);
    let dict = random_dictionary(&mut rng, n_ch, n_atoms, 0.4);
    let support = [3usize, 17, 40, 41];
    let mut truth = vec![0.0; n_atoms * k];
    for &j in &support {
        truth[j * k] = rng.normal();
        truth[j * k + 1] = rng.normal();
    }
    let mut y = vec![0.0; n_ch * k];
    for &j in &support {
        for c in 0..n_ch {
            for col in 0..k {
                y[c * k + col] += dict.atom(j)[c] * truth[j * k + col];
            }
        }
    }
    // A penalised solution with the right support but shrunk values.
    let shrunk: Vec<f64> = truth.iter().map(|v| 0.5 * v).collect();
    let result = refit(&dict, &y, k, &shrunk).unwrap();
    assert_eq!(result.support, support);
    assert_eq!(result.ridge, 0.0);
    for (a, b) in result.fit.coefficients.iter().zip(&truth) {
        assert!((a - b).abs() <= 1e-9 * (1.0 + b.abs()));
    }
    assert!(result
        .fit
        .explained_variance
        .iter()
        .all(|&e| (e - 1.0).abs() < 1e-12));
    // More support atoms than channels: rank deficient, solved with the ridge.
    let all_ones = vec![1.0; n_atoms * k];
    let wide = refit(&dict, &y, k, &all_ones).unwrap();
    assert!(wide.ridge > 0.0);
    assert!(wide.fit.coefficients.iter().all(|v| v.is_finite()));
}

/// Bad input gives typed errors that name the problem, never a panic (BRIEF rules).
#[test]
fn bad_input_gives_typed_errors() {
    assert!(matches!(
        Groups::new(3, &[0, 1, 5]),
        Err(SolverError::GroupOutOfRange {
            atom: 2,
            group: 5,
            n_groups: 3
        })
    ));
    assert!(matches!(
        Groups::new(3, &[0, -1, 2]),
        Err(SolverError::GroupOutOfRange { atom: 1, .. })
    ));
    assert!(matches!(
        Groups::new(3, &[0, 2, 2]),
        Err(SolverError::EmptyGroup { group: 1 })
    ));
    assert!(matches!(
        DenseDictionary::from_row_major(2, 3, &[1.0; 5]),
        Err(SolverError::Shape {
            expected: 6,
            got: 5,
            ..
        })
    ));
    assert!(matches!(
        DenseDictionary::from_row_major(2, 2, &[1.0, f64::NAN, 0.0, 1.0]),
        Err(SolverError::NonFinite {
            row: 0,
            column: 1,
            ..
        })
    ));
    for bad in [
        Params {
            tol: 0.0,
            ..Params::default()
        },
        Params {
            tol: f64::NAN,
            ..Params::default()
        },
        Params {
            lambda: Lambda::Ratio(1.5),
            ..Params::default()
        },
        Params {
            lambda: Lambda::Ratio(0.0),
            ..Params::default()
        },
        Params {
            lambda: Lambda::Absolute(-1.0),
            ..Params::default()
        },
        Params {
            lambda: Lambda::Absolute(f64::INFINITY),
            ..Params::default()
        },
        Params {
            max_iter: 0,
            ..Params::default()
        },
    ] {
        assert!(
            matches!(bad.validate(), Err(SolverError::InvalidParameter { .. })),
            "{bad:?}"
        );
    }
    let mut rng = Rng::new(11);
    let dict = random_dictionary(&mut rng, 10, 20, 0.9);
    let groups = Groups::singletons(20).unwrap();
    let p = params(Lambda::Ratio(0.01), 1e-14);
    assert!(matches!(
        fit(&dict, &groups, &[0.0; 9], 1, &p, &mut NoObserver),
        Err(SolverError::Shape { .. })
    ));
    let mut y = rng.normals(10);
    y[4] = f64::INFINITY;
    assert!(matches!(
        fit(&dict, &groups, &y, 1, &p, &mut NoObserver),
        Err(SolverError::NonFinite { row: 4, .. })
    ));
    let wrong_groups = Groups::singletons(19).unwrap();
    assert!(matches!(
        fit(
            &dict,
            &wrong_groups,
            &rng.normals(10),
            1,
            &p,
            &mut NoObserver
        ),
        Err(SolverError::GroupCount { .. })
    ));
    // Too few iterations: an error value carrying the gap reached.
    let short_params = || Params {
        lambda: Lambda::Ratio(0.01),
        tol: 1e-14,
        max_iter: 10,
        ..Params::default()
    };
    let short = short_params().validate().unwrap();
    match fit(&dict, &groups, &rng.normals(10), 1, &short, &mut NoObserver) {
        Err(SolverError::NotConverged { gap, iterations }) => {
            assert!(gap > 1e-14);
            assert!(iterations >= 10);
        }
        other => panic!("expected NotConverged, got {other:?}"),
    }
    // The same budget with stop_on_budget: the iterate comes back with the
    // gap it reached and the reason, and that gap is a true certificate
    // (primal − dual of the returned point, relative to ½‖Y‖²).
    let budget = Params {
        stop_on_budget: true,
        ..short_params()
    }
    .validate()
    .unwrap();
    let y = rng.normals(10);
    let (stopped, info) = fit(&dict, &groups, &y, 1, &budget, &mut NoObserver).unwrap();
    assert_eq!(info.stop_reason, StopReason::IterationBudget);
    assert!(info.stop_reason.on_budget());
    assert!(info.duality_gap > 1e-14 && info.iterations >= 10);
    let half_sq = 0.5 * y.iter().map(|v| v * v).sum::<f64>();
    assert!(((info.primal - info.dual) / half_sq - info.duality_gap).abs() < 1e-12);
    assert_eq!(stopped.coefficients.len(), dict.n_atoms());
    // An invalid time budget is refused by validation.
    assert!(Params {
        max_seconds: Some(f64::NAN),
        ..Params::default()
    }
    .validate()
    .is_err());
    assert!(matches!(
        PathSpec::LogSpaced {
            n_lambdas: 5,
            min_ratio: 1.0
        }
        .ratios(),
        Err(SolverError::InvalidParameter { .. })
    ));
}
