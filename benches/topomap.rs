//! Benchmarks of the topographic map (divan): one 64-channel map at 400 × 400 px.
//!
//! Run with `cargo bench --bench topomap`. The montage (the demo's 64 channels of the
//! 10-10 layout on a 95 mm sphere) and the values are built outside the timed closures;
//! each timed call fits the spherical spline (m = 4, N = 50) and rasterises the disc.

use divan::{black_box, Bencher};
use patchwise::demo::CHANNELS_64;
use patchwise::geometry::Vec3;
use patchwise::montage::standard;
use patchwise::render::spline::{SphericalSpline, SplineParams};
use patchwise::render::topomap::{topomap_png, topomap_svg, TopomapOptions};

fn main() {
    divan::main();
}

/// The 64 positions and a smooth two-pole field on them.
fn data() -> (Vec<Vec3>, Vec<f64>) {
    let montage = standard("10-10", 0.095).unwrap_or_else(|e| panic!("{e}"));
    let names: Vec<String> = CHANNELS_64.iter().map(|s| s.to_string()).collect();
    let picked = montage.select(&names).unwrap_or_else(|e| panic!("{e}"));
    let positions: Vec<Vec3> = picked.iter().map(|&i| montage.positions[i]).collect();
    let values = positions
        .iter()
        .map(|p| {
            let d1 = ((p[0] + 0.04).powi(2) + p[1].powi(2) + (p[2] - 0.07).powi(2)).sqrt();
            let d2 = ((p[0] - 0.05).powi(2) + (p[1] - 0.05).powi(2) + (p[2] - 0.05).powi(2)).sqrt();
            12.0 / (1.0 + (d1 / 0.04).powi(2)) - 8.0 / (1.0 + (d2 / 0.05).powi(2))
        })
        .collect();
    (positions, values)
}

#[divan::bench(sample_count = 20)]
fn spline_fit_64_channels(bencher: Bencher) {
    let (positions, values) = data();
    bencher.bench_local(|| {
        SphericalSpline::fit(
            black_box(&positions),
            black_box(&values),
            &SplineParams::default(),
        )
    });
}

#[divan::bench(sample_count = 20)]
fn topomap_png_64_channels_400px(bencher: Bencher) {
    let (positions, values) = data();
    let options = TopomapOptions::default();
    bencher.bench_local(|| topomap_png(black_box(&positions), black_box(&values), &options));
}

#[divan::bench(sample_count = 20)]
fn topomap_svg_64_channels_400px(bencher: Bencher) {
    let (positions, values) = data();
    let options = TopomapOptions {
        title: "Component 1".to_string(),
        unit: "µV".to_string(),
        ..TopomapOptions::default()
    };
    bencher.bench_local(|| topomap_svg(black_box(&positions), black_box(&values), &options));
}
