//! Job scripts (issue 6): strict parsing with lines and job names in the
//! errors, defaults, relative paths, glob expansion and its naming rule,
//! duplicate names, the `[compare]` table and the input hash.

use std::path::{Path, PathBuf};

use patchwise::batch::{input_hash, load_script, BatchError};

use crate::support;

/// A fresh folder for one test, with an empty `decoders/`.
fn scratch(name: &str) -> PathBuf {
    let dir = support::scratch(name);
    std::fs::create_dir_all(dir.join("decoders")).unwrap();
    dir
}

fn touch(path: &Path, bytes: &[u8]) {
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(path, bytes).unwrap();
}

fn script(dir: &Path, text: &str) -> PathBuf {
    let p = dir.join("jobs.toml");
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn defaults_merge_paths_resolve_and_jobs_sort_by_name() {
    let dir = scratch("batch-defaults");
    touch(&dir.join("decoders/b.npz"), b"b");
    touch(&dir.join("decoders/a.npz"), b"a");
    touch(&dir.join("noise.npy"), b"n");
    let p = script(
        &dir,
        r#"
[defaults]
sources = "template-5k"
montage = "10-10"
resamples = 5
noise_covariance = "noise.npy"

[[job]]
name = "zeta"
decoder = "decoders/b.npz"
resamples = 7

[[job]]
name = "alpha"
decoder = "decoders/a.npz"
"#,
    );
    let s = load_script(&p).unwrap();
    let names: Vec<&str> = s.jobs.iter().map(|j| j.name.as_str()).collect();
    assert_eq!(names, ["alpha", "zeta"]);
    let alpha = &s.jobs[0];
    assert_eq!(alpha.decoder, dir.join("decoders/a.npz"));
    assert_eq!(alpha.params.fit.resamples, 5);
    assert_eq!(s.jobs[1].params.fit.resamples, 7);
    assert!(alpha.set_keys.iter().any(|k| k == "resamples"));
    // Names stay names; files become paths from the script's folder.
    assert_eq!(alpha.params.forward.montage.to_string(), "10-10");
    assert_eq!(alpha.params.forward.sources.to_string(), "template-5k");
    assert_eq!(
        alpha.params.inputs.noise_covariance.clone().unwrap(),
        dir.join("noise.npy")
    );
    assert_eq!(alpha.line, 13);
}

#[test]
fn unknown_key_names_its_line_column_and_job() {
    let dir = scratch("batch-unknown");
    touch(&dir.join("decoders/a.npz"), b"a");
    let p = script(
        &dir,
        "[[job]]\nname = \"first\"\ndecoder = \"decoders/a.npz\"\n\n[[job]]\nname = \"second\"\ndecoder = \"decoders/a.npz\"\nlamda_ratio = 0.1\n",
    );
    let e = load_script(&p).unwrap_err();
    let msg = e.to_string();
    match e {
        BatchError::Parse {
            line, column, job, ..
        } => {
            assert_eq!(line, 8, "{msg}");
            assert_eq!(column, 1, "{msg}");
            assert_eq!(job.as_deref(), Some("second"), "{msg}");
        }
        other => panic!("{other:?}"),
    }
    assert!(msg.contains("jobs.toml:8:1"), "{msg}");
    assert!(msg.contains("lamda_ratio"), "{msg}");
    // A key that starts another key's name is found on its own line.
    let p = script(
        &dir,
        "[[job]]\nname = \"a\"\ndecoder = \"decoders/a.npz\"\nlambda_rule = \"bic\"\nlam = 3\n",
    );
    let msg = load_script(&p).unwrap_err().to_string();
    assert!(msg.contains("jobs.toml:5:1: unknown field `lam`"), "{msg}");
    // An unknown key in [defaults] too.
    let p = script(
        &dir,
        "[defaults]\nsource = \"template\"\n[[job]]\nname = \"a\"\ndecoder = \"decoders/a.npz\"\n",
    );
    let msg = load_script(&p).unwrap_err().to_string();
    assert!(msg.contains("jobs.toml:2:1"), "{msg}");
}

#[test]
fn glob_expands_to_one_job_per_file_named_group_dash_stem() {
    let dir = scratch("batch-glob");
    for s in ["sub-02", "sub-01", "sub-03"] {
        touch(&dir.join(format!("decoders/{s}.npz")), s.as_bytes());
    }
    touch(&dir.join("decoders/notes.txt"), b"x");
    let p = script(
        &dir,
        "[[job]]\nname = \"cohort\"\ndecoder = \"decoders/sub-*.npz\"\nseed = 3\n",
    );
    let s = load_script(&p).unwrap();
    let names: Vec<&str> = s.jobs.iter().map(|j| j.name.as_str()).collect();
    assert_eq!(names, ["cohort-sub-01", "cohort-sub-02", "cohort-sub-03"]);
    assert!(s
        .jobs
        .iter()
        .all(|j| j.group == "cohort" && j.params.fit.seed == 3));
    assert_eq!(s.jobs[1].decoder, dir.join("decoders/sub-02.npz"));

    let p = script(
        &dir,
        "[[job]]\nname = \"cohort\"\ndecoder = \"decoders/none-*.npz\"\n",
    );
    let msg = load_script(&p).unwrap_err().to_string();
    assert!(
        msg.contains("job cohort") && msg.contains("matches no file"),
        "{msg}"
    );
}

/// Issue 22: a stem that already carries the table's name is not prefixed twice.
#[test]
fn glob_stems_that_start_with_the_table_name_are_not_prefixed_twice() {
    let dir = scratch("batch-glob-prefix");
    for s in ["sub-01_csp", "sub-02_csp", "subject3_csp"] {
        touch(&dir.join(format!("decoders/{s}.npz")), s.as_bytes());
    }
    let p = script(
        &dir,
        "[[job]]\nname = \"sub\"\ndecoder = \"decoders/*_csp.npz\"\n",
    );
    let s = load_script(&p).unwrap();
    let names: Vec<&str> = s.jobs.iter().map(|j| j.name.as_str()).collect();
    // `subject3` starts with "sub" but not with "sub-" or "sub_": it keeps the prefix.
    assert_eq!(names, ["sub-01_csp", "sub-02_csp", "sub-subject3_csp"]);
    assert!(s.jobs.iter().all(|j| j.group == "sub"));
}

#[test]
fn duplicate_names_after_expansion_and_missing_files_name_the_job() {
    let dir = scratch("batch-dupes");
    touch(&dir.join("decoders/x.npz"), b"x");
    let p = script(
        &dir,
        "[[job]]\nname = \"g-x\"\ndecoder = \"decoders/x.npz\"\n[[job]]\nname = \"g\"\ndecoder = \"decoders/*.npz\"\n",
    );
    let e = load_script(&p).unwrap_err();
    assert!(
        matches!(e, BatchError::DuplicateName { ref name, first_line: 1, second_line: 4, .. } if name == "g-x"),
        "{e}"
    );

    let p = script(
        &dir,
        "[[job]]\nname = \"s1\"\ndecoder = \"decoders/missing.npz\"\n",
    );
    let msg = load_script(&p).unwrap_err().to_string();
    assert!(
        msg.contains("job s1") && msg.contains("missing.npz") && msg.contains(":1:"),
        "{msg}"
    );

    let p = script(
        &dir,
        "[[job]]\nname = \"s1\"\ndecoder = \"decoders/x.npz\"\nmontage = \"10-21\"\n",
    );
    let msg = load_script(&p).unwrap_err().to_string();
    assert!(msg.contains("job s1") && msg.contains("montage"), "{msg}");

    let p = script(
        &dir,
        "[[job]]\nname = \"s/1\"\ndecoder = \"decoders/x.npz\"\n",
    );
    let msg = load_script(&p).unwrap_err().to_string();
    assert!(msg.contains("names a folder"), "{msg}");

    let p = script(
        &dir,
        "[[job]]\nname = \"s1\"\ndecoder = \"decoders/x.npz\"\nreference = \"median\"\n",
    );
    let msg = load_script(&p).unwrap_err().to_string();
    assert!(msg.contains("job s1") && msg.contains("reference"), "{msg}");
}

#[test]
fn compare_table_is_validated() {
    let dir = scratch("batch-compare");
    touch(&dir.join("decoders/s1-motor.npz"), b"a");
    touch(&dir.join("decoders/s1-visual.npz"), b"b");
    let base = "[[job]]\nname = \"g\"\ndecoder = \"decoders/*.npz\"\n[[job]]\nname = \"s2-motor\"\ndecoder = \"decoders/s1-motor.npz\"\n";
    let s = load_script(&script(
        &dir,
        &format!("{base}[compare]\nout = \"cmp\"\npair = [\"motor\", \"visual\"]\n"),
    ))
    .unwrap();
    let c = s.compare.unwrap();
    assert_eq!(c.pair, Some(["motor".to_string(), "visual".to_string()]));
    assert_eq!(c.out, dir.join("cmp"));
    assert_eq!(c.line, 7);
    // The table's line for bad values, the key's line for an unknown key,
    // the job's line and name for a job outside the pairing rule.
    for (bad, expected) in [
        (
            "[compare]\nout = \"cmp\"\npair = [\"motor\"]\n",
            "jobs.toml:7:",
        ),
        (
            "[compare]\nout = \"cmp\"\npair = [\"motor\", \"motor\"]\n",
            "jobs.toml:7:",
        ),
        (
            "[compare]\nout = \"cmp\"\npair = [\"motor\", \"eyes\"]\n",
            "jobs.toml:1: job g-s1-visual",
        ),
        (
            "[compare]\nout = \"cmp\"\nmethod = \"t\"\n",
            "jobs.toml:9:1:",
        ),
    ] {
        let msg = load_script(&script(&dir, &format!("{base}{bad}")))
            .unwrap_err()
            .to_string();
        assert!(msg.contains(expected), "{expected}: {msg}");
        assert!(!msg.contains("(in job"), "{msg}");
    }
}

#[test]
fn input_hash_follows_values_and_file_bytes_not_names() {
    let dir = scratch("batch-hash");
    touch(&dir.join("decoders/a.npz"), b"first bytes");
    let text = |name: &str, extra: &str| {
        format!("[[job]]\nname = \"{name}\"\ndecoder = \"decoders/a.npz\"\n{extra}")
    };
    let hash = |t: String| input_hash(&load_script(&script(&dir, &t)).unwrap().jobs[0]).unwrap();
    let h0 = hash(text("a", "seed = 1\n"));
    assert_eq!(h0.len(), 64);
    assert_eq!(h0, hash(text("renamed", "seed = 1\n")));
    assert_ne!(h0, hash(text("a", "seed = 2\n")));
    assert_ne!(h0, hash(text("a", "seed = 1\njoint = true\n")));
    touch(&dir.join("decoders/a.npz"), b"other bytes");
    assert_ne!(h0, hash(text("a", "seed = 1\n")));
}
