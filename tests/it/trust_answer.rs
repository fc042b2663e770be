//! An answer that holds on the decoders people have (issue 17): a
//! noise-like decoder finishes quickly and is flagged, every interval holds
//! its estimate in separate and joint fits, fold decoders set the noise
//! level, component names reach every output, and bad noise inputs exit 2.

use crate::support;
use std::path::Path;
use std::process::Output;

use crate::support::cli::patchwise;
use patchwise::attribution::rng::SplitMix64;
use patchwise::io::store::{Dataset, Store};

/// 32 labels of the 10-10 system.
const LABELS: [&str; 32] = [
    "Fp1", "Fp2", "F7", "F3", "Fz", "F4", "F8", "FC5", "FC1", "FC2", "FC6", "T7", "C3", "Cz", "C4",
    "T8", "CP5", "CP1", "CP2", "CP6", "P7", "P3", "Pz", "P4", "P8", "PO9", "O1", "Oz", "O2",
    "PO10", "AF7", "AF8",
];

fn text(o: &Output) -> String {
    format!(
        "{}{}",
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    )
}

fn labels() -> Vec<String> {
    LABELS.iter().map(|s| s.to_string()).collect()
}

/// A random covariance B Bᵀ / n + small ridge (n × n row-major).
fn covariance(rng: &mut SplitMix64, n: usize) -> Vec<f64> {
    let b: Vec<f64> = (0..n * n).map(|_| rng.normal()).collect();
    let mut c = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..n {
            c[i * n + j] = (0..n).map(|l| b[i * n + l] * b[j * n + l]).sum::<f64>() / n as f64
                + if i == j { 0.1 } else { 0.0 };
        }
    }
    c
}

/// A bad decoder: its file name, the entries added to a good one, and the
/// field the error must name.
type BadCase = (&'static str, Vec<(&'static str, Dataset)>, &'static str);

fn write(path: &Path, entries: Vec<(&str, Dataset)>) {
    let mut s = Store::new();
    for (name, d) in entries {
        s.insert(name, d);
    }
    s.write_atomic(path).unwrap();
}

/// The demo on the 5k template, without resamples, read back: its patterns
/// are the noise-free truth the tests add noise to.
fn demo_result(dir: &Path) -> patchwise::io::result_file::ResultFile {
    let demo = patchwise(
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--no-report",
            "--out",
            "demo",
        ],
        dir,
    );
    assert!(demo.status.success(), "{}", text(&demo));
    patchwise::io::result_file::read_result(&dir.join("demo/result.h5")).unwrap()
}

fn summary(dir: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap()
}

/// Rows of regions.csv as (share, low, high).
fn intervals(dir: &Path) -> Vec<(f64, f64, f64)> {
    let t = std::fs::read_to_string(dir.join("regions.csv")).unwrap();
    t.lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (
                f[2].parse().unwrap(),
                f[3].parse().unwrap(),
                f[4].parse().unwrap(),
            )
        })
        .collect()
}

/// Random weights with a random covariance: no sparse patch combination
/// explains their patterns. The run must finish (no hang, no exit 1), flag
/// every component as poorly explained once in the terminal and in
/// summary.json, and still write its outputs.
#[test]
fn noise_like_decoder_finishes_and_is_flagged_poorly_explained() {
    let dir = support::scratch("trust_random");
    let n = LABELS.len();
    let mut rng = SplitMix64::new(17, 0);
    let weights: Vec<f64> = (0..n * 3).map(|_| rng.normal()).collect();
    let cov = covariance(&mut rng, n);
    write(
        &dir.join("random.h5"),
        vec![
            ("/channels", Dataset::strings(labels())),
            ("/weights", Dataset::f64(vec![n, 3], weights)),
            ("/covariance", Dataset::f64(vec![n, n], cov)),
        ],
    );
    let out = patchwise(
        &[
            "attribute",
            "--decoder",
            "random.h5",
            "--sources",
            "template-5k",
            "--resamples",
            "20",
            "--no-report",
            "--out",
            "res",
        ],
        &dir,
    );
    let t = text(&out);
    assert!(out.status.success(), "{t}");
    let s = summary(&dir.join("res"));
    let flagged = s["components"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|c| c["poorly_explained"].as_bool().unwrap())
        .count();
    // Random patterns: explained variance well below one half for all three
    // (the flag's threshold, src/pipeline/quality.rs).
    assert_eq!(flagged, 3, "{s:#}");
    assert_eq!(
        String::from_utf8_lossy(&out.stdout)
            .matches("! poorly explained")
            .count(),
        3,
        "{t}"
    );
    assert!(!t.contains("not converged"), "{t}");
    for row in intervals(&dir.join("res")) {
        assert!(row.1 <= row.0 && row.0 <= row.2, "{row:?}");
    }
    // The flags are stored with the result and shown on each component's
    // card of the report.
    let back = patchwise::io::result_file::read_result(&dir.join("res/result.h5")).unwrap();
    assert!(
        back.flags.iter().all(|f| f.starts_with("poorly explained")),
        "{:?}",
        back.flags
    );
    let report = patchwise(&["report", "res"], &dir);
    assert!(report.status.success(), "{}", text(&report));
    let html = std::fs::read_to_string(dir.join("res/report.html")).unwrap();
    assert_eq!(
        html.matches("<p class=\"flag\">poorly explained").count(),
        3
    );
}

