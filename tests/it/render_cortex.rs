//! Checks of the cortex pictures: disc area of a sphere, Lambert shading,
//! the depth buffer, hemisphere views and their mirror symmetry, the template
//! panel, contact sheets, and typed errors for bad input.

use patchwise::geometry::{template, Mesh, TemplateResolution};
use patchwise::render::cortex::CORTEX_GREY;
use patchwise::render::{
    contact_sheet, render_view, render_views, ColourSpec, Image, RenderError, Scale, Shading, View,
    ViewOptions,
};

/// sRGB decoding, IEC 61966-2-1:1999.
fn decode(c: u8) -> f64 {
    let c = c as f64 / 255.0;
    if c <= 0.04045 {
        c / 12.92
    } else {
        ((c + 0.055) / 1.055).powf(2.4)
    }
}

/// Fraction of the image covered, counting partly covered pixels by their
/// alpha.
fn coverage(img: &Image) -> f64 {
    let sum: f64 = img.rgba.chunks(4).map(|p| p[3] as f64 / 255.0).sum();
    sum / (img.width as f64 * img.height as f64)
}

fn sphere_options(supersample: u32, shading: Shading) -> ViewOptions<'static> {
    let mut o = ViewOptions::new(View::Front, 500, 400);
    o.scale = Scale::PixelsPerMetre(4000.0); // r = 0.05 m -> 200 px
    o.supersample = supersample;
    o.shading = shading;
    o
}

#[test]
fn sphere_covers_the_area_of_a_disc() {
    // Orthographic projection of a sphere of radius r is a disc of area π r²
    // (elementary geometry). The level-5 icosphere's outline is inscribed
    // in the circle, losing far less than 0.1 % of the area; the pixel grid
    // adds edge noise of order 2πr/(W H). Tolerance: 1 % relative.
    let mesh = Mesh::icosphere(5, 0.05);
    for supersample in [1, 2] {
        for view in [View::Front, View::Top, View::Back] {
            let mut o = sphere_options(supersample, Shading::default());
            o.view = view;
            let img = render_view(&mesh, &[], &o).unwrap();
            let expected = std::f64::consts::PI * 200.0 * 200.0 / (500.0 * 400.0);
            let got = coverage(&img);
            assert!(
                ((got - expected) / expected).abs() < 0.01,
                "{view:?}, {supersample}x: covered {got}, disc {expected}"
            );
        }
    }
}

#[test]
fn sphere_shading_follows_lamberts_cosine_law() {
    // Lambert's cosine law with the light along the view direction: on a
    // sphere seen orthographically, the surface normal at distance d from
    // the centre of the disc makes cos θ = sqrt(1 − (d/r)²) with the view
    // direction, so the linear-light colour is base · (ambient + diffuse ·
    // sqrt(1 − (d/r)²)). At the centre cos 0 = 1. Tolerance 0.015 of the base
    // colour: 8-bit sRGB rounding (up to about 0.6 % here) plus the
    // icosphere's interpolated normals and the pixel footprint at d = 0.9 r.
    let mesh = Mesh::icosphere(5, 0.05);
    let shading = Shading {
        ambient: 0.2,
        diffuse: 0.8,
    };
    let base = CORTEX_GREY.map(decode);
    for supersample in [1, 2] {
        let img = render_view(&mesh, &[], &sphere_options(supersample, shading)).unwrap();
        // The disc's centre is at pixel coordinates (250, 200).
        for (dx, dy) in [(0, 0), (60, 0), (0, -120), (-150, 0), (127, 127), (180, 0)] {
            let (px, py) = ((250 + dx) as u32, (200 + dy) as u32);
            let cx = px as f64 + 0.5 - 250.0;
            let cy = py as f64 + 0.5 - 200.0;
            let d = cx.hypot(cy) / 200.0;
            let expected = shading.ambient + shading.diffuse * (1.0 - d * d).sqrt();
            let p = img.get(px, py).unwrap();
            assert_eq!(p[3], 255);
            for k in 0..3 {
                let got = decode(p[k]) / base[k];
                assert!(
                    (got - expected).abs() < 0.015,
                    "pixel ({px}, {py}), d/r = {d:.3}, channel {k}: {got} vs {expected}"
                );
            }
        }
    }
}

