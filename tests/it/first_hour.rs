//! Issue 22, the rough edges a new user meets in the first hour: negative
//! numbers reach the range checks, `--help` shows the tolerance as written
//! and says what "selected" counts, electrodes in another frame are named
//! as the cause, and sources without regions are refused instead of giving
//! empty tables.

use std::path::Path;

use crate::support::cli::patchwise;
use crate::support::files::{attribute_quickly_output, decoder_10_20};
use crate::support::scratch;

fn stderr(o: &std::process::Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn attribute(dir: &Path, extra: &[&str]) -> std::process::Output {
    attribute_quickly_output(dir, "r", extra)
}

#[test]
fn negative_numbers_are_values_that_get_the_range_error() {
    let dir = scratch("first-hour-negative");
    decoder_10_20(&dir, 1);
    for (option, needle) in [
        ("--noise-sd", "--noise-sd -1"),
        ("--tol", "--tol -1"),
        ("--lambda-ratio", "--lambda-ratio"),
    ] {
        let o = attribute(&dir, &[option, "-1"]);
        let text = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{option}: {text}");
        assert!(!text.contains("unexpected argument"), "{option}: {text}");
        assert!(text.contains(needle), "{option}: {text}");
    }
    assert!(!dir.join("r").exists());
}

#[test]
fn help_shows_the_tolerance_as_written() {
    let dir = scratch("first-hour-help");
    let o = patchwise(&["attribute", "--help"], &dir);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(o.status.success());
    assert!(text.contains("[default: 1e-8]"), "{text}");
    assert!(!text.contains("0.00000001"), "{text}");
    // "selected" is explained where the resamples are.
    assert!(text.contains("share >= 5 %"), "{text}");
}

/// Electrodes shifted 40 mm toward the nose: the head centre fitted to them
/// leaves the template cortex half outside, and the message says so once,
/// about the electrodes, with what to check.
#[test]
fn electrodes_in_another_frame_are_named_as_the_cause_once() {
    let dir = scratch("first-hour-shifted");
    decoder_10_20(&dir, 2);
    let o = patchwise(&["montage", "export", "10-20", "--out", "e.tsv"], &dir);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = std::fs::read_to_string(dir.join("e.tsv")).unwrap();
    let mut shifted = String::new();
    for (i, line) in text.lines().enumerate() {
        if i == 0 {
            shifted.push_str(line);
        } else {
            let f: Vec<&str> = line.split('\t').collect();
            let y: f64 = f[2].parse().unwrap();
            shifted.push_str(&format!("{}\t{}\t{}\t{}", f[0], f[1], y + 40.0, f[3]));
        }
        shifted.push('\n');
    }
    std::fs::write(dir.join("shifted.tsv"), shifted).unwrap();
    let o = attribute(
        &dir,
        &["--montage", "shifted.tsv", "--sources", "template-5k"],
    );
    let text = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{text}");
    assert!(text.contains("the electrodes of shifted.tsv"), "{text}");
    assert!(text.contains("sphere fitted to the electrodes"), "{text}");
    assert!(text.contains("units") && text.contains("shift"), "{text}");
    assert_eq!(text.matches("inner sphere").count(), 1, "{text}");
    // Refused before any lead field was computed.
    assert!(!dir.join("r").exists());
    assert!(!dir.join("cache").exists(), "computed before refusing");
}

#[test]
fn own_sources_without_regions_are_refused_with_the_fix() {
    let dir = scratch("first-hour-no-regions");
    decoder_10_20(&dir, 3);
    // A point cloud on a 70 mm hemisphere (mm), no region column.
    let mut table = String::from("x,y,z\n");
    for i in 0..200 {
        let z = (i as f64 + 0.5) / 200.0;
        let r = (1.0 - z * z).sqrt();
        let phi = i as f64 * 2.399_963;
        table.push_str(&format!(
            "{},{},{}\n",
            70.0 * r * phi.cos(),
            70.0 * r * phi.sin(),
            70.0 * z
        ));
    }
    std::fs::write(dir.join("own.csv"), table).unwrap();
    let o = attribute(&dir, &["--montage", "10-20", "--sources", "own.csv"]);
    let text = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{text}");
    assert!(
        text.contains("no source has a region") && text.contains("--regions"),
        "{text}"
    );
    assert!(String::from_utf8_lossy(&o.stdout).trim().is_empty());
    assert!(!dir.join("r").exists());
}
