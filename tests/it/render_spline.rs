//! Spherical-spline interpolation (Perrin, Pernier, Bertrand & Echallier 1989,
//! Electroenceph Clin Neurophysiol 72:184): interpolation at the electrodes, known
//! smooth fields, the Legendre kernel against SciPy, and typed errors for bad input.

use crate::support;
use patchwise::demo::CHANNELS_64;
use patchwise::geometry::Vec3;
use patchwise::montage::standard;
use patchwise::render::spline::{legendre_kernel, SphericalSpline, SplineError, SplineParams};

/// Head radius for the standard layout (m).
const RADIUS: f64 = 0.095;

/// The demo's 64 channels of the 10-10 layout on a sphere of radius 95 mm about the origin.
fn positions_64() -> Vec<Vec3> {
    let montage = standard("10-10", RADIUS).unwrap();
    let names: Vec<String> = CHANNELS_64.iter().map(|s| s.to_string()).collect();
    let picked = montage.select(&names).unwrap();
    picked.iter().map(|&i| montage.positions[i]).collect()
}

/// A seeded linear congruential generator (Knuth's MMIX constants) in [−1, 1).
fn lcg(seed: &mut u64) -> f64 {
    *seed = seed
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    (*seed >> 11) as f64 / (1u64 << 52) as f64 - 1.0
}

/// Fibonacci points on the unit sphere (golden-angle spiral, common practice, no source),
/// keeping those with z > `z_min`.
fn fibonacci_cap(count: usize, z_min: f64) -> Vec<Vec3> {
    let golden = std::f64::consts::PI * (3.0 - 5f64.sqrt());
    (0..count)
        .map(|i| {
            let z = 1.0 - (2.0 * i as f64 + 1.0) / count as f64;
            let r = (1.0 - z * z).sqrt();
            let phi = golden * i as f64;
            [r * phi.cos(), r * phi.sin(), z]
        })
        .filter(|p| p[2] > z_min)
        .collect()
}

/// A scalar field on the unit sphere.
type Field = fn(Vec3) -> f64;

