//! Tests of the synthetic template cortex: determinism, topology, clearance, folding and regions.

use std::collections::{HashMap, HashSet, VecDeque};
use std::sync::OnceLock;

use patchwise::geometry::{template, unfolded_template, Mesh, Template, TemplateResolution, Vec3};

fn sub(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}
fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}
fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Each resolution is built once per test binary; the build is deterministic
/// (tested below), so sharing it does not hide anything.
fn cached(resolution: TemplateResolution) -> &'static Template {
    static LOW: OnceLock<Template> = OnceLock::new();
    static STANDARD: OnceLock<Template> = OnceLock::new();
    match resolution {
        TemplateResolution::Low => LOW.get_or_init(|| template(resolution)),
        TemplateResolution::Standard => STANDARD.get_or_init(|| template(resolution)),
    }
}

/// The triangles of one hemisphere, with the vertex range they use.
fn hemisphere_mesh(t: &Template, side: u8) -> (Mesh, usize) {
    let first = t.hemisphere.iter().position(|&h| h == side).unwrap();
    let count = t.hemisphere.iter().filter(|&&h| h == side).count();
    let vertices = t.mesh.vertices[first..first + count].to_vec();
    let triangles: Vec<[u32; 3]> = t
        .mesh
        .triangles
        .iter()
        .filter(|tri| t.hemisphere[tri[0] as usize] == side)
        .map(|tri| tri.map(|v| v - first as u32))
        .collect();
    (
        Mesh {
            vertices,
            triangles,
        },
        first,
    )
}

/// Directed edge counts: a closed, consistently oriented, edge-manifold
/// surface uses every directed edge once and its reverse once (common
/// practice, no source).
fn check_closed_oriented_manifold(mesh: &Mesh) {
    let mut directed: HashMap<(u32, u32), usize> = HashMap::new();
    for tri in &mesh.triangles {
        for k in 0..3 {
            *directed.entry((tri[k], tri[(k + 1) % 3])).or_default() += 1;
        }
    }
    for (&(a, b), &count) in &directed {
        assert_eq!(count, 1, "directed edge {a}->{b} used {count} times");
        assert_eq!(
            directed.get(&(b, a)),
            Some(&1),
            "edge {a}-{b} not shared by exactly two opposite triangles"
        );
    }
    // Euler's polyhedron formula: V - E + F = 2 for a closed surface of genus 0.
    let edges = directed.len() / 2;
    let euler = mesh.n_vertices() as i64 - edges as i64 + mesh.n_triangles() as i64;
    assert_eq!(euler, 2, "Euler characteristic");
}

#[test]
fn resolution_names_round_trip() {
    for r in TemplateResolution::ALL {
        assert_eq!(TemplateResolution::from_name(r.name()), Some(r));
    }
    assert_eq!(TemplateResolution::Low.name(), "template-5k");
    assert_eq!(TemplateResolution::Standard.name(), "template");
    assert_eq!(TemplateResolution::from_name("template-20k"), None);
    assert_eq!(TemplateResolution::from_name(""), None);
}

#[test]
fn deterministic_across_calls_and_thread_counts() {
    for r in TemplateResolution::ALL {
        let first = cached(r);
        let again = template(r);
        assert!(*first == again, "{} differs between calls", r.name());
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(1)
            .build()
            .unwrap();
        let single = pool.install(|| template(r));
        assert!(*first == single, "{} differs on one thread", r.name());
    }
}

#[test]
fn vertex_counts_follow_the_icosphere_levels() {
    // An icosphere of level L has 10·4^L + 2 vertices and 20·4^L triangles
    // (each subdivision quadruples the faces; Euler's formula gives V), two
    // hemispheres each.
    for (r, level) in [
        (TemplateResolution::Low, 4u32),
        (TemplateResolution::Standard, 5),
    ] {
        let t = cached(r);
        let v = 10 * 4usize.pow(level) + 2;
        assert_eq!(t.mesh.n_vertices(), 2 * v);
        assert_eq!(t.mesh.n_triangles(), 2 * 20 * 4usize.pow(level));
        assert_eq!(t.region.len(), 2 * v);
        assert_eq!(t.hemisphere.len(), 2 * v);
    }
    assert_eq!(cached(TemplateResolution::Low).mesh.n_vertices(), 5124);
    assert_eq!(
        cached(TemplateResolution::Standard).mesh.n_vertices(),
        20484
    );
}

