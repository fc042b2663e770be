//! Outputs never destroy a user's files (issue 18, items 1–4): a batch
//! never replaces a folder it did not make, no command writes over its own
//! inputs, and output folders are committed whole. Each test builds the
//! offending input in its own folder, runs the real binary, and checks that
//! the inputs are byte-identical afterwards, the exit code is 2, stderr
//! names the path, and nothing partial is left.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Output;

use crate::support::batch::{batch, hidden_entries, text, write_decoders, write_script, DEFAULTS};
use crate::support::cli::patchwise;
use crate::support::refusal::{assert_refused, attribute_5k};
use crate::support::scratch;

/// `attribute` of one decoder file (see [`attribute_5k`]).
fn attribute(dir: &Path, decoder: &str, out: &str, extra: &[&str]) -> Output {
    attribute_5k(dir, &[decoder], out, extra)
}

/// Every file under `dir` with its bytes (folders as entries without bytes).
fn snapshot(dir: &Path) -> BTreeMap<PathBuf, Option<Vec<u8>>> {
    let mut out = BTreeMap::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap().flatten() {
            let p = e.path();
            let rel = p.strip_prefix(dir).unwrap().to_path_buf();
            if e.file_type().unwrap().is_dir() {
                out.insert(rel, None);
                stack.push(p);
            } else {
                out.insert(rel, Some(std::fs::read(&p).unwrap()));
            }
        }
    }
    out
}

#[test]
fn batch_never_removes_a_folder_it_did_not_make() {
    // The issue's case: `--out study/data` and a job named like the folder
    // that holds its own decoder.
    let dir = scratch("never-removes");
    write_decoders(&dir, 1);
    let data = dir.join("study/data");
    std::fs::create_dir_all(data.join("sub-01")).unwrap();
    std::fs::copy(
        dir.join("decoders/sub-01.h5"),
        data.join("sub-01/decoder.h5"),
    )
    .unwrap();
    std::fs::write(data.join("sub-01/notes.txt"), "recorded 2026-11-02").unwrap();
    std::fs::write(data.join("unrelated.csv"), "1,2,3\n").unwrap();
    write_script(
        &dir,
        &format!(
            "{DEFAULTS}[[job]]\nname = \"sub-01\"\ndecoder = \"study/data/sub-01/decoder.h5\"\n"
        ),
    );
    let before = snapshot(&data);
    let o = batch(&dir, &["jobs.toml", "--out", "study/data"]);
    assert_refused(&o, "study/data/sub-01");
    assert_eq!(snapshot(&data), before, "the user's folder changed");

    // A folder of the job's name without its marker is the user's too, even
    // when it holds only files named like ours.
    let out = dir.join("out");
    std::fs::create_dir_all(out.join("sub-01")).unwrap();
    std::fs::write(out.join("sub-01/regions.csv"), "mine\n").unwrap();
    write_script(
        &dir,
        &format!("{DEFAULTS}[[job]]\nname = \"sub-01\"\ndecoder = \"decoders/sub-01.h5\"\n"),
    );
    let before = snapshot(&out);
    let o = batch(&dir, &["jobs.toml", "--out", "out"]);
    assert_refused(&o, "out/sub-01");
    assert_eq!(snapshot(&out), before);

    // Its own folder is replaced when the job changes (the marker names it).
    std::fs::remove_dir_all(&out).unwrap();
    let first = batch(&dir, &["jobs.toml", "--out", "out"]);
    assert!(first.status.success(), "{}", text(&first));
    write_script(
        &dir,
        &format!(
            "{DEFAULTS}[[job]]\nname = \"sub-01\"\ndecoder = \"decoders/sub-01.h5\"\nseed = 7\n"
        ),
    );
    let again = batch(&dir, &["jobs.toml", "--out", "out"]);
    assert!(again.status.success(), "{}", text(&again));
    assert!(text(&again).contains("1 to run"), "{}", text(&again));
    assert!(
        hidden_entries(&out).is_empty(),
        "{:?}",
        hidden_entries(&out)
    );
}

