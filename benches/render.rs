//! Benchmarks of cortex pictures: one 800 x 600 view and the six-view panel of
//! the 20 484-vertex template, with signed values and region outlines.

use patchwise::geometry::{template, Template, TemplateResolution};
use patchwise::render::{render_view, render_views, ColourSpec, View, ViewOptions};

fn main() {
    divan::main();
}

/// The template with a smooth signed value per vertex.
fn scene() -> (Template, Vec<f64>) {
    let t = template(TemplateResolution::Standard);
    let values = t
        .mesh
        .vertices
        .iter()
        .map(|p| (40.0 * p[1]).sin() * (30.0 * p[2]).cos())
        .collect();
    (t, values)
}

fn options<'a>(t: &'a Template, view: View) -> ViewOptions<'a> {
    let mut o = ViewOptions::new(view, 800, 600);
    o.hemisphere = Some(&t.hemisphere);
    o.regions = Some(&t.region);
    o.colour = ColourSpec::Signed {
        limit: None,
        threshold: 0.1,
    };
    o
}

/// One view at 800 x 600 with 2 x 2 supersampling.
#[divan::bench(args = ["left", "top"], sample_count = 20)]
fn view_800x600(bencher: divan::Bencher, name: &str) {
    let (t, values) = scene();
    let view = View::from_name(name).unwrap_or(View::Left);
    let o = options(&t, view);
    bencher.bench_local(|| render_view(&t.mesh, &values, &o).map(|i| i.rgba.len()));
}

/// One view at 800 x 600 without supersampling.
#[divan::bench(sample_count = 20)]
fn view_800x600_no_supersampling(bencher: divan::Bencher) {
    let (t, values) = scene();
    let mut o = options(&t, View::Left);
    o.supersample = 1;
    bencher.bench_local(|| render_view(&t.mesh, &values, &o).map(|i| i.rgba.len()));
}

/// The six-view panel at 800 x 600 per view.
#[divan::bench(sample_count = 10)]
fn panel_6_views_800x600(bencher: divan::Bencher) {
    let (t, values) = scene();
    let o = options(&t, View::Left);
    bencher.bench_local(|| render_views(&t.mesh, &values, &View::PANEL, &o).map(|v| v.len()));
}

/// Encoding one 800 x 600 view as PNG.
#[divan::bench(sample_count = 20)]
fn encode_png_800x600(bencher: divan::Bencher) {
    let (t, values) = scene();
    let image = render_view(&t.mesh, &values, &options(&t, View::Left));
    bencher.bench_local(|| image.as_ref().map(|i| i.encode_png().map(|b| b.len())));
}