/// The demo's patterns mixed into four components (two generators) plus
/// 10 % noise: separate and `--joint` fits lead with the same region for
/// every component, and every reported interval holds its estimate.
#[test]
fn every_interval_holds_its_estimate_in_separate_and_joint_fits() {
    let dir = support::scratch("trust_joint");
    let r = demo_result(&dir);
    let (n, k) = (r.labels.len(), r.k);
    let col = |c: usize| -> Vec<f64> { (0..n).map(|i| r.patterns[i * k + c]).collect() };
    let (a, b) = (col(0), col(1));
    let mix = [(1.0, 0.0), (0.0, 1.0), (1.0, 0.4), (0.4, 1.0)];
    let scale = a.iter().map(|v| v * v).sum::<f64>().sqrt() / (n as f64).sqrt();
    let mut rng = SplitMix64::new(3, 0);
    let mut patterns = vec![0.0; n * 4];
    for i in 0..n {
        for (c, &(x, y)) in mix.iter().enumerate() {
            patterns[i * 4 + c] = x * a[i] + y * b[i] + 0.1 * scale * rng.normal();
        }
    }
    write(
        &dir.join("mixed.h5"),
        vec![
            ("/channels", Dataset::strings(r.labels.clone())),
            ("/patterns", Dataset::f64(vec![n, 4], patterns)),
        ],
    );
    let mut leaders = Vec::new();
    for (out, joint) in [("separate", false), ("joint", true)] {
        let mut args = vec![
            "attribute",
            "--decoder",
            "mixed.h5",
            "--sources",
            "template-5k",
            "--resamples",
            "20",
            "--no-report",
            "--out",
            out,
        ];
        if joint {
            args.push("--joint");
        }
        let o = patchwise(&args, &dir);
        assert!(o.status.success(), "{}", text(&o));
        for row in intervals(&dir.join(out)) {
            assert!(row.1 <= row.0 && row.0 <= row.2, "{out}: {row:?}");
        }
        let s = summary(&dir.join(out));
        let lead: Vec<String> = s["components"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c["top_regions"][0]["region"].as_str().unwrap().to_string())
            .collect();
        leaders.push(lead);
    }
    assert_eq!(leaders[0], leaders[1]);
    // The pure components lead with their generators (src/demo).
    assert_eq!(leaders[0][0], "left-precentral");
    assert_eq!(leaders[0][1], "right-precentral");
}

