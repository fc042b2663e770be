//! The surface checks of the boundary-element head: what is refused (open,
//! non-manifold, non-nested or crossing surfaces, wrong conductivities,
//! electrodes far from the scalp) with the surface named, and what is
//! repaired with a note (inward or inconsistently turned triangles).

use patchwise::geometry::Mesh;
use patchwise::head::bem::{project_to_scalp, BemError, BemGeometry, BemSystem};

fn names(n: usize) -> Vec<String> {
    [
        "inner_skull.gii",
        "outer_skull.gii",
        "scalp.gii",
        "fourth.gii",
    ][..n]
        .iter()
        .map(|s| s.to_string())
        .collect()
}

fn shells(radii: &[f64]) -> Vec<Mesh> {
    radii.iter().map(|&r| Mesh::icosphere(1, r)).collect()
}

fn check(surfaces: Vec<Mesh>, sigma: Vec<f64>) -> Result<BemGeometry, BemError> {
    let n = surfaces.len();
    BemGeometry::new(surfaces, names(n), sigma).map(|(g, _)| g)
}

#[test]
fn conductivity_count_and_sign_are_checked() {
    let err = check(shells(&[0.08, 0.09]), vec![0.33]).unwrap_err();
    assert!(matches!(
        err,
        BemError::ConductivityCount {
            surfaces: 2,
            conductivities: 1
        }
    ));
    let err = check(shells(&[0.08, 0.09]), vec![0.33, 0.0]).unwrap_err();
    assert!(err.to_string().contains("outer_skull.gii"), "{err}");
    assert!(err.to_string().contains("positive"), "{err}");
    let err = check(shells(&[0.08, 0.09]), vec![-1.0, 0.3]).unwrap_err();
    assert!(err.to_string().contains("inner_skull.gii"), "{err}");
    let err = check(Vec::new(), Vec::new()).unwrap_err();
    assert!(matches!(err, BemError::SurfaceCount { count: 0, .. }));
}

#[test]
fn an_open_surface_is_refused_by_name() {
    let mut surfaces = shells(&[0.08, 0.09]);
    surfaces[1].triangles.pop();
    let err = check(surfaces, vec![0.33, 0.33]).unwrap_err();
    assert!(
        matches!(
            err,
            BemError::Open {
                boundary_edges: 3,
                ..
            }
        ),
        "{err}"
    );
    assert!(err.to_string().contains("outer_skull.gii is open"), "{err}");
}

#[test]
fn a_non_manifold_surface_is_refused_by_name() {
    // A fourth triangle on one edge of the icosphere: three triangles
    // share an edge (and it makes a boundary, so either message is fair;
    // the surface is named in both).
    let mut surfaces = shells(&[0.08]);
    let [a, b, _] = surfaces[0].triangles[0];
    surfaces[0].vertices.push([0.0, 0.0, 0.0]);
    let extra = (surfaces[0].vertices.len() - 1) as u32;
    surfaces[0].triangles.push([a, b, extra]);
    let err = check(surfaces, vec![0.33]).unwrap_err();
    assert!(err.to_string().contains("inner_skull.gii"), "{err}");
}

#[test]
fn inward_and_mixed_triangles_are_turned_with_a_note() {
    let mut surfaces = shells(&[0.08, 0.09]);
    // The whole inner surface inward.
    for t in &mut surfaces[0].triangles {
        t.swap(1, 2);
    }
    // Three triangles of the outer surface turned.
    for t in [0, 7, 30] {
        surfaces[1].triangles[t].swap(0, 1);
    }
    let (geometry, notes) = BemGeometry::new(surfaces, names(2), vec![0.33, 0.33]).unwrap();
    assert_eq!(notes.reoriented.len(), 2, "{notes:?}");
    assert!(
        notes.reoriented[0].contains("inner_skull.gii: 80 of 80"),
        "{notes:?}"
    );
    assert!(
        notes.reoriented[1].contains("outer_skull.gii: 3 of 80"),
        "{notes:?}"
    );
    // Every triangle now runs as in the icosphere (up to where it starts).
    let start_at_lowest = |t: [u32; 3]| {
        let k = (0..3).min_by_key(|&k| t[k]).unwrap();
        [t[k], t[(k + 1) % 3], t[(k + 2) % 3]]
    };
    for (s, r) in geometry.surfaces().iter().zip([0.08, 0.09]) {
        assert!(s.volume() > 0.0);
        let fresh = Mesh::icosphere(1, r);
        for (a, b) in s.triangles.iter().zip(&fresh.triangles) {
            assert_eq!(start_at_lowest(*a), start_at_lowest(*b));
        }
    }
}

#[test]
fn surfaces_out_of_order_or_crossing_are_refused_with_the_gap() {
    // Outer first: the 90 mm sphere is not inside the 80 mm one.
    let err = check(shells(&[0.09, 0.08]), vec![0.33, 0.33]).unwrap_err();
    let text = err.to_string();
    assert!(
        matches!(
            err,
            BemError::NotNested {
                where_: "outside",
                ..
            }
        ),
        "{text}"
    );
    assert!(
        text.contains("inner_skull.gii is not inside surface outer_skull.gii"),
        "{text}"
    );
    // Shifted 15 mm: the two spheres of 80 and 90 mm cross.
    let mut surfaces = shells(&[0.08, 0.09]);
    for v in &mut surfaces[0].vertices {
        v[0] += 0.015;
    }
    let err = check(surfaces, vec![0.33, 0.33]).unwrap_err();
    assert!(matches!(err, BemError::NotNested { .. }), "{err}");
    assert!(err.to_string().contains("minimum gap"), "{err}");
}

#[test]
fn electrodes_far_from_the_scalp_are_refused_by_label() {
    let (geometry, _) =
        BemGeometry::new(shells(&[0.08, 0.09]), names(2), vec![0.33, 0.02]).unwrap();
    let system = BemSystem::build(geometry, &|_| {}).unwrap();
    let labels: Vec<String> = vec!["Cz".into(), "Oz".into()];
    // 25 mm outside is accepted (the limit is 30 mm), with the distance.
    let points =
        project_to_scalp(&system, &[[0.0, 0.0, 0.115], [0.0, -0.09, 0.0]], &labels).unwrap();
    assert!(
        (points[0].distance - 0.025).abs() < 0.001,
        "{:?}",
        points[0]
    );
    // 35 mm outside (metres read as mm would be far more) is refused.
    let err =
        project_to_scalp(&system, &[[0.0, 0.0, 0.125], [0.0, -0.09, 0.0]], &labels).unwrap_err();
    assert!(err.to_string().contains("electrode Cz"), "{err}");
    assert!(
        err.to_string().contains("scalp surface outer_skull.gii"),
        "{err}"
    );
}