#[test]
fn every_vertex_clears_the_inner_sphere_by_three_mm() {
    // The default head model's inner sphere has radius 81 mm (project
    // convention); 3 mm clearance leaves at most 78 mm.
    for r in TemplateResolution::ALL {
        let t = cached(r);
        for (i, v) in t.mesh.vertices.iter().enumerate() {
            let radius = dot(*v, *v).sqrt();
            assert!(radius <= 0.078, "vertex {i} at {radius} m");
            assert!(v.iter().all(|c| c.is_finite()));
        }
    }
}

#[test]
fn hemispheres_are_closed_oriented_manifolds_with_positive_volume() {
    for r in TemplateResolution::ALL {
        let t = cached(r);
        for side in 0..2u8 {
            // Left hemisphere entirely at x < 0, right at x > 0 (head
            // coordinates: +x toward the right ear).
            for (v, &h) in t.mesh.vertices.iter().zip(&t.hemisphere) {
                if h == side {
                    assert!(if side == 0 { v[0] < 0.0 } else { v[0] > 0.0 });
                }
            }
            let (mesh, _) = hemisphere_mesh(t, side);
            check_closed_oriented_manifold(&mesh);
            // The divergence theorem gives a positive enclosed volume for an
            // outward-oriented closed surface; an adult hemisphere holds
            // roughly 450-650 cm³ (from memory), ours must be of that order
            // but is smaller (see docs/template.md): 150-500 cm³.
            let volume_cm3 = mesh.volume() * 1e6;
            assert!(
                (150.0..500.0).contains(&volume_cm3),
                "{} side {side}: {volume_cm3} cm³",
                r.name()
            );
        }
        // No triangle joins the two hemispheres.
        for tri in &t.mesh.triangles {
            let h = t.hemisphere[tri[0] as usize];
            assert!(tri.iter().all(|&v| t.hemisphere[v as usize] == h));
        }
    }
}

#[test]
fn folding_flips_no_triangle() {
    // Every folded triangle's normal keeps a positive dot product with the
    // same triangle's normal before folding (common practice, no source:
    // an inward height field shallower than the curvature radius).
    for r in TemplateResolution::ALL {
        let folded = &cached(r).mesh;
        let unfolded = unfolded_template(r);
        assert_eq!(unfolded.triangles, folded.triangles);
        let mut moved = 0;
        for t in 0..folded.n_triangles() {
            let a = folded.triangle_cross(t);
            let b = unfolded.triangle_cross(t);
            assert!(dot(a, b) > 0.0, "{}: triangle {t} flipped", r.name());
            if folded.corners(t) != unfolded.corners(t) {
                moved += 1;
            }
        }
        // The folding really moved a good part of the surface.
        assert!(moved * 4 > folded.n_triangles(), "only {moved} moved");
    }
}

/// Does the segment p→q cross triangle (a, b, c)? Möller & Trumbore 1997
/// (J Graphics Tools 2:21), restricted to the segment's parameter range.
fn segment_hits_triangle(p: Vec3, q: Vec3, [a, b, c]: [Vec3; 3]) -> bool {
    let d = sub(q, p);
    let e1 = sub(b, a);
    let e2 = sub(c, a);
    let h = cross(d, e2);
    let det = dot(e1, h);
    if det.abs() < 1e-30 {
        return false;
    }
    let s = sub(p, a);
    let u = dot(s, h) / det;
    if !(0.0..=1.0).contains(&u) {
        return false;
    }
    let qv = cross(s, e1);
    let v = dot(d, qv) / det;
    if v < 0.0 || u + v > 1.0 {
        return false;
    }
    let t = dot(e2, qv) / det;
    (0.0..=1.0).contains(&t)
}

