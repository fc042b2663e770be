//! A decoder trained the way users train them, attributed through the real
//! CLI: the CI-sized case of the trained-decoder benchmark
//! (docs/validation.md, "Trained decoders";
//! benches/reference/trained_decoders.py).
//!
//! The script simulates 200 trials of an invented two-class paradigm on the
//! `template-5k` cortex (one generator patch of 8 neighbouring sources whose
//! amplitude differs between the classes, 300 background sources, white
//! sensor noise 10 dB below them; class-difference field 3 dB below the noise
//! per trial), trains a shrinkage LDA (scikit-learn, solver "lsqr",
//! shrinkage "auto": Ledoit & Wolf 2004, J Multivar Anal 88:365, from memory)
//! on all trials and once per fold of a 5-fold cross-validation, and writes
//! weights, covariance, `n_samples`, `folds` and `fold_covariances`.
//!
//! What is asserted, and why it can fail:
//! - the attribution's leading region is the region that carries the largest
//!   share of the generator's own scalp field (share_r = ⟨G x_r, G x⟩/‖G x‖²,
//!   the recovery benchmark's "pattern share"); the generator was chosen so
//!   that this truth is decisive (margin ≥ 0.10, checked first). For LDA the
//!   activation pattern Σw/(wᵀΣw) estimates the class-mean difference (Haufe
//!   et al. 2014, NeuroImage 87:96), whose expectation is that field;
//! - `summary.json`'s `noise_level` says the level came from the fold
//!   decoders, so the folds were read and used (not the `n_samples` beside
//!   them, nor the scaled-lasso estimate);
//! - the same file without folds falls back to `n_samples`, and names it.
//!
//! Needs Python with the pins of tests/reference/requirements.txt (with
//! `CI=true` a missing Python fails, elsewhere the test is shown as not run).

use std::path::Path;

use crate::support::cli::patchwise;
use crate::support::python;

fn summary(dir: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(dir.join("summary.json")).expect("read summary.json");
    serde_json::from_str(&text).expect("parse summary.json")
}

/// The region with the largest share of component 0 in regions.csv.
fn leading_region(dir: &Path) -> String {
    let text = std::fs::read_to_string(dir.join("regions.csv")).expect("read regions.csv");
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().expect("header").split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).expect(name);
    let (c, r, s) = (col("component"), col("region"), col("share"));
    lines
        .map(|l| l.split(',').collect::<Vec<_>>())
        .filter(|f| f[c] == "0")
        .map(|f| (f[r].to_string(), f[s].parse::<f64>().expect("share")))
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .expect("a region row")
        .0
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn lda_trained_on_200_trials_leads_with_its_generator_and_uses_its_folds() {
    let py = python::python();
    let dir = crate::support::scratch("trained_decoder_folds");
    let lf = crate::support::cli::leadfield(&dir, "default", "10-10", "lf.h5");
    assert!(
        lf.status.success(),
        "leadfield failed: {}",
        String::from_utf8_lossy(&lf.stderr)
    );
    python::run(
        &py,
        include_str!("../../benches/reference/trained_decoders.py"),
        &[
            Path::new("one"),
            &dir.join("lf.h5"),
            &dir.join("case"),
            Path::new("200"),
        ],
    );
    let truth: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(dir.join("case/lda.json")).expect("read the truth"),
    )
    .expect("parse the truth");
    let margin = truth["margin"].as_f64().expect("margin");
    assert!(
        margin >= 0.10,
        "the test's truth must be decisive (margin {margin:.3} < 0.10); pick another generator"
    );
    let expected = truth["leading_region"].as_str().expect("leading region");

    for (file, out, names) in [
        ("case/lda.npz", "with_folds", "from 5 fold decoders"),
        (
            "case/lda_nsamples.npz",
            "n_samples_only",
            "from n_samples = 200",
        ),
    ] {
        let run = patchwise(
            &[
                "attribute",
                "--decoder",
                file,
                "--sources",
                "template-5k",
                "--montage",
                "10-10",
                "--no-report",
                "--resamples",
                "20",
                "--out",
                out,
            ],
            &dir,
        );
        assert!(
            run.status.success(),
            "attribute {file} failed: {}",
            String::from_utf8_lossy(&run.stderr)
        );
        let s = summary(&dir.join(out));
        let level = s["noise_level"].as_str().expect("noise_level");
        assert!(
            level.starts_with(names),
            "{file}: noise_level is {level:?}; expected it to start with {names:?}"
        );
        let lead = leading_region(&dir.join(out));
        assert_eq!(
            lead, expected,
            "{file}: leading region {lead}, the generator's field is led by {expected} (margin {margin:.3})"
        );
    }
}