/// Two overlapping squares facing the camera of the front view, one nearer
/// (larger y; the front view looks along −y) with value +1 and one farther
/// with value −1.
fn two_squares(near_first: bool) -> (Mesh, Vec<f64>) {
    let square = |y: f64, half: f64| -> Vec<[f64; 3]> {
        vec![
            [-half, y, -half],
            [half, y, -half],
            [half, y, half],
            [-half, y, half],
        ]
    };
    let (near, far) = (square(0.01, 0.02), square(-0.01, 0.03));
    let (first, second, v1, v2) = if near_first {
        (near, far, 1.0, -1.0)
    } else {
        (far, near, -1.0, 1.0)
    };
    let vertices: Vec<[f64; 3]> = first.into_iter().chain(second).collect();
    let triangles = vec![[0, 1, 2], [0, 2, 3], [4, 5, 6], [4, 6, 7]];
    let values = [v1; 4].into_iter().chain([v2; 4]).collect();
    (
        Mesh {
            vertices,
            triangles,
        },
        values,
    )
}

#[test]
fn depth_buffer_keeps_the_nearer_triangle() {
    // The nearer surface hides the farther one whatever the drawing order
    // (the purpose of a depth buffer; common practice, no source).
    let mut images = Vec::new();
    for near_first in [true, false] {
        let (mesh, values) = two_squares(near_first);
        let mut o = ViewOptions::new(View::Front, 120, 120);
        o.colour = ColourSpec::Signed {
            limit: Some(1.0),
            threshold: 0.0,
        };
        let img = render_view(&mesh, &values, &o).unwrap();
        // Centre: the near square (+1, orange-red: red above blue).
        let c = img.get(60, 60).unwrap();
        assert!(c[0] > c[2] + 60, "centre {c:?}");
        // Near the corner only the far square (−1, blue) is present.
        let e = img.get(8, 8).unwrap();
        assert!(e[2] > e[0] + 60, "corner {e:?}");
        images.push(img);
    }
    assert_eq!(images[0], images[1]);
}

#[test]
fn below_threshold_values_show_bare_cortex() {
    let mesh = Mesh::icosphere(3, 0.05);
    let plain = render_view(&mesh, &[], &sphere_options(1, Shading::default())).unwrap();
    let mut o = sphere_options(1, Shading::default());
    o.colour = ColourSpec::Signed {
        limit: Some(1.0),
        threshold: 0.1,
    };
    let below = vec![0.05; mesh.n_vertices()];
    assert_eq!(render_view(&mesh, &below, &o).unwrap(), plain);
    let above = vec![0.5; mesh.n_vertices()];
    assert_ne!(render_view(&mesh, &above, &o).unwrap(), plain);
    o.colour = ColourSpec::Positive {
        max: None,
        threshold: 0.6,
    };
    assert_eq!(render_view(&mesh, &above, &o).unwrap(), plain);
}

/// A value that differs between front and back, top and bottom, and the two
/// hemispheres, so that mirror mistakes show.
fn asymmetric_values(mesh: &Mesh) -> Vec<f64> {
    mesh.vertices
        .iter()
        .map(|p| (40.0 * p[1]).sin() + 0.5 * (30.0 * p[2]).cos() + 10.0 * p[0])
        .collect()
}

