//! Exit codes of bad outputs and degenerate inputs (issue 18, items 13 and
//! 15): an output path of the wrong kind exits 2 before anything is
//! computed; a cache that cannot be written costs a note, not the run;
//! one folder given twice to `compare`, `--sign-flips 0`, a 3-channel
//! decoder, an electrode at the head centre and a scalp radius of 10⁹ mm
//! exit 2 with one message naming the culprit.

use crate::support::batch::{batch, text, write_decoders, write_script, DEFAULTS};
use crate::support::cli::patchwise;
use crate::support::refusal::{assert_refused, attribute_5k as attribute};
use crate::support::scratch;

#[test]
fn outputs_of_the_wrong_kind_exit_2_before_computing() {
    let dir = scratch("wrong-kind");
    write_decoders(&dir, 1);
    std::fs::write(dir.join("afile"), "keep me").unwrap();
    std::fs::create_dir_all(dir.join("adir")).unwrap();
    let long = "x".repeat(300);
    let decoder = ["decoders/sub-01.h5"];
    for out in ["afile", "/dev/null", long.as_str(), "afile/inside"] {
        let o = attribute(&dir, &decoder, out, &[]);
        assert_refused(&o, &out[..out.len().min(40)]);
    }
    let o = patchwise(
        &["demo", "--sources", "template-5k", "--out", "afile"],
        &dir,
    );
    assert_refused(&o, "afile");
    // Nothing was computed: no lead field or dictionary reached the cache.
    assert!(!dir.join("cache").exists(), "computed before refusing");

    for (args, needle) in [
        (vec!["montage", "export", "10-20", "--out", "adir"], "adir"),
        (
            vec!["montage", "export", "10-20", "--out", "/dev/null"],
            "/dev/null",
        ),
        (
            vec!["montage", "export", "10-20", "--out", "none/e.tsv"],
            "none",
        ),
        (vec!["template", "export", "--out", "afile"], "afile"),
        (vec!["batch", "jobs.toml", "--out", "afile"], "afile"),
        (vec!["report", "adir", "--out", "adir"], "adir"),
    ] {
        write_script(
            &dir,
            &format!("{DEFAULTS}[[job]]\nname = \"a\"\ndecoder = \"decoders/sub-01.h5\"\n"),
        );
        let o = patchwise(&args, &dir);
        assert_refused(&o, needle);
    }
    assert_eq!(std::fs::read(dir.join("afile")).unwrap(), b"keep me");
    assert_eq!(std::fs::read_dir(dir.join("adir")).unwrap().count(), 0);
}

#[test]
fn a_cache_that_cannot_be_written_costs_a_note() {
    let dir = scratch("cache-unwritable");
    write_decoders(&dir, 1);
    // A file where the cache folder should be: it can be neither created
    // nor written (as a read-only or full file system, and also for root).
    std::fs::write(dir.join("blocked"), "").unwrap();
    let o = attribute(
        &dir,
        &["decoders/sub-01.h5"],
        "r",
        &["--cache", "blocked/cache", "--no-report"],
    );
    assert!(o.status.success(), "{}", text(&o));
    assert!(String::from_utf8_lossy(&o.stderr).contains("note: could not cache"));
    for f in ["result.h5", "regions.csv", "summary.json"] {
        assert!(dir.join("r").join(f).is_file(), "r/{f}");
    }
    // The same through a batch job.
    write_script(
        &dir,
        &format!("{DEFAULTS}[[job]]\nname = \"a\"\ndecoder = \"decoders/sub-01.h5\"\n"),
    );
    let o = batch(
        &dir,
        &["jobs.toml", "--out", "out", "--cache", "blocked/cache"],
    );
    assert!(o.status.success(), "{}", text(&o));
    assert!(dir.join("out/batch-summary.csv").is_file());
}

