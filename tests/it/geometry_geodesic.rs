//! Geodesic distance accuracy: fast marching and edge Dijkstra against great-circle and planar distances.

use patchwise::geometry::{cross, dot, norm, sub, FrontShape, GeodesicSolver, Mesh, Vec3};

/// Great-circle distance on a sphere of radius `r`: d = R·atan2(|u × v|, u·v)
/// (spherical trigonometry, common practice; the atan2 form stays accurate
/// for small and nearly antipodal angles).
fn great_circle(r: f64, u: Vec3, v: Vec3) -> f64 {
    r * norm(cross(u, v)).atan2(dot(u, v))
}

fn median(mut x: Vec<f64>) -> f64 {
    x.sort_by(f64::total_cmp);
    let n = x.len();
    if n % 2 == 1 {
        x[n / 2]
    } else {
        0.5 * (x[n / 2 - 1] + x[n / 2])
    }
}

/// Relative errors of `found` against `exact(vertex)` for vertices farther
/// than `skip` (exact distance), and how many vertices with exact distance
/// below `must_reach` are missing from `found`.
fn relative_errors(
    found: &[(u32, f64)],
    exact: impl Fn(usize) -> f64,
    skip: f64,
    n_vertices: usize,
    must_reach: f64,
) -> (Vec<f64>, usize) {
    let mut seen = vec![false; n_vertices];
    let mut errors = Vec::new();
    for &(v, d) in found {
        seen[v as usize] = true;
        let e = exact(v as usize);
        if e > skip {
            errors.push((d - e).abs() / e);
        }
    }
    let missing = (0..n_vertices)
        .filter(|&v| !seen[v] && exact(v) < must_reach)
        .count();
    (errors, missing)
}

/// The longest edge of a mesh.
fn longest_edge(mesh: &Mesh) -> f64 {
    (0..mesh.n_triangles())
        .flat_map(|t| {
            let c = mesh.corners(t);
            (0..3).map(move |k| norm(sub(c[k], c[(k + 1) % 3])))
        })
        .fold(0.0, f64::max)
}

/// Median and maximum of a list of relative errors.
fn summary(errors: &[f64]) -> (f64, f64) {
    (
        median(errors.to_vec()),
        errors.iter().cloned().fold(0.0, f64::max),
    )
}

#[test]
fn fast_marching_matches_great_circle_on_icosphere() {
    // Target from the issue: median relative error ≤ 1 %, maximum ≤ 5 %, for
    // points up to 30 mm from the source on an 80 mm icosphere of level 5
    // (10242 vertices). References: great-circle distance (above); fast
    // marching on triangulated domains, Kimmel & Sethian 1998, PNAS 95:8431.
    // Points closer than one (longest) edge to the source are ignored: there
    // the front is not yet planar and the relative error of a first-order
    // scheme is largest. The default circular front is checked against the
    // target; Kimmel & Sethian's planar front and edge Dijkstra are printed
    // beside it, and both must be worse than the default in the median.
    let r = 0.080;
    let mesh = Mesh::icosphere(5, r);
    assert_eq!(mesh.n_vertices(), 10242);
    let solver = GeodesicSolver::new(&mesh).unwrap();
    assert_eq!(solver.front_shape(), FrontShape::Circular);
    let planar = solver.clone().with_front_shape(FrontShape::Planar);
    let h = longest_edge(&mesh);
    let radius = 0.030;
    for source in [0usize, 12, 777, 5000, 10241] {
        let exact = |v: usize| great_circle(r, mesh.vertices[source], mesh.vertices[v]);
        let fmm = solver.distances_within(source, radius);
        let (fe, fmiss) = relative_errors(&fmm, exact, h, mesh.n_vertices(), 0.029);
        let (pe, pmiss) = relative_errors(
            &planar.distances_within(source, radius),
            exact,
            h,
            mesh.n_vertices(),
            0.025,
        );
        let (de, _) = relative_errors(
            &solver.edge_dijkstra_within(source, radius),
            exact,
            h,
            mesh.n_vertices(),
            0.0,
        );
        let ((fmed, fmax), (pmed, pmax), (dmed, dmax)) = (summary(&fe), summary(&pe), summary(&de));
        eprintln!(
            "source {source}: {} points in (h = {:.2} mm, 30 mm]; median / max relative error: circular front {:.3} % / {:.3} %, planar front {:.3} % / {:.3} %, edge Dijkstra {:.3} % / {:.3} %",
            fe.len(),
            h * 1e3,
            100.0 * fmed,
            100.0 * fmax,
            100.0 * pmed,
            100.0 * pmax,
            100.0 * dmed,
            100.0 * dmax
        );
        // The mesh distance is a little shorter than the great circle, so
        // every vertex up to 29 mm must be reached.
        assert_eq!(fmiss, 0, "fast marching missed vertices within 29 mm");
        assert_eq!(
            pmiss, 0,
            "planar fast marching missed vertices within 25 mm"
        );
        assert!(fe.len() > 300, "too few points compared: {}", fe.len());
        assert!(fmed <= 0.01, "median relative error {fmed}");
        assert!(fmax <= 0.05, "maximum relative error {fmax}");
        // Edge paths overestimate (Crane, Weischedel & Wardetzky 2013, ACM
        // TOG 32(5):152); any triangle update must beat them in the median.
        assert!(
            pmed < dmed,
            "planar front {pmed} not better than Dijkstra {dmed}"
        );
        assert!(
            fmed < pmed,
            "circular front {fmed} not better than planar {pmed}"
        );
        // Output is sorted by distance and never exceeds the radius.
        assert!(fmm.windows(2).all(|w| w[0].1 <= w[1].1));
        assert!(fmm.iter().all(|&(_, d)| d <= radius));
    }
}

