//! Benchmarks of mesh validation, connectivity and geodesic distances (divan).
//!
//! Run with `cargo bench --bench geometry`. The large mesh is two disjoint
//! level-7 icospheres (2 × 163842 = 327684 vertices, 655360 triangles),
//! built outside the timed closures; reading a mesh file is not measured.

use divan::{black_box, Bencher};
use patchwise::geometry::{validate, Adjacency, FrontShape, GeodesicSolver, Mesh};

fn main() {
    divan::main();
}

/// Two level-7 icospheres of radius 80 mm, 0.2 m apart: about 330k vertices.
fn large_mesh() -> Mesh {
    let a = Mesh::icosphere(7, 0.08);
    let offset = a.n_vertices() as u32;
    let mut vertices = a.vertices.clone();
    vertices.extend(a.vertices.iter().map(|p| [p[0] + 0.2, p[1], p[2]]));
    let mut triangles = a.triangles.clone();
    triangles.extend(a.triangles.iter().map(|t| t.map(|v| v + offset)));
    Mesh {
        vertices,
        triangles,
    }
}

#[divan::bench(sample_count = 10)]
fn validate_330k_vertices(bencher: Bencher) {
    let mesh = large_mesh();
    bencher.bench_local(|| validate(black_box(&mesh)));
}

#[divan::bench(sample_count = 10)]
fn adjacency_330k_vertices(bencher: Bencher) {
    let mesh = large_mesh();
    bencher.bench_local(|| Adjacency::new(black_box(&mesh)));
}

/// Icosphere levels 5 and 6 (10242 and 40962 vertices) bracket a 20k-vertex mesh.
#[divan::bench(args = [5, 6], sample_count = 10)]
fn geodesic_solver_new(bencher: Bencher, level: u32) {
    let mesh = Mesh::icosphere(level, 0.08);
    bencher.bench_local(|| GeodesicSolver::new(black_box(&mesh)));
}

#[divan::bench(args = [5, 6])]
fn fast_marching_circular_20mm(bencher: Bencher, level: u32) {
    let solver =
        GeodesicSolver::new(&Mesh::icosphere(level, 0.08)).unwrap_or_else(|e| panic!("{e}"));
    bencher.bench_local(|| solver.distances_within(black_box(777), 0.020));
}

#[divan::bench(args = [5, 6])]
fn fast_marching_planar_20mm(bencher: Bencher, level: u32) {
    let solver = GeodesicSolver::new(&Mesh::icosphere(level, 0.08))
        .unwrap_or_else(|e| panic!("{e}"))
        .with_front_shape(FrontShape::Planar);
    bencher.bench_local(|| solver.distances_within(black_box(777), 0.020));
}

#[divan::bench(args = [5, 6])]
fn edge_dijkstra_20mm(bencher: Bencher, level: u32) {
    let solver =
        GeodesicSolver::new(&Mesh::icosphere(level, 0.08)).unwrap_or_else(|e| panic!("{e}"));
    bencher.bench_local(|| solver.edge_dijkstra_within(black_box(777), 0.020));
}

#[divan::bench(sample_count = 5)]
fn farthest_point_seeds_level6_5mm(bencher: Bencher) {
    let solver = GeodesicSolver::new(&Mesh::icosphere(6, 0.08)).unwrap_or_else(|e| panic!("{e}"));
    bencher.bench_local(|| solver.farthest_point_seeds(black_box(0.005)));
}