#[test]
fn lateral_views_show_one_hemisphere_and_mirror_each_other() {
    let t = template(TemplateResolution::Low);
    // Left view, left hemisphere coloured −1 (blue) and right +1 (red): every
    // opaque pixel must be blue.
    let side: Vec<f64> = t
        .hemisphere
        .iter()
        .map(|&h| if h == 0 { -1.0 } else { 1.0 })
        .collect();
    let mut o = ViewOptions::new(View::Left, 240, 160);
    o.hemisphere = Some(&t.hemisphere);
    o.colour = ColourSpec::Signed {
        limit: Some(1.0),
        threshold: 0.0,
    };
    let img = render_view(&t.mesh, &side, &o).unwrap();
    let mut opaque = 0;
    for p in img.rgba.chunks(4).filter(|p| p[3] == 255) {
        opaque += 1;
        assert!(
            p[2] > p[0],
            "a right-hemisphere colour in the left view: {p:?}"
        );
    }
    assert!(opaque > 240 * 160 / 4);

    // Mirror check: x -> −x maps the left hemisphere onto the right; with the
    // winding reversed (to keep the outward orientation) the right view of
    // the mirrored mesh, flipped left to right, must be the left view of the
    // original (reflection symmetry; exact up to floating-point ties on
    // pixel-centre edges, so at most 0.2 % of pixels may differ).
    let mirrored = Mesh {
        vertices: t
            .mesh
            .vertices
            .iter()
            .map(|p| [-p[0], p[1], p[2]])
            .collect(),
        triangles: t
            .mesh
            .triangles
            .iter()
            .map(|&[a, b, c]| [a, c, b])
            .collect(),
    };
    let values = asymmetric_values(&t.mesh);
    let swapped: Vec<u8> = t.hemisphere.iter().map(|&h| 1 - h).collect();
    let options = |view: View, hemisphere: &'static [u8]| {
        let mut o = ViewOptions::new(view, 240, 160);
        o.hemisphere = Some(hemisphere);
        o.colour = ColourSpec::Signed {
            limit: None,
            threshold: 0.0,
        };
        o
    };
    let hemi: &'static [u8] = Box::leak(t.hemisphere.clone().into_boxed_slice());
    let swapped: &'static [u8] = Box::leak(swapped.into_boxed_slice());
    for (view, mirror_view) in [
        (View::Left, View::Right),
        (View::MedialLeft, View::MedialRight),
    ] {
        let mut a = options(view, hemi);
        let mut b = options(mirror_view, swapped);
        a.regions = Some(&t.region);
        b.regions = Some(&t.region);
        let original = render_view(&t.mesh, &values, &a).unwrap();
        let mirror = render_view(&mirrored, &values, &b)
            .unwrap()
            .flipped_horizontally();
        let n = (original.width * original.height) as usize;
        let differing = original
            .rgba
            .chunks(4)
            .zip(mirror.rgba.chunks(4))
            .filter(|(p, q)| p != q)
            .count();
        eprintln!("{view:?}: {differing} of {n} pixels differ");
        assert!(
            differing as f64 <= 0.002 * n as f64,
            "{view:?}: {differing} of {n} pixels differ"
        );
    }
}

#[test]
fn template_panel_is_drawn_everywhere() {
    // Every view of the 20k template shows cortex (more than 8 % of the image
    // covered), is not uniform, and has no black pixel: a NaN anywhere in
    // the shading would be cast to 0 (Rust's float-to-integer cast sends NaN
    // to 0), and the darkest shade the options allow is ambient 0.3 × grey.
    let t = template(TemplateResolution::Standard);
    let values = asymmetric_values(&t.mesh);
    let mut o = ViewOptions::new(View::Left, 200, 150);
    o.hemisphere = Some(&t.hemisphere);
    o.regions = Some(&t.region);
    o.colour = ColourSpec::Signed {
        limit: None,
        threshold: 0.2,
    };
    let views = render_views(&t.mesh, &values, &View::ALL, &o).unwrap();
    assert_eq!(views.len(), View::ALL.len());
    for (view, img) in &views {
        let cover = coverage(img);
        assert!(cover > 0.08, "{}: covered {cover}", view.name());
        let opaque: Vec<&[u8]> = img.rgba.chunks(4).filter(|p| p[3] == 255).collect();
        assert!(
            opaque.iter().all(|p| p[..3] != [0, 0, 0]),
            "{}",
            view.name()
        );
        let first = opaque[0];
        assert!(
            opaque.iter().any(|p| p[..3] != first[..3]),
            "{}",
            view.name()
        );
    }
    let pictures: Vec<&Image> = views.iter().map(|(_, i)| i).collect();
    let sheet = contact_sheet(&pictures, 4, 6, [255; 4]).unwrap();
    assert_eq!(
        (sheet.width, sheet.height),
        (4 * 200 + 5 * 6, 2 * 150 + 3 * 6)
    );
}

