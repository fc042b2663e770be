//! Mesh validity checks: each bad mesh gives the error naming the right vertex, triangle or edge; reports of open and multi-component meshes.

use patchwise::geometry::{
    check_indices_and_coordinates, isolated_vertices, validate, Adjacency, GeodesicSolver, Mesh,
    MeshError,
};

fn sphere() -> Mesh {
    Mesh::icosphere(2, 0.08)
}

// The expected errors below follow from how each mesh was broken (no
// external source is needed: the test constructs the defect).

#[test]
fn empty_mesh_is_rejected() {
    let mesh = Mesh {
        vertices: vec![[0.0; 3]],
        triangles: vec![],
    };
    assert_eq!(
        validate(&mesh),
        Err(MeshError::Empty {
            vertices: 1,
            triangles: 0
        })
    );
    assert!(GeodesicSolver::new(&mesh).is_err());
}

#[test]
fn index_out_of_range_names_triangle_and_corner() {
    let mut mesh = sphere();
    let n = mesh.n_vertices();
    mesh.triangles[7][1] = (n + 5) as u32;
    mesh.triangles[9][0] = (n + 1) as u32;
    let expected = MeshError::IndexOutOfRange {
        triangle: 7,
        corner: 1,
        vertex: (n + 5) as u32,
        n_vertices: n,
    };
    assert_eq!(validate(&mesh), Err(expected.clone()));
    assert_eq!(Adjacency::new(&mesh), Err(expected.clone()));
    assert_eq!(GeodesicSolver::new(&mesh).err(), Some(expected));
    assert!(validate(&mesh)
        .unwrap_err()
        .to_string()
        .contains("triangle 7"));
}

#[test]
fn nan_coordinate_names_vertex_and_axis() {
    let mut mesh = sphere();
    mesh.vertices[13][2] = f64::NAN;
    mesh.vertices[20][0] = f64::INFINITY;
    match validate(&mesh) {
        Err(MeshError::NonFinite {
            vertex,
            axis,
            value,
        }) => {
            assert_eq!((vertex, axis), (13, 2));
            assert!(value.is_nan());
        }
        other => panic!("expected NonFinite, got {other:?}"),
    }
    assert!(check_indices_and_coordinates(&mesh).is_err());
}

#[test]
fn zero_area_triangle_is_degenerate() {
    let mut mesh = sphere();
    mesh.triangles[5][2] = mesh.triangles[5][0];
    assert_eq!(
        validate(&mesh),
        Err(MeshError::Degenerate {
            triangle: 5,
            ratio: 0.0
        })
    );
    // The tolerance is relative (2·area / longest edge², 1e-10): a sliver of
    // relative height 1e-12 is degenerate and one of 1e-8 is not, at any scale.
    for scale in [1.0, 1e-3] {
        let sliver = |height: f64| Mesh {
            vertices: vec![
                [0.0, 0.0, 0.0],
                [scale, 0.0, 0.0],
                [0.5 * scale, height * scale, 0.0],
            ],
            triangles: vec![[0, 1, 2]],
        };
        assert!(matches!(
            validate(&sliver(1e-12)),
            Err(MeshError::Degenerate { triangle: 0, .. })
        ));
        let report = validate(&sliver(1e-8)).unwrap();
        assert_eq!(report.n_boundary_edges, 3);
        assert_eq!(report.euler_characteristic, 1);
    }
}

#[test]
fn edge_of_three_triangles_is_non_manifold() {
    // A fin on the equator edge of the sphere.
    let mut mesh = sphere();
    let [a, b, _] = mesh.triangles[40];
    let mid = patchwise::geometry::scale(
        patchwise::geometry::add(mesh.vertices[a as usize], mesh.vertices[b as usize]),
        0.5 * 1.3,
    );
    mesh.vertices.push(mid);
    let fin = mesh.n_triangles();
    mesh.triangles.push([a, b, (mesh.n_vertices() - 1) as u32]);
    assert_eq!(
        validate(&mesh),
        Err(MeshError::NonManifoldEdge {
            edge: [a.min(b), a.max(b)],
            triangle: fin,
            count: 3
        })
    );
    // The geodesic solver accepts it (it needs no manifold).
    assert!(GeodesicSolver::new(&mesh).is_ok());
}

#[test]
fn flipped_triangle_is_inconsistent_with_a_neighbour() {
    let mut mesh = sphere();
    mesh.triangles[30].swap(1, 2);
    match validate(&mesh) {
        Err(MeshError::InconsistentOrientation {
            first,
            second,
            from,
            to,
        }) => {
            assert!(first == 30 || second == 30, "{first} {second}");
            let other = if first == 30 { second } else { first };
            // The neighbour shares the named edge.
            for t in [30, other] {
                assert!(mesh.triangles[t].contains(&from) && mesh.triangles[t].contains(&to));
            }
            assert!(first < second);
        }
        other => panic!("expected InconsistentOrientation, got {other:?}"),
    }
}

#[test]
fn inward_closed_surface_is_rejected() {
    let mut mesh = sphere();
    for t in &mut mesh.triangles {
        t.swap(1, 2);
    }
    match validate(&mesh) {
        Err(MeshError::InwardNormals {
            component,
            triangle,
            volume_m3,
        }) => {
            assert_eq!((component, triangle), (0, 0));
            assert!(volume_m3 < 0.0);
        }
        other => panic!("expected InwardNormals, got {other:?}"),
    }
}

#[test]
fn open_and_multi_component_meshes_are_reported() {
    // Removing one triangle from a closed genus-0 surface leaves a disc:
    // 3 boundary edges, V − E + F = 1 (Euler's formula for a disc), no volume.
    let mut open = sphere();
    open.triangles.remove(17);
    let report = validate(&open).unwrap();
    assert_eq!(report.n_boundary_edges, 3);
    assert!(!report.closed);
    assert_eq!(report.euler_characteristic, 1);
    assert_eq!(report.volume_m3, None);

    // Two spheres and an unused vertex: two components with χ = 2 each, and
    // the total V − E + F counts the unused vertex too (2 + 2 + 1).
    let a = Mesh::icosphere(1, 0.05);
    let mut b = Mesh::icosphere(2, 0.02);
    for v in &mut b.vertices {
        v[0] += 0.2;
    }
    let offset = a.n_vertices() as u32;
    let mut vertices = a.vertices.clone();
    vertices.push([1.0, 1.0, 1.0]);
    vertices.extend(&b.vertices);
    let mut triangles = a.triangles.clone();
    triangles.extend(b.triangles.iter().map(|t| t.map(|v| v + offset + 1)));
    let both = Mesh {
        vertices,
        triangles,
    };
    let report = validate(&both).unwrap();
    assert_eq!(report.n_components(), 2);
    assert_eq!(report.n_isolated_vertices, 1);
    assert_eq!(isolated_vertices(&both), vec![a.n_vertices()]);
    assert_eq!(report.euler_characteristic, 5);
    assert_eq!(report.components[1].first_vertex, a.n_vertices() + 1);
    assert_eq!(report.components[1].first_triangle, a.n_triangles());
    for (c, m) in report.components.iter().zip([&a, &b]) {
        assert_eq!(c.euler_characteristic, 2);
        assert_eq!(c.n_vertices, m.n_vertices());
        assert!((c.volume_m3.unwrap() - m.volume()).abs() < 1e-12 * m.volume());
        assert!((c.area_m2 - m.area()).abs() < 1e-12 * m.area());
    }
    assert!(report.closed);
}
