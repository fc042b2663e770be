//! Issue 22, item 10: the dipoles carry their distance to the patch peak
//! (dipoles.csv and the terminal, not only result.h5) and the component
//! names with or without an attribution beside them, and a new attribution
//! into the folder leaves no stale dipoles behind.

use std::process::Output;

use crate::support::cli::patchwise;
use crate::support::files::csv;
use crate::support::report::run_demo;
use crate::support::scratch;
use patchwise::io::Store;

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Item 10, through the real binary on the demo's decoder.
#[test]
fn dipoles_carry_the_patch_peak_distance_and_names_and_do_not_go_stale() {
    let dir = scratch("first-hour-dipoles");
    let demo = run_demo(&dir, "demo", &["--resamples", "0", "--no-report"]);
    let dipole =
        |out: &str| crate::support::report::dipole_on_demo(&dir, &["--no-report", "--out", out]);
    // Beside the attribution: the distance to the patch peak reaches
    // dipoles.csv and the terminal, equal to result.h5's within the CSV's
    // rounding (3 decimals).
    let run = dipole("demo");
    assert!(run.status.success(), "{}", stderr(&run));
    assert!(stdout(&run).contains("to patch peak"), "{}", stdout(&run));
    let (header, rows) = csv(&demo.join("dipoles.csv"));
    let col = |n: &str| header.iter().position(|h| h == n).unwrap();
    let store = Store::read(&demo.join("result.h5")).unwrap();
    let (stored, _) = store
        .f64_array(&demo.join("result.h5"), "/dipole/distance_to_patch_peak_mm")
        .unwrap();
    assert_eq!(rows.len(), stored.len());
    let names = store
        .strings(&demo.join("result.h5"), "/patterns/component_names", None)
        .unwrap();
    for (row, d) in rows.iter().zip(&stored) {
        let csv_d: f64 = row[col("distance_to_patch_peak_mm")].parse().unwrap();
        assert!((csv_d - d).abs() <= 5e-4, "{csv_d} vs {d}");
        let shown = format!("{d:.1} mm");
        assert!(stdout(&run).contains(&shown), "{shown}: {}", stdout(&run));
        let c: usize = row[col("component")].parse().unwrap();
        assert_eq!(row[col("component_name")], names[c]);
    }

    // Without an attribution: the decoder's own names, no distance.
    let run = dipole("alone");
    assert!(run.status.success(), "{}", stderr(&run));
    let (header, rows) = csv(&dir.join("alone/dipoles.csv"));
    let col = |n: &str| header.iter().position(|h| h == n).unwrap();
    for row in &rows {
        let c: usize = row[col("component")].parse().unwrap();
        assert_eq!(row[col("component_name")], names[c]);
        assert_eq!(row[col("distance_to_patch_peak_mm")], "n/a");
    }
    assert!(stdout(&run).contains(&names[0]), "{}", stdout(&run));
    let alone = Store::read(&dir.join("alone/result.h5")).unwrap();
    assert_eq!(
        alone
            .strings(
                &dir.join("alone/result.h5"),
                "/patterns/component_names",
                None
            )
            .unwrap(),
        names
    );

    // A new attribution into the folder: no dipoles of the earlier fit
    // survive, neither the CSV, nor /dipole, nor the demo's decoder.
    std::fs::copy(demo.join("decoder.h5"), dir.join("d.h5")).unwrap();
    let run = patchwise(
        &[
            "attribute",
            "--decoder",
            "d.h5",
            "--montage",
            "10-10",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--no-report",
            "--cache",
            "cache",
            "--out",
            "demo",
        ],
        &dir,
    );
    assert!(run.status.success(), "{}", stderr(&run));
    assert!(!demo.join("dipoles.csv").exists());
    assert!(!demo.join("decoder.h5").exists());
    let store = Store::read(&demo.join("result.h5")).unwrap();
    assert!(!store.contains("/dipole/positions_mm"));
    assert!(!store.contains("/dipole/distance_to_patch_peak_mm"));
}