#[test]
fn batch_refuses_names_and_globs_that_reach_its_own_outputs() {
    let dir = scratch("own-outputs");
    write_decoders(&dir, 2);
    let cases = [
        // A job named like the batch's summary file.
        (
            format!("{DEFAULTS}[[job]]\nname = \"batch-summary.csv\"\ndecoder = \"decoders/sub-01.h5\"\n"),
            "batch-summary.csv",
        ),
        // A glob that would read the job folders' result.h5 on a rerun.
        (
            format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"**/*.h5\"\n"),
            "would match",
        ),
        // A script without jobs.
        (String::new(), "no [[job]]"),
        // A comparison inside a job folder, or over the batch's folder.
        (
            format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-*.h5\"\n[compare]\nout = \"out/s-sub-01/cmp\"\n"),
            "[compare] out",
        ),
        (
            format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-*.h5\"\n[compare]\nout = \"out\"\n"),
            "[compare] out",
        ),
    ];
    for (script, needle) in cases {
        write_script(&dir, &script);
        let before = snapshot(&dir.join("decoders"));
        let o = batch(&dir, &["jobs.toml", "--out", "out"]);
        assert_refused(&o, needle);
        assert!(!dir.join("out").exists(), "{needle}: out was created");
        assert_eq!(snapshot(&dir.join("decoders")), before);
    }
}

#[test]
fn compare_never_writes_into_a_result_folder() {
    let dir = scratch("compare-into-input");
    write_decoders(&dir, 2);
    for s in ["01", "02"] {
        let o = attribute(
            &dir,
            &format!("decoders/sub-{s}.h5"),
            &format!("sub-{s}"),
            &[],
        );
        assert!(o.status.success(), "{}", text(&o));
    }
    let before = snapshot(&dir.join("sub-01"));
    for out in ["sub-01", "./sub-01/", "sub-01/comparison"] {
        let o = patchwise(&["compare", "sub-01", "sub-02", "--out", out], &dir);
        assert_refused(&o, "sub-01");
        assert_eq!(snapshot(&dir.join("sub-01")), before, "--out {out}");
    }
}

#[test]
fn no_command_replaces_its_own_input() {
    let dir = scratch("own-input");
    write_decoders(&dir, 1);
    let first = attribute(&dir, "decoders/sub-01.h5", "same", &["--no-report"]);
    assert!(first.status.success(), "{}", text(&first));
    let before = snapshot(&dir.join("same"));

    // attribute --decoder same/result.h5 --out same (also spelt otherwise).
    for out in ["same", "./same", "decoders/../same"] {
        let o = attribute(&dir, "same/result.h5", out, &[]);
        assert_refused(&o, "same/result.h5");
        assert_eq!(snapshot(&dir.join("same")), before);
    }
    // A decoder inside the folder that would be replaced.
    std::fs::create_dir_all(dir.join("mixed")).unwrap();
    std::fs::copy(dir.join("decoders/sub-01.h5"), dir.join("mixed/decoder.h5")).unwrap();
    std::fs::copy(
        dir.join("same/summary.json"),
        dir.join("mixed/summary.json"),
    )
    .unwrap();
    let mixed = snapshot(&dir.join("mixed"));
    let o = attribute(&dir, "mixed/decoder.h5", "mixed", &[]);
    assert_refused(&o, "mixed/decoder.h5");
    assert_eq!(snapshot(&dir.join("mixed")), mixed);

    // report over the result it reads.
    let o = patchwise(&["report", "same", "--out", "same/result.h5"], &dir);
    assert_refused(&o, "same/result.h5");
    assert_eq!(snapshot(&dir.join("same")), before);

    // dictionary over its lead field.
    let lf = crate::support::cli::leadfield(&dir, "default", "10-20", "lf.h5");
    assert!(lf.status.success(), "{}", text(&lf));
    let bytes = std::fs::read(dir.join("lf.h5")).unwrap();
    let o = patchwise(
        &["dictionary", "--leadfield", "lf.h5", "--out", "./lf.h5"],
        &dir,
    );
    assert_refused(&o, "lf.h5");
    assert_eq!(std::fs::read(dir.join("lf.h5")).unwrap(), bytes);
}

