//! `patchwise batch --shard I/N` (issue 6): two shards run at once into one
//! folder, then a plain rerun, equal the full run; the summary appears only
//! once every job is done.

use crate::support::batch::*;
use crate::support::scratch;

#[test]
fn two_shards_and_a_rerun_equal_the_full_run() {
    let dir = scratch("batch-shards");
    write_decoders(&dir, 5);
    write_script(
        &dir,
        &format!(
            "{DEFAULTS}[[job]]\nname = \"a\"\ndecoder = \"decoders/sub-0[1-3].h5\"\n\n[[job]]\nname = \"b\"\ndecoder = \"decoders/sub-0[4-5].h5\"\njoint = true\n"
        ),
    );
    let full = batch(&dir, &["jobs.toml", "--out", "full"]);
    assert!(full.status.success(), "{}", text(&full));
    let names = job_folders(&dir.join("full"));
    assert_eq!(
        names,
        ["a-sub-01", "a-sub-02", "a-sub-03", "b-sub-04", "b-sub-05"]
    );

    // Shard 1 alone: jobs 0, 2, 4 in name order; no summary yet.
    let one = batch(
        &dir,
        &[
            "jobs.toml",
            "--out",
            "sharded",
            "--shard",
            "1/2",
            "--jobs",
            "1",
        ],
    );
    assert!(one.status.success(), "{}", text(&one));
    assert_eq!(
        job_folders(&dir.join("sharded")),
        ["a-sub-01", "a-sub-03", "b-sub-05"]
    );
    assert!(!dir.join("sharded/batch-summary.csv").exists());
    // Shard 2 while a second copy of shard 1 (all done, so it skips) and a
    // plain run on a fresh folder compete for the same cache entries.
    let mut other = spawn(&dir, &["jobs.toml", "--out", "third", "--jobs", "1"]);
    let two = batch(
        &dir,
        &[
            "jobs.toml",
            "--out",
            "sharded",
            "--shard",
            "2/2",
            "--jobs",
            "1",
        ],
    );
    assert!(two.status.success(), "{}", text(&two));
    assert!(other.wait().unwrap().success());
    let rerun = batch(&dir, &["jobs.toml", "--out", "sharded"]);
    assert!(rerun.status.success(), "{}", text(&rerun));
    assert!(
        text(&rerun).contains("5 already done, 0 to run"),
        "{}",
        text(&rerun)
    );
    let csv = std::fs::read_to_string(dir.join("sharded/batch-summary.csv")).unwrap();
    assert!(csv.lines().skip(1).all(|l| l.contains(",reused,")), "{csv}");
    assert_same_results(&dir.join("full"), &dir.join("sharded"), &names);
    assert_same_results(&dir.join("full"), &dir.join("third"), &names);
    assert!(hidden_entries(&dir.join("sharded")).is_empty());
}