#[test]
fn degenerate_inputs_exit_2_as_documented() {
    let dir = scratch("degenerate");
    write_decoders(&dir, 2);
    for s in ["01", "02"] {
        let o = attribute(
            &dir,
            &[&format!("decoders/sub-{s}.h5")],
            &format!("sub-{s}"),
            &["--no-report"],
        );
        assert!(o.status.success(), "{}", text(&o));
    }
    // One folder twice, under two spellings, is one subject.
    let o = patchwise(&["compare", "sub-01", "./sub-01/", "--out", "c"], &dir);
    assert_refused(&o, "same result folder");
    // No sign flips: every p-value would be 1.
    let o = patchwise(
        &[
            "compare",
            "sub-01",
            "sub-02",
            "--sign-flips",
            "0",
            "--out",
            "c",
        ],
        &dir,
    );
    assert_refused(&o, "--sign-flips 0");
    assert!(!dir.join("c").exists());

    // A 3-channel decoder (a bare matrix with its labels).
    std::fs::write(dir.join("three.csv"), "0.5\n-0.2\n0.9\n").unwrap();
    std::fs::write(dir.join("three.txt"), "C3\nCz\nC4\n").unwrap();
    let o = attribute(
        &dir,
        &["three.csv", "--channels", "three.txt"],
        "three",
        &[],
    );
    assert_refused(&o, "3 channel(s)");
    assert!(!dir.join("three").exists());

    // An electrode at the head centre (docs/head_model.md: an error).
    std::fs::write(
        dir.join("centre.tsv"),
        "name\tx\ty\tz\nC3\t-60\t0\t60\nCz\t0\t0\t0\nC4\t60\t0\t60\nPz\t0\t-60\t60\nFz\t0\t60\t60\n",
    )
    .unwrap();
    std::fs::write(dir.join("five.csv"), "0.5\n-0.2\n0.9\n0.1\n-0.4\n").unwrap();
    std::fs::write(dir.join("five.txt"), "C3\nCz\nC4\nPz\nFz\n").unwrap();
    std::fs::write(
        dir.join("centred.toml"),
        "model = \"spheres\"\ncenter_mm = [0.0, 0.0, 0.0]\nradii_mm = [81.0, 83.0, 88.0, 94.0]\nconductivities = [0.47, 1.79, 0.02, 0.41]\n",
    )
    .unwrap();
    let five = ["five.csv", "--channels", "five.txt"];
    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "five.csv",
            "--channels",
            "five.txt",
            "--montage",
            "centre.tsv",
            "--head",
            "centred.toml",
            "--sources",
            "template-5k",
            "--out",
            "centre",
        ],
        &dir,
    );
    assert_refused(&o, "Cz");
    assert!(!dir.join("centre").exists());

    // A scalp radius of 10⁹ mm.
    std::fs::write(
        dir.join("huge.toml"),
        "model = \"spheres\"\ncenter_mm = [0.0, 0.0, 0.0]\nradii_mm = [81.0, 83.0, 88.0, 1e9]\nconductivities = [0.47, 1.79, 0.02, 0.41]\n",
    )
    .unwrap();
    let o = attribute(&dir, &five, "huge", &["--head", "huge.toml"]);
    assert_refused(&o, "huge.toml");
    assert!(String::from_utf8_lossy(&o.stderr).contains("radius 3"));
    assert!(!dir.join("huge").exists());
}

#[test]
fn a_rank_deficient_noise_covariance_is_refused_with_its_rank() {
    let dir = scratch("noise-rank");
    write_decoders(&dir, 1);
    let n = 64;
    // C = A Aᵀ with A of 10 columns: rank 10 of 64 channels.
    let a = |i: usize, m: usize| ((i + 1) as f64 * (m + 1) as f64 * 0.37).sin();
    let low: Vec<String> = (0..n)
        .map(|i| {
            (0..n)
                .map(|j| format!("{:e}", (0..10).map(|m| a(i, m) * a(j, m)).sum::<f64>()))
                .collect::<Vec<_>>()
                .join(",")
        })
        .collect();
    std::fs::write(dir.join("rank10.csv"), low.join("\n")).unwrap();
    let before = std::fs::read(dir.join("rank10.csv")).unwrap();
    let o = attribute(
        &dir,
        &["decoders/sub-01.h5"],
        "low",
        &["--noise-covariance", "rank10.csv"],
    );
    assert_refused(&o, "rank10.csv");
    assert!(String::from_utf8_lossy(&o.stderr).contains("rank 10 of 64"));
    assert!(!dir.join("low").exists());
    assert_eq!(std::fs::read(dir.join("rank10.csv")).unwrap(), before);

    // A full-rank one (the identity) is used.
    let identity: Vec<String> = (0..n)
        .map(|i| {
            (0..n)
                .map(|j| if i == j { "1" } else { "0" })
                .collect::<Vec<_>>()
                .join(",")
        })
        .collect();
    std::fs::write(dir.join("identity.csv"), identity.join("\n")).unwrap();
    let o = attribute(
        &dir,
        &["decoders/sub-01.h5"],
        "full",
        &["--noise-covariance", "identity.csv", "--no-report"],
    );
    assert!(o.status.success(), "{}", text(&o));
}

