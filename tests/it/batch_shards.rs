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

/// Issue 24: four shards started at once on one fresh cache, as the array
/// tasks of a workload manager start, build each cache entry once: the
/// first shard to need the dictionary builds it under the entry's file
/// lock, the other three wait and read it (their logs say "using cached
/// dictionary"). Before the file lock each process built it (the lock was
/// per process only). The shards' results equal one plain run's bit for
/// bit. Building shared work once under a lock: common practice, no source.
#[test]
fn concurrent_shards_build_each_cache_entry_once() {
    let dir = scratch("batch-shards-concurrent");
    write_decoders(&dir, 4);
    write_script(
        &dir,
        &format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-*.h5\"\n"),
    );
    let shards: Vec<_> = (1..=4)
        .map(|i| {
            let shard = format!("{i}/4");
            command(
                &dir,
                &[
                    "jobs.toml",
                    "--out",
                    "sharded",
                    "--shard",
                    &shard,
                    "--jobs",
                    "1",
                ],
            )
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .unwrap()
        })
        .collect();
    let logs: Vec<String> = shards
        .into_iter()
        .map(|c| {
            let o = c.wait_with_output().unwrap();
            assert!(o.status.success(), "{}", text(&o));
            text(&o)
        })
        .collect();
    let count = |what: &str| {
        logs.iter()
            .map(|l| l.lines().filter(|x| x.contains(what)).count())
            .sum::<usize>()
    };
    assert_eq!(count("built and cached dictionary"), 1, "{logs:#?}");
    assert_eq!(count("using cached dictionary"), 3, "{logs:#?}");
    let entries = std::fs::read_dir(dir.join("cache"))
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().starts_with("dictionary-"))
        .count();
    assert_eq!(entries, 1);

    // A plain run on its own cache computes the same numbers.
    let plain = command(&dir, &["jobs.toml", "--out", "plain", "--jobs", "2"])
        .env("PATCHWISE_CACHE", dir.join("cache-plain"))
        .output()
        .unwrap();
    assert!(plain.status.success(), "{}", text(&plain));
    let names = job_folders(&dir.join("plain"));
    assert_eq!(names.len(), 4);
    assert_same_results(&dir.join("plain"), &dir.join("sharded"), &names);
}