#[test]
fn output_folders_are_committed_whole() {
    let dir = scratch("committed-whole");
    write_decoders(&dir, 1);
    let decoder = "decoders/sub-01.h5";

    // A folder named regions.csv in the way: refused before computing,
    // nothing new beside it.
    std::fs::create_dir_all(dir.join("blocked/regions.csv")).unwrap();
    let o = attribute(&dir, decoder, "blocked", &[]);
    assert_refused(&o, "regions.csv");
    assert_eq!(
        snapshot(&dir.join("blocked")).keys().collect::<Vec<_>>(),
        [Path::new("regions.csv")]
    );
    assert!(
        !dir.join("cache").exists(),
        "refused after computing a lead field"
    );

    // A rerun with --no-report leaves no report.html of the earlier run.
    let full = attribute(&dir, decoder, "r", &[]);
    assert!(full.status.success(), "{}", text(&full));
    assert!(dir.join("r/report.html").is_file());
    let lean = attribute(&dir, decoder, "r", &["--no-report"]);
    assert!(lean.status.success(), "{}", text(&lean));
    let names: Vec<_> = snapshot(&dir.join("r")).into_keys().collect();
    assert_eq!(
        names,
        ["regions.csv", "result.h5", "summary.json"]
            .map(PathBuf::from)
            .to_vec()
    );

    // The staging folder of a killed run (a pid above any kernel's pid_max
    // stands for a dead one) is removed by the next run; a live run's
    // (this test's pid) is kept.
    let host = patchwise::io::atomic::host_tag();
    let dead = dir.join(format!(".r.{host}.999999999.0.tmp"));
    let live = dir.join(format!(".r.{host}.{}.0.tmp", std::process::id()));
    for d in [&dead, &live] {
        std::fs::create_dir_all(d).unwrap();
        std::fs::write(d.join("result.h5"), "partial").unwrap();
    }
    let o = attribute(&dir, decoder, "r", &["--no-report"]);
    assert!(o.status.success(), "{}", text(&o));
    assert!(!dead.exists(), "the dead run's staging folder is left");
    assert!(live.is_dir(), "a live run's staging folder was removed");
    let hidden: Vec<String> = hidden_entries(&dir)
        .into_iter()
        .filter(|n| n.starts_with(".r."))
        .collect();
    assert_eq!(hidden.len(), 1, "{hidden:?}");
}

#[test]
fn a_dead_temporary_of_ours_does_not_block_the_rerun() {
    // A `report` killed while writing leaves `.report.html.<host>.<pid>.<n>.tmp`
    // in the result folder; that file is ours, so the rerun removes it
    // instead of calling the folder "not ours". A live writer's temporary
    // still blocks (it may become report.html at any moment).
    let dir = scratch("dead-temporary");
    write_decoders(&dir, 1);
    let decoder = "decoders/sub-01.h5";
    let first = attribute(&dir, decoder, "r", &["--no-report"]);
    assert!(first.status.success(), "{}", text(&first));
    let host = patchwise::io::atomic::host_tag();
    let dead = dir.join(format!("r/.report.html.{host}.999999999.3.tmp"));
    std::fs::write(&dead, "<html>half a page").unwrap();
    let again = attribute(&dir, decoder, "r", &["--no-report"]);
    assert!(again.status.success(), "{}", text(&again));
    assert!(!dead.exists(), "the dead temporary is left");
    let names: Vec<_> = snapshot(&dir.join("r")).into_keys().collect();
    assert_eq!(
        names,
        ["regions.csv", "result.h5", "summary.json"]
            .map(PathBuf::from)
            .to_vec()
    );

    let live = dir.join(format!(
        "r/.report.html.{host}.{}.0.tmp",
        std::process::id()
    ));
    std::fs::write(&live, "<html>being written").unwrap();
    let before = snapshot(&dir.join("r"));
    let o = attribute(&dir, decoder, "r", &["--no-report"]);
    assert_refused(&o, ".report.html");
    assert_eq!(snapshot(&dir.join("r")), before);
}

