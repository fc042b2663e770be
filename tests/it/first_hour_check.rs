//! Issue 22, item 4: `patchwise check` tells a matrix of numbers from a
//! list of labels, recognises our own outputs (regions.csv, dipoles.csv,
//! summary.json), prints a job script's plan (jobs, shards, input hashes)
//! and validates head files, through the real binary.

use std::path::Path;
use std::process::Output;

use crate::support::cli::patchwise;
use crate::support::files::{attribute_quickly, decoder_10_20};
use crate::support::scratch;
use patchwise::io::dipole_file::{write_dipoles_csv, DipoleRow};

fn check(dir: &Path, file: &str) -> Output {
    patchwise(&["check", file], dir)
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn checked(dir: &Path, file: &str) -> String {
    let o = check(dir, file);
    assert!(
        o.status.success(),
        "check {file}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    stdout(&o)
}

#[test]
fn check_tells_matrices_labels_and_our_outputs_apart() {
    let dir = scratch("first-hour-check-tables");
    let (_, n) = decoder_10_20(&dir, 3);
    // A pattern matrix without a header, and its labels one a line.
    let rows: Vec<String> = (0..n)
        .map(|i| format!("{:.3},{:.3}", i as f64 * 0.1, -(i as f64) * 0.2))
        .collect();
    std::fs::write(dir.join("patterns.csv"), rows.join("\n") + "\n").unwrap();
    let labels = patchwise::montage::standard("10-20", 0.09).unwrap().labels;
    std::fs::write(dir.join("channels.txt"), labels.join("\n") + "\n").unwrap();
    let text = checked(&dir, "patterns.csv");
    assert!(
        text.contains(&format!("numeric matrix, {n} rows × 2 columns")),
        "{text}"
    );
    assert!(!text.contains("channel list"), "{text}");
    let text = checked(&dir, "channels.txt");
    assert!(
        text.contains(&format!("channel list, {n} labels")),
        "{text}"
    );

    // Our own outputs.
    let (ok, err) = attribute_quickly(&dir, "r", &["--sources", "template-5k"]);
    assert!(ok, "{err}");
    let text = checked(&dir, "r/regions.csv");
    assert!(text.contains("region table of an attribution"), "{text}");
    assert!(text.contains("2 component(s)"), "{text}");
    assert!(!text.contains("channel"), "{text}");
    let text = checked(&dir, "r/summary.json");
    assert!(text.contains("summary of an attribution"), "{text}");
    let row = DipoleRow {
        component: 0,
        dipole: 0,
        position_mm: [1.0, 2.0, 3.0],
        moment: [1e-9, 0.0, 0.0],
        residual_variance: 0.1,
        region: "left-precentral".to_string(),
        distance_to_cortex_mm: 1.0,
        distance_to_patch_peak_mm: f64::NAN,
        ci95_radius_mm: 2.0,
        ci95_semi_axes_mm: [2.0, 1.0, 1.0],
        covariance_mm2: [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
    };
    write_dipoles_csv(
        &dir.join("dipoles.csv"),
        &[
            row.clone(),
            DipoleRow {
                component: 1,
                ..row
            },
        ],
        false,
        &["a".to_string(), "b".to_string()],
    )
    .unwrap();
    let text = checked(&dir, "dipoles.csv");
    assert!(text.contains("dipole table"), "{text}");
    assert!(text.contains("2 rows, 2 component(s)"), "{text}");

    std::fs::write(dir.join("other.json"), "{\"a\": 1}").unwrap();
    let text = checked(&dir, "other.json");
    assert!(text.contains("none of patchwise's files"), "{text}");
}

#[test]
fn check_prints_a_job_scripts_plan_and_validates_head_files() {
    let dir = scratch("first-hour-check-toml");
    decoder_10_20(&dir, 4);
    std::fs::copy(dir.join("decoder.h5"), dir.join("b.h5")).unwrap();
    std::fs::write(
        dir.join("jobs.toml"),
        "[defaults]\nmontage = \"10-20\"\n\n[[job]]\nname = \"sub-01\"\ndecoder = \"decoder.h5\"\n\n[[job]]\nname = \"sub-02\"\ndecoder = \"b.h5\"\nresamples = 5\n",
    )
    .unwrap();
    let text = checked(&dir, "jobs.toml");
    assert!(text.contains("job script, 2 jobs"), "{text}");
    assert!(text.contains("--shard I/N"), "{text}");
    let hash_of = |text: &str, job: &str| -> String {
        let line = text.lines().find(|l| l.contains(job)).unwrap();
        line.split_whitespace().nth(2).unwrap().to_string()
    };
    let (h1, h2) = (hash_of(&text, "sub-01"), hash_of(&text, "sub-02"));
    assert_eq!(h1.len(), 12, "{text}");
    assert!(h1.chars().all(|c| c.is_ascii_hexdigit()), "{text}");
    // Same decoder bytes but another option: another hash. Another
    // decoder's bytes: another hash again (the key follows the content).
    assert_ne!(h1, h2);
    decoder_10_20(&dir, 5);
    let again = checked(&dir, "jobs.toml");
    assert_ne!(hash_of(&again, "sub-01"), h1);
    assert_eq!(hash_of(&again, "sub-02"), h2);

    // Head files: the default head's values pass, shells out of order fail.
    std::fs::write(
        dir.join("head.toml"),
        "model = \"spheres\"\nradii_mm = [81, 83, 88, 94]\nconductivities = [0.47, 1.79, 0.02, 0.41]\n",
    )
    .unwrap();
    let text = checked(&dir, "head.toml");
    assert!(
        text.contains("head file, 4 concentric spheres, sound"),
        "{text}"
    );
    std::fs::write(
        dir.join("bad.toml"),
        "model = \"spheres\"\nradii_mm = [94, 88, 83, 81]\nconductivities = [0.47, 1.79, 0.02, 0.41]\n",
    )
    .unwrap();
    let o = check(&dir, "bad.toml");
    assert_eq!(o.status.code(), Some(2), "{}", stdout(&o));
    assert!(String::from_utf8_lossy(&o.stderr).contains("bad.toml"));
}
