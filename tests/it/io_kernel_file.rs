//! The smoothing-kernel cache entry of `patchwise compare`: a round trip
//! keeps every bit, and a damaged entry is refused with the dataset named
//! (so `compare` rebuilds it instead of using it).

use crate::support;
use patchwise::cohort::SmoothingKernel;
use patchwise::geometry::{template, GeodesicSolver, TemplateResolution};
use patchwise::io::kernel_file::{read_kernel, write_kernel};
use patchwise::io::{Dataset, Store};

#[test]
fn kernel_round_trip_is_exact_and_damage_is_named() {
    let dir = support::scratch("io_kernel_file");
    let t = template(TemplateResolution::Low);
    let solver = GeodesicSolver::new(&t.mesh).unwrap();
    let kernel = SmoothingKernel::new(&solver, 0.005, 2.0).unwrap();
    let n = kernel.n_vertices();
    let path = dir.join("kernel.h5");
    write_kernel(&path, &kernel).unwrap();
    assert_eq!(read_kernel(&path, n).unwrap(), kernel);

    // Another mesh size: the row offsets do not fit.
    let e = read_kernel(&path, n + 1).unwrap_err().to_string();
    assert!(e.contains("/kernel/row_start"), "{e}");

    // A column index outside the mesh.
    let mut store = Store::read(&path).unwrap();
    let mut cols: Vec<i64> = kernel.columns.iter().map(|&c| i64::from(c)).collect();
    cols[7] = n as i64;
    store.insert("/kernel/columns", Dataset::i64(vec![cols.len()], cols));
    let bad = dir.join("bad-columns.h5");
    store.write_atomic(&bad).unwrap();
    let e = read_kernel(&bad, n).unwrap_err().to_string();
    assert!(
        e.contains("/kernel/columns") && e.contains("bad-columns.h5"),
        "{e}"
    );

    // A non-finite weight.
    let mut store = Store::read(&path).unwrap();
    let mut w = kernel.weights.clone();
    w[3] = f64::NAN;
    store.insert("/kernel/weights", Dataset::f64(vec![w.len()], w));
    let bad = dir.join("bad-weights.h5");
    store.write_atomic(&bad).unwrap();
    let e = read_kernel(&bad, n).unwrap_err().to_string();
    assert!(e.contains("/kernel/weights"), "{e}");

    // Not HDF5 at all.
    let bad = dir.join("junk.h5");
    std::fs::write(&bad, b"junk").unwrap();
    assert!(read_kernel(&bad, n).is_err());
}
