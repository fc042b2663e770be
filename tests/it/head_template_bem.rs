//! The template head of our own (`template-bem`): its surfaces pass the
//! boundary-element surface checks, hold the template cortex, and have the
//! shape and skull thicknesses they were built with.

use patchwise::geometry::{template, Mesh, TemplateResolution};
use patchwise::head::bem::{check_sources_inside, nearest_on_mesh, BemGeometry};
use patchwise::head::template_head::{
    surface_point, template_head_centre, template_head_surfaces, TemplateSurface,
    LENGTH_WIDTH_RATIO, TEMPLATE_HEAD_CONDUCTIVITIES, TEMPLATE_HEAD_SURFACES,
};

fn geometry() -> (BemGeometry, patchwise::head::bem::GeometryNotes) {
    BemGeometry::new(
        template_head_surfaces(),
        TEMPLATE_HEAD_SURFACES
            .iter()
            .map(|s| s.to_string())
            .collect(),
        TEMPLATE_HEAD_CONDUCTIVITIES.to_vec(),
    )
    .expect("the template head passes the surface checks")
}

#[test]
fn geodesic_sphere_has_ten_n_squared_plus_two_vertices_on_the_sphere() {
    // Euler's formula for a closed genus-0 triangle mesh: V − E + F = 2 with
    // F = 20 n² and E = 3F/2 gives V = 10 n² + 2 (common practice, no source).
    for n in [1u32, 3, 12] {
        let m = Mesh::geodesic_sphere(n, 0.09);
        assert_eq!(m.n_vertices() as u32, 10 * n * n + 2);
        assert_eq!(m.n_triangles() as u32, 20 * n * n);
        for v in &m.vertices {
            assert!((patchwise::geometry::norm(*v) - 0.09).abs() < 1e-12);
        }
        // Closed and outward: the enclosed volume is positive and below the
        // sphere's (the flat triangles are inscribed).
        let ball = 4.0 / 3.0 * std::f64::consts::PI * 0.09f64.powi(3);
        assert!(m.volume() > 0.0 && m.volume() < ball);
        patchwise::geometry::validate(&m).expect("a valid closed mesh");
    }
}

#[test]
fn surfaces_pass_the_checks_nested_outward_and_hold_the_cortex() {
    let (g, notes) = geometry();
    assert!(notes.reoriented.is_empty(), "{:?}", notes.reoriented);
    let counts: Vec<usize> = g.surfaces().iter().map(Mesh::n_vertices).collect();
    assert_eq!(counts, vec![2562, 1442, 1442]);
    // The smallest gaps: skull 4 mm at the sides, scalp 6 mm (as built);
    // the flat triangles cut the curved surfaces by well under 0.5 mm.
    assert!((notes.gaps_m[0] - 0.004).abs() < 5e-4, "{:?}", notes.gaps_m);
    assert!((notes.gaps_m[1] - 0.006).abs() < 5e-4, "{:?}", notes.gaps_m);
    let cortex = template(TemplateResolution::Standard);
    check_sources_inside(&g.surfaces()[0], "inner", &cortex.mesh.vertices)
        .expect("the cortex lies inside the inner skull");
    let (clearance, at) = cortex
        .mesh
        .vertices
        .iter()
        .map(|&p| (nearest_on_mesh(&g.surfaces()[0], p).2, p))
        .fold(
            (f64::INFINITY, [0.0; 3]),
            |a, b| if b.0 < a.0 { b } else { a },
        );
    eprintln!("cortex clearance {:.2} mm at {:?}", clearance * 1e3, at);
    assert!(clearance > 0.003, "clearance {clearance}");
}

#[test]
fn shape_ratio_and_skull_thickness_are_as_built() {
    let surfaces = template_head_surfaces();
    let scalp = &surfaces[2];
    let extent = |axis: usize| {
        let (lo, hi) = scalp
            .vertices
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
                (lo.min(v[axis]), hi.max(v[axis]))
            });
        hi - lo
    };
    let (width, length) = (extent(0), extent(1));
    eprintln!(
        "scalp length {:.1} mm, width {:.1} mm",
        length * 1e3,
        width * 1e3
    );
    // As built (202 mm / 160 mm), to the mesh's sampling of the extremes.
    assert!((length / width - LENGTH_WIDTH_RATIO).abs() < 0.01);
    // Adult cephalic index (width/length) about 0.75–0.83 (from memory).
    assert!((1.20..=1.33).contains(&(length / width)));
    // Skull thickness measured on the meshes: from the outer skull's point
    // straight back / to either side, the distance to the inner skull mesh
    // (the normal there is radial, so this is the thickness).
    let thickness = |u: [f64; 3]| {
        nearest_on_mesh(&surfaces[0], surface_point(TemplateSurface::OuterSkull, u)).2
    };
    let back = thickness([0.0, -1.0, 0.0]);
    let left = thickness([-1.0, 0.0, 0.0]);
    let right = thickness([1.0, 0.0, 0.0]);
    let top = thickness([0.0, 0.0, 1.0]);
    eprintln!(
        "skull back {:.2} sides {:.2}/{:.2} top {:.2} mm",
        back * 1e3,
        left * 1e3,
        right * 1e3,
        top * 1e3
    );
    // Built: 8 mm back, 4 mm at the sides, 6 mm at the vertex (typical adult
    // values, from memory); the inscribed flat triangles add < 0.3 mm.
    for (got, want) in [(back, 0.008), (left, 0.004), (right, 0.004), (top, 0.006)] {
        assert!((got - want).abs() < 3e-4, "{got} vs {want}");
    }
    assert!(template_head_centre()[2] < 0.0);
}

