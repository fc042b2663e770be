//! The solver against scikit-learn's MultiTaskLasso fixtures in tests/reference/.

use patchwise::solver::{fit, DenseDictionary, Groups, Lambda, NoObserver, Params};
use serde::Deserialize;

#[derive(Deserialize)]
struct Fixture {
    source: String,
    n_ch: usize,
    n_atoms: usize,
    k: usize,
    lambda: f64,
    lambda_max: f64,
    dictionary_row_major: Vec<f64>,
    y_row_major: Vec<f64>,
    coefficients_row_major: Vec<f64>,
}

fn fixtures() -> Vec<(String, Fixture)> {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference");
    let mut out: Vec<(String, Fixture)> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| {
            let name = p.file_name().unwrap().to_string_lossy();
            name.starts_with("solver_multitask_lasso_") && name.ends_with(".json")
        })
        .map(|p| {
            let text = std::fs::read_to_string(&p).unwrap();
            (
                p.file_name().unwrap().to_string_lossy().into_owned(),
                serde_json::from_str(&text).unwrap(),
            )
        })
        .collect();
    out.sort_by(|a, b| a.0.cmp(&b.0));
    out
}

/// scikit-learn 1.9.1 MultiTaskLasso (fit_intercept=False, tol=1e-14), made by
/// tests/reference/make_solver_fixtures.py: its objective (1/(2 n_ch))‖Y − DW‖² +
/// α‖W‖₂₁ times n_ch is ours with λ = n_ch·α and one atom per group. Coefficients
/// must agree to 1e-6 relative to the largest coefficient; λ_max to 1e-12.
#[test]
fn works_like_sklearn_multitask_lasso() {
    let all = fixtures();
    assert!(
        all.len() >= 5,
        "expected at least 5 fixtures, found {}",
        all.len()
    );
    for (name, f) in &all {
        assert!(
            f.source.contains("scikit-learn 1.9.1"),
            "{name}: {}",
            f.source
        );
        let dict =
            DenseDictionary::from_row_major(f.n_ch, f.n_atoms, &f.dictionary_row_major).unwrap();
        let groups = Groups::singletons(f.n_atoms).unwrap();
        let params = Params {
            lambda: Lambda::Absolute(f.lambda),
            tol: 1e-13,
            ..Params::default()
        }
        .validate()
        .unwrap();
        let (result, info) = fit(
            &dict,
            &groups,
            &f.y_row_major,
            f.k,
            &params,
            &mut NoObserver,
        )
        .unwrap();
        assert!(
            ((info.lambda_max - f.lambda_max) / f.lambda_max).abs() < 1e-12,
            "{name}: lambda_max {} vs {}",
            info.lambda_max,
            f.lambda_max
        );
        let scale = f
            .coefficients_row_major
            .iter()
            .fold(0.0f64, |m, v| m.max(v.abs()));
        let err = result
            .coefficients
            .iter()
            .zip(&f.coefficients_row_major)
            .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
        assert!(
            err <= 1e-6 * scale,
            "{name}: max coefficient error {err:e} (scale {scale:e}), gap {:e}",
            info.duality_gap
        );
        // The supports agree too: an atom is zero in ours iff it is zero in theirs
        // (up to coefficients below the tolerance).
        for j in 0..f.n_atoms {
            let ours = (0..f.k).any(|c| result.coefficients[j * f.k + c].abs() > 1e-6 * scale);
            let theirs =
                (0..f.k).any(|c| f.coefficients_row_major[j * f.k + c].abs() > 1e-6 * scale);
            assert_eq!(ours, theirs, "{name}: support differs at atom {j}");
        }
    }
}
