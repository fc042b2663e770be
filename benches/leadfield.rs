//! Benchmark: lead field of the default adult head, 20 000 sources × 64
//! channels, free orientation (see docs/benchmarks.md, "Lead field").
//!
//! The points are built by closed formulas that
//! benches/reference/leadfield_numpy.py repeats exactly, so both programs
//! compute the same matrix.

use patchwise::forward::{lead_field, Orientation, Reference};
use patchwise::head::SphereHead;

fn main() {
    // With PATCHWISE_BENCH_CHECKSUM set, print numbers to compare with the
    // NumPy reference before timing.
    if std::env::var_os("PATCHWISE_BENCH_CHECKSUM").is_some() {
        checksum(20_000);
    }
    divan::main();
}

/// Prints the Frobenius norms of the average-referenced gain and gain_xyz
/// and the mean number of series terms per source.
fn checksum(n_sources: usize) {
    let head = SphereHead::default_adult();
    let electrodes = electrodes(64);
    let (positions, normals) = sources(n_sources);
    let Ok(lf) = lead_field(
        &head,
        &electrodes,
        &positions,
        &normals,
        Orientation::Free,
        Reference::Average,
        &|_| {},
    ) else {
        eprintln!("lead field failed");
        return;
    };
    let norm = |v: &[f64]| v.iter().map(|x| x * x).sum::<f64>().sqrt();
    let terms: usize = positions
        .iter()
        .map(|p| head.series_terms(*p).unwrap_or(0))
        .sum();
    println!(
        "gain Frobenius {:.15e}, gain_xyz Frobenius {:.15e}, mean terms {:.2}, gain[0,0] {:.15e}, gain[63,19999] {:.15e}",
        norm(&lf.gain),
        norm(lf.gain_xyz.as_deref().unwrap_or(&[])),
        terms as f64 / n_sources as f64,
        lf.gain[0],
        lf.gain[lf.gain.len() - 1],
    );
}

/// Golden angle (rad), for Fibonacci points on the sphere.
fn golden_angle() -> f64 {
    std::f64::consts::PI * (3.0 - 5f64.sqrt())
}

/// 64 electrodes on the upper hemisphere of the 94 mm scalp: Fibonacci
/// points with z = (i + 1/2)/64.
pub fn electrodes(count: usize) -> Vec<[f64; 3]> {
    (0..count)
        .map(|i| {
            let z = (i as f64 + 0.5) / count as f64;
            let r = (1.0 - z * z).sqrt();
            let phi = i as f64 * golden_angle();
            [0.094 * r * phi.cos(), 0.094 * r * phi.sin(), 0.094 * z]
        })
        .collect()
}

/// Van der Corput radical inverse in base 2.
fn van_der_corput(mut i: u64) -> f64 {
    let mut value = 0.0;
    let mut base = 0.5;
    while i > 0 {
        if i & 1 == 1 {
            value += base;
        }
        i >>= 1;
        base *= 0.5;
    }
    value
}

/// Sources filling the ball of radius 78 mm: Fibonacci directions over the
/// whole sphere, radius 78 mm × cbrt(van der Corput(i + 1)) (uniform in
/// volume); radial unit normals.
pub fn sources(count: usize) -> (Vec<[f64; 3]>, Vec<[f64; 3]>) {
    let mut positions = Vec::with_capacity(count);
    let mut normals = Vec::with_capacity(count);
    for i in 0..count {
        let z = 1.0 - 2.0 * (i as f64 + 0.5) / count as f64;
        let r = (1.0 - z * z).sqrt();
        let phi = i as f64 * golden_angle();
        let direction = [r * phi.cos(), r * phi.sin(), z];
        let radius = 0.078 * van_der_corput(i as u64 + 1).cbrt();
        positions.push([
            radius * direction[0],
            radius * direction[1],
            radius * direction[2],
        ]);
        normals.push(direction);
    }
    (positions, normals)
}

#[divan::bench(args = [20_000], sample_count = 5, sample_size = 1)]
fn lead_field_free_64_channels(bencher: divan::Bencher, n_sources: usize) {
    let head = SphereHead::default_adult();
    let electrodes = electrodes(64);
    let (positions, normals) = sources(n_sources);
    bencher.bench(|| {
        lead_field(
            &head,
            &electrodes,
            &positions,
            &normals,
            Orientation::Free,
            Reference::Average,
            &|_| {},
        )
    });
}
