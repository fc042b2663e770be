//! Benchmarks of the cohort comparison: `compare` over 100 synthetic results
//! on template-5k, the smoothing kernel, and nearest-neighbour vertex maps.

use std::sync::OnceLock;

use patchwise::attribution::rng::SplitMix64;
use patchwise::cohort::mapping::nearest_on_sphere;
use patchwise::cohort::{
    compare, region_transport_costs, CompareParams, SmoothingKernel, SubjectResult, TransportCosts,
};
use patchwise::geometry::{normalize, template, GeodesicSolver, Template, TemplateResolution};

fn main() {
    divan::main();
}

struct Data {
    t: Template,
    kernel: SmoothingKernel,
    costs: TransportCosts,
    subjects: Vec<SubjectResult>,
}

/// 100 synthetic subjects with 3 components each: shares from random
/// positive weights, intervals ± 0.05, and sparse source maps (three
/// geodesic patches of 10 mm per component), as a fit would give.
fn data() -> &'static Data {
    static DATA: OnceLock<Data> = OnceLock::new();
    DATA.get_or_init(|| {
        let t = template(TemplateResolution::Low);
        let solver = GeodesicSolver::new(&t.mesh).expect("template mesh");
        let kernel = SmoothingKernel::new(&solver, 0.010, 3.0).expect("kernel");
        let areas = t.mesh.vertex_areas();
        let n_r = t.region_names.len();
        let costs = region_transport_costs(&t.mesh.vertices, &areas, &t.region, n_r, &solver)
            .expect("costs");
        let n = t.mesh.n_vertices();
        let k = 3;
        let mut rng = SplitMix64::new(1, 0);
        let subjects = (0..100)
            .map(|i| {
                let mut share = vec![0.0; n_r * k];
                let mut map = vec![0.0; n * k];
                for c in 0..k {
                    let w: Vec<f64> = (0..n_r).map(|_| rng.uniform().powi(4)).collect();
                    let total: f64 = w.iter().sum();
                    for r in 0..n_r {
                        share[r * k + c] = w[r] / total;
                    }
                    for _ in 0..3 {
                        let seed = ((rng.uniform() * n as f64) as usize).min(n - 1);
                        for (v, d) in solver.distances_within(seed, 0.010) {
                            map[v as usize * k + c] += 1e-9 * (-(d / 0.005).powi(2)).exp();
                        }
                    }
                }
                SubjectResult {
                    name: format!("sub-{i:03}"),
                    component_names: (0..k).map(|c| format!("c{c}")).collect(),
                    region_names: t.region_names.clone(),
                    share_low: Some(share.iter().map(|x| x - 0.05).collect()),
                    share_high: Some(share.iter().map(|x| x + 0.05).collect()),
                    selection_frequency: Some(share.iter().map(|x| x.min(1.0)).collect()),
                    share,
                    source_map: map,
                    filter_gain: None,
                }
            })
            .collect();
        Data {
            t,
            kernel,
            costs,
            subjects,
        }
    })
}

/// `compare` over 100 results × 3 components on template-5k with the
/// defaults: 2000 bootstrap resamples, 10 000 sign flips, smoothed cosines
/// and Sinkhorn transport for all 4950 pairs (kernel and costs prebuilt).
#[divan::bench(sample_count = 5)]
fn compare_100_results_template_5k() -> usize {
    let d = data();
    let out = compare(
        &d.subjects,
        &d.kernel,
        &d.t.region,
        Some(&d.costs),
        &CompareParams::default(),
    )
    .expect("compare");
    out.components.len()
}

/// The per-mesh setup `patchwise compare` adds: the geodesic smoothing
/// kernel (σ = 10 mm, cut at 30 mm) and the centroid transport costs.
#[divan::bench(args = ["template-5k", "template"], sample_count = 3)]
fn kernel_and_costs(bencher: divan::Bencher, name: &str) {
    let t = template(TemplateResolution::from_name(name).unwrap_or(TemplateResolution::Low));
    let solver = GeodesicSolver::new(&t.mesh).expect("template mesh");
    let areas = t.mesh.vertex_areas();
    bencher.bench(|| {
        let kernel = SmoothingKernel::new(&solver, 0.010, 3.0).expect("kernel");
        let costs = region_transport_costs(
            &t.mesh.vertices,
            &areas,
            &t.region,
            t.region_names.len(),
            &solver,
        )
        .expect("costs");
        kernel.weights.len() + costs.cost_m.len()
    });
}

fn directions(n: usize, seed: u64) -> Vec<[f64; 3]> {
    let mut rng = SplitMix64::new(seed, 0);
    (0..n)
        .map(|_| normalize([rng.normal(), rng.normal(), rng.normal()]))
        .collect()
}

/// Nearest neighbour between two registered spheres of 20 484 vertices
/// (the size of the standard template) with the grid.
#[divan::bench(sample_count = 5)]
fn nearest_on_sphere_grid_20k(bencher: divan::Bencher) {
    let (s, t) = (directions(20_484, 1), directions(20_484, 2));
    bencher.bench(|| nearest_on_sphere("s", &s, &t).expect("map").target.len());
}

/// The same by brute force, for comparison.
#[divan::bench(sample_count = 2)]
fn nearest_on_sphere_brute_force_20k(bencher: divan::Bencher) {
    let (s, t) = (directions(20_484, 1), directions(20_484, 2));
    bencher.bench(|| {
        s.iter()
            .map(|q| {
                let mut best = (f64::INFINITY, 0usize);
                for (i, p) in t.iter().enumerate() {
                    let d = (p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2);
                    if d < best.0 {
                        best = (d, i);
                    }
                }
                best.1
            })
            .sum::<usize>()
    });
}

/// As `compare_100_results_template_5k` without the transport distance.
#[divan::bench(sample_count = 5)]
fn compare_100_results_template_5k_no_transport() -> usize {
    let d = data();
    let params = CompareParams {
        transport_epsilon_relative: None,
        ..CompareParams::default()
    };
    let out = compare(&d.subjects, &d.kernel, &d.t.region, None, &params).expect("compare");
    out.components.len()
}