#[test]
fn contact_sheet_places_each_picture_in_its_cell() {
    // Cells of the largest picture's size, `gap` pixels apart and from the
    // edge, pictures centred in their cells (our layout; plain arithmetic).
    let a = Image::new(2, 2, [10, 0, 0, 255]).unwrap();
    let b = Image::new(2, 1, [0, 20, 0, 255]).unwrap();
    let c = Image::new(1, 1, [0, 0, 30, 255]).unwrap();
    let sheet = contact_sheet(&[&a, &b, &c], 2, 1, [0; 4]).unwrap();
    assert_eq!((sheet.width, sheet.height), (7, 7));
    assert_eq!(sheet.get(1, 1).unwrap(), [10, 0, 0, 255]);
    assert_eq!(sheet.get(2, 2).unwrap(), [10, 0, 0, 255]);
    // The 2 x 1 picture sits at the top of its 2 x 2 cell ((2 − 1) / 2 = 0
    // rows down, integer division).
    assert_eq!(sheet.get(4, 1).unwrap(), [0, 20, 0, 255]);
    assert_eq!(sheet.get(5, 1).unwrap(), [0, 20, 0, 255]);
    assert_eq!(sheet.get(4, 2).unwrap(), [0, 0, 0, 0]);
    assert_eq!(sheet.get(1, 4).unwrap(), [0, 0, 30, 255]);
    assert!(matches!(
        contact_sheet(&[], 2, 1, [0; 4]),
        Err(RenderError::NoImages)
    ));
}

#[test]
fn views_follow_head_coordinates() {
    // Head coordinates: +x right ear, +y nose, +z up (design.md). From the
    // left the nose points left; from the right, right; from above the nose
    // is up and the right ear right; from the front the subject's right ear
    // is on the picture's left.
    let nose = [0.0, 1.0, 0.0];
    let right_ear = [1.0, 0.0, 0.0];
    assert!(View::Left.project(nose)[0] < 0.0);
    assert!(View::Right.project(nose)[0] > 0.0);
    assert!(View::Top.project(nose)[1] > 0.0);
    assert!(View::Top.project(right_ear)[0] > 0.0);
    assert!(View::Front.project(right_ear)[0] < 0.0);
    assert!(View::Back.project(right_ear)[0] > 0.0);
    assert!(View::MedialLeft.project(nose)[0] > 0.0);
    assert!(View::MedialRight.project(nose)[0] < 0.0);
    for v in View::ALL {
        assert_eq!(View::from_name(v.name()), Some(v));
        // The camera sits on the side it is named after: depth grows along
        // the view direction.
        assert!(v.project(v.forward())[2] > 0.0);
    }
}

