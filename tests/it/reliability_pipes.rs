//! A closed stdout (`patchwise ... | head -1`) ends the output quietly
//! (issue 18, item 5): no panic (exit 101, "failed printing to stdout"),
//! the usual exit code, and a batch still finishes every job and writes
//! its summary.

use std::path::Path;
use std::process::{Command, Output, Stdio};

use crate::support::batch::{write_decoders, write_script, DEFAULTS};
use crate::support::scratch;

/// Run `patchwise ARGS` in `dir` with stdout a pipe whose read end is
/// closed before the program writes anything (as `| head -0` would), and
/// collect stderr.
fn with_closed_stdout(dir: &Path, args: &[&str]) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_patchwise"))
        .args(args)
        .current_dir(dir)
        .env("PATCHWISE_CACHE", dir.join("cache"))
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    child.wait_with_output().unwrap()
}

fn assert_quiet_end(o: &Output, what: &str) {
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(!err.contains("panicked"), "{what}: {err}");
    assert!(!err.contains("Broken pipe"), "{what}: {err}");
    assert_eq!(o.status.code(), Some(0), "{what}: {err}");
}

#[test]
fn a_closed_stdout_ends_output_quietly() {
    let dir = scratch("closed-stdout");
    // Hundreds of lines, the first written at once.
    let o = with_closed_stdout(&dir, &["montage", "show", "10-5"]);
    assert_quiet_end(&o, "montage show");
    // Results are still written in full when the terminal table cannot be.
    let o = with_closed_stdout(
        &dir,
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--out",
            "demo",
        ],
    );
    assert_quiet_end(&o, "demo");
    for f in ["result.h5", "regions.csv", "summary.json", "report.html"] {
        assert!(dir.join("demo").join(f).is_file(), "demo/{f} missing");
    }
    // Bad input keeps its exit code and its one message on stderr.
    let o = with_closed_stdout(&dir, &["montage", "show", "10-99"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(!String::from_utf8_lossy(&o.stderr).contains("panicked"));
}

#[test]
fn batch_with_a_closed_stdout_finishes_every_job() {
    let dir = scratch("closed-stdout-batch");
    write_decoders(&dir, 4);
    write_script(
        &dir,
        &format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-*.h5\"\n"),
    );
    let o = with_closed_stdout(&dir, &["batch", "jobs.toml", "--out", "out", "--jobs", "2"]);
    assert_quiet_end(&o, "batch");
    for s in 1..=4 {
        let job = dir.join(format!("out/s-sub-{s:02}"));
        assert!(
            job.join("job.json").is_file(),
            "{} unfinished",
            job.display()
        );
    }
    let summary = std::fs::read_to_string(dir.join("out/batch-summary.csv")).unwrap();
    // A header and two components per job.
    assert_eq!(summary.lines().count(), 1 + 4 * 2, "{summary}");
}