#[test]
fn compare_map_files_are_inputs_the_output_may_not_replace() {
    let dir = scratch("compare-map-input");
    write_decoders(&dir, 2);
    for s in ["01", "02"] {
        let o = attribute(
            &dir,
            &format!("decoders/sub-{s}.h5"),
            &format!("sub-{s}"),
            &["--no-report"],
        );
        assert!(o.status.success(), "{}", text(&o));
    }
    let first = patchwise(
        &["compare", "sub-01", "sub-02", "--out", "cmp", "--no-report"],
        &dir,
    );
    assert!(first.status.success(), "{}", text(&first));
    // A vertex map kept in the comparison folder under one of our names:
    // the folder is ours, but replacing it would delete the map being read.
    let n = {
        let r = patchwise::io::result_file::read_result(&dir.join("sub-02/result.h5")).unwrap();
        r.sources.unwrap().len()
    };
    let indices: String = (0..n).map(|i| format!("{i}\n")).collect();
    std::fs::write(dir.join("map.csv"), &indices).unwrap();
    // The map itself is valid: the same map outside the folder is used.
    let outside = patchwise(
        &[
            "compare",
            "sub-01",
            "sub-02",
            "--map",
            "sub-02=map.csv",
            "--out",
            "cmp2",
            "--no-report",
        ],
        &dir,
    );
    assert!(outside.status.success(), "{}", text(&outside));
    std::fs::write(dir.join("cmp/paired.csv"), &indices).unwrap();
    let before = snapshot(&dir.join("cmp"));
    for map in ["sub-02=cmp/paired.csv", "sub-02=./cmp/../cmp/paired.csv"] {
        let o = patchwise(
            &[
                "compare",
                "sub-01",
                "sub-02",
                "--map",
                map,
                "--out",
                "cmp",
                "--no-report",
            ],
            &dir,
        );
        assert_refused(&o, "paired.csv");
        assert_eq!(snapshot(&dir.join("cmp")), before, "--map {map}");
    }
    let spheres = patchwise(
        &[
            "compare",
            "sub-01",
            "sub-02",
            "--map",
            "sub-02=cmp/paired.csv,elsewhere.gii",
            "--out",
            "cmp",
            "--no-report",
        ],
        &dir,
    );
    assert_refused(&spheres, "paired.csv");
    assert_eq!(snapshot(&dir.join("cmp")), before);
}

#[test]
fn batch_glob_with_dot_dot_cannot_reach_its_own_outputs() {
    let dir = scratch("glob-dot-dot");
    write_decoders(&dir, 2);
    for decoder in ["decoders/../**/*.h5", "./decoders/./../*/../**/*.h5"] {
        write_script(
            &dir,
            &format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"{decoder}\"\n"),
        );
        let before = snapshot(&dir.join("decoders"));
        let o = batch(&dir, &["jobs.toml", "--out", "out"]);
        assert_refused(&o, "would match");
        assert!(!dir.join("out").exists(), "{decoder}: out was created");
        assert_eq!(snapshot(&dir.join("decoders")), before);
    }
}

#[test]
fn sources_and_montages_that_are_not_a_regular_file_say_so() {
    let dir = scratch("sources-fifo");
    write_decoders(&dir, 1);
    let fifo = dir.join("sources.csv");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(made.success());
    std::fs::create_dir_all(dir.join("folder.csv")).unwrap();
    for sources in ["sources.csv", "folder.csv"] {
        let o = patchwise(
            &[
                "attribute",
                "--decoder",
                "decoders/sub-01.h5",
                "--montage",
                "10-10",
                "--sources",
                sources,
                "--out",
                "r",
            ],
            &dir,
        );
        assert_refused(&o, "not a regular file");
        assert!(String::from_utf8_lossy(&o.stderr).contains(sources));
        assert!(!dir.join("r").exists());
    }
    // The same for a montage given as a pipe.
    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "decoders/sub-01.h5",
            "--montage",
            "sources.csv",
            "--sources",
            "template-5k",
            "--out",
            "r",
        ],
        &dir,
    );
    assert_refused(&o, "montage \"sources.csv\": not a regular file");
    assert!(!dir.join("r").exists());
}
