//! Benchmark: the boundary-element head of three concentric icosphere
//! surfaces of 2 562 vertices (83, 88, 94 mm; 0.47, 0.02, 0.41 S/m), built
//! and factorised; then the 64-electrode lead field (the first 64 positions
//! of 10-10, free orientation) of the 20 484-source template from the
//! factorised system (see docs/benchmarks.md, "Boundary-element head").

use std::sync::OnceLock;

use patchwise::forward::{bem_lead_field, Orientation, Reference};
use patchwise::geometry::{template, SourceSpace, TemplateResolution};
use patchwise::head::bem::{project_to_scalp, BemSystem};
use patchwise::head::SphereHead;
use patchwise::montage::standard;
use patchwise::validation::concentric_bem;

fn shells() -> SphereHead {
    match SphereHead::new([0.0; 3], vec![0.083, 0.088, 0.094], vec![0.47, 0.02, 0.41]) {
        Ok(h) => h,
        Err(e) => panic!("{e}"),
    }
}

fn system() -> &'static BemSystem {
    static SYSTEM: OnceLock<BemSystem> = OnceLock::new();
    SYSTEM.get_or_init(|| match concentric_bem(&shells(), 4, &|_| {}) {
        Ok(s) => s,
        Err(e) => panic!("{e}"),
    })
}

fn main() {
    divan::main();
}

#[divan::bench(sample_count = 1, sample_size = 1)]
fn build_and_factorise_3x2562() -> BemSystem {
    match concentric_bem(&shells(), 4, &|_| {}) {
        Ok(s) => s,
        Err(e) => panic!("{e}"),
    }
}

#[divan::bench(sample_count = 3, sample_size = 1)]
fn leadfield_64_electrodes_template_20k(bencher: divan::Bencher) {
    let system = system();
    let montage = match standard("10-10", 0.094) {
        Ok(m) => m,
        Err(e) => panic!("{e}"),
    };
    let positions = montage.positions[..64].to_vec();
    let labels = montage.labels[..64].to_vec();
    let sources = SourceSpace::from_template(&template(TemplateResolution::Standard));
    bencher.bench(|| {
        let points = match project_to_scalp(system, &positions, &labels) {
            Ok(p) => p,
            Err(e) => panic!("{e}"),
        };
        let transfer = system.transfer(&points);
        bem_lead_field(
            &transfer,
            &sources.positions,
            &sources.normals,
            Orientation::Free,
            Reference::Average,
            &|_| {},
        )
    });
}
