//! A small fixed-seed subset of the recovery benchmark (docs/validation.md):
//! the patch fit localises simulated patches and beats depth-weighted
//! minimum norm (Hämäläinen & Ilmoniemi 1994, Med Biol Eng Comput 32:35) on
//! localisation error. Bounds are looser than the full benchmark's figures
//! because six cases are few.

use patchwise::geometry::TemplateResolution;
use patchwise::pipeline::LambdaRule;
use patchwise::validation::{roc_auc, run_case, CaseSpec, Method, RecoveryFixture};

#[test]
fn roc_auc_matches_the_mann_whitney_definition() {
    // Hand-computed: positives {0.9, 0.4}, negatives {0.5, 0.1, 0.4};
    // pairs won 1 + 1 + 1 + 0 + 1 + 0.5 (tie) = 4.5 of 6 → 0.75
    // (Hanley & McNeil 1982, Radiology 143:29).
    let auc = roc_auc(
        &[0.9, 0.5, 0.1, 0.4, 0.4],
        &[true, false, false, true, false],
    );
    assert!((auc - 0.75).abs() < 1e-12, "{auc}");
}

#[test]
fn patches_localise_better_than_minimum_norm_on_a_fixed_subset() {
    let fixture = RecoveryFixture::new(TemplateResolution::Low).unwrap();
    let setup = fixture.setup();
    let head = fixture.head.clone();
    let mut patch_err = Vec::new();
    let mut mn_err = Vec::new();
    let mut patch_top1 = 0;
    let mut patch_split_top1 = 0;
    for c in 0..6u64 {
        let spec = CaseSpec {
            seed: 1000 + c,
            n_patches: 1 + (c % 3) as usize,
            snr_db: 20.0,
            jitter_m: 0.005,
            sim_head: head.clone().into(),
            lambda: LambdaRule::Bic,
            resamples: 0,
            perturb_model: false,
        };
        for r in run_case(&setup, &spec).unwrap() {
            match r.method {
                Method::Patches => {
                    patch_err.push(r.localization_error_mm);
                    patch_top1 += usize::from(r.top1_correct);
                    patch_split_top1 += usize::from(r.top1_patch_split_correct);
                }
                Method::MinimumNorm => mn_err.push(r.localization_error_mm),
            }
        }
    }
    patch_err.sort_by(f64::total_cmp);
    mn_err.sort_by(f64::total_cmp);
    let (pm, mm) = (
        0.5 * (patch_err[2] + patch_err[3]),
        0.5 * (mn_err[2] + mn_err[3]),
    );
    eprintln!("median localisation error: patches {pm:.1} mm, minimum norm {mm:.1} mm; patch top-1 {patch_top1}/6 (patch split {patch_split_top1}/6)");
    assert!(pm <= 15.0, "patch median error {pm} mm");
    assert!(pm < mm, "patches {pm} mm vs minimum norm {mm} mm");
    assert!(patch_top1 >= 3, "top-1 {patch_top1}/6");
    assert!(
        patch_split_top1 >= 3,
        "top-1 (patch split) {patch_split_top1}/6"
    );
}
