//! The dictionary model's operations against their definitions: restriction
//! recomputes each atom as the lead field's kept rows times the patch
//! profile (linearity of the forward model, Limpiti, Van Veen & Wakai 2006,
//! IEEE TBME 53:1740), re-referencing is H a with H = I − 11ᵀ/n, and
//! whitening by C = σ² I is division by σ (W = C^{-1/2}; common practice,
//! no source).

use patchwise::dictionary::{AtomComponent, PatchDictionary, RestrictError};
use patchwise::forward::LeadField;
use patchwise::geometry::SourceSpace;
use patchwise::patterns::Whitener;
use sprs::TriMat;

const LABELS: [&str; 5] = ["Fz", "Cz", "Pz", "C3", "C4"];
const N_SRC: usize = 4;
const N_ATOMS: usize = 3;

/// A deterministic, non-degenerate gain value (no channel or source is special).
fn gain_value(ch: usize, src: usize) -> f64 {
    ((ch * 7 + src * 3) % 11) as f64 - 4.5 + 0.1 * ch as f64 * src as f64
}

/// Profile column j: sources j and j + 1 with weights 1 and 0.5.
fn profile_entries() -> Vec<(usize, usize, f64)> {
    (0..N_ATOMS)
        .flat_map(|j| [(j, j, 1.0), (j + 1, j, 0.5)])
        .collect()
}

fn dictionary() -> PatchDictionary {
    let n_ch = LABELS.len();
    let gain: Vec<f64> = (0..n_ch)
        .flat_map(|c| (0..N_SRC).map(move |s| gain_value(c, s)))
        .collect();
    let mut tri = TriMat::new((N_SRC, N_ATOMS));
    for (s, j, v) in profile_entries() {
        tri.add_triplet(s, j, v);
    }
    let lf = LeadField {
        labels: LABELS.iter().map(|s| s.to_string()).collect(),
        electrode_positions: (0..n_ch).map(|i| [0.01 * i as f64, 0.02, 0.08]).collect(),
        sources: SourceSpace {
            positions: vec![[0.0, 0.0, 0.05]; N_SRC],
            normals: vec![[0.0, 0.0, 1.0]; N_SRC],
            areas: vec![1e-6; N_SRC],
            triangles: Vec::new(),
            region: vec![-1; N_SRC],
            region_names: Vec::new(),
        },
        gain,
        gain_xyz: None,
        reference: "none".to_string(),
        head_model: "{}".to_string(),
    };
    // Atoms as stored: anything with the right shape (they are recomputed on restriction).
    let atoms: Vec<f64> = (0..n_ch * N_ATOMS).map(|i| 1.0 + i as f64).collect();
    PatchDictionary {
        leadfield: Some(lf),
        n_channels: n_ch,
        n_atoms: N_ATOMS,
        atoms,
        group: (0..N_ATOMS).collect(),
        atom_norms: Some(vec![1.0; N_ATOMS]),
        seed: Some((0..N_ATOMS).collect()),
        radius_mm: Some(vec![5.0; N_ATOMS]),
        component: Some(vec![AtomComponent::Normal; N_ATOMS]),
        profile: Some(tri.to_csc()),
        params_json: "{}".to_string(),
    }
}

fn labels(names: &[&str]) -> Vec<String> {
    names.iter().map(|s| s.to_string()).collect()
}

