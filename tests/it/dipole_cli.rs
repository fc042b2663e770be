//! The `dipole` subcommand end to end on the demo's decoder: the fitted
//! dipoles lie near the demo's known generators, the /dipole group joins an
//! attribution's result.h5, and bad patterns exit 2 leaving no output.

use crate::support;
use std::process::Output;

use crate::support::cli::patchwise;
use crate::support::files::csv;
use crate::support::report::dipole_on_demo;
use patchwise::geometry::{template, TemplateResolution, Vec3};
use patchwise::io::{Array, Store};

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Ground truth: the demo's generator centre in a region, by the scenario's
/// own rule (src/demo/mod.rs: the region vertex nearest to the region's
/// vertex centroid), on the template-5k cortex (m).
fn seed(name: &str) -> Vec3 {
    let t = template(TemplateResolution::Low);
    let r = t.region_names.iter().position(|n| n == name).unwrap() as i32;
    let members: Vec<usize> = (0..t.region.len()).filter(|&v| t.region[v] == r).collect();
    let mut c = [0.0; 3];
    for &v in &members {
        for (ca, pa) in c.iter_mut().zip(t.mesh.vertices[v]) {
            *ca += pa / members.len() as f64;
        }
    }
    let d = |v: usize| {
        (0..3)
            .map(|a| (t.mesh.vertices[v][a] - c[a]).powi(2))
            .sum::<f64>()
    };
    let best = members
        .iter()
        .copied()
        .min_by(|&a, &b| d(a).total_cmp(&d(b)))
        .unwrap();
    t.mesh.vertices[best]
}

fn position_mm(header: &[String], row: &[String]) -> Vec3 {
    let col = |n: &str| header.iter().position(|h| h == n).unwrap();
    [
        row[col("x_mm")].parse().unwrap(),
        row[col("y_mm")].parse().unwrap(),
        row[col("z_mm")].parse().unwrap(),
    ]
}

fn distance_mm(p_mm: Vec3, q_m: Vec3) -> f64 {
    (0..3)
        .map(|a| (p_mm[a] - q_m[a] * 1e3).powi(2))
        .sum::<f64>()
        .sqrt()
}

#[test]
fn dipoles_of_the_demo_decoder_lie_near_its_generators() {
    let dir = support::scratch("dipole_cli_demo");
    let demo = patchwise(
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--cache",
            "cache",
            "--out",
            "demo",
        ],
        &dir,
    );
    assert!(demo.status.success(), "demo failed: {}", stderr(&demo));
    assert!(
        dir.join("demo/decoder.h5").is_file(),
        "the demo keeps its decoder"
    );

    // Single dipoles into a new folder. Tolerance: 10 mm from the generating
    // patch centre (brief); the demo simulates with a skull of 0.015 S/m and
    // fits with 0.02 S/m, so the dipole is not expected exactly on the seed.
    let single = dipole_on_demo(&dir, &["--out", "single"]);
    assert!(
        single.status.success(),
        "dipole failed: {}",
        stderr(&single)
    );
    let (header, rows) = csv(&dir.join("single/dipoles.csv"));
    assert_eq!(rows.len(), 3);
    assert!(!header.contains(&"dipole".to_string()));
    for (c, region) in [(0, "left-precentral"), (1, "right-precentral")] {
        let d = distance_mm(position_mm(&header, &rows[c]), seed(region));
        eprintln!("component {c}: single dipole {d:.1} mm from the {region} generator");
        assert!(
            d < 10.0,
            "component {c}: {d:.1} mm from the {region} generator"
        );
        let rv: f64 = rows[c][header
            .iter()
            .position(|h| h == "residual_variance")
            .unwrap()]
        .parse()
        .unwrap();
        assert!(rv < 0.15, "component {c} should be dipolar, RV {rv}");
    }
    let store = Store::read(&dir.join("single/result.h5")).unwrap();
    assert!(store.contains("/patterns/values"));
    assert!(!store.contains("/dipole/distance_to_patch_peak_mm"));
    assert_eq!(
        store.datasets["/dipole/covariance_mm2"].shape,
        vec![3, 3, 3]
    );

    // Symmetric pairs into the attribution's folder: the bilateral frontal
    // component is found as its two generators; result.h5 keeps the
    // attribution and gains /dipole with the distance to the patch peak.
    let pairs = dipole_on_demo(&dir, &["--pairs", "--out", "demo"]);
    assert!(
        pairs.status.success(),
        "dipole --pairs failed: {}",
        stderr(&pairs)
    );
    let (header, rows) = csv(&dir.join("demo/dipoles.csv"));
    assert_eq!(rows.len(), 6);
    // The demo's time-resolved folder is carried over into the new folder.
    for f in ["result.h5", "time_ranges.csv", "decoder.h5"] {
        assert!(dir.join("demo/time-resolved").join(f).is_file(), "{f} lost");
    }
    assert_eq!(header[1], "dipole");
    let eye: Vec<&Vec<String>> = rows.iter().filter(|r| r[0] == "2").collect();
    for (row, region) in eye.iter().zip(["right-frontal-pole", "left-frontal-pole"]) {
        let d = distance_mm(position_mm(&header, row), seed(region));
        eprintln!(
            "eye-like pair: dipole {} {d:.1} mm from the {region} generator",
            row[1]
        );
        assert!(
            d < 10.0,
            "dipole {}: {d:.1} mm from the {region} generator",
            row[1]
        );
    }
    let store = Store::read(&dir.join("demo/result.h5")).unwrap();
    assert!(
        store.contains("/attribution/share"),
        "the attribution is kept"
    );
    let Array::F64(d) = &store.datasets["/dipole/distance_to_patch_peak_mm"].data else {
        panic!("distance_to_patch_peak_mm is not floats")
    };
    assert_eq!(d.len(), 6);
    assert!(d.iter().all(|v| v.is_finite()));
    // read_result returns the same rows, and the attribution's report was
    // rewritten with the dipole table beside the patch shares.
    let r = patchwise::io::result_file::read_result(&dir.join("demo/result.h5")).unwrap();
    let dipoles = r.dipoles.expect("/dipole read back");
    assert_eq!(dipoles.component, vec![0, 0, 1, 1, 2, 2]);
    assert_eq!(
        dipoles.distance_to_patch_peak_mm.as_deref(),
        Some(d.as_slice())
    );
    let html = std::fs::read_to_string(dir.join("demo/report.html")).unwrap();
    assert!(html.contains("Equivalent dipoles"));
    assert!(html.contains(&dipoles.nearest_region[4]));
}

