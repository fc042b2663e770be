//! Icosphere convergence, Euler characteristics and connectivity of closed meshes.

use std::f64::consts::PI;

use patchwise::geometry::{validate, Adjacency, Mesh};

/// A unit cube of side `s` (m) with outward counter-clockwise triangles;
/// vertex index = x + 2y + 4z with x, y, z in {0, 1}.
pub fn cube(s: f64) -> Mesh {
    let vertices = (0..8)
        .map(|i| {
            [
                (i & 1) as f64 * s,
                ((i >> 1) & 1) as f64 * s,
                ((i >> 2) & 1) as f64 * s,
            ]
        })
        .collect();
    let triangles = vec![
        [0, 2, 3],
        [0, 3, 1],
        [4, 5, 7],
        [4, 7, 6],
        [0, 1, 5],
        [0, 5, 4],
        [2, 6, 7],
        [2, 7, 3],
        [0, 4, 6],
        [0, 6, 2],
        [1, 3, 7],
        [1, 7, 5],
    ];
    Mesh {
        vertices,
        triangles,
    }
}

#[test]
fn icosphere_area_and_volume_converge_at_second_order() {
    // Sphere area 4πr² and volume 4/3 πr³ (the formulas for a sphere). An
    // inscribed polyhedron with edges of length h misses O(h²) of both
    // (common practice, no source); each level halves h, so the observed
    // order p = log2(e_L / e_{L+1}) must be 2 within 0.05 from level 2 on.
    let r = 0.08;
    let exact_area = 4.0 * PI * r * r;
    let exact_volume = 4.0 / 3.0 * PI * r * r * r;
    let mut previous: Option<(f64, f64)> = None;
    for level in 1..=6 {
        let report = validate(&Mesh::icosphere(level, r)).unwrap();
        let ea = exact_area - report.area_m2;
        let ev = exact_volume - report.volume_m3.unwrap();
        // Inscribed: both are below the sphere's.
        assert!(ea > 0.0 && ev > 0.0, "level {level}: {ea} {ev}");
        if let Some((pa, pv)) = previous {
            let (order_area, order_volume) = ((pa / ea).log2(), (pv / ev).log2());
            eprintln!(
                "level {level}: area error {:.3e} (relative {:.2e}), order {order_area:.4}; volume error {:.3e} (relative {:.2e}), order {order_volume:.4}",
                ea,
                ea / exact_area,
                ev,
                ev / exact_volume,
            );
            if level >= 3 {
                assert!((order_area - 2.0).abs() < 0.05, "area order {order_area}");
                assert!(
                    (order_volume - 2.0).abs() < 0.05,
                    "volume order {order_volume}"
                );
            }
        }
        previous = Some((ea, ev));
    }
    // At level 6 both are within 0.1 % of the sphere (follows from the order).
    let (ea, ev) = previous.unwrap();
    assert!(ea / exact_area < 1e-3 && ev / exact_volume < 1e-3);
}

#[test]
fn euler_characteristic_is_two_on_closed_genus_zero_meshes() {
    // Euler's polyhedron formula V − E + F = 2 for closed genus-0 surfaces;
    // the icosahedron has V = 12, E = 30, F = 20 and each subdivision
    // quadruples the faces, so level L has F = 20·4^L, E = 30·4^L,
    // V = 10·4^L + 2 (follows from E = 3F/2 on a closed triangle mesh).
    for level in 0..=5u32 {
        let report = validate(&Mesh::icosphere(level, 0.08)).unwrap();
        let four = 4usize.pow(level);
        assert_eq!(report.n_triangles, 20 * four);
        assert_eq!(report.n_edges, 30 * four);
        assert_eq!(report.n_vertices, 10 * four + 2);
        assert_eq!(report.euler_characteristic, 2);
        assert_eq!(report.n_components(), 1);
        assert_eq!(report.components[0].euler_characteristic, 2);
        assert!(report.closed);
        assert_eq!(report.n_boundary_edges, 0);
    }
    // The cube: V = 8, E = 18 (12 sides + 6 diagonals), F = 12; volume s³ and
    // area 6 s² (elementary geometry), to rounding.
    let s = 0.05;
    let report = validate(&cube(s)).unwrap();
    assert_eq!(
        (report.n_vertices, report.n_edges, report.n_triangles),
        (8, 18, 12)
    );
    assert_eq!(report.euler_characteristic, 2);
    assert!((report.volume_m3.unwrap() - s * s * s).abs() < 1e-15);
    assert!((report.area_m2 - 6.0 * s * s).abs() < 1e-15);
}

#[test]
fn adjacency_of_icosphere_has_valences_five_and_six() {
    // A subdivided icosahedron keeps its 12 original vertices of valence 5;
    // every new vertex has valence 6 (common practice, no source). On a
    // closed mesh a vertex has as many triangles as neighbours.
    let mesh = Mesh::icosphere(3, 0.08);
    let adjacency = Adjacency::new(&mesh).unwrap();
    let mut fives = 0;
    for v in 0..mesh.n_vertices() {
        let neighbours = adjacency.neighbours_of(v);
        assert!(
            neighbours.windows(2).all(|w| w[0] < w[1]),
            "vertex {v} unsorted"
        );
        assert!(neighbours
            .iter()
            .all(|&w| adjacency.neighbours_of(w as usize).contains(&(v as u32))));
        assert_eq!(adjacency.triangles_of(v).len(), neighbours.len());
        match neighbours.len() {
            5 => fives += 1,
            6 => {}
            d => panic!("vertex {v} has valence {d}"),
        }
    }
    assert_eq!(fives, 12);
    assert_eq!(adjacency.neighbours.len(), 2 * adjacency.n_edges());
    for e in 0..adjacency.n_edges() {
        assert_eq!(adjacency.half_edges_of(e).len(), 2);
        let [a, b] = adjacency.edges[e];
        assert_eq!(adjacency.find_edge(b, a), Some(e));
    }
    assert_eq!(adjacency.n_boundary_edges(), 0);
}
