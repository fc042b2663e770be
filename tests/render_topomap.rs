//! Topographic maps: the projection (Cz at the centre, the equator at the head outline),
//! the colours at the electrodes, the SVG structure and typed errors for bad input.
#![allow(clippy::unwrap_used)]

mod render_common;

use patchwise::demo::CHANNELS_64;
use patchwise::geometry::Vec3;
use patchwise::montage::standard;
use patchwise::render::topomap::{topomap_png, topomap_svg, TopomapOptions};
use render_common::{keep, parse_svg};

fn montage_64() -> (Vec<String>, Vec<Vec3>) {
    let montage = standard("10-10", 0.095).unwrap();
    let names: Vec<String> = CHANNELS_64.iter().map(|s| s.to_string()).collect();
    let picked = montage.select(&names).unwrap();
    (
        names,
        picked.iter().map(|&i| montage.positions[i]).collect(),
    )
}

#[test]
fn looks() {
    let (names, positions) = montage_64();
    // A dipolar field: positive over the left central area, negative to the right front.
    let values: Vec<f64> = positions
        .iter()
        .map(|p| {
            let d1 = ((p[0] + 0.04).powi(2) + (p[1] - 0.0).powi(2) + (p[2] - 0.08).powi(2)).sqrt();
            let d2 = ((p[0] - 0.05).powi(2) + (p[1] - 0.05).powi(2) + (p[2] - 0.06).powi(2)).sqrt();
            8e-6 / (d1 * 30.0 + 0.2) - 5e-6 / (d2 * 30.0 + 0.2)
        })
        .map(|v| v * 1e6)
        .collect();
    let options = TopomapOptions {
        title: "Component 1 pattern".into(),
        unit: "µV".into(),
        labels: Some(&names),
        ..TopomapOptions::default()
    };
    let figure = topomap_svg(&positions, &values, &options).unwrap();
    keep("render_topomap", "map.svg", &figure.svg);
    parse_svg(&figure.svg, figure.width, figure.height);
    let image = topomap_png(&positions, &values, &options).unwrap();
    assert_eq!(image.width, 400);
}
