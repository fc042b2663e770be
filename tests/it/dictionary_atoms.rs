//! Atoms against a naive loop, unit norms, the average reference, groups,
//! free orientation, thread-count independence, channel subsets, dropped atoms.

use crate::support::dictionary::*;
use patchwise::dictionary::{
    atoms_for_channels, build_dictionary, AtomComponent, AtomOrientation, Dictionary,
    DictionaryInfo, DictionaryParams, Profile, Seeds,
};
use patchwise::geometry::Mesh;

const N_CH: usize = 16;

fn seeds_every(n_src: usize, step: usize) -> Seeds {
    Seeds::Given((0..n_src).step_by(step).collect())
}

fn build(
    mesh: &Mesh,
    gain: &[f64],
    gain_xyz: Option<&[f64]>,
    seeds: &Seeds,
    params: &DictionaryParams,
) -> (Dictionary, DictionaryInfo) {
    let distances = oracle(mesh, euclidean);
    build_dictionary(
        mesh,
        gain,
        gain_xyz,
        N_CH,
        seeds,
        &distances,
        params,
        &no_progress,
    )
    .unwrap()
}

/// Checks every atom against the naive loop of `support` (independent profile,
/// areas and product): unnormalised atom = norm × unit atom, to 1e-12 relative
/// to the atom's norm (double-precision rounding over at most a few hundred
/// terms; common practice, no source).
fn assert_matches_naive(
    mesh: &Mesh,
    d: &Dictionary,
    gain: &[f64],
    gain_xyz: Option<&[f64]>,
    profile: NaiveProfile,
    average_reference: bool,
) {
    for j in 0..d.n_atoms {
        let weights = naive_profile(mesh, d.seed[j], d.radius_mm[j] * 1e-3, profile, euclidean);
        let (stride, offset) = gain_layout(d.component[j]);
        let g = if stride == 1 { gain } else { gain_xyz.unwrap() };
        let expected = naive_atom(g, d.n_channels, &weights, stride, offset, average_reference);
        let scale = norm2(&expected);
        assert!(
            (d.atom_norms[j] - scale).abs() <= 1e-12 * scale,
            "norm of atom {j}"
        );
        let got = column(d, j);
        for (a, e) in got.iter().zip(&expected) {
            assert!((a * d.atom_norms[j] - e).abs() <= 1e-12 * scale, "atom {j}");
        }
        // Unit columns (the definition of the normalisation), 1e-12.
        assert!((norm2(&got) - 1.0).abs() <= 1e-12, "atom {j} not unit");
    }
}

