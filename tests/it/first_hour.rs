//! Issue 22, the rough edges a new user meets in the first hour: negative
//! numbers reach the range checks and `--help` shows the tolerance as
//! written and says what "selected" counts.

use std::path::Path;

use crate::support::cli::patchwise;
use crate::support::files::decoder_10_20;
use crate::support::scratch;

fn stderr(o: &std::process::Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn attribute(dir: &Path, extra: &[&str]) -> std::process::Output {
    let mut args = vec![
        "attribute",
        "--decoder",
        "decoder.h5",
        "--resamples",
        "0",
        "--no-report",
        "--out",
        "r",
    ];
    args.extend_from_slice(extra);
    patchwise(&args, dir)
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