/// Fold decoders set the noise level (summary.json names them), noisier
/// folds give a larger λ, component names from the file reach the terminal,
/// regions.csv, summary.json and result.h5; and bad noise inputs exit 2
/// naming the field, leaving no output folder.
#[test]
fn fold_decoders_set_the_noise_level_and_names_reach_every_output() {
    let dir = support::scratch("trust_folds");
    let r = demo_result(&dir);
    let (n, k) = (r.labels.len(), r.k);
    let scale = (r.patterns.iter().map(|v| v * v).sum::<f64>() / (n * k) as f64).sqrt();
    let names = vec!["alpha".to_string(), "beta".to_string(), "gamma".to_string()];
    let mut ratios = Vec::new();
    for (file, noise) in [("quiet.h5", 0.02), ("loud.h5", 0.2)] {
        let mut rng = SplitMix64::new(5, 0);
        let folds: Vec<f64> = (0..5)
            .flat_map(|_| r.patterns.clone())
            .map(|v| v + noise * scale * rng.normal())
            .collect();
        write(
            &dir.join(file),
            vec![
                ("/channels", Dataset::strings(r.labels.clone())),
                ("/patterns", Dataset::f64(vec![n, k], r.patterns.clone())),
                ("/folds", Dataset::f64(vec![5, n, k], folds)),
                ("/component_names", Dataset::strings(names.clone())),
            ],
        );
        let out = file.trim_end_matches(".h5");
        let o = patchwise(
            &[
                "attribute",
                "--decoder",
                file,
                "--sources",
                "template-5k",
                "--resamples",
                "10",
                "--no-report",
                "--out",
                out,
            ],
            &dir,
        );
        let t = text(&o);
        assert!(o.status.success(), "{t}");
        for name in &names {
            assert!(t.contains(name.as_str()), "{t}");
        }
        let s = summary(&dir.join(out));
        assert!(
            s["noise_level"]
                .as_str()
                .unwrap()
                .contains("5 fold decoders"),
            "{s:#}"
        );
        assert_eq!(s["components"][1]["name"], "beta");
        let csv = std::fs::read_to_string(dir.join(out).join("regions.csv")).unwrap();
        assert!(csv.lines().nth(1).unwrap().ends_with(",alpha"), "{csv}");
        let back =
            patchwise::io::result_file::read_result(&dir.join(out).join("result.h5")).unwrap();
        assert_eq!(back.component_names, names);
        ratios.push(s["components"][0]["lambda_ratio"].as_f64().unwrap());
    }
    assert!(ratios[1] > ratios[0], "{ratios:?}");
    // Folds that disagree as much as a near-chance decoder's (fold noise
    // as large as the pattern): the pattern is mostly its own noise, so
    // every component is flagged, whatever the fit explains. The quiet
    // folds above are not.
    let column_rms: Vec<f64> = (0..k)
        .map(|c| ((0..n).map(|i| r.patterns[i * k + c].powi(2)).sum::<f64>() / n as f64).sqrt())
        .collect();
    let mut rng = SplitMix64::new(9, 0);
    let folds: Vec<f64> = (0..5)
        .flat_map(|_| r.patterns.clone())
        .enumerate()
        .map(|(i, v)| v + column_rms[i % k] * rng.normal())
        .collect();
    write(
        &dir.join("chance.h5"),
        vec![
            ("/channels", Dataset::strings(r.labels.clone())),
            ("/patterns", Dataset::f64(vec![n, k], r.patterns.clone())),
            ("/folds", Dataset::f64(vec![5, n, k], folds)),
        ],
    );
    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "chance.h5",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--no-report",
            "--out",
            "chance",
        ],
        &dir,
    );
    assert!(o.status.success(), "{}", text(&o));
    for (folder, flagged) in [("chance", true), ("quiet", false)] {
        let s = summary(&dir.join(folder));
        for c in s["components"].as_array().unwrap() {
            let determined = !c["flags"]
                .as_array()
                .unwrap()
                .iter()
                .any(|f| f.as_str().unwrap().starts_with("poorly determined"));
            assert_eq!(determined, !flagged, "{folder}: {c:#}");
        }
    }

    // Bad noise inputs: each exits 2 naming the field, no output folder.
    let good_patterns = Dataset::f64(vec![n, k], r.patterns.clone());
    let cases: Vec<BadCase> = vec![
        (
            "folds_shape.h5",
            vec![(
                "/folds",
                Dataset::f64(vec![2, n, k + 1], vec![0.0; 2 * n * (k + 1)]),
            )],
            "folds",
        ),
        (
            "one_fold.h5",
            vec![("/folds", Dataset::f64(vec![1, n, k], r.patterns.clone()))],
            "folds",
        ),
        (
            "names.h5",
            vec![("/component_names", Dataset::strings(vec!["x".to_string()]))],
            "component_names",
        ),
        (
            "samples.h5",
            vec![("/n_samples", Dataset::f64(vec![1], vec![1.0]))],
            "n_samples",
        ),
    ];
    for (file, extra, field) in cases {
        let mut entries = vec![
            ("/channels", Dataset::strings(r.labels.clone())),
            ("/patterns", good_patterns.clone()),
        ];
        entries.extend(extra);
        write(&dir.join(file), entries);
        let o = patchwise(
            &[
                "attribute",
                "--decoder",
                file,
                "--sources",
                "template-5k",
                "--out",
                "bad",
            ],
            &dir,
        );
        assert_eq!(o.status.code(), Some(2), "{file}: {}", text(&o));
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains(field) && err.contains(file), "{file}: {err}");
        assert!(!dir.join("bad").exists(), "{file}");
    }
    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "quiet.h5",
            "--noise-sd=-1",
            "--out",
            "bad",
        ],
        &dir,
    );
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--noise-sd"));
    assert!(!dir.join("bad").exists());
    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "quiet.h5",
            "--forward-perturbations",
            "100000",
            "--out",
            "bad",
        ],
        &dir,
    );
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--forward-perturbations"));
    assert!(!dir.join("bad").exists());
}