#[test]
fn low_resolution_template_does_not_intersect_itself() {
    // Two triangles that share no vertex intersect (in general position)
    // exactly when an edge of one crosses the other. Candidates come from a
    // grid of 4 mm cells over the bounding boxes; every pair is checked.
    let t = cached(TemplateResolution::Low);
    let mesh = &t.mesh;
    let cell = 0.004;
    let key = |p: Vec3| p.map(|c| (c / cell).floor() as i64);
    let mut grid: HashMap<[i64; 3], Vec<usize>> = HashMap::new();
    for tri in 0..mesh.n_triangles() {
        let c = mesh.corners(tri);
        let lo = key([0, 1, 2].map(|k| c[0][k].min(c[1][k]).min(c[2][k])));
        let hi = key([0, 1, 2].map(|k| c[0][k].max(c[1][k]).max(c[2][k])));
        for x in lo[0]..=hi[0] {
            for y in lo[1]..=hi[1] {
                for z in lo[2]..=hi[2] {
                    grid.entry([x, y, z]).or_default().push(tri);
                }
            }
        }
    }
    let mut checked = HashSet::new();
    let mut intersections = 0;
    for bucket in grid.values() {
        for (i, &a) in bucket.iter().enumerate() {
            for &b in &bucket[i + 1..] {
                let ta = mesh.triangles[a];
                let tb = mesh.triangles[b];
                if ta.iter().any(|v| tb.contains(v)) || !checked.insert((a.min(b), a.max(b))) {
                    continue;
                }
                let ca = mesh.corners(a);
                let cb = mesh.corners(b);
                let hit = (0..3).any(|k| segment_hits_triangle(ca[k], ca[(k + 1) % 3], cb))
                    || (0..3).any(|k| segment_hits_triangle(cb[k], cb[(k + 1) % 3], ca));
                if hit {
                    intersections += 1;
                }
            }
        }
    }
    assert!(
        checked.len() > 10_000,
        "too few pairs checked: {}",
        checked.len()
    );
    assert_eq!(intersections, 0);
}

/// Fraction of a hemisphere's vertices whose normal is closer to tangential
/// than radial, |n · r̂| < 0.5 with r̂ from the hemisphere's vertex centroid.
fn tangential_fraction(t: &Template, side: u8) -> f64 {
    let normals = t.mesh.vertex_normals();
    let members: Vec<usize> = (0..t.mesh.n_vertices())
        .filter(|&i| t.hemisphere[i] == side)
        .collect();
    let weight = 1.0 / members.len() as f64;
    let centre = members.iter().fold([0.0; 3], |c, &i| {
        let v = t.mesh.vertices[i];
        [
            c[0] + v[0] * weight,
            c[1] + v[1] * weight,
            c[2] + v[2] * weight,
        ]
    });
    let tangential = members
        .iter()
        .filter(|&&i| {
            let r = sub(t.mesh.vertices[i], centre);
            (dot(normals[i], r) / dot(r, r).sqrt()).abs() < 0.5
        })
        .count();
    tangential as f64 / members.len() as f64
}

#[test]
fn sulcal_walls_give_tangential_normals() {
    // Target from the task: at least 20 % of vertices with |n · r̂| < 0.5
    // (measured 23.0 % at 5k, 23.2 % at 20k; docs/template.md). A smooth
    // hemisphere without folds has almost none.
    for r in TemplateResolution::ALL {
        let t = cached(r);
        for side in 0..2u8 {
            let fraction = tangential_fraction(t, side);
            assert!(fraction >= 0.20, "{} side {side}: {fraction}", r.name());
        }
        // The same count on the unfolded surface stays below 2 %.
        let unfolded = Template {
            mesh: unfolded_template(r),
            ..t.clone()
        };
        assert!(tangential_fraction(&unfolded, 0) < 0.02);
    }
}

