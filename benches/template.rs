//! Benchmarks of building the synthetic template cortex at each resolution.

use patchwise::geometry::{template, TemplateResolution};

fn main() {
    divan::main();
}

/// Builds the whole template (both hemispheres, folding and regions).
#[divan::bench(args = ["template-5k", "template"], sample_count = 10)]
fn build_template(name: &str) -> usize {
    let resolution = TemplateResolution::from_name(name).unwrap_or(TemplateResolution::Low);
    template(resolution).mesh.n_vertices()
}