/// A flat strip triangulated with obtuse triangles (apex angle about 118°):
/// rows of points at height j·k, odd rows shifted by half a step.
fn obtuse_plane(nx: usize, ny: usize, h: f64, k: f64) -> Mesh {
    let mut vertices = Vec::new();
    for j in 0..ny {
        for i in 0..nx {
            let shift = if j % 2 == 1 { 0.5 * h } else { 0.0 };
            vertices.push([i as f64 * h + shift, j as f64 * k, 0.0]);
        }
    }
    let id = |i: usize, j: usize| (j * nx + i) as u32;
    let mut triangles = Vec::new();
    for j in 0..ny - 1 {
        for i in 0..nx - 1 {
            if j % 2 == 0 {
                triangles.push([id(i, j), id(i + 1, j), id(i, j + 1)]);
                triangles.push([id(i + 1, j), id(i + 1, j + 1), id(i, j + 1)]);
            } else {
                triangles.push([id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
                triangles.push([id(i, j), id(i + 1, j), id(i + 1, j + 1)]);
            }
        }
    }
    Mesh {
        vertices,
        triangles,
    }
}

#[test]
fn fast_marching_with_unfolding_matches_planar_distance_on_obtuse_mesh() {
    // On a plane the geodesic distance is the Euclidean one (exact). Obtuse
    // corners are split by unfolding as in Kimmel & Sethian 1998 (PNAS
    // 95:8431); tolerance as for the sphere: median ≤ 1 %, maximum ≤ 5 %,
    // ignoring points within one longest edge of the source.
    let (h, k) = (1.0e-3, 0.3e-3);
    let mesh = obtuse_plane(81, 201, h, k);
    let solver = GeodesicSolver::new(&mesh).unwrap();
    let (split, unsplit) = solver.obtuse_corners();
    eprintln!("obtuse corners: {split} split by unfolding, {unsplit} left to edge updates");
    assert!(
        split > 10_000,
        "expected obtuse corners to be split, got {split}"
    );
    let skip = longest_edge(&mesh);
    let source = 100 * 81 + 40; // the centre of the strip
    let exact = |v: usize| norm(sub(mesh.vertices[v], mesh.vertices[source]));
    let radius = 0.025;
    let fmm = solver.distances_within(source, radius);
    let dij = solver.edge_dijkstra_within(source, radius);
    let (fe, fmiss) = relative_errors(&fmm, exact, skip, mesh.n_vertices(), 0.024);
    let (de, _) = relative_errors(&dij, exact, skip, mesh.n_vertices(), 0.0);
    let planar = solver.clone().with_front_shape(FrontShape::Planar);
    let (pe, _) = relative_errors(
        &planar.distances_within(source, radius),
        exact,
        skip,
        mesh.n_vertices(),
        0.0,
    );
    let ((fmed, fmax), (pmed, pmax), (dmed, dmax)) = (summary(&fe), summary(&pe), summary(&de));
    eprintln!(
        "obtuse plane: {} points; median / max relative error: circular front {:.3} % / {:.3} %, planar front {:.3} % / {:.3} %, edge Dijkstra {:.3} % / {:.3} %",
        fe.len(),
        100.0 * fmed,
        100.0 * fmax,
        100.0 * pmed,
        100.0 * pmax,
        100.0 * dmed,
        100.0 * dmax
    );
    assert!(
        pmed < dmed,
        "planar front {pmed} not better than Dijkstra {dmed}"
    );
    assert_eq!(fmiss, 0);
    assert!(fmed <= 0.01, "median relative error {fmed}");
    assert!(fmax <= 0.05, "maximum relative error {fmax}");
}

#[test]
fn bad_queries_give_empty_lists() {
    let mesh = Mesh::icosphere(1, 0.08);
    let solver = GeodesicSolver::new(&mesh).unwrap();
    assert!(solver.distances_within(mesh.n_vertices(), 0.01).is_empty());
    assert!(solver.distances_within(0, f64::NAN).is_empty());
    assert!(solver.distances_within(0, -1.0).is_empty());
    assert_eq!(solver.distances_within(0, 0.0), vec![(0, 0.0)]);
}

/// An open cylinder of radius `r` around the z axis: `n_around` columns,
/// `n_up` rows `dz` apart, each grid square split along one diagonal.
fn cylinder(r: f64, n_around: usize, n_up: usize, dz: f64) -> Mesh {
    let mut vertices = Vec::new();
    for j in 0..n_up {
        for i in 0..n_around {
            let phi = 2.0 * std::f64::consts::PI * i as f64 / n_around as f64;
            vertices.push([r * phi.cos(), r * phi.sin(), j as f64 * dz]);
        }
    }
    let id = |i: usize, j: usize| (j * n_around + i % n_around) as u32;
    let mut triangles = Vec::new();
    for j in 0..n_up - 1 {
        for i in 0..n_around {
            triangles.push([id(i, j), id(i + 1, j), id(i + 1, j + 1)]);
            triangles.push([id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
        }
    }
    Mesh {
        vertices,
        triangles,
    }
}

#[test]
fn fast_marching_matches_unrolled_distance_on_cylinder() {
    // A cylinder is developable: unrolled, the geodesic distance is the
    // planar one, d = sqrt((r·Δφ)² + Δz²) for |Δφ| ≤ π (common practice, no
    // source). Right-angled triangles with one diagonal direction make the
    // edge graph anisotropic. Tolerance as on the sphere (median ≤ 1 %,
    // maximum ≤ 5 %), ignoring points within one longest edge.
    let r = 0.03;
    let (n_around, n_up, dz) = (120, 61, 1.0e-3);
    let mesh = cylinder(r, n_around, n_up, dz);
    let solver = GeodesicSolver::new(&mesh).unwrap();
    let source = 30 * n_around + 7;
    let exact = |v: usize| {
        let (p, q) = (mesh.vertices[source], mesh.vertices[v]);
        let dphi = (p[0] * q[1] - p[1] * q[0]).atan2(p[0] * q[0] + p[1] * q[1]);
        ((r * dphi).powi(2) + (q[2] - p[2]).powi(2)).sqrt()
    };
    let radius = 0.025;
    let fmm = solver.distances_within(source, radius);
    let (fe, fmiss) = relative_errors(&fmm, exact, longest_edge(&mesh), mesh.n_vertices(), 0.024);
    let (de, _) = relative_errors(
        &solver.edge_dijkstra_within(source, radius),
        exact,
        longest_edge(&mesh),
        mesh.n_vertices(),
        0.0,
    );
    let ((fmed, fmax), (dmed, dmax)) = (summary(&fe), summary(&de));
    eprintln!(
        "cylinder: {} points; median / max relative error: circular front {:.3} % / {:.3} %, edge Dijkstra {:.3} % / {:.3} %",
        fe.len(),
        100.0 * fmed,
        100.0 * fmax,
        100.0 * dmed,
        100.0 * dmax
    );
    assert_eq!(fmiss, 0);
    assert!(fmed <= 0.01, "median relative error {fmed}");
    assert!(fmax <= 0.05, "maximum relative error {fmax}");
}

#[test]
fn results_do_not_depend_on_the_thread_count() {
    // House rule (docs/style.md, brief): identical results whatever the rayon
    // thread count. The solver is built in pools of 1 and 2 threads and
    // queried from many threads at once; all distances must agree exactly.
    let mesh = Mesh::icosphere(4, 0.08);
    let build = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| GeodesicSolver::new(&mesh).unwrap())
    };
    let (one, two) = (build(1), build(2));
    use rayon::prelude::*;
    let serial: Vec<_> = (0..40)
        .map(|s| one.distances_within(s * 60, 0.02))
        .collect();
    let parallel: Vec<_> = (0..40usize)
        .into_par_iter()
        .map(|s| two.distances_within(s * 60, 0.02))
        .collect();
    assert_eq!(serial, parallel);
    assert_eq!(one.obtuse_corners(), two.obtuse_corners());
}