fn unit(p: Vec3) -> Vec3 {
    let n = (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt();
    [p[0] / n, p[1] / n, p[2] / n]
}

#[test]
fn interpolates_the_electrode_values() {
    // Perrin et al. 1989: with λ = 0 the spline passes through the data. Tolerance
    // 1e-9 of max |v|. The system is ill-conditioned for m = 4 (Σ|c_i| is about 1e8 for
    // values of order 1, measured), so rounding leaves misfits near 1e-10.
    let positions = positions_64();
    let mut seed = 7;
    let values: Vec<f64> = (0..64).map(|_| 20e-6 * lcg(&mut seed)).collect();
    let spline = SphericalSpline::fit(&positions, &values, &SplineParams::default()).unwrap();
    // The standard layout is a sphere about the origin: the fit finds it (1e-9 m).
    assert!(spline.center().iter().all(|c| c.abs() < 1e-9));
    assert!((spline.radius() - RADIUS).abs() < 1e-9);
    let scale = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let mut worst = 0.0f64;
    for (p, v) in positions.iter().zip(&values) {
        let exact = spline.evaluate_at_point(*p).unwrap();
        let fast = spline.evaluate_fast(unit(*p));
        worst = worst.max((exact - v).abs() / scale);
        worst = worst.max((fast - v).abs() / scale);
    }
    println!("interpolation: worst relative misfit at the electrodes {worst:e}");
    assert!(worst < 1e-9, "worst relative misfit {worst:e}");
    // The constraint Σ c_i = 0 of the bordered system holds (1e-9 of Σ|c_i|).
    let sum: f64 = spline.weights().iter().sum();
    let abs: f64 = spline.weights().iter().map(|c| c.abs()).sum();
    assert!(sum.abs() < 1e-9 * abs);
}

#[test]
fn reproduces_low_order_spherical_harmonics_between_electrodes() {
    // Real spherical harmonics up to degree 2 (unnormalised): Y_1^0 ∝ z, Y_2^1 ∝ xz,
    // Y_2^0 ∝ 3z² − 1, Y_2^2 ∝ x² − y² (standard forms). Sampled at the 64 electrodes,
    // interpolated with m = 4, N = 50, λ = 0, compared on ~900 Fibonacci points with
    // z > 0.1 (between and around the electrodes). Measured worst errors relative to the
    // field's peak on the cap are printed; the bounds are about 3× the measured values.
    let positions = positions_64();
    let fields: [(&str, Field, f64); 4] = [
        ("z", |p| p[2], 3e-4),
        ("xz", |p| p[0] * p[2], 3e-3),
        ("3z^2-1", |p| 3.0 * p[2] * p[2] - 1.0, 3e-3),
        ("x^2-y^2", |p| p[0] * p[0] - p[1] * p[1], 3e-3),
    ];
    let targets = fibonacci_cap(2000, 0.1);
    assert!(targets.len() > 800);
    for (name, f, bound) in fields {
        let values: Vec<f64> = positions.iter().map(|&p| f(unit(p))).collect();
        let spline = SphericalSpline::fit(&positions, &values, &SplineParams::default()).unwrap();
        let peak = targets.iter().fold(0.0f64, |m, &u| m.max(f(u).abs()));
        let worst = targets
            .iter()
            .map(|&u| (spline.evaluate(u) - f(u)).abs())
            .fold(0.0f64, f64::max)
            / peak;
        println!("harmonic {name}: worst relative error on the cap {worst:e} (bound {bound:e})");
        assert!(worst < bound, "{name}: {worst:e} >= {bound:e}");
    }
}

#[test]
fn regularisation_smooths_but_keeps_the_mean_field() {
    // With λ > 0 the spline no longer interpolates (Perrin et al. 1989 regularised form),
    // but a constant field is still reproduced exactly by c0 (c = 0 solves the system).
    // Tolerance 1e-12 relative (common practice, no source).
    let positions = positions_64();
    let params = SplineParams {
        regularization: 1e-5,
        ..SplineParams::default()
    };
    let constant = vec![3.5; 64];
    let spline = SphericalSpline::fit(&positions, &constant, &params).unwrap();
    assert!((spline.evaluate([0.0, 0.0, 1.0]) - 3.5).abs() < 1e-12 * 3.5);
    let mut seed = 11;
    let values: Vec<f64> = (0..64).map(|_| lcg(&mut seed)).collect();
    let exact = SphericalSpline::fit(&positions, &values, &SplineParams::default()).unwrap();
    let smooth = SphericalSpline::fit(&positions, &values, &params).unwrap();
    let misfit = |s: &SphericalSpline| {
        positions
            .iter()
            .zip(&values)
            .map(|(p, v)| (s.evaluate_at_point(*p).unwrap() - v).powi(2))
            .sum::<f64>()
    };
    assert!(misfit(&exact) < 1e-18);
    assert!(misfit(&smooth) > 1e-6);
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn kernel_matches_scipy_eval_legendre() {
    // g_m(x) = 1/(4π) Σ_{n=1}^{N} (2n+1)/(n(n+1))^m P_n(x) (Perrin et al. 1989), with
    // P_n from scipy.special.eval_legendre (SciPy 1.17.1), summed in Python in float64.
    // Tolerance 1e-12 of |g_m(1)|.
    let py = support::python::python();
    let dir = support::scratch("render_spline_scipy");
    let script = r#"
import sys, os, json, numpy as np
from scipy.special import eval_legendre
xs = np.concatenate([np.linspace(-1.0, 1.0, 41), [0.123456789, -0.987654321, 0.999999]])
out = []
for m in (2, 3, 4, 5):
    for terms in (7, 50, 200):
        n = np.arange(1, terms + 1, dtype=float)
        a = (2 * n + 1) / (n * (n + 1)) ** m / (4 * np.pi)
        for x in xs:
            out.append([m, terms, float(x), float(np.sum(a * eval_legendre(n, x)))])
json.dump(out, open(os.path.join(sys.argv[1], "kernel.json"), "w"))
"#;
    support::python::run(&py, script, &[&dir]);
    let rows: Vec<(u32, usize, f64, f64)> =
        serde_json::from_str(&std::fs::read_to_string(dir.join("kernel.json")).unwrap()).unwrap();
    assert_eq!(rows.len(), 4 * 3 * 44);
    for (m, terms, x, expected) in rows {
        let peak = legendre_kernel(1.0, m, terms).abs();
        let got = legendre_kernel(x, m, terms);
        assert!(
            (got - expected).abs() <= 1e-12 * peak,
            "m={m} N={terms} x={x}: {got:e} vs SciPy {expected:e}"
        );
    }
}

#[test]
fn fast_evaluation_agrees_with_the_series() {
    // The Hermite table of g_m agrees with the series to rounding (unit test in
    // src/render/spline.rs); in V = c0 + Σ c_i g(x_i) that rounding is multiplied by the
    // weights, which are large because G is ill-conditioned for m = 4. Tolerance
    // 1e-15 · Σ|c_i| (common practice for a sum's rounding, no source).
    let positions = positions_64();
    let mut seed = 3;
    let values: Vec<f64> = (0..64).map(|_| lcg(&mut seed)).collect();
    let spline = SphericalSpline::fit(&positions, &values, &SplineParams::default()).unwrap();
    let weight_sum: f64 = spline.weights().iter().map(|c| c.abs()).sum();
    let mut worst = 0.0f64;
    for _ in 0..500 {
        let u = unit([lcg(&mut seed), lcg(&mut seed), lcg(&mut seed)]);
        worst = worst.max((spline.evaluate(u) - spline.evaluate_fast(u)).abs());
    }
    println!("table vs series: worst difference {worst:e}, sum |c_i| {weight_sum:e}");
    assert!(worst < 1e-15 * weight_sum);
}

#[test]
fn a_known_centre_gives_the_same_spline_as_the_fitted_one() {
    // The standard layout is a sphere about the origin, so fitting about the origin and
    // fitting a sphere must give the same interpolant (1e-9 relative; the sphere fit
    // converges to ~1e-12 m, common practice, no source).
    let positions = positions_64();
    let mut seed = 5;
    let values: Vec<f64> = (0..64).map(|_| lcg(&mut seed)).collect();
    let p = SplineParams::default();
    let fitted = SphericalSpline::fit(&positions, &values, &p).unwrap();
    let about = SphericalSpline::fit_about(&positions, &values, [0.0; 3], &p).unwrap();
    assert!((about.radius() - RADIUS).abs() < 1e-12);
    for u in fibonacci_cap(200, 0.0) {
        let (a, b) = (fitted.evaluate(u), about.evaluate(u));
        assert!((a - b).abs() < 1e-9 * (1.0 + a.abs()), "{a} vs {b}");
    }
    assert!(matches!(
        SphericalSpline::fit_about(&positions, &values, [f64::NAN, 0.0, 0.0], &p),
        Err(SplineError::InvalidParameter {
            field: "center",
            ..
        })
    ));
    assert!(matches!(
        SphericalSpline::fit_about(&positions, &values, positions[3], &p),
        Err(SplineError::BadPosition { index: 3, .. })
    ));
}

#[test]
fn bad_input_is_a_typed_error() {
    let positions = positions_64();
    let values = vec![1.0; 64];
    let p = SplineParams::default();
    assert!(matches!(
        SphericalSpline::fit(&positions, &values[..63], &p),
        Err(SplineError::LengthMismatch {
            positions: 64,
            values: 63
        })
    ));
    assert!(matches!(
        SphericalSpline::fit(&positions[..3], &values[..3], &p),
        Err(SplineError::TooFewElectrodes { found: 3, .. })
    ));
    let mut nan = values.clone();
    nan[5] = f64::NAN;
    assert!(matches!(
        SphericalSpline::fit(&positions, &nan, &p),
        Err(SplineError::NotFiniteValue { index: 5, .. })
    ));
    let mut bad = positions.clone();
    bad[2] = [f64::INFINITY, 0.0, 0.0];
    assert!(matches!(
        SphericalSpline::fit(&bad, &values, &p),
        Err(SplineError::BadPosition { index: 2, .. })
    ));
    let mut twice = positions.clone();
    twice[9] = twice[4];
    assert!(matches!(
        SphericalSpline::fit(&twice, &values, &p),
        Err(SplineError::CoincidentElectrodes {
            first: 4,
            second: 9
        })
    ));
    let flat: Vec<Vec3> = (0..8).map(|i| [i as f64 * 0.01, 0.02, 0.0]).collect();
    assert!(matches!(
        SphericalSpline::fit(&flat, &[0.0; 8], &p),
        Err(SplineError::Sphere(_))
    ));
    let negative = SplineParams {
        regularization: -1.0,
        ..p
    };
    assert!(matches!(
        SphericalSpline::fit(&positions, &values, &negative),
        Err(SplineError::InvalidParameter {
            field: "regularization",
            ..
        })
    ));
}
