//! `patchwise batch` (issue 6): a run killed with SIGKILL at a random point
//! and rerun gives the same numbers as an uninterrupted run, with no partial
//! folder left; parallel jobs give the numbers of one job at a time; a
//! changed option redoes only its job.
#![allow(clippy::unwrap_used)]

mod batch_common;

use batch_common::*;

fn names(n: usize) -> Vec<String> {
    (1..=n).map(|s| format!("s-sub-{s:02}")).collect()
}

fn six_jobs(dir: &std::path::Path) {
    write_decoders(dir, 6);
    write_script(
        dir,
        &format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-*.h5\"\n"),
    );
}

/// An uninterrupted run with one job at a time, then a run with two jobs at
/// a time in another folder: every dataset equal bit for bit (the library
/// promises results independent of the thread count; parallel jobs share
/// the rayon pool).
#[test]
fn parallel_jobs_match_one_at_a_time_and_reruns_skip() {
    let dir = scratch("batch-parallel");
    six_jobs(&dir);
    let one = batch(&dir, &["jobs.toml", "--out", "one", "--jobs", "1"]);
    assert!(one.status.success(), "{}", text(&one));
    assert!(
        text(&one).contains("0 already done, 6 to run"),
        "{}",
        text(&one)
    );
    let two = batch(&dir, &["jobs.toml", "--out", "two", "--jobs", "2"]);
    assert!(two.status.success(), "{}", text(&two));
    assert_eq!(job_folders(&dir.join("two")), names(6));
    assert_same_results(&dir.join("one"), &dir.join("two"), &names(6));
    let csv = std::fs::read_to_string(dir.join("two/batch-summary.csv")).unwrap();
    // One row per job and component, plus the header.
    assert_eq!(csv.lines().count(), 1 + 6 * 2, "{csv}");
    let again = batch(&dir, &["jobs.toml", "--out", "two"]);
    assert!(again.status.success(), "{}", text(&again));
    assert!(
        text(&again).contains("6 already done, 0 to run"),
        "{}",
        text(&again)
    );
}
