//! `patchwise batch` on bad input (issue 6): bad job scripts and shard specs
//! exit 2 before any job runs, naming the line or the job; a job that fails
//! at run time is reported while the others finish.

use crate::support::batch::*;
use crate::support::scratch;

#[test]
fn bad_scripts_and_shards_exit_2_naming_the_line_or_job() {
    let dir = scratch("batch-bad");
    write_decoders(&dir, 1);
    let job = "[[job]]\nname = \"one\"\ndecoder = \"decoders/sub-01.h5\"\n";
    let cases: [(String, &[&str], &str); 7] = [
        (
            format!("{DEFAULTS}{job}resampels = 3\n"),
            &[],
            "jobs.toml:9:1: unknown field `resampels`",
        ),
        (
            format!("{DEFAULTS}[[job]]\nname = \"gone\"\ndecoder = \"decoders/missing.h5\"\n"),
            &[],
            "job gone: decoder",
        ),
        (
            format!("{DEFAULTS}{job}\n{job}"),
            &[],
            "job name \"one\" is used twice",
        ),
        (
            format!("{DEFAULTS}[[job]]\nname = \"x\"\ndecoder = \"nothing/*.h5\"\n"),
            &[],
            "job x: decoder pattern",
        ),
        (
            format!("{DEFAULTS}{job}"),
            &["--shard", "0/2"],
            "shard \"0/2\"",
        ),
        (
            format!("{DEFAULTS}{job}"),
            &["--shard", "3/2"],
            "shard \"3/2\"",
        ),
        (
            format!("{DEFAULTS}{job}"),
            &["--shard", "a/b"],
            "shard \"a/b\"",
        ),
    ];
    for (script, extra, expected) in &cases {
        write_script(&dir, script);
        let mut args = vec!["jobs.toml", "--out", "out"];
        args.extend_from_slice(extra);
        let o = batch(&dir, &args);
        assert_eq!(o.status.code(), Some(2), "{expected}: {}", text(&o));
        assert!(text(&o).contains(expected), "{expected}: {}", text(&o));
        assert!(!dir.join("out").exists(), "{expected}: output written");
    }
}

/// A decoder that exists but is not one: that job fails with exit 2 in the
/// failure table, the other job finishes, and no summary is written.
#[test]
fn a_failing_job_does_not_stop_the_others() {
    let dir = scratch("batch-failing");
    write_decoders(&dir, 1);
    std::fs::write(dir.join("decoders/broken.h5"), b"not an HDF5 file").unwrap();
    write_script(
        &dir,
        &format!(
            "{DEFAULTS}[[job]]\nname = \"good\"\ndecoder = \"decoders/sub-01.h5\"\n[[job]]\nname = \"bad\"\ndecoder = \"decoders/broken.h5\"\n"
        ),
    );
    let o = batch(&dir, &["jobs.toml", "--out", "out", "--jobs", "1"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    let t = text(&o);
    assert!(t.contains("FAILED  bad"), "{t}");
    assert!(
        t.contains("1 failed job(s)") && t.contains("2 (bad input)"),
        "{t}"
    );
    assert_eq!(job_folders(&dir.join("out")), ["good"]);
    assert!(!dir.join("out/batch-summary.csv").exists());
    assert!(hidden_entries(&dir.join("out")).is_empty());
}
