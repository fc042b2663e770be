//! The trust tables of docs/validation.md: how λ follows the noise, strict
//! top-1 where the truth decides, tie-tolerant top-1, coverage of the true
//! share by the 95 % interval, and the calibration of the lead frequency.
//!
//! `cargo run --release --example trust -- [template|template-5k] [cases per cell] [resamples] [--rules noise,BIC] [--snr DB] [--head matched|mismatched] [--no-perturb] [--perturb-mm 3] [--perturb-skull 0.35] [--perturb-count 4] [--dump cases.tsv]`
//!
//! Cases as in the recovery benchmark (`examples/recovery.rs`): 1 to 3
//! Gaussian patches of 5–30 mm geodesic radius, 5 mm electrode jitter, 64
//! channels of the 10-10 system, SNR 0/10/20/30 dB, matched head and a
//! mismatched one (skull 0.01 S/m and scalp 0.33 S/m against the fit's 0.02
//! and 0.41). Each patch fit is resampled (default 50 resamples).
//!
//! Scores: strict top-1 among cases whose truth is decisive (the margin
//! between the truth's two leading regions is at least 0.10 of the clean
//! pattern); tie-tolerant top-1 (the fit's leader has a true share within
//! 0.05 of the truth's largest) over all cases; coverage: the fraction of
//! cases whose 95 % interval of the truth's leading region holds its true
//! pattern share (and its true patch-split share); calibration: cases
//! binned by the lead frequency of the fit's leader, against how often that
//! leader is the truth's, and the expected calibration error
//! ECE = Σ_b (n_b / N) |accuracy_b − mean support_b| (Guo, Pleiss, Sun &
//! Weinberger 2017, ICML, "On calibration of modern neural networks", eq. 3;
//! from memory). Beside it, what the ECE of a perfectly calibrated support
//! would be on the same cases (consistency resampling: each case's outcome
//! drawn as Bernoulli(its stated support), 2000 times; Bröcker & Smith 2007,
//! Weather and Forecasting 22:651, "Increasing the reliability of
//! reliability diagrams"; from memory): with tens of cases in four bins the
//! ECE of a calibrated support is itself several hundredths.
#![allow(clippy::unwrap_used)]

use patchwise::geometry::TemplateResolution;
use patchwise::head::SphereHead;
use patchwise::pipeline::{ForwardPerturbation, LambdaRule};
use patchwise::validation::{median, run_case, CaseResult, CaseSpec, Method, RecoveryFixture};

fn pct(num: usize, den: usize) -> String {
    if den == 0 {
        "—".to_string()
    } else {
        format!("{:.0}", 100.0 * num as f64 / den as f64)
    }
}

/// Bins of the stated support and the expected calibration error.
fn calibration(cases: &[&CaseResult]) -> (Vec<(f64, f64, usize, f64)>, f64) {
    let edges = [0.0, 0.5, 0.7, 0.9, 1.0 + 1e-9];
    let with: Vec<_> = cases
        .iter()
        .filter(|r| r.lead_support.is_finite())
        .collect();
    let n = with.len().max(1) as f64;
    let mut bins = Vec::new();
    let mut ece = 0.0;
    for w in edges.windows(2) {
        let inside: Vec<_> = with
            .iter()
            .filter(|r| r.lead_support >= w[0] && r.lead_support < w[1])
            .collect();
        if inside.is_empty() {
            bins.push((f64::NAN, f64::NAN, 0, w[0]));
            continue;
        }
        let conf = inside.iter().map(|r| r.lead_support).sum::<f64>() / inside.len() as f64;
        let acc = inside.iter().filter(|r| r.top1_correct).count() as f64 / inside.len() as f64;
        ece += inside.len() as f64 / n * (acc - conf).abs();
        bins.push((conf, acc, inside.len(), w[0]));
    }
    (bins, ece)
}