/// Issue 18, item 15: patterns × 1e300 once ran to "lambda = inf" (and
/// later to a result of NaNs with exit 0). Patterns whose largest value lies
/// outside the range where the fit's squared norms are finite and non-zero
/// are refused before the forward model is computed.
#[test]
fn patterns_beyond_the_fits_numeric_range_exit_2_before_computing() {
    let dir = scratch("pattern-magnitude");
    let labels = patchwise::demo::CHANNELS_64;
    std::fs::write(dir.join("ch.txt"), labels.join("\n") + "\n").unwrap();
    for (name, scale) in [("huge.csv", 1e300), ("tiny.csv", 1e-300)] {
        let rows: Vec<String> = (0..labels.len())
            .map(|i| {
                let x = i as f64;
                format!(
                    "{:e},{:e}",
                    (0.37 * x).sin() * scale,
                    (0.11 * x).cos() * scale
                )
            })
            .collect();
        std::fs::write(dir.join(name), rows.join("\n") + "\n").unwrap();
        let before = std::fs::read(dir.join(name)).unwrap();
        let o = attribute(&dir, &[name, "--channels", "ch.txt"], "out", &[]);
        assert_refused(&o, name);
        assert!(text(&o).contains("component 0"), "{}", text(&o));
        let dipole = patchwise(
            &[
                "dipole",
                "--decoder",
                name,
                "--channels",
                "ch.txt",
                "--out",
                "out",
            ],
            &dir,
        );
        assert_refused(&dipole, name);
        assert!(!dir.join("out").exists(), "{name}: an output was left");
        assert!(
            !dir.join("cache").exists(),
            "{name}: refused after computing"
        );
        assert_eq!(std::fs::read(dir.join(name)).unwrap(), before);
    }
}

/// A patch radius or seed spacing beyond any head (1e300 mm, or metres
/// written where millimetres belong: 2000) covers the whole cortex or
/// leaves one seed; it is refused on the command line and in a job script.
#[test]
fn patch_lengths_beyond_any_head_exit_2() {
    let dir = scratch("patch-lengths");
    write_decoders(&dir, 1);
    for extra in [
        ["--radii-mm", "1e300"],
        ["--radii-mm", "5,2000"],
        ["--spacing-mm", "1e300"],
    ] {
        let o = attribute(&dir, &["decoders/sub-01.h5"], "out", &extra);
        assert_refused(&o, extra[0]);
        assert!(!dir.join("out").exists(), "{extra:?}: an output was left");
        assert!(
            !dir.join("cache").exists(),
            "{extra:?}: refused after computing"
        );
    }
    for (key, value) in [("radii_mm", "[5.0, 1e300]"), ("spacing_mm", "2000.0")] {
        write_script(
            &dir,
            &format!("{DEFAULTS}[[job]]\nname = \"s\"\ndecoder = \"decoders/sub-01.h5\"\n{key} = {value}\n"),
        );
        let o = batch(&dir, &["jobs.toml", "--out", "out"]);
        assert_refused(&o, key);
        assert!(!dir.join("out").exists(), "{key}: an output was left");
    }
}

/// `compare --smoothing-mm` beyond any head (every smoothed map constant)
/// and `--smoothing-cutoff` far beyond the Gaussian's reach (a dense
/// kernel of n_sources² entries) exit 2 before any result is read.
#[test]
fn compare_smoothing_beyond_any_head_exits_2_before_reading() {
    let dir = scratch("compare-smoothing");
    for (flag, value) in [
        ("--smoothing-mm", "1e300"),
        ("--smoothing-mm", "2000"),
        ("--smoothing-cutoff", "1e300"),
    ] {
        // The result folders do not even exist: the options come first.
        let o = patchwise(&["compare", "a", "b", "--out", "cmp", flag, value], &dir);
        assert_refused(&o, flag);
        assert!(!dir.join("cmp").exists());
        assert!(!dir.join("cache").exists());
    }
}