#[test]
fn normal_atoms_match_a_naive_loop_and_are_unit_and_average_referenced() {
    let mesh = Mesh::icosphere(4, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    let gain = random_matrix(N_CH, n_src, 7);
    let params = DictionaryParams::default();
    let (d, info) = build(&mesh, &gain, None, &seeds_every(n_src, 61), &params);
    assert_eq!(d.n_atoms, info.n_patches, "one atom per patch");
    assert!(info.dropped.is_empty());
    assert_matches_naive(&mesh, &d, &gain, None, NaiveProfile::Gaussian, true);
    // Average reference: each column sums to zero over channels, to 1e-12 of
    // the sum of magnitudes (definition of the common average; common
    // practice, no source).
    for j in 0..d.n_atoms {
        let c = column(&d, j);
        let sum: f64 = c.iter().sum();
        let mag: f64 = c.iter().map(|v| v.abs()).sum();
        assert!(sum.abs() <= 1e-12 * mag, "atom {j} sums to {sum}");
    }
}

#[test]
fn without_average_reference_atoms_keep_their_channel_mean() {
    let mesh = Mesh::icosphere(3, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    // A gain with a common offset so that the mean is clearly non-zero.
    let gain: Vec<f64> = random_matrix(N_CH, n_src, 11)
        .iter()
        .map(|v| v + 3.0)
        .collect();
    let params = DictionaryParams {
        radii_m: vec![0.01, 0.03],
        profile: Profile::Flat,
        average_reference: false,
        ..DictionaryParams::default()
    };
    let (d, _) = build(&mesh, &gain, None, &seeds_every(n_src, 37), &params);
    assert_matches_naive(&mesh, &d, &gain, None, NaiveProfile::Flat, false);
    for j in 0..d.n_atoms {
        assert!(
            column(&d, j).iter().sum::<f64>() > 0.5,
            "mean removed from atom {j}"
        );
    }
}

#[test]
fn groups_partition_the_atoms_one_per_patch() {
    let mesh = Mesh::icosphere(3, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    let gain = random_matrix(N_CH, n_src, 3);
    let gain_xyz = random_matrix(N_CH, n_src * 3, 4);
    for orientation in [AtomOrientation::Normal, AtomOrientation::Free] {
        let params = DictionaryParams {
            radii_m: vec![0.01, 0.02, 0.04],
            orientation,
            ..DictionaryParams::default()
        };
        let (d, info) = build(&mesh, &gain, Some(&gain_xyz), &Seeds::All, &params);
        let per_group = if orientation == AtomOrientation::Free {
            3
        } else {
            1
        };
        assert_eq!(d.n_groups, n_src * 3);
        assert_eq!(d.n_atoms, d.n_groups * per_group);
        assert_eq!(info.n_groups, d.n_groups);
        // Every atom has a group in 0..n_groups, groups are contiguous runs
        // sharing (seed, radius), and no (seed, radius) pair has two groups.
        let mut pairs = std::collections::HashSet::new();
        let mut start = 0;
        for g in 0..d.n_groups {
            let end = start + d.group[start..].iter().take_while(|&&x| x == g).count();
            assert_eq!(end - start, per_group, "group {g} size");
            for j in start..end {
                assert_eq!(
                    (d.seed[j], d.radius_mm[j]),
                    (d.seed[start], d.radius_mm[start])
                );
            }
            assert!(pairs.insert((d.seed[start], d.radius_mm[start].to_bits())));
            if orientation == AtomOrientation::Free {
                let comps: Vec<_> = d.component[start..end].to_vec();
                assert_eq!(
                    comps,
                    [AtomComponent::X, AtomComponent::Y, AtomComponent::Z]
                );
            }
            start = end;
        }
        assert_eq!(start, d.n_atoms);
    }
}

#[test]
fn free_atoms_match_a_naive_loop_over_the_xyz_gain() {
    let mesh = Mesh::icosphere(3, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    let gain = random_matrix(N_CH, n_src, 21);
    let gain_xyz = random_matrix(N_CH, n_src * 3, 22);
    let params = DictionaryParams {
        radii_m: vec![0.012, 0.025],
        orientation: AtomOrientation::Free,
        ..DictionaryParams::default()
    };
    let (d, _) = build(
        &mesh,
        &gain,
        Some(&gain_xyz),
        &seeds_every(n_src, 29),
        &params,
    );
    assert_eq!(d.n_atoms, 3 * d.n_groups);
    assert_matches_naive(
        &mesh,
        &d,
        &gain,
        Some(&gain_xyz),
        NaiveProfile::Gaussian,
        true,
    );
}

#[test]
fn identical_for_one_and_two_threads() {
    let mesh = Mesh::icosphere(3, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    let gain = random_matrix(N_CH, n_src, 5);
    let gain_xyz = random_matrix(N_CH, n_src * 3, 6);
    let params = DictionaryParams {
        orientation: AtomOrientation::Free,
        radii_m: vec![0.01, 0.02, 0.04],
        ..DictionaryParams::default()
    };
    let run = |threads: usize| {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        pool.install(|| build(&mesh, &gain, Some(&gain_xyz), &Seeds::All, &params))
    };
    let (one, info_one) = run(1);
    let (two, info_two) = run(2);
    // Bitwise identical: every column is summed by one thread in CSC order.
    assert_eq!(one, two);
    assert_eq!(info_one, info_two);
}

#[test]
fn atoms_for_a_channel_subset_match_a_naive_loop_on_those_rows() {
    let mesh = Mesh::icosphere(3, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    let gain = random_matrix(N_CH, n_src, 31);
    let gain_xyz = random_matrix(N_CH, n_src * 3, 32);
    let params = DictionaryParams {
        orientation: AtomOrientation::Free,
        radii_m: vec![0.015, 0.03],
        ..DictionaryParams::default()
    };
    let (d, _) = build(
        &mesh,
        &gain,
        Some(&gain_xyz),
        &seeds_every(n_src, 23),
        &params,
    );
    let keep = [14usize, 0, 3, 9, 5, 11, 2];
    let (atoms, norms) = d
        .atoms_for_channel_subset(&gain, Some(&gain_xyz), &keep, true, 1e-9)
        .unwrap();
    let rows = |g: &[f64]| -> Vec<f64> {
        let cols = g.len() / N_CH;
        keep.iter()
            .flat_map(|&c| g[c * cols..(c + 1) * cols].to_vec())
            .collect()
    };
    let (sub, sub_xyz) = (rows(&gain), rows(&gain_xyz));
    for j in 0..d.n_atoms {
        let weights = dense_profile_column(&d, j);
        let (stride, offset) = gain_layout(d.component[j]);
        let g = if stride == 1 { &sub } else { &sub_xyz };
        let expected = naive_atom(g, keep.len(), &weights, stride, offset, true);
        let scale = norm2(&expected);
        // Same 1e-12 relative tolerance as the full-channel check.
        assert!((norms[j] - scale).abs() <= 1e-12 * scale);
        for (i, e) in expected.iter().enumerate() {
            assert!((atoms[i * d.n_atoms + j] * norms[j] - e).abs() <= 1e-12 * scale);
        }
    }
    // The free function on the same rows gives the same numbers.
    let direct = atoms_for_channels(
        &d.profile,
        &d.component,
        &sub,
        Some(&sub_xyz),
        keep.len(),
        true,
        1e-9,
    )
    .unwrap();
    assert_eq!(direct, (atoms, norms));
}

#[test]
fn common_mode_patches_are_dropped_and_reported() {
    // Sources in the cap z > 0.5 R get a gain equal on every channel, which
    // the average reference removes entirely: patches lying inside that cap
    // have zero atoms and must be dropped and listed, never divided by zero.
    let mesh = Mesh::icosphere(3, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    let mut gain = random_matrix(N_CH, n_src, 41);
    let common = |k: usize| mesh.vertices[k][2] > 0.5 * SPHERE_RADIUS_M;
    for k in (0..n_src).filter(|&k| common(k)) {
        for ch in 0..N_CH {
            gain[ch * n_src + k] = 1.0 + k as f64;
        }
    }
    let params = DictionaryParams {
        radii_m: vec![0.01, 0.02],
        ..DictionaryParams::default()
    };
    let (d, info) = build(&mesh, &gain, None, &Seeds::All, &params);
    let expected_dropped: Vec<(usize, f64)> = (0..n_src)
        .flat_map(|s| params.radii_m.iter().map(move |&r| (s, r)))
        .filter(|&(s, r)| {
            (0..n_src)
                .filter(|&k| euclidean(mesh.vertices[s], mesh.vertices[k]) <= r || k == s)
                .all(common)
        })
        .collect();
    assert!(!expected_dropped.is_empty());
    let dropped: Vec<(usize, f64)> = info
        .dropped
        .iter()
        .map(|a| (a.seed, a.radius_mm * 1e-3))
        .collect();
    assert_eq!(dropped.len(), expected_dropped.len());
    for ((s, r), (es, er)) in dropped.iter().zip(&expected_dropped) {
        assert_eq!(s, es);
        assert!((r - er).abs() < 1e-15);
    }
    assert_eq!(d.n_atoms + info.dropped.len(), info.n_patches);
    assert!(d.atoms.iter().all(|v| v.is_finite()));
    assert_eq!(*d.group.last().unwrap() + 1, d.n_groups);
    assert_eq!(d.profile.cols(), d.n_atoms);
}

#[test]
fn progress_reports_every_seed() {
    let mesh = Mesh::icosphere(2, SPHERE_RADIUS_M);
    let n_src = mesh.n_vertices();
    let gain = random_matrix(N_CH, n_src, 51);
    let calls = std::sync::Mutex::new(Vec::new());
    let distances = oracle(&mesh, euclidean);
    build_dictionary(
        &mesh,
        &gain,
        None,
        N_CH,
        &Seeds::All,
        &distances,
        &DictionaryParams::default(),
        &|n| calls.lock().unwrap().push(n),
    )
    .unwrap();
    // Increments of one per seed, adding up to the seed count (a progress
    // bar's total): the contract of every stage's progress callback.
    let calls = calls.into_inner().unwrap();
    assert_eq!(calls, vec![1; n_src]);
}