#[test]
fn bad_patterns_exit_2_naming_the_component_and_leave_no_output() {
    let dir = support::scratch("dipole_cli_bad");
    let labels = [
        "Fp1", "Fp2", "F3", "F4", "C3", "C4", "P3", "P4", "O1", "O2", "Cz", "Pz",
    ];
    std::fs::write(dir.join("channels.txt"), labels.join("\n")).unwrap();
    for (name, second) in [("zero", 0.0), ("constant", 2.5)] {
        let text: String = (0..labels.len())
            .map(|i| format!("{},{}\n", (i as f64 * 0.7).sin(), second))
            .collect();
        let file = format!("{name}.csv");
        std::fs::write(dir.join(&file), text).unwrap();
        let out = patchwise(
            &[
                "dipole",
                "--decoder",
                &file,
                "--channels",
                "channels.txt",
                "--montage",
                "10-20",
                "--sources",
                "template-5k",
                "--out",
                "out",
            ],
            &dir,
        );
        assert_eq!(out.status.code(), Some(2), "{name}: {}", stderr(&out));
        assert!(
            stderr(&out).contains("component 1"),
            "{name}: {}",
            stderr(&out)
        );
        assert!(!dir.join("out").exists(), "{name}: output folder written");
    }
    // Nothing staged is left beside the output either.
    let leftovers: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().starts_with(".out"))
        .collect();
    assert!(leftovers.is_empty());
    // A result.h5 already in --out made from other channels is refused and kept as it was.
    let text: String = (0..labels.len())
        .map(|i| format!("{}\n", (i as f64 * 0.7).sin()))
        .collect();
    std::fs::write(dir.join("good.csv"), text).unwrap();
    let run = |channels: &str| {
        patchwise(
            &[
                "dipole",
                "--decoder",
                "good.csv",
                "--channels",
                channels,
                "--montage",
                "10-20",
                "--sources",
                "template-5k",
                "--out",
                "kept",
            ],
            &dir,
        )
    };
    let first = run("channels.txt");
    assert!(first.status.success(), "{}", stderr(&first));
    let before = std::fs::read(dir.join("kept/result.h5")).unwrap();
    let mut reordered = labels;
    reordered.swap(0, 1);
    std::fs::write(dir.join("reordered.txt"), reordered.join("\n")).unwrap();
    let second = run("reordered.txt");
    assert_eq!(second.status.code(), Some(2), "{}", stderr(&second));
    assert!(
        stderr(&second).contains("/patterns/labels"),
        "{}",
        stderr(&second)
    );
    assert_eq!(std::fs::read(dir.join("kept/result.h5")).unwrap(), before);
    // A negative noise level is a usage error.
    let out = patchwise(
        &[
            "dipole",
            "--decoder",
            "zero.csv",
            "--channels",
            "channels.txt",
            "--noise-sd",
            "-1",
            "--out",
            "out",
        ],
        &dir,
    );
    assert_eq!(out.status.code(), Some(2));
}
