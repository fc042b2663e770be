//! Farthest-point seeds: coverage and separation on a sphere, one start per component, bad spacings.

use std::f64::consts::PI;

use patchwise::geometry::{cross, dot, farthest_point_seeds, norm, Mesh, MeshError, Vec3};

/// Great-circle distance d = R·atan2(|u × v|, u·v) (common practice).
fn great_circle(r: f64, u: Vec3, v: Vec3) -> f64 {
    r * norm(cross(u, v)).atan2(dot(u, v))
}

/// Area of a spherical cap of geodesic radius s: 2πR²(1 − cos(s/R)) (the
/// formula for a spherical cap, common practice).
fn cap(r: f64, s: f64) -> f64 {
    2.0 * PI * r * r * (1.0 - (s / r).cos())
}

#[test]
fn seeds_cover_the_sphere_and_stay_apart() {
    let r = 0.08;
    let spacing = 0.010;
    let mesh = Mesh::icosphere(4, r);
    let seeds = farthest_point_seeds(&mesh, spacing).unwrap();
    assert_eq!(seeds[0], 0);
    // Coverage: every vertex within the spacing of a seed, measured by the
    // great circle; 2 % slack for the fast-marching error (below 0.1 % on
    // this mesh, see geometry_geodesic.rs) and the inscribed mesh.
    let mut worst: f64 = 0.0;
    for p in &mesh.vertices {
        let nearest = seeds
            .iter()
            .map(|&s| great_circle(r, mesh.vertices[s], *p))
            .fold(f64::INFINITY, f64::min);
        worst = worst.max(nearest);
    }
    // Separation: each seed was farther than the spacing from all earlier
    // ones when it was chosen (the farthest-point rule).
    let mut closest = f64::INFINITY;
    for (i, &a) in seeds.iter().enumerate() {
        for &b in &seeds[..i] {
            closest = closest.min(great_circle(r, mesh.vertices[a], mesh.vertices[b]));
        }
    }
    eprintln!(
        "{} seeds at spacing {} mm: farthest vertex {:.3} mm from a seed, closest seeds {:.3} mm apart",
        seeds.len(),
        spacing * 1e3,
        worst * 1e3,
        closest * 1e3
    );
    assert!(worst <= 1.02 * spacing, "coverage {worst}");
    assert!(closest >= 0.98 * spacing, "separation {closest}");
    // Count bounds: caps of radius `spacing` cover the sphere, so at least
    // area / cap(spacing) seeds; caps of radius spacing/2 around the seeds are
    // disjoint, so at most area / cap(spacing/2) (covering and packing
    // arguments, common practice), with the 2 % slacks above.
    let area = 4.0 * PI * r * r;
    let (low, high) = (area / cap(r, 1.02 * spacing), area / cap(r, 0.49 * spacing));
    assert!(
        (seeds.len() as f64) >= low && (seeds.len() as f64) <= high,
        "{} seeds, expected {low:.0}..{high:.0}",
        seeds.len()
    );
    // Distinct seeds.
    let mut sorted = seeds.clone();
    sorted.sort_unstable();
    sorted.dedup();
    assert_eq!(sorted.len(), seeds.len());
}

#[test]
fn each_component_starts_at_its_lowest_vertex() {
    // Two spheres far apart and an unused vertex between them: with a spacing
    // larger than either sphere, one seed per component, at its first vertex.
    let a = Mesh::icosphere(2, 0.02);
    let mut vertices = a.vertices.clone();
    vertices.push([0.5, 0.0, 0.0]);
    let offset = vertices.len() as u32;
    vertices.extend(a.vertices.iter().map(|p| [p[0] + 1.0, p[1], p[2]]));
    let mut triangles = a.triangles.clone();
    triangles.extend(a.triangles.iter().map(|t| t.map(|v| v + offset)));
    let mesh = Mesh {
        vertices,
        triangles,
    };
    let seeds = farthest_point_seeds(&mesh, 1.0).unwrap();
    assert_eq!(seeds, vec![0, offset as usize]);
}

#[test]
fn bad_spacing_is_an_error() {
    let mesh = Mesh::icosphere(1, 0.08);
    for spacing in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        assert!(matches!(
            farthest_point_seeds(&mesh, spacing),
            Err(MeshError::InvalidSpacing { .. })
        ));
    }
}
