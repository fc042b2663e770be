//! Topographic maps: the azimuthal equidistant projection (Cz at the centre, the
//! equator at the head outline, nose up, right ear right), the colours of a known field,
//! the disc's edge, the SVG's parts and typed errors for bad input.

use crate::support::render::{keep, parse_svg, Element};
use base64::Engine;
use patchwise::demo::CHANNELS_64;
use patchwise::geometry::Vec3;
use patchwise::montage::standard;
use patchwise::render::colormap::diverging;
use patchwise::render::topomap::{topomap_png, topomap_svg, TopomapOptions};
use patchwise::render::FigureError;

fn montage_64() -> (Vec<String>, Vec<Vec3>) {
    let montage = standard("10-10", 0.095).unwrap();
    let names: Vec<String> = CHANNELS_64.iter().map(|s| s.to_string()).collect();
    let picked = montage.select(&names).unwrap();
    (
        names,
        picked.iter().map(|&i| montage.positions[i]).collect(),
    )
}

fn unit(p: Vec3) -> Vec3 {
    let n = (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt();
    [p[0] / n, p[1] / n, p[2] / n]
}

/// Largest polar angle (from +z) of the electrodes, in radians.
fn lowest_polar_angle(positions: &[Vec3]) -> f64 {
    positions
        .iter()
        .map(|&p| unit(p)[2].acos())
        .fold(0.0, f64::max)
}

/// A smooth two-pole field (µV) for the pictures.
fn dipolar(positions: &[Vec3]) -> Vec<f64> {
    positions
        .iter()
        .map(|p| {
            let d1 = ((p[0] + 0.04).powi(2) + p[1].powi(2) + (p[2] - 0.07).powi(2)).sqrt();
            let d2 = ((p[0] - 0.05).powi(2) + (p[1] - 0.05).powi(2) + (p[2] - 0.05).powi(2)).sqrt();
            12.0 / (1.0 + (d1 / 0.04).powi(2)) - 8.0 / (1.0 + (d2 / 0.05).powi(2))
        })
        .collect()
}

#[test]
fn pixels_show_a_known_field_in_the_azimuthal_equidistant_projection() {
    // Azimuthal equidistant projection (Snyder 1987, Map Projections: A Working Manual,
    // USGS Prof. Paper 1395, §25): a point at angular distance c from the centre lies at
    // radius ∝ c along its azimuth. The fields u_x and u_y (real degree-1 harmonics) are
    // interpolated to within ~1e-4 on the cap z > 0.1 (tests/it/render_spline.rs), so each
    // pixel with z > 0.1 must show diverging(u) for the direction it stands for, within
    // 2 of 255 per channel (the colour table's nearest-entry step, 1/512 of the range,
    // moves a channel by at most 1; common practice, no source).
    let (_, positions) = montage_64();
    let side = 200u32;
    let edge = lowest_polar_angle(&positions) / std::f64::consts::FRAC_PI_2;
    let scale = f64::from(side) / 2.0 / edge; // pixels per equator radius
    for axis in 0..2 {
        let values: Vec<f64> = positions.iter().map(|&p| unit(p)[axis]).collect();
        let options = TopomapOptions {
            size_px: side,
            limits: Some(1.0),
            ..TopomapOptions::default()
        };
        let image = topomap_png(&positions, &values, &options).unwrap();
        assert_eq!((image.width, image.height), (side, side));
        let mut checked = 0;
        for row in (0..side).step_by(7) {
            for col in (0..side).step_by(7) {
                let x = (f64::from(col) + 0.5 - f64::from(side) / 2.0) / scale;
                let y = (f64::from(side) / 2.0 - f64::from(row) - 0.5) / scale;
                let rho = x.hypot(y);
                let theta = rho * std::f64::consts::FRAC_PI_2;
                if theta.cos() <= 0.1 || rho == 0.0 {
                    continue;
                }
                let u = [theta.sin() * x / rho, theta.sin() * y / rho];
                let expected = diverging(u[axis]);
                let k = 4 * (row * side + col) as usize;
                for (c, &want) in expected.iter().enumerate() {
                    let d = (i32::from(image.rgba[k + c]) - i32::from(want)).abs();
                    assert!(d <= 2, "axis {axis} pixel ({col}, {row}) channel {c}: {d}");
                }
                assert_eq!(image.rgba[k + 3], 255);
                checked += 1;
            }
        }
        assert!(checked > 300, "{checked}");
    }
}

#[test]
fn the_disc_ends_at_the_lowest_electrode() {
    // Our convention (docs/pictures.md): the disc's edge is at the lowest electrode's
    // polar angle (112.5° for these 64 channels: Iz, T9 and T10 lie 22.5° below the
    // equator in the construction of docs/montage.md), capped at 120°. Pixels 1.5 px inside the edge are opaque, 1.5 px outside
    // transparent.
    let (_, positions) = montage_64();
    let lowest = lowest_polar_angle(&positions).to_degrees();
    assert!((lowest - 112.5).abs() < 1e-6, "{lowest}");
    let side = 160u32;
    let image = topomap_png(
        &positions,
        &dipolar(&positions),
        &TopomapOptions {
            size_px: side,
            ..TopomapOptions::default()
        },
    )
    .unwrap();
    let half = f64::from(side) / 2.0;
    for row in 0..side {
        for col in 0..side {
            let r = (f64::from(col) + 0.5 - half).hypot(f64::from(row) + 0.5 - half);
            let alpha = image.rgba[4 * (row * side + col) as usize + 3];
            if r < half - 1.5 {
                assert_eq!(alpha, 255);
            } else if r > half + 1.5 {
                assert_eq!(alpha, 0);
            }
        }
    }
}

fn mark_positions(elements: &[Element]) -> Vec<(f64, f64)> {
    elements
        .iter()
        .filter(|e| e.has_class("electrode"))
        .map(|e| (e.num("cx"), e.num("cy")))
        .collect()
}

#[test]
fn the_svg_has_head_electrodes_contours_and_the_raster() {
    let (names, positions) = montage_64();
    let values = dipolar(&positions);
    let options = TopomapOptions {
        title: "Component 1 <pattern> & \"weights\"".into(),
        unit: "µV".into(),
        labels: Some(&names),
        ..TopomapOptions::default()
    };
    let figure = topomap_svg(&positions, &values, &options).unwrap();
    keep("render_topomap", "map_labels.svg", &figure.svg);
    assert_eq!(figure.width, 400);
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    // With electrodes below the equator the outline is drawn where the map
    // ends and the equator dashed (issue 23, item 4: the disc stays inside).
    let equator = elements.iter().find(|e| e.has_class("equator")).unwrap();
    let (cx, cy, r) = (equator.num("cx"), equator.num("cy"), equator.num("r"));
    let head = elements.iter().find(|e| e.has_class("head")).unwrap();
    assert!((head.num("cx") - cx).abs() < 0.02 && (head.num("cy") - cy).abs() < 0.02);
    assert!((head.num("r") - 1.25 * r).abs() < 0.02);
    // Azimuthal equidistant about the vertex (Snyder 1987): Cz at the centre, the
    // equator electrodes Fpz, T7, Oz, T8 on the head outline; nose (+y) up, right ear
    // (+x) right. Coordinates are written to 0.01 px: tolerance 0.02 px.
    let marks = mark_positions(&elements);
    assert_eq!(marks.len(), 64);
    let at = |name: &str| marks[names.iter().position(|n| n == name).unwrap()];
    let cz = at("Cz");
    assert!((cz.0 - cx).abs() < 0.02 && (cz.1 - cy).abs() < 0.02);
    for name in ["Fpz", "T7", "Oz", "T8"] {
        let p = at(name);
        assert!(((p.0 - cx).hypot(p.1 - cy) - r).abs() < 0.02, "{name}");
    }
    assert!(at("Fpz").1 < cy - 0.9 * r && at("Oz").1 > cy + 0.9 * r);
    assert!(at("T8").0 > cx + 0.9 * r && at("T7").0 < cx - 0.9 * r);
    // The lowest electrodes (112.5°) lie at 1.25 equator radii, on the outline.
    let iz = at("Iz");
    assert!(((iz.1 - cy) - 1.25 * r).abs() < 0.02);
    assert!(((iz.1 - cy) - head.num("r")).abs() < 0.02);
    // The nose points up: its tip lies above the outline.
    let nose = elements.iter().find(|e| e.has_class("nose")).unwrap();
    let tip_y: f64 = nose.attrs["d"]
        .split('L')
        .nth(1)
        .unwrap()
        .split_whitespace()
        .nth(1)
        .unwrap()
        .parse()
        .unwrap();
    assert!(tip_y < cy - head.num("r"));
    assert_eq!(elements.iter().filter(|e| e.has_class("ear")).count(), 2);
    // One label per electrode, the title escaped and read back intact.
    let texts: Vec<&str> = elements
        .iter()
        .filter(|e| e.name == "text")
        .map(|e| e.text.as_str())
        .collect();
    assert_eq!(elements.iter().filter(|e| e.has_class("label")).count(), 64);
    assert!(texts.contains(&"Component 1 <pattern> & \"weights\""));
    assert!(texts.contains(&"µV"));
    assert!(elements.iter().any(|e| e.has_class("contour")));
    assert!(
        !elements.iter().any(|e| e.has_class("scale")),
        "no scale factor unless one is given"
    );
    // The raster is a PNG data URI whose disc spans 1.25 head radii on each side.
    let map = elements.iter().find(|e| e.has_class("map")).unwrap();
    let png = base64::engine::general_purpose::STANDARD
        .decode(
            map.attrs["href"]
                .strip_prefix("data:image/png;base64,")
                .unwrap(),
        )
        .unwrap();
    let reader = png::Decoder::new(std::io::Cursor::new(png))
        .read_info()
        .unwrap();
    let info = reader.info();
    assert_eq!(f64::from(info.width), map.num("width"));
    assert!((map.num("width") / 2.0 - 1.25 * r).abs() < 0.02);
}

/// Electrodes only above the equator (z > 0 of the 10-10 layout): the
/// outline is the equator, the map a disc inside it (no dashed circle); a
/// scale factor is written under the colour bar as "×factor".
#[test]
fn upper_electrodes_keep_the_outline_at_the_equator_and_the_scale_is_written() {
    let (_, all) = montage_64();
    let positions: Vec<Vec3> = all.into_iter().filter(|p| p[2] > 0.02).collect();
    let values = dipolar(&positions);
    let options = TopomapOptions {
        unit: "a.u.".into(),
        scale: Some(2.5e-6),
        ..TopomapOptions::default()
    };
    let figure = topomap_svg(&positions, &values, &options).unwrap();
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    assert!(!elements.iter().any(|e| e.has_class("equator")));
    let head = elements.iter().find(|e| e.has_class("head")).unwrap();
    let map = elements.iter().find(|e| e.has_class("map")).unwrap();
    assert!(map.num("width") / 2.0 <= head.num("r") + 0.02);
    let scale = elements.iter().find(|e| e.has_class("scale")).unwrap();
    assert_eq!(scale.text, "\u{00d7}2.50e-6");
}

#[test]
fn pictures_for_the_documentation() {
    let (_, positions) = montage_64();
    let values = dipolar(&positions);
    let options = TopomapOptions {
        title: "Component 1".into(),
        unit: "µV".into(),
        ..TopomapOptions::default()
    };
    let figure = topomap_svg(&positions, &values, &options).unwrap();
    keep("render_topomap", "map.svg", &figure.svg);
    parse_svg(&figure.svg, figure.width, figure.height);
    // At pixel_ratio 2 the embedded raster has twice as many pixels across as the
    // image box, and the figure's geometry is unchanged.
    let sharp = topomap_svg(
        &positions,
        &values,
        &TopomapOptions {
            pixel_ratio: 2,
            ..options.clone()
        },
    )
    .unwrap();
    keep("render_topomap", "map_2x.svg", &sharp.svg);
    let elements = parse_svg(&sharp.svg, figure.width, figure.height);
    let map = elements.iter().find(|e| e.has_class("map")).unwrap();
    let png = base64::engine::general_purpose::STANDARD
        .decode(
            map.attrs["href"]
                .strip_prefix("data:image/png;base64,")
                .unwrap(),
        )
        .unwrap();
    let reader = png::Decoder::new(std::io::Cursor::new(png))
        .read_info()
        .unwrap();
    assert_eq!(f64::from(reader.info().width), 2.0 * map.num("width"));
}

#[test]
fn bad_input_is_a_typed_error() {
    let (names, positions) = montage_64();
    let values = dipolar(&positions);
    let o = TopomapOptions::default();
    assert!(matches!(
        topomap_svg(&positions, &values[..60], &o),
        Err(FigureError::LengthMismatch {
            field: "values",
            expected: 64,
            got: 60
        })
    ));
    let mut nan = values.clone();
    nan[7] = f64::NAN;
    assert!(matches!(
        topomap_png(&positions, &nan, &o),
        Err(FigureError::NotFinite {
            field: "values",
            index: 7,
            ..
        })
    ));
    let mut bad = positions.clone();
    bad[3][1] = f64::INFINITY;
    assert!(matches!(
        topomap_svg(&bad, &values, &o),
        Err(FigureError::NotFinite {
            field: "positions",
            index: 3,
            ..
        })
    ));
    assert!(matches!(
        topomap_svg(&positions[..3], &values[..3], &o),
        Err(FigureError::Empty {
            field: "positions",
            required: 4
        })
    ));
    let labels = &names[..10];
    let short = TopomapOptions {
        labels: Some(labels),
        ..TopomapOptions::default()
    };
    assert!(matches!(
        topomap_svg(&positions, &values, &short),
        Err(FigureError::LengthMismatch {
            field: "labels",
            ..
        })
    ));
    for limit in [0.0, -1.0, f64::NAN] {
        let o = TopomapOptions {
            limits: Some(limit),
            ..TopomapOptions::default()
        };
        assert!(matches!(
            topomap_png(&positions, &values, &o),
            Err(FigureError::BadOption {
                field: "limits",
                ..
            })
        ));
    }
    let blurry = TopomapOptions {
        pixel_ratio: 0,
        ..TopomapOptions::default()
    };
    assert!(matches!(
        topomap_svg(&positions, &values, &blurry),
        Err(FigureError::BadOption {
            field: "pixel_ratio",
            ..
        })
    ));
    let tiny = TopomapOptions {
        size_px: 10,
        ..TopomapOptions::default()
    };
    assert!(matches!(
        topomap_png(&positions, &values, &tiny),
        Err(FigureError::BadOption {
            field: "size_px",
            ..
        })
    ));
    let mut twice = positions.clone();
    twice[5] = twice[0];
    assert!(matches!(
        topomap_svg(&twice, &values, &o),
        Err(FigureError::Spline(_))
    ));
}

#[test]
fn the_raster_does_not_depend_on_the_thread_count() {
    // Brief requirement: results identical whatever the rayon thread count. Pixels are
    // independent and the colour limit is a maximum, so the bytes must match exactly.
    let (_, positions) = montage_64();
    let values = dipolar(&positions);
    let options = TopomapOptions {
        size_px: 128,
        ..TopomapOptions::default()
    };
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| topomap_png(&positions, &values, &options).unwrap())
    };
    assert_eq!(run(1), run(3));
}

