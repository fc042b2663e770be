//! The leader's probability (issue 17, item 2): the lead frequency of the
//! estimate's leading region mapped by σ(a·logit(s) + b) (Platt 1999,
//! "Probabilistic outputs for support vector machines", Advances in Large
//! Margin Classifiers, MIT Press; from memory). The shipped constants must be
//! the fit a general-purpose library makes on the committed benchmark cases,
//! and the value must reach summary.json and result.h5 for every component.

use crate::support;
use crate::support::cli::patchwise;
use patchwise::attribution::LEADER_CALIBRATION;

/// scikit-learn 1.9.1's LogisticRegression (C = 1e6, so practically
/// unpenalised) on logit(s), s clipped to [0.005, 0.995], fitted on the 480
/// recovery-benchmark cases in benches/reference/calibration_cases.tsv,
/// gives the shipped a and b to 1e-4; the mapped values' expected
/// calibration error over four bins (Guo, Pleiss, Sun & Weinberger 2017,
/// ICML, eq. 3; from memory) is at most 0.05 on those cases, where the raw
/// lead frequency's is above 0.08 (docs/validation.md, table 13).
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn shipped_constants_are_the_platt_fit_of_scikit_learn_on_the_benchmark_cases() {
    let py = support::python::python();
    let cases = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("benches/reference/calibration_cases.tsv");
    let a = LEADER_CALIBRATION.a.to_string();
    let b = LEADER_CALIBRATION.b.to_string();
    support::python::run(
        &py,
        r#"
import sys
import numpy as np
from sklearn.linear_model import LogisticRegression
path, a_shipped, b_shipped = sys.argv[1], float(sys.argv[2]), float(sys.argv[3])
rows = [l.rstrip("\n").split("\t") for l in open(path)]
s = np.array([float(r[3]) for r in rows]); c = np.array([int(r[4]) for r in rows])
assert len(s) == 480, len(s)
z = np.log(np.clip(s, 0.005, 0.995) / (1 - np.clip(s, 0.005, 0.995)))
lr = LogisticRegression(C=1e6, tol=1e-10, max_iter=10000).fit(z[:, None], c)
a, b = lr.coef_[0][0], lr.intercept_[0]
assert abs(a - a_shipped) < 1e-4 and abs(b - b_shipped) < 1e-4, (a, b, a_shipped, b_shipped)
def ece(p):
    e = 0.0
    for lo, hi in [(0, 0.5), (0.5, 0.7), (0.7, 0.9), (0.9, 1.01)]:
        m = (p >= lo) & (p < hi)
        if m.sum():
            e += m.sum() / len(p) * abs(c[m].mean() - p[m].mean())
    return e
mapped = 1 / (1 + np.exp(-(a_shipped * z + b_shipped)))
assert ece(mapped) <= 0.05, ece(mapped)
assert ece(s) > 0.08, ece(s)
"#,
        &[&cases, std::path::Path::new(&a), std::path::Path::new(&b)],
    );
}

/// The demo with resamples: summary.json names each component's leading
/// region and its probability, equal to the map applied to that region's
/// lead frequency (the same file's top row), and result.h5 holds the same
/// values in `/attribution/leader_probability`.
#[test]
fn leader_probability_reaches_summary_and_result_file() {
    let dir = support::scratch("leader_probability");
    let o = patchwise(
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "20",
            "--no-report",
            "--out",
            "demo",
        ],
        &dir,
    );
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.join("demo/summary.json")).unwrap())
            .unwrap();
    let result = patchwise::io::result_file::read_result(&dir.join("demo/result.h5")).unwrap();
    let stored = result
        .attribution
        .leader_probability
        .expect("leader_probability in result.h5");
    let comps = summary["components"].as_array().unwrap();
    assert_eq!(stored.len(), comps.len());
    let stdout = String::from_utf8_lossy(&o.stdout);
    for (c, comp) in comps.iter().enumerate() {
        let top = &comp["top_regions"][0];
        assert_eq!(comp["leading_region"], top["region"], "component {c}");
        let lead = top["lead_frequency"].as_f64().unwrap();
        let p = comp["leader_probability"].as_f64().unwrap();
        let expected = LEADER_CALIBRATION.apply(lead);
        assert!(
            (p - expected).abs() < 1e-12,
            "component {c}: {p} vs {expected}"
        );
        assert!((stored[c] - p).abs() < 1e-12, "component {c}");
        assert!((0.0..=1.0).contains(&p));
        assert!(
            stdout.contains(&format!(
                "probability that {} truly leads: {p:.2}",
                top["region"].as_str().unwrap()
            )),
            "{stdout}"
        );
    }
}
