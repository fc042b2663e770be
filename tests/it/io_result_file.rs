//! `result.h5` read back: what `read_result` returns equals what h5py 3.16
//! (a general-purpose HDF5 reader) finds in the file, the stored
//! reconstruction satisfies its definition (patterns = reconstruction +
//! residual without whitening), and with a noise covariance the reconstruction
//! is mapped back to the patterns' units.

use crate::support;
use crate::support::cli::patchwise;
use patchwise::io::result_file::read_result;

fn run_ok(args: &[&str], dir: &std::path::Path) {
    let out = patchwise(args, dir);
    assert!(
        out.status.success(),
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn result_file_round_trip_and_reconstruction() {
    let dir = support::scratch("io_result_file");
    run_ok(
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "4",
            "--cache",
            "cache",
            "--out",
            "demo",
        ],
        &dir,
    );
    let r = read_result(&dir.join("demo/result.h5")).unwrap();
    let (n_ch, k) = (r.labels.len(), r.k);
    assert_eq!((n_ch, k), (64, 3));
    // The source space and montage are stored with the result.
    let sources = r.sources.as_ref().unwrap();
    assert_eq!(sources.len(), 5124);
    // Two closed genus-0 hemispheres: F = 2V - 4 each (Euler), so 2V - 8 in all.
    assert_eq!(sources.triangles.len(), 2 * 5124 - 8);
    assert_eq!(r.attribution.source_map.len(), 5124 * k);
    assert_eq!(r.electrode_positions.as_ref().unwrap().len(), n_ch);
    assert_eq!(r.attribution.region_names, sources.region_names);
    // The demo fits each component by the noise rule: the path walks down
    // from λ_max until it brackets the chosen λ, so every component's
    // chosen ratio lies strictly inside its searched range.
    let path = r.fit.path.as_ref().unwrap();
    assert!(path.n_points >= 2);
    for c in 0..k {
        let ratios: Vec<f64> = (0..path.n_points)
            .map(|i| path.ratio[i * k + c])
            .filter(|v| v.is_finite())
            .collect();
        let chosen = r.fit.lambda[c] / r.fit.lambda_max[c];
        let lowest = ratios.iter().copied().fold(f64::INFINITY, f64::min);
        assert!(
            chosen > lowest && chosen < 1.0,
            "component {c}: {chosen} in {ratios:?}"
        );
    }
    // Definition: reconstruction = patterns - residual when nothing is whitened (to rounding).
    let rec = r.fit.reconstruction.as_ref().unwrap();
    let scale = r.patterns.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    for ((x, res), y) in rec.iter().zip(&r.fit.residual).zip(&r.patterns) {
        assert!((x + res - y).abs() <= 1e-12 * scale);
    }
    assert!(r.attribution.share_low.is_some() && r.attribution.selection_frequency.is_some());
    assert!(r.caution.contains("not for clinical decisions"));
    assert!(r.hashes.iter().any(|(n, _)| n == "decoder"));

    // The same numbers through h5py.
    let py = support::python::python();
    {
        let script = format!(
            r#"
import sys, h5py, numpy as np
f = h5py.File(sys.argv[1], "r")
assert f["/sources/triangles"].shape == ({tri}, 3), f["/sources/triangles"].shape
assert f["/montage/positions_mm"].shape == ({n_ch}, 3)
assert f["/fit/path/ratio"].shape == ({n_path}, {k})
assert f["/fit/reconstruction"].shape == ({n_ch}, {k})
np.testing.assert_allclose(f["/fit/reconstruction"][()][5, 1], {rec51:.17e}, rtol=0, atol=0)
np.testing.assert_allclose(f["/sources/positions_mm"][()][7, 2], {pos72:.17e}, rtol=1e-15)
"#,
            tri = sources.triangles.len(),
            n_path = path.n_points,
            rec51 = rec[5 * k + 1],
            pos72 = sources.positions[7][2] * 1e3,
        );
        support::python::run(&py, &script, &[&dir.join("demo/result.h5")]);
    }

    // Whitening with C = σ² I: the referenced covariance is σ² H (H the
    // centring matrix), its whitener H/σ, so the whitened residual times σ
    // is the residual in the patterns' units and patterns = reconstruction +
    // σ · residual (algebra of the whitening, common practice, no source).
    let sigma2: f64 = 4.0e-12;
    let mut csv = String::new();
    for i in 0..n_ch {
        let row: Vec<String> = (0..n_ch)
            .map(|j| {
                if i == j {
                    format!("{sigma2:e}")
                } else {
                    "0".to_string()
                }
            })
            .collect();
        csv.push_str(&row.join(","));
        csv.push('\n');
    }
    std::fs::write(dir.join("noise.csv"), csv).unwrap();
    run_ok(
        &[
            "attribute",
            "--decoder",
            "demo/decoder.h5",
            "--montage",
            "10-10",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--cache",
            "cache",
            "--noise-covariance",
            "noise.csv",
            "--out",
            "white",
        ],
        &dir,
    );
    let w = read_result(&dir.join("white/result.h5")).unwrap();
    let rec = w.fit.reconstruction.as_ref().unwrap();
    let sigma = sigma2.sqrt();
    let scale = w.patterns.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let worst = (0..n_ch * k)
        .map(|i| (rec[i] + sigma * w.fit.residual[i] - w.patterns[i]).abs() / scale)
        .fold(0.0, f64::max);
    // Tolerance: the whitener comes from an eigendecomposition (about 1e-12 relative).
    assert!(worst < 1e-9, "worst relative mismatch {worst:e}");
}
