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

#[test]
fn simulating_with_a_bem_of_the_same_shells_gives_the_same_scores() {
    // The same cases simulated with three concentric shells by the series and
    // by the boundary-element head of those shells (642 vertices each, RDM
    // against the series below 0.08 for these sources: tests/it/head_bem_cli.rs,
    // Meijs et al. 1989, IEEE Trans Biomed Eng 36:1038) must score alike:
    // the same region top-1 in at least 5 of 6 cases and localisation errors
    // within 5 mm of each other in the median (bounds set before running:
    // a 0.08 pattern difference is below the 20 dB noise's 0.1).
    use patchwise::head::SphereHead;
    use patchwise::validation::{concentric_bem, SimHead};
    let fixture = RecoveryFixture::new(TemplateResolution::Low).unwrap();
    let setup = fixture.setup();
    let shells =
        SphereHead::new([0.0; 3], vec![0.083, 0.088, 0.094], vec![0.47, 0.02, 0.41]).unwrap();
    let bem = std::sync::Arc::new(concentric_bem(&shells, 3, &|_| {}).unwrap());
    let score = |sim_head: SimHead, c: u64| {
        let spec = CaseSpec {
            seed: 1000 + c,
            n_patches: 1 + (c % 3) as usize,
            snr_db: 20.0,
            jitter_m: 0.005,
            sim_head,
            lambda: LambdaRule::Bic,
            resamples: 0,
            perturb_model: false,
        };
        let r = run_case(&setup, &spec).unwrap();
        let p = r.iter().find(|r| r.method == Method::Patches).unwrap();
        (p.top1_correct, p.localization_error_mm)
    };
    let mut same_top1 = 0;
    let (mut series_err, mut bem_err) = (Vec::new(), Vec::new());
    for c in 0..6u64 {
        let a = score(shells.clone().into(), c);
        let b = score(SimHead::Bem(bem.clone()), c);
        same_top1 += usize::from(a.0 == b.0);
        series_err.push(a.1);
        bem_err.push(b.1);
    }
    let median = |v: &mut Vec<f64>| {
        v.sort_by(f64::total_cmp);
        0.5 * (v[2] + v[3])
    };
    let (ms, mb) = (median(&mut series_err), median(&mut bem_err));
    eprintln!("same top-1 in {same_top1}/6; median loc. error series {ms:.1} mm, bem {mb:.1} mm");
    assert!(same_top1 >= 5);
    assert!((ms - mb).abs() < 5.0);
}