#[test]
fn bad_input_is_a_typed_error() {
    let mesh = Mesh::icosphere(2, 0.05);
    let n = mesh.n_vertices();
    let mut o = ViewOptions::new(View::Front, 64, 64);
    o.colour = ColourSpec::Signed {
        limit: None,
        threshold: 0.0,
    };
    assert!(matches!(
        render_view(&mesh, &vec![0.0; n - 1], &o),
        Err(RenderError::LengthMismatch {
            field: "values",
            ..
        })
    ));
    let mut nan = vec![0.0; n];
    nan[7] = f64::NAN;
    assert!(matches!(
        render_view(&mesh, &nan, &o),
        Err(RenderError::NonFiniteValue { vertex: 7, .. })
    ));
    let ok = vec![0.5; n];
    let mut zero = o;
    zero.width = 0;
    assert!(matches!(
        render_view(&mesh, &ok, &zero),
        Err(RenderError::ZeroSize { .. })
    ));
    let mut bad_limit = o;
    bad_limit.colour = ColourSpec::Signed {
        limit: Some(-1.0),
        threshold: 0.0,
    };
    assert!(matches!(
        render_view(&mesh, &ok, &bad_limit),
        Err(RenderError::BadColourOption {
            field: "colour.limit",
            ..
        })
    ));
    let mut bad_ss = o;
    bad_ss.supersample = 0;
    assert!(matches!(
        render_view(&mesh, &ok, &bad_ss),
        Err(RenderError::BadColourOption {
            field: "supersample",
            ..
        })
    ));
    let regions = vec![0; n + 3];
    let mut bad_regions = o;
    bad_regions.regions = Some(&regions);
    assert!(matches!(
        render_view(&mesh, &ok, &bad_regions),
        Err(RenderError::LengthMismatch {
            field: "regions",
            ..
        })
    ));
    let mut broken = mesh.clone();
    broken.triangles[3][1] = n as u32 + 10;
    assert!(matches!(
        render_view(&broken, &ok, &o),
        Err(RenderError::BadTriangle { triangle: 3, .. })
    ));
    let mut inf = mesh.clone();
    inf.vertices[2][1] = f64::INFINITY;
    assert!(matches!(
        render_view(&inf, &ok, &o),
        Err(RenderError::BadVertex { vertex: 2 })
    ));
    // A sphere entirely at x > 0 has no left hemisphere.
    let mut shifted = mesh.clone();
    for p in &mut shifted.vertices {
        p[0] += 1.0;
    }
    let mut left = o;
    left.view = View::Left;
    assert!(matches!(
        render_view(&shifted, &ok, &left),
        Err(RenderError::EmptyHemisphere { view: "left", .. })
    ));
    let empty = Mesh {
        vertices: vec![],
        triangles: vec![],
    };
    assert!(matches!(
        render_view(&empty, &[], &o),
        Err(RenderError::EmptyMesh { .. })
    ));
}

#[test]
fn pictures_do_not_depend_on_the_thread_count() {
    // The brief's rule: results identical whatever the rayon thread count.
    let t = template(TemplateResolution::Low);
    let values = asymmetric_values(&t.mesh);
    let mut o = ViewOptions::new(View::Top, 160, 120);
    o.hemisphere = Some(&t.hemisphere);
    o.regions = Some(&t.region);
    o.colour = ColourSpec::Signed {
        limit: None,
        threshold: 0.1,
    };
    let draw = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| render_view(&t.mesh, &values, &o).unwrap())
    };
    assert_eq!(draw(1), draw(3));
}

#[test]
fn values_by_region_paint_no_blend_along_borders() {
    // A sphere in two regions (x < 0 and x ≥ 0) with share 1 on one and 0 on
    // the other, flat light, one sample per pixel. Interpolated values blend
    // across the border triangles into a band of intermediate colours (the
    // halo the issue saw); painted by region, every pixel is the region's
    // colour, the bare grey, either of those under the outline, or the
    // background: at most five colours. Exact by construction (our check,
    // no outside source: the colour of a pixel is a function of one value).
    let mesh = Mesh::icosphere(4, 0.05);
    let regions: Vec<i32> = mesh
        .vertices
        .iter()
        .map(|p| i32::from(p[0] >= 0.0))
        .collect();
    let values: Vec<f64> = regions.iter().map(|&r| f64::from(1 - r)).collect();
    let distinct = |by_region: bool| {
        let mut o = ViewOptions::new(View::Front, 240, 240);
        o.supersample = 1;
        o.shading = Shading {
            ambient: 1.0,
            diffuse: 0.0,
        };
        o.background = [255, 255, 255, 255];
        o.regions = Some(&regions);
        o.values_by_region = by_region;
        o.colour = ColourSpec::Positive {
            max: Some(1.0),
            threshold: 0.01,
        };
        let img = render_view(&mesh, &values, &o).unwrap();
        let mut colours: Vec<[u8; 3]> = img.rgba.chunks(4).map(|p| [p[0], p[1], p[2]]).collect();
        colours.sort_unstable();
        colours.dedup();
        colours.len()
    };
    let (blended, by_region) = (distinct(false), distinct(true));
    eprintln!("distinct colours: interpolated {blended}, by region {by_region}");
    assert!(by_region <= 5, "{by_region} colours painted by region");
    assert!(
        blended > 10,
        "the interpolated picture shows only {blended} colours"
    );
}

