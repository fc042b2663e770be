//! The boundary-element head against the exact sphere series: three
//! concentric icosphere surfaces (inner skull 83 mm, outer skull 88 mm,
//! scalp 94 mm; brain 0.47, skull 0.02, scalp 0.41 S/m, the default head's
//! values), radial and tangential dipoles at eccentricities 0.1 … 0.95 of
//! the inner radius, RDM and MAG (Meijs et al. 1989, IEEE Trans Biomed Eng
//! 36:1038) at 162 electrodes. Prints the table of docs/head_model.md.
//!
//! `cargo run --release --example bem_accuracy -- 4` (level 4: 2 562
//! vertices per surface; level 3: 642). A second argument gives each
//! surface its own level, innermost first: `-- 3 3,4,3` refines the outer
//! skull only (docs/head_model.md, "Accuracy against the sphere series").

use std::time::Instant;

use patchwise::geometry::Mesh;
use patchwise::head::bem::{BemGeometry, BemSystem};
use patchwise::head::SphereHead;
use patchwise::validation::{comparison_electrodes, concentric_bem, sphere_accuracy};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let level: u32 = std::env::args()
        .nth(1)
        .map(|s| s.parse())
        .transpose()?
        .unwrap_or(4);
    let levels: Option<Vec<u32>> = std::env::args()
        .nth(2)
        .map(|s| s.split(',').map(|l| l.trim().parse()).collect())
        .transpose()?;
    let sphere = SphereHead::new([0.0; 3], vec![0.083, 0.088, 0.094], vec![0.47, 0.02, 0.41])?;
    let start = Instant::now();
    // The time at which the last matrix row was built: the rest of the
    // build is the two factorisations.
    let rows_done = std::sync::Mutex::new((0usize, 0.0f64));
    let per_surface = levels.clone().unwrap_or_else(|| vec![level; 3]);
    if per_surface.len() != 3 {
        return Err("expected three levels, innermost first (e.g. 3,4,3)".into());
    }
    let n_total: usize = per_surface.iter().map(|&l| 10 * 4usize.pow(l) + 2).sum();
    let progress = |n: usize| {
        if let Ok(mut r) = rows_done.lock() {
            r.0 += n;
            if r.0 == n_total {
                r.1 = start.elapsed().as_secs_f64();
            }
        }
    };
    let system = match &levels {
        None => concentric_bem(&sphere, level, &progress)?,
        Some(levels) => {
            let surfaces: Vec<Mesh> = sphere
                .radii()
                .iter()
                .zip(levels)
                .map(|(&r, &l)| Mesh::icosphere(l, r))
                .collect();
            let names = ["inner skull", "outer skull", "scalp"]
                .map(String::from)
                .to_vec();
            let (geometry, _) =
                BemGeometry::new(surfaces, names, sphere.conductivities().to_vec())?;
            BemSystem::build(geometry, &progress)?
        }
    };
    let built = start.elapsed();
    let rows_at = rows_done.lock().map(|r| r.1).unwrap_or(f64::NAN);
    let (electrodes, transfer) = comparison_electrodes(&sphere, &system)?;
    let transferred = start.elapsed() - built;
    let ecc = [0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.85, 0.9, 0.95];
    let rows = sphere_accuracy(&sphere, &transfer, &electrodes, &ecc)?;
    println!(
        "level {level} (per surface {per_surface:?}): {} vertices on the inner surface, {} in all; surfaces checked and matrix rows built after {rows_at:.1} s, factorised after {:.1} s, transfer for {} electrodes {:.1} s",
        system.geometry().surfaces()[0].n_vertices(),
        system.n_vertices(),
        built.as_secs_f64(),
        electrodes.len(),
        transferred.as_secs_f64()
    );
    println!("| eccentricity | RDM radial | MAG radial | RDM tangential | MAG tangential |");
    println!("|---|---|---|---|---|");
    for pair in rows.chunks(2) {
        println!(
            "| {:.2} | {:.4} | {:.4} | {:.4} | {:.4} |",
            pair[0].eccentricity, pair[0].rdm, pair[0].mag, pair[1].rdm, pair[1].mag
        );
    }
    Ok(())
}