#[test]
fn a_head_off_the_origin_gives_the_same_map() {
    // The electrodes are projected about the least-squares sphere through them, so
    // moving the whole montage (a digitiser's origin at the neck, say) changes nothing
    // beyond rounding: electrode marks within 0.01 px (coordinates are written to
    // 0.01 px) and pixel colours within 1/255 (common practice, no source).
    let (_, positions) = montage_64();
    let values = dipolar(&positions);
    let shifted: Vec<Vec3> = positions
        .iter()
        .map(|p| [p[0] + 0.003, p[1] - 0.012, p[2] + 0.041])
        .collect();
    let options = TopomapOptions::default();
    let a = topomap_svg(&positions, &values, &options).unwrap();
    let b = topomap_svg(&shifted, &values, &options).unwrap();
    let marks_a = mark_positions(&parse_svg(&a.svg, a.width, a.height));
    let marks_b = mark_positions(&parse_svg(&b.svg, b.width, b.height));
    for (p, q) in marks_a.iter().zip(&marks_b) {
        assert!((p.0 - q.0).abs() <= 0.011 && (p.1 - q.1).abs() <= 0.011);
    }
    let small = TopomapOptions {
        size_px: 96,
        ..TopomapOptions::default()
    };
    let pa = topomap_png(&positions, &values, &small).unwrap();
    let pb = topomap_png(&shifted, &values, &small).unwrap();
    for (x, y) in pa.rgba.iter().zip(&pb.rgba) {
        assert!((i32::from(*x) - i32::from(*y)).abs() <= 1);
    }
}