type V = [f64; 3];

fn minus(a: V, b: V) -> V {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
fn dotp(a: V, b: V) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}
fn crossp(a: V, b: V) -> V {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// The segments where the plane through `p0` with normal `n` cuts `mesh`.
fn slice(mesh: &Mesh, p0: V, n: V) -> Vec<(V, V)> {
    let mut out = Vec::new();
    for t in &mesh.triangles {
        let p: Vec<V> = t.iter().map(|&i| mesh.vertices[i as usize]).collect();
        let d: Vec<f64> = p.iter().map(|&q| dotp(minus(q, p0), n)).collect();
        let mut cut = Vec::new();
        for (i, j) in [(0, 1), (1, 2), (2, 0)] {
            if (d[i] < 0.0) != (d[j] < 0.0) {
                let w = d[i] / (d[i] - d[j]);
                cut.push([
                    p[i][0] + w * (p[j][0] - p[i][0]),
                    p[i][1] + w * (p[j][1] - p[i][1]),
                    p[i][2] + w * (p[j][2] - p[i][2]),
                ]);
            }
        }
        if cut.len() == 2 {
            out.push((cut[0], cut[1]));
        }
    }
    out
}

/// Total length of the parts of `segments` on the positive side of every
/// half-space (point, normal).
fn clipped_length(segments: &[(V, V)], keep: &[(V, V)]) -> f64 {
    let mut total = 0.0;
    for &(a, b) in segments {
        let (mut t0, mut t1) = (0.0f64, 1.0f64);
        for &(q, n) in keep {
            let (da, db) = (dotp(minus(a, q), n), dotp(minus(b, q), n));
            if da < 0.0 && db < 0.0 {
                t1 = -1.0;
            } else if da < 0.0 {
                t0 = t0.max(da / (da - db));
            } else if db < 0.0 {
                t1 = t1.min(da / (da - db));
            }
        }
        if t1 > t0 {
            total += (t1 - t0) * dotp(minus(b, a), minus(b, a)).sqrt();
        }
    }
    total
}

#[test]
fn the_layout_follows_the_ten_twenty_rule_along_the_scalp() {
    // Jasper 1958 (Electroencephalogr Clin Neurophysiol 10:371): Cz halfway
    // along the nasion–inion arc and halfway along the preauricular arc;
    // Fpz 10 % above the nasion, T7 10 % above the left preauricular point.
    // Measured here on the scalp mesh by cutting it with planes, not with the
    // construction's own arcs; tolerance 1 mm (about 0.5 % of a half arc:
    // the flat triangles against the smooth surface), stated before looking.
    use patchwise::head::template_head::template_landmarks;
    use patchwise::montage::standard_on_template_head;
    let scalp = &template_head_surfaces()[2];
    let l = template_landmarks();
    let m = standard_on_template_head("10-20").unwrap();
    assert_eq!(m.len(), 21);
    let at = |label: &str| m.positions[m.find(label).unwrap()];
    let (cz, fpz, t7) = (at("Cz"), at("Fpz"), at("T7"));
    let up: V = [0.0, 0.0, 1.0];
    let above_landmarks = (l.nasion, up);
    // Midline.
    let mid = slice(scalp, [0.0; 3], [1.0, 0.0, 0.0]);
    let front = clipped_length(&mid, &[above_landmarks, (cz, [0.0, 1.0, 0.0])]);
    let back = clipped_length(&mid, &[above_landmarks, (cz, [0.0, -1.0, 0.0])]);
    let to_fpz = clipped_length(
        &mid,
        &[
            above_landmarks,
            (fpz, [0.0, 0.0, -1.0]),
            ([0.0; 3], [0.0, 1.0, 0.0]),
        ],
    );
    // Coronal arc through the preauricular points and Cz.
    let normal = crossp(minus(l.rpa, l.lpa), minus(cz, l.lpa));
    let coronal = slice(scalp, l.lpa, normal);
    let left = clipped_length(&coronal, &[above_landmarks, (cz, [-1.0, 0.0, 0.0])]);
    let right = clipped_length(&coronal, &[above_landmarks, (cz, [1.0, 0.0, 0.0])]);
    let to_t7 = clipped_length(
        &coronal,
        &[
            above_landmarks,
            (t7, [0.0, 0.0, -1.0]),
            ([0.0; 3], [-1.0, 0.0, 0.0]),
        ],
    );
    eprintln!(
        "nasion–Cz {:.1} mm, Cz–inion {:.1}, nasion–Fpz {:.1}; LPA–Cz {:.1}, Cz–RPA {:.1}, LPA–T7 {:.1}",
        front * 1e3,
        back * 1e3,
        to_fpz * 1e3,
        left * 1e3,
        right * 1e3,
        to_t7 * 1e3
    );
    let tol = 1e-3;
    assert!((front - back).abs() < tol);
    assert!((left - right).abs() < tol);
    assert!((to_fpz - 0.1 * (front + back)).abs() < tol);
    assert!((to_t7 - 0.1 * (left + right)).abs() < tol);
    // Cz sits on the midline, on the scalp (within 0.5 mm of the mesh).
    assert!(cz[0].abs() < 1e-9);
    assert!(nearest_on_mesh(scalp, cz).2 < 5e-4);
}