#[test]
fn edge_marks_follow_the_cameras() {
    // Head coordinates (design.md): +x right, +y nose, +z up. Seen from the
    // left the nose points left; from the front the subject's right is on
    // the viewer's left; from above, nose up (common practice, no source).
    assert_eq!(View::Left.edge_marks(), ["A", "P", "S", "I"]);
    assert_eq!(View::Right.edge_marks(), ["P", "A", "S", "I"]);
    assert_eq!(View::MedialLeft.edge_marks(), ["P", "A", "S", "I"]);
    assert_eq!(View::MedialRight.edge_marks(), ["A", "P", "S", "I"]);
    assert_eq!(View::Front.edge_marks(), ["R", "L", "S", "I"]);
    assert_eq!(View::Back.edge_marks(), ["L", "R", "S", "I"]);
    assert_eq!(View::Top.edge_marks(), ["L", "R", "A", "P"]);
}

#[test]
fn painted_areas_get_a_ring_that_keeps_small_ones_visible() {
    // A small cap of a sphere (y > 0.985 r) painted on the diverging map,
    // seen from the front: without the ring no pixel of the picture's
    // middle (the cap and the lit grey around it, away from the darker rim)
    // is dark (every channel below 120: the lit grey is about 190, the
    // map's orange-red end has a red channel near 200); with the ring, dark
    // pixels appear there, and only next to the painted cap (within 3 px of
    // a painted pixel). Our own check of the option's contract, no source.
    let mesh = Mesh::icosphere(5, 0.05);
    let values: Vec<f64> = mesh
        .vertices
        .iter()
        .map(|p| if p[1] > 0.985 * 0.05 { 1.0 } else { 0.0 })
        .collect();
    let draw = |ring: bool| {
        let mut o = ViewOptions::new(View::Front, 300, 300);
        o.background = [255, 255, 255, 255];
        o.colour = ColourSpec::Signed {
            limit: Some(1.0),
            threshold: 0.5,
        };
        o.outline_painted = ring;
        render_view(&mesh, &values, &o).unwrap()
    };
    let near_black = |p: &[u8]| p[0].max(p[1]).max(p[2]) < 120;
    let middle = |i: usize| {
        let (x, y) = ((i % 300) as i64, (i / 300) as i64);
        (x - 150).abs() <= 60 && (y - 150).abs() <= 60
    };
    let painted = |p: &[u8]| p[0] > p[2] + 40;
    let plain = draw(false);
    let plain_px: Vec<&[u8]> = plain.rgba.chunks(4).collect();
    assert_eq!(
        (0..plain_px.len())
            .filter(|&i| middle(i) && near_black(plain_px[i]))
            .count(),
        0
    );
    let ringed = draw(true);
    let w = ringed.width as usize;
    let px: Vec<&[u8]> = ringed.rgba.chunks(4).collect();
    let dark: Vec<usize> = (0..px.len())
        .filter(|&i| middle(i) && near_black(px[i]))
        .collect();
    assert!(dark.len() > 20, "only {} ring pixels", dark.len());
    let painted_at: Vec<usize> = (0..px.len()).filter(|&i| painted(px[i])).collect();
    assert!(!painted_at.is_empty(), "the cap is not painted");
    for &i in &dark {
        let (x, y) = ((i % w) as i64, (i / w) as i64);
        let near = painted_at.iter().any(|&j| {
            let (u, v) = ((j % w) as i64, (j / w) as i64);
            (u - x).abs() <= 3 && (v - y).abs() <= 3
        });
        assert!(near, "ring pixel ({x}, {y}) far from the painted cap");
    }
}