#[test]
fn a_small_cap_is_drawn_about_a_given_centre() {
    // Twelve electrodes around Cz: the disc ends at the lowest of them (polar angle
    // below 45°), far inside the head outline; with the head centre given the map is
    // drawn, and without it the sphere fit either succeeds or fails with a typed error.
    let (_, positions) = montage_64();
    let cap: Vec<Vec3> = positions
        .iter()
        .copied()
        .filter(|&p| unit(p)[2] > 0.72)
        .collect();
    assert!(cap.len() >= 8, "{}", cap.len());
    let values = dipolar(&cap);
    let options = TopomapOptions {
        size_px: 120,
        sphere_center: Some([0.0; 3]),
        ..TopomapOptions::default()
    };
    let image = topomap_png(&cap, &values, &options).unwrap();
    let centre = 4 * (60 * 120 + 60);
    assert_eq!(image.rgba[centre + 3], 255);
    let figure = topomap_svg(&cap, &values, &options).unwrap();
    let elements = parse_svg(&figure.svg, figure.width, figure.height);
    assert_eq!(mark_positions(&elements).len(), cap.len());
    let fitted = TopomapOptions {
        sphere_center: None,
        ..options
    };
    match topomap_png(&cap, &values, &fitted) {
        Ok(_) | Err(FigureError::Spline(_)) => {}
        Err(e) => panic!("unexpected error {e}"),
    }
}
