//! Benchmark of the HTML report (tables and every picture) for a result on
//! the 20k-vertex template with 64 channels and 4 components.
//!
//! The result is made from documented formulas, outside the timed code:
//! - sources: `template(Standard)` (20 484 vertices, 30 regions);
//! - channels: the demo's 64 labels of the 10-10 layout on the default head;
//! - component q (0..4) has two generators, the sources nearest to the
//!   template vertices 2000 + 4111 q and 12000 + 2333 q; its source map is
//!   Σ exp(−‖p − g‖² / (2 · (8 mm)²)) over them (second one × −0.6);
//! - pattern of channel e: Σ over the generators of the same Gaussian of
//!   the electrode's distance to 1.4 · g (a smooth scalp bump), minus the
//!   channel mean; reconstruction = 0.97 × pattern + 0.01 · sin(1.7 e + q);
//! - shares: the source map's absolute mass per region, normalised;
//!   intervals share × (0.9, 1.1); selection frequency 1 for shares ≥ 5 %;
//! - a λ path of 15 ratios 0.02..1 (log-spaced) with explained variance
//!   1 − ratio and active patches ⌈10 (1 − ratio)⌉.

use divan::Bencher;
use patchwise::geometry::{template, SourceSpace, TemplateResolution};
use patchwise::io::result_file::{ResultAttribution, ResultFile, ResultFit, ResultPath, CAUTION};
use patchwise::render::report::{build_report, ReportOptions};

const K: usize = 4;
const WIDTH_M: f64 = 0.008;

fn gaussian(a: [f64; 3], b: [f64; 3]) -> f64 {
    let d2: f64 = (0..3).map(|i| (a[i] - b[i]).powi(2)).sum();
    (-d2 / (2.0 * WIDTH_M * WIDTH_M)).exp()
}

fn result_20k() -> ResultFile {
    let t = template(TemplateResolution::Standard);
    let mut sources = SourceSpace::from_mesh(&t.mesh);
    sources.region = t.region.clone();
    sources.region_names = t.region_names.clone();
    let head = patchwise::head::SphereHead::default_adult();
    let full = patchwise::montage::standard("10-10", head.outer_radius()).unwrap();
    let labels: Vec<String> = patchwise::demo::CHANNELS_64
        .iter()
        .map(|s| s.to_string())
        .collect();
    let montage = full.subset(&full.select(&labels).unwrap());
    let n_src = sources.len();
    let n_ch = labels.len();
    let n_reg = sources.region_names.len();
    let mut source_map = vec![0.0; n_src * K];
    let mut patterns = vec![0.0; n_ch * K];
    let mut reconstruction = vec![0.0; n_ch * K];
    let mut share = vec![0.0; n_reg * K];
    let mut peak_mm = vec![[0.0; 3]; K];
    let mut peak_region = vec![0i64; K];
    for q in 0..K {
        let gens = [(2000 + 4111 * q) % n_src, (12000 + 2333 * q) % n_src];
        let weights = [1.0, -0.6];
        for v in 0..n_src {
            source_map[v * K + q] = gens
                .iter()
                .zip(weights)
                .map(|(&g, w)| w * gaussian(sources.positions[v], sources.positions[g]))
                .sum();
        }
        for (e, p) in montage.positions.iter().enumerate() {
            patterns[e * K + q] = gens
                .iter()
                .zip(weights)
                .map(|(&g, w)| {
                    let s = sources.positions[g].map(|x| 1.4 * x);
                    let d2: f64 = (0..3).map(|i| (p[i] - s[i]).powi(2)).sum();
                    w * (-d2 / (2.0 * 0.03f64.powi(2))).exp()
                })
                .sum();
        }
        let mean = (0..n_ch).map(|e| patterns[e * K + q]).sum::<f64>() / n_ch as f64;
        for e in 0..n_ch {
            patterns[e * K + q] -= mean;
            reconstruction[e * K + q] =
                0.97 * patterns[e * K + q] + 0.01 * (1.7 * e as f64 + q as f64).sin();
        }
        let mut mass = vec![0.0; n_reg];
        for v in 0..n_src {
            if let Ok(r) = usize::try_from(sources.region[v]) {
                mass[r] += source_map[v * K + q].abs();
            }
        }
        let total: f64 = mass.iter().sum();
        for r in 0..n_reg {
            share[r * K + q] = mass[r] / total;
        }
        peak_mm[q] = sources.positions[gens[0]].map(|x| x * 1e3);
        peak_region[q] = i64::from(sources.region[gens[0]]);
    }
    let residual: Vec<f64> = patterns
        .iter()
        .zip(&reconstruction)
        .map(|(a, b)| a - b)
        .collect();
    let n_points = 15;
    let ratios: Vec<f64> = (0..n_points)
        .map(|i| (0.02f64.ln() * i as f64 / (n_points - 1) as f64).exp())
        .collect();
    let mut path = ResultPath {
        n_points,
        ratio: vec![0.0; n_points * K],
        explained_variance: vec![0.0; n_points * K],
        active_patches: vec![0.0; n_points * K],
        bic: vec![0.0; n_points * K],
    };
    for (i, &ratio) in ratios.iter().enumerate() {
        for q in 0..K {
            path.ratio[i * K + q] = ratio;
            path.explained_variance[i * K + q] = 1.0 - ratio;
            path.active_patches[i * K + q] = (10.0 * (1.0 - ratio)).ceil();
            path.bic[i * K + q] = (ratio - 0.1).powi(2);
        }
    }
    let n_atoms = 3 * n_src;
    ResultFile {
        dipoles: None,
        filter_gain: None,
        time: None,
        path: "bench/result.h5".into(),
        hashes: vec![("decoder".into(), "0".repeat(64))],
        caution: CAUTION.to_string(),
        software: "patchwise bench".into(),
        notes: Vec::new(),
        flags: vec![String::new(); K],
        labels,
        component_names: (0..K).map(|q| format!("component {q}")).collect(),
        k: K,
        patterns,
        patterns_source: "patterns".into(),
        electrode_positions: Some(montage.positions.clone()),
        sources: Some(sources),
        fit: ResultFit {
            n_atoms,
            coefficients: vec![0.0; n_atoms * K],
            lambda: vec![0.1; K],
            lambda_max: vec![1.0; K],
            duality_gap: vec![1e-9; K],
            iterations: vec![300; K],
            explained_variance: vec![0.97; K],
            residual,
            reconstruction: Some(reconstruction),
            path: Some(path),
        },
        attribution: ResultAttribution {
            region_names: t.region_names.clone(),
            share_low: Some(share.iter().map(|s| 0.9 * s).collect()),
            share_high: Some(share.iter().map(|s| 1.1 * s).collect()),
            selection_frequency: Some(
                share
                    .iter()
                    .map(|&s| if s >= 0.05 { 1.0 } else { 0.0 })
                    .collect(),
            ),
            lead_frequency: None,
            share,
            source_map,
            peak_mm,
            peak_region,
            unassigned_share: vec![0.0; K],
            noise_sd: Some(vec![1e-3; K]),
            leader_probability: Some(vec![0.8; K]),
        },
    }
}

fn main() {
    divan::main();
}

#[divan::bench(sample_count = 5)]
fn build_report_20k_template_64_channels_4_components(bencher: Bencher) {
    let result = result_20k();
    let options = ReportOptions::default();
    bencher.bench_local(|| {
        build_report(divan::black_box(&result), None, &options)
            .unwrap()
            .len()
    });
}