#[test]
fn dimensions_and_area_stay_within_documented_ranges() {
    // docs/template.md: length 144-152 mm, width 115-130 mm, height 82-92 mm,
    // total area 650-800 cm² (measured 148 x 122 x 87 mm, 771 cm² at 20k and
    // 748 cm² at 5k). The length/width/height ratios against adult figures
    // are in template_shape.rs.
    for r in TemplateResolution::ALL {
        let t = cached(r);
        let extent = |k: usize| {
            let (lo, hi) = t
                .mesh
                .vertices
                .iter()
                .fold((f64::MAX, f64::MIN), |(lo, hi), v| {
                    (lo.min(v[k]), hi.max(v[k]))
                });
            (hi - lo) * 1e3
        };
        let (width, length, height) = (extent(0), extent(1), extent(2));
        assert!((115.0..130.0).contains(&width), "width {width}");
        assert!((144.0..152.0).contains(&length), "length {length}");
        assert!((82.0..92.0).contains(&height), "height {height}");
        let area_cm2 = t.mesh.area() * 1e4;
        assert!((650.0..800.0).contains(&area_cm2), "area {area_cm2}");
    }
}

/// Is the vertex set connected through mesh edges?
fn connected(mesh: &Mesh, members: &[usize]) -> bool {
    let inside: HashSet<usize> = members.iter().copied().collect();
    let mut neighbours: HashMap<usize, Vec<usize>> = HashMap::new();
    for tri in &mesh.triangles {
        for k in 0..3 {
            let (a, b) = (tri[k] as usize, tri[(k + 1) % 3] as usize);
            if inside.contains(&a) && inside.contains(&b) {
                neighbours.entry(a).or_default().push(b);
                neighbours.entry(b).or_default().push(a);
            }
        }
    }
    let mut seen = HashSet::from([members[0]]);
    let mut queue = VecDeque::from([members[0]]);
    while let Some(v) = queue.pop_front() {
        for &w in neighbours.get(&v).map(Vec::as_slice).unwrap_or(&[]) {
            if seen.insert(w) {
                queue.push_back(w);
            }
        }
    }
    seen.len() == members.len()
}

#[test]
fn regions_are_named_labelled_non_empty_connected_and_mirrored() {
    for r in TemplateResolution::ALL {
        let t = cached(r);
        let names = &t.region_names;
        assert!(names.len() >= 24);
        let unique: HashSet<&String> = names.iter().collect();
        assert_eq!(unique.len(), names.len(), "duplicate names");
        for name in names {
            assert!(
                name.chars().all(|c| c.is_ascii_lowercase() || c == '-'),
                "{name}"
            );
            let mirror = match name.strip_prefix("left-") {
                Some(rest) => format!("right-{rest}"),
                None => format!("left-{}", name.strip_prefix("right-").unwrap()),
            };
            assert!(names.contains(&mirror), "{name} has no mirror");
        }
        let n = t.mesh.n_vertices();
        for (i, &region) in t.region.iter().enumerate() {
            assert!(region >= 0 && (region as usize) < names.len(), "vertex {i}");
            // The region's side matches the vertex's hemisphere.
            let prefix = if t.hemisphere[i] == 0 {
                "left-"
            } else {
                "right-"
            };
            assert!(names[region as usize].starts_with(prefix), "vertex {i}");
        }
        // The right hemisphere is the left one mirrored in x, vertex by vertex,
        // with the mirrored region.
        let half = n / 2;
        for i in 0..half {
            let (a, b) = (t.mesh.vertices[i], t.mesh.vertices[i + half]);
            assert_eq!([-a[0], a[1], a[2]], b);
            let left = &names[t.region[i] as usize];
            let right = &names[t.region[i + half] as usize];
            assert_eq!(left.strip_prefix("left-"), right.strip_prefix("right-"));
        }
        for (index, name) in names.iter().enumerate() {
            let members: Vec<usize> = (0..n).filter(|&i| t.region[i] == index as i32).collect();
            assert!(!members.is_empty(), "{}: {name} is empty", r.name());
            assert!(
                connected(&t.mesh, &members),
                "{}: {name} not connected",
                r.name()
            );
        }
    }
}
