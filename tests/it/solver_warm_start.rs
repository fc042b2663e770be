//! A warm-started fit reaches the same optimum as a cold one: the group
//! LASSO objective is strictly convex in DX, and both runs are certified by
//! the duality gap of Beck & Teboulle's FISTA iterates (the optimum is
//! unique here because the active atoms are linearly independent).

use crate::support::solver::{random_dictionary, random_targets, Rng};
use patchwise::solver::{fit, fit_warm, Groups, Lambda, NoObserver, Params};

#[test]
fn warm_and_cold_starts_agree() {
    let mut rng = Rng::new(11);
    let dict = random_dictionary(&mut rng, 24, 120, 0.5);
    let groups = Groups::singletons(120).unwrap();
    let y = random_targets(&mut rng, &dict, 2, 4, 0.05);
    let params = Params {
        lambda: Lambda::Ratio(0.1),
        tol: 1e-10,
        ..Params::default()
    }
    .validate()
    .unwrap();
    let (cold, cold_info) = fit(&dict, &groups, &y, 2, &params, &mut NoObserver).unwrap();
    // Start from a perturbed copy of the solution and from an arbitrary point.
    let mut x0 = cold.coefficients.clone();
    for v in x0.iter_mut().step_by(7) {
        *v += 0.3;
    }
    let (warm, warm_info) = fit_warm(&dict, &groups, &y, 2, &x0, &params, &mut NoObserver).unwrap();
    assert!(cold_info.duality_gap <= 1e-10 && warm_info.duality_gap <= 1e-10);
    let scale = cold
        .coefficients
        .iter()
        .map(|v| v.abs())
        .fold(0.0, f64::max);
    for (a, b) in cold.coefficients.iter().zip(&warm.coefficients) {
        assert!((a - b).abs() <= 1e-5 * scale, "{a} vs {b}");
    }
    // A wrong-sized start is a typed error, not a panic.
    assert!(fit_warm(&dict, &groups, &y, 2, &x0[1..], &params, &mut NoObserver).is_err());
}