#[test]
fn restriction_recomputes_atoms_from_the_kept_rows_and_the_profiles() {
    let keep = ["C4", "Fz", "Pz"];
    let rows: Vec<usize> = keep
        .iter()
        .map(|k| LABELS.iter().position(|l| l == k).unwrap())
        .collect();
    let d = dictionary().restrict_to(&labels(&keep)).unwrap();
    assert_eq!(d.n_channels, 3);
    let lf = d.leadfield.as_ref().unwrap();
    assert_eq!(lf.labels, labels(&keep));
    let norms = d.atom_norms.as_ref().unwrap();
    for (j, &atom_norm) in norms.iter().enumerate() {
        // a = G[kept rows] p_j, average-referenced over the kept channels.
        let mut a: Vec<f64> = rows
            .iter()
            .map(|&c| {
                profile_entries()
                    .iter()
                    .filter(|e| e.1 == j)
                    .map(|&(s, _, v)| gain_value(c, s) * v)
                    .sum()
            })
            .collect();
        let mean = a.iter().sum::<f64>() / a.len() as f64;
        a.iter_mut().for_each(|v| *v -= mean);
        let norm = a.iter().map(|v| v * v).sum::<f64>().sqrt();
        // Tolerance: a few roundings of sums of order 10.
        assert!((atom_norm - norm).abs() < 1e-12 * norm.max(1.0));
        for (i, v) in a.iter().enumerate() {
            assert!((d.atoms[i * N_ATOMS + j] - v / norm).abs() < 1e-12);
        }
    }
}

#[test]
fn restriction_to_the_same_channels_keeps_the_stored_atoms() {
    let before = dictionary();
    let after = dictionary().restrict_to(&labels(&LABELS)).unwrap();
    assert_eq!(after.atoms, before.atoms);
    assert_eq!(after.n_channels, before.n_channels);
}

#[test]
fn restriction_refuses_unknown_channels_and_a_count_mismatch_without_labels() {
    assert!(matches!(
        dictionary().restrict_to(&labels(&["Fz", "Oz", "Cz"])),
        Err(RestrictError::Match(_))
    ));
    let mut unlabelled = dictionary();
    unlabelled.leadfield = None;
    assert!(matches!(
        unlabelled.clone().restrict_to(&labels(&["Fz", "Cz"])),
        Err(RestrictError::Unlabelled {
            rows: 5,
            channels: 2
        })
    ));
    let mut no_profile = dictionary();
    no_profile.profile = None;
    assert!(matches!(
        no_profile.restrict_to(&labels(&["Cz", "Fz", "Pz"])),
        Err(RestrictError::NoProfile)
    ));
    // Same count without labels: taken as they are.
    let same = unlabelled.restrict_to(&labels(&LABELS)).unwrap();
    assert_eq!(same.n_channels, 5);
}

#[test]
fn rereferencing_is_the_centring_matrix_with_the_scale_kept_in_the_norms() {
    let before = dictionary();
    let mut d = dictionary();
    d.rereference();
    let (n, m) = (d.n_channels, d.n_atoms);
    let norms = d.atom_norms.as_ref().unwrap();
    for (j, &atom_norm) in norms.iter().enumerate() {
        let col: Vec<f64> = (0..n).map(|i| before.atoms[i * m + j]).collect();
        let mean = col.iter().sum::<f64>() / n as f64;
        // norm' · a' = norm · (a − mean): the unnormalised atom is H a.
        for (i, v) in col.iter().enumerate() {
            assert!((atom_norm * d.atoms[i * m + j] - (v - mean)).abs() < 1e-12);
        }
        let unit: f64 = (0..n).map(|i| d.atoms[i * m + j].powi(2)).sum();
        assert!((unit - 1.0).abs() < 1e-12);
    }
}

#[test]
fn whitening_by_a_scaled_identity_divides_by_sigma() {
    let sigma = 3.0;
    let mut d = dictionary();
    d.rereference();
    let before = d.clone();
    let n = d.n_channels;
    let cov: Vec<f64> = (0..n * n)
        .map(|i| if i / n == i % n { sigma * sigma } else { 0.0 })
        .collect();
    let w = Whitener::new(&cov, n).unwrap();
    let scales = d.whiten(&w).unwrap();
    for (j, scale) in scales.iter().enumerate() {
        // Unit atoms divided by σ have norm 1/σ; rescaled, they are the same atoms.
        assert!((scale - 1.0 / sigma).abs() < 1e-12);
        let old = before.atom_norms.as_ref().unwrap()[j];
        assert!((d.atom_norms.as_ref().unwrap()[j] - old / sigma).abs() < 1e-12 * old);
    }
    for (a, b) in d.atoms.iter().zip(&before.atoms) {
        assert!((a - b).abs() < 1e-12);
    }
}
