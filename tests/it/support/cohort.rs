//! Subjects for the cohort tests, made by the real binary: noisy copies of
//! the demo decoder (template-5k) attributed by `patchwise attribute`.

use std::path::{Path, PathBuf};

use super::cli::patchwise;
use patchwise::attribution::rng::SplitMix64;
use patchwise::io::{Dataset, Store};

/// The demo's decoder (three components, 64 channels) in `dir`.
pub fn demo_decoder(dir: &Path) -> PathBuf {
    let out = patchwise(
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--no-report",
            "--out",
            "demo",
            "--cache",
            "cache",
        ],
        dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    dir.join("demo").join("decoder.h5")
}

/// A subject: the demo decoder's weights plus seeded Gaussian noise of
/// `noise` times each weight column's RMS, keeping the first `k` components,
/// attributed with 10 bootstrap resamples into `dir/name` (no report, to
/// keep the tests quick).
pub fn subject(dir: &Path, decoder: &Path, name: &str, seed: u64, noise: f64, k: usize) {
    let mut store = Store::read(decoder).unwrap();
    let (w, shape) = store.f64_array(decoder, "/weights").unwrap();
    let (n_ch, k0) = (shape[0], shape[1]);
    let mut rng = SplitMix64::new(seed, 0);
    let rms: Vec<f64> = (0..k0)
        .map(|c| ((0..n_ch).map(|i| w[i * k0 + c].powi(2)).sum::<f64>() / n_ch as f64).sqrt())
        .collect();
    let mut out = Vec::with_capacity(n_ch * k);
    for i in 0..n_ch {
        for c in 0..k {
            out.push(w[i * k0 + c] + noise * rms[c] * rng.normal());
        }
    }
    store.insert("/weights", Dataset::f64(vec![n_ch, k], out));
    let names = store.strings(decoder, "/component_names", None).unwrap();
    store.insert("/component_names", Dataset::strings(names[..k].to_vec()));
    let path = dir.join(format!("{name}.h5"));
    store.write_atomic(&path).unwrap();
    let out = patchwise(
        &[
            "attribute",
            "--decoder",
            path.to_str().unwrap(),
            "--montage",
            "10-10",
            "--sources",
            "template-5k",
            "--resamples",
            "10",
            "--no-report",
            "--cache",
            "cache",
            "--out",
            name,
        ],
        dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}