/// The ECE of `cases` had each leader been right with exactly its stated
/// support: (mean, 95th percentile) over `draws` consistency resamples, and
/// the fraction of draws at least as large as `observed`.
fn calibrated_ece(cases: &[&CaseResult], observed: f64, draws: usize) -> (f64, f64, f64) {
    let mut rng = patchwise::numeric::SplitMix64::new(0x5eed_ca1b, 0);
    let mut eces: Vec<f64> = (0..draws)
        .map(|_| {
            let drawn: Vec<CaseResult> = cases
                .iter()
                .map(|r| {
                    let mut c = **r;
                    c.top1_correct = rng.uniform() < r.lead_support;
                    c
                })
                .collect();
            let refs: Vec<&CaseResult> = drawn.iter().collect();
            calibration(&refs).1
        })
        .collect();
    eces.sort_by(f64::total_cmp);
    let mean = eces.iter().sum::<f64>() / draws as f64;
    let q95 = eces[(0.95 * draws as f64) as usize];
    let above = eces.iter().filter(|&&e| e >= observed).count() as f64 / draws as f64;
    (mean, q95, above)
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let res = TemplateResolution::from_name(args.get(1).map_or("template-5k", |s| s)).unwrap();
    let cases: u64 = args.get(2).map_or(30, |s| s.parse().unwrap());
    let resamples: usize = args.get(3).map_or(50, |s| s.parse().unwrap());
    let flag = |name: &str| {
        args.iter()
            .position(|a| a == name)
            .and_then(|i| args.get(i + 1))
    };
    let rules: Vec<(String, LambdaRule)> = flag("--rules")
        .map_or("noise,BIC".to_string(), |s| s.clone())
        .split(',')
        .map(|r| {
            let rule = match r {
                "noise" => LambdaRule::Noise,
                "BIC" => LambdaRule::Bic,
                "AIC" => LambdaRule::Aic,
                "GCV" => LambdaRule::Gcv,
                other => LambdaRule::Ratio(other.parse().unwrap()),
            };
            (r.to_string(), rule)
        })
        .collect();
    let only_snr: Option<f64> = flag("--snr").map(|s| s.parse().unwrap());
    let only_head = flag("--head").cloned();
    // `--no-perturb`: resamples draw the pattern noise only (no perturbed
    // forward models), for the comparison in docs/validation.md.
    let perturb = !args.iter().any(|a| a == "--no-perturb");
    let mut perturbation = ForwardPerturbation::default();
    if let Some(v) = flag("--perturb-mm") {
        perturbation.electrode_sd_m = v.parse::<f64>().unwrap() * 1e-3;
    }
    if let Some(v) = flag("--perturb-skull") {
        perturbation.skull_log_sd = v.parse().unwrap();
    }
    if let Some(v) = flag("--perturb-count") {
        perturbation.count = v.parse().unwrap();
    }
    let fixture = RecoveryFixture::with_perturbation(
        res,
        &patchwise::dictionary::DictionaryParams::default(),
        &perturbation,
    )
    .unwrap();
    let setup = fixture.setup();
    let head = fixture.head.clone();
    let r = head.radii().to_vec();
    let mismatched = SphereHead::new(head.center(), r, vec![0.47, 1.79, 0.01, 0.33]).unwrap();
    println!(
        "| head | SNR dB | λ rule | median λ/λ_max | interior % | decisive top-1 % (cases) | tie-tolerant top-1 % | median loc. error mm | coverage % (pattern share) | coverage % (patch split) | interval holds estimate % | cases |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|---|---|");
    let mut calib: Vec<(String, Vec<CaseResult>)> = Vec::new();
    for (head_name, sim_head) in [("matched", &head), ("mismatched", &mismatched)] {
        if only_head.as_deref().is_some_and(|h| h != head_name) {
            continue;
        }
        let snrs = only_snr.map_or(vec![0.0, 10.0, 20.0, 30.0], |o| vec![o]);
        for &snr in &snrs {
            for (rule_name, rule) in &rules {
                let mut patch = Vec::new();
                for c in 0..cases {
                    let spec = CaseSpec {
                        seed: 1000 + c,
                        n_patches: 1 + (c % 3) as usize,
                        snr_db: snr,
                        jitter_m: 5e-3,
                        sim_head: sim_head.clone().into(),
                        lambda: *rule,
                        resamples,
                        perturb_model: perturb,
                    };
                    let r = run_case(&setup, &spec).unwrap();
                    patch.extend(r.into_iter().filter(|m| m.method == Method::Patches));
                }
                let m: Vec<&CaseResult> = patch.iter().collect();
                let decisive: Vec<_> = m.iter().filter(|r| r.truth_margin >= 0.10).collect();
                let covered = |truth: fn(&CaseResult) -> f64| {
                    m.iter()
                        .filter(|r| {
                            let (_, lo, hi) = r.truth_region_interval;
                            let t = truth(r);
                            lo <= t && t <= hi
                        })
                        .count()
                };
                // Other interval forms from the same resamples, for the
                // comparison in docs/validation.md: the plain percentile
                // interval [q_lo, q_hi] (Efron & Tibshirani 1993, ch. 13),
                // and the basic interval [2ŝ − q_hi, 2ŝ − q_lo] (Davison &
                // Hinkley 1997, eq. 5.6) widened to hold ŝ.
                let other_forms = |basic: bool| {
                    m.iter()
                        .filter(|r| {
                            let (e, _, _) = r.truth_region_interval;
                            let (_, qlo, qhi) = r.truth_region_resampled;
                            let (a, b) = if basic {
                                ((2.0 * e - qhi).min(e), (2.0 * e - qlo).max(e))
                            } else {
                                (qlo, qhi)
                            };
                            a <= r.truth_share && r.truth_share <= b
                        })
                        .count()
                };
                eprintln!(
                    "forms {head_name} {snr:.0} dB {rule_name}: coverage of the pattern share: percentile {} %, basic {} %",
                    pct(other_forms(false), m.len()),
                    pct(other_forms(true), m.len())
                );
                let holds = m
                    .iter()
                    .filter(|r| {
                        let (e, lo, hi) = r.truth_region_interval;
                        lo <= e && e <= hi
                    })
                    .count();
                println!(
                    "| {head_name} | {snr:.0} | {rule_name} | {:.4} | {} | {} ({}) | {} | {:.1} | {} | {} | {} | {} |",
                    median(&m.iter().map(|r| r.lambda_ratio).collect::<Vec<_>>()),
                    pct(m.iter().filter(|r| !r.lambda_at_range_end).count(), m.len()),
                    pct(decisive.iter().filter(|r| r.top1_correct).count(), decisive.len()),
                    decisive.len(),
                    pct(m.iter().filter(|r| r.top1_tie_tolerant).count(), m.len()),
                    median(&m.iter().map(|r| r.localization_error_mm).collect::<Vec<_>>()),
                    pct(covered(|r| r.truth_share), m.len()),
                    pct(covered(|r| r.truth_split_share), m.len()),
                    pct(holds, m.len()),
                    m.len()
                );
                // `--dump FILE`: one line per case (cell, stated support of
                // the leader, whether it is the truth's, truth margin), for
                // calibration studies outside this program.
                if let Some(file) = flag("--dump") {
                    use std::io::Write;
                    let mut out = std::fs::OpenOptions::new()
                        .create(true)
                        .append(true)
                        .open(file)
                        .unwrap();
                    for r in &patch {
                        writeln!(
                            out,
                            "{head_name}\t{snr}\t{rule_name}\t{}\t{}\t{}",
                            r.lead_support, r.top1_correct as u8, r.truth_margin
                        )
                        .unwrap();
                    }
                }
                calib.push((format!("{head_name} {snr:.0} dB {rule_name}"), patch));
            }
        }
    }
    println!();
    println!("| cases | support bin | cases in bin | mean stated support | observed top-1 | ECE | ECE if calibrated: mean, 95 % (share of draws ≥ observed) |");
    println!("|---|---|---|---|---|---|---|");
    for (name, cases) in &calib {
        let refs: Vec<&CaseResult> = cases
            .iter()
            .filter(|r| r.lead_support.is_finite())
            .collect();
        let (bins, ece) = calibration(&refs);
        let (null_mean, null_q95, p) = calibrated_ece(&refs, ece, 2000);
        for (i, (conf, acc, n, _)) in bins.iter().enumerate() {
            let label = ["< 0.5", "0.5–0.7", "0.7–0.9", "≥ 0.9"][i];
            println!(
                "| {name} | {label} | {n} | {} | {} | {} | {} |",
                if conf.is_finite() {
                    format!("{conf:.2}")
                } else {
                    "—".into()
                },
                if acc.is_finite() {
                    format!("{:.0} %", 100.0 * acc)
                } else {
                    "—".into()
                },
                if i == 0 {
                    format!("{ece:.3}")
                } else {
                    String::new()
                },
                if i == 0 {
                    format!("{null_mean:.3}, {null_q95:.3} ({p:.2})")
                } else {
                    String::new()
                }
            );
        }
    }
}
