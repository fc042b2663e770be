//! Benchmark: single equivalent-dipole fits of 30 patterns on 64 channels of
//! the default 4-shell head, grid gains included (see docs/benchmarks.md,
//! "Dipole fit").

use patchwise::attribution::rng::SplitMix64;
use patchwise::dipole::{fit_dipoles, DipoleFitter, DipoleOptions};
use patchwise::head::SphereHead;
use patchwise::montage::standard;

fn main() {
    divan::main();
}

const K: usize = 30;

/// The demo's 64 channels of the 10-10 system (m).
fn electrodes(head: &SphereHead) -> Vec<[f64; 3]> {
    let Ok(full) = standard("10-10", head.outer_radius()) else {
        return Vec::new();
    };
    let labels: Vec<String> = patchwise::demo::CHANNELS_64
        .iter()
        .map(|s| s.to_string())
        .collect();
    match full.select(&labels) {
        Ok(idx) => full.subset(&idx).positions,
        Err(_) => Vec::new(),
    }
}

/// K patterns (64 × K row-major): single dipoles at seeded positions in the
/// ball of radius 70 mm (upper half), seeded moments, 20 dB white noise.
fn patterns(head: &SphereHead, el: &[[f64; 3]]) -> Vec<f64> {
    let n = el.len();
    let mut out = vec![0.0; n * K];
    for c in 0..K {
        let mut rng = SplitMix64::new(30, c as u64);
        let p = loop {
            let p = [
                0.07 * (2.0 * rng.uniform() - 1.0),
                0.07 * (2.0 * rng.uniform() - 1.0),
                0.07 * rng.uniform(),
            ];
            if p.iter().map(|v| v * v).sum::<f64>() < 0.07f64.powi(2) {
                break p;
            }
        };
        let q = [
            rng.normal() * 1e-8,
            rng.normal() * 1e-8,
            rng.normal() * 1e-8,
        ];
        let clean: Vec<f64> = el
            .iter()
            .map(|e| head.potential(*e, p, q).unwrap_or(0.0))
            .collect();
        let sd = (clean.iter().map(|v| v * v).sum::<f64>() / 100.0 / n as f64).sqrt();
        for i in 0..n {
            out[i * K + c] = clean[i] + sd * rng.normal();
        }
    }
    out
}

/// The whole job: grid gains, then 30 fits.
#[divan::bench(sample_count = 5)]
fn fit_30_components_64_channels(bencher: divan::Bencher) {
    let head = SphereHead::default_adult();
    let el = electrodes(&head);
    let y = patterns(&head, &el);
    let options = DipoleOptions::default();
    bencher.bench(|| fit_dipoles(&head, &el, &y, K, &options).map(|f| f.len()));
}

/// The grid gains alone (shared by all components).
#[divan::bench(sample_count = 5)]
fn grid_gains_64_channels(bencher: divan::Bencher) {
    let head = SphereHead::default_adult();
    let el = electrodes(&head);
    let options = DipoleOptions::default();
    bencher.bench(|| DipoleFitter::new(&head, &el, &options).map(|f| f.n_grid_points()));
}

/// Symmetric pairs for the same 30 patterns.
#[divan::bench(sample_count = 5)]
fn fit_30_pairs_64_channels(bencher: divan::Bencher) {
    let head = SphereHead::default_adult();
    let el = electrodes(&head);
    let y = patterns(&head, &el);
    let options = DipoleOptions {
        pairs: true,
        ..DipoleOptions::default()
    };
    bencher.bench(|| fit_dipoles(&head, &el, &y, K, &options).map(|f| f.len()));
}
