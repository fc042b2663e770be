//! Issue 22, a paired comparison as a user reads it: the B results are
//! recorded in compare.h5's /inputs and on the page, the terminal counts
//! subjects and results (item 11), and too few subjects for p < 0.05 with
//! sign flips is said, with the 2^n reasoning (item 13).

use std::path::Path;
use std::process::Output;

use crate::support::cli::patchwise;
use crate::support::cohort::subject;
use crate::support::report::run_demo;
use crate::support::scratch;
use patchwise::io::cache::file_sha256;
use patchwise::io::Store;

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Items 11 and 13: three subjects with an A and a B result each.
#[test]
fn paired_compare_keeps_the_b_results_and_counts_subjects() {
    let dir = scratch("first-hour-paired");
    let demo = run_demo(&dir, "demo", &["--resamples", "0", "--no-report"]);
    let decoder = demo.join("decoder.h5");
    for i in 0..3u64 {
        subject(&dir, &decoder, &format!("s{i}-A"), 300 + i, 0.05, 1);
        subject(&dir, &decoder, &format!("s{i}-B"), 400 + i, 0.3, 1);
    }
    let run = patchwise(
        &[
            "compare",
            "s0-A",
            "s1-A",
            "s2-A",
            "s0-B",
            "s1-B",
            "s2-B",
            "--pair",
            "A",
            "B",
            "--bootstrap",
            "50",
            "--cache",
            "cache",
            "--out",
            "paired",
        ],
        &dir,
    );
    assert!(run.status.success(), "{}", stderr(&run));
    assert!(
        stdout(&run).contains("comparison of 3 subjects, 6 results in paired"),
        "{}",
        stdout(&run)
    );
    // Three subjects: 2^3 = 8 sign vectors, smallest two-sided p 2/8.
    let err = stderr(&run);
    assert!(
        err.contains("3 subjects: a sign-flip test has 2^3 = 8 sign vectors"),
        "{err}"
    );
    assert!(err.contains("2/8 = 0.250"), "{err}");
    assert!(err.contains("at least 6 subjects are needed"), "{err}");

    let path = dir.join("paired/compare.h5");
    let store = Store::read(&path).unwrap();
    let a = store.strings(&path, "/inputs/results", Some(3)).unwrap();
    let b = store.strings(&path, "/inputs/results_b", Some(3)).unwrap();
    let b_hash = store.strings(&path, "/inputs/sha256_b", Some(3)).unwrap();
    for i in 0..3 {
        assert!(a[i].contains(&format!("s{i}-A")), "{}", a[i]);
        assert!(b[i].contains(&format!("s{i}-B")), "{}", b[i]);
        let file = dir.join(format!("s{i}-B/result.h5"));
        assert_eq!(b_hash[i], file_sha256(&file).unwrap());
    }
    // Item 14: one documented axis order (docs/result_files.md): a result
    // puts the component last (/attribution/share, n_regions × k), a
    // comparison first (/group/share, k × n_s × n_r); the same numbers.
    let (group, shape) = store.f64_array(&path, "/group/share").unwrap();
    let (k, n_s, n_r) = (shape[0], shape[1], shape[2]);
    assert_eq!((k, n_s), (1, 3));
    for (s, result) in a.iter().enumerate() {
        let file = Path::new(result);
        let file = if file.is_absolute() {
            file.to_path_buf()
        } else {
            dir.join(file)
        };
        let one = Store::read(&file).unwrap();
        let (share, shape) = one.f64_array(&file, "/attribution/share").unwrap();
        assert_eq!(shape, vec![n_r, k]);
        for r in 0..n_r {
            for c in 0..k {
                assert_eq!(group[(c * n_s + s) * n_r + r], share[r * k + c]);
            }
        }
    }
    let page = std::fs::read_to_string(dir.join("paired/report.html")).unwrap();
    let inputs = &page[page.find("id=\"inputs\"").unwrap()..];
    assert!(inputs.contains("result B"));
    for i in 0..3 {
        assert!(
            inputs.contains(&format!("s{i}-B")),
            "s{i}-B not on the page"
        );
    }
}
