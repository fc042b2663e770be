//! Bad parameters and inconsistent inputs give typed errors, never panics.

use crate::support::dictionary::*;
use patchwise::dictionary::{
    atoms_for_channels, build_dictionary, select_channels, AtomComponent, AtomOrientation,
    Dictionary, DictionaryError, DictionaryInfo, DictionaryParams, Seeds,
};
use patchwise::geometry::Mesh;

const N_CH: usize = 4;

type Oracle<'a> = dyn Fn(usize, f64) -> Vec<(u32, f64)> + Sync + 'a;

struct Case {
    mesh: Mesh,
    gain: Vec<f64>,
    gain_xyz: Option<Vec<f64>>,
    n_ch: usize,
    seeds: Seeds,
    params: DictionaryParams,
}

impl Case {
    fn new() -> Case {
        let mesh = Mesh::icosphere(2, SPHERE_RADIUS_M);
        let n = mesh.n_vertices();
        Case {
            gain: random_matrix(N_CH, n, 1),
            gain_xyz: None,
            n_ch: N_CH,
            mesh,
            seeds: Seeds::All,
            params: DictionaryParams::default(),
        }
    }

    fn run_with(
        &self,
        distances: &Oracle<'_>,
    ) -> Result<(Dictionary, DictionaryInfo), DictionaryError> {
        build_dictionary(
            &self.mesh,
            &self.gain,
            self.gain_xyz.as_deref(),
            self.n_ch,
            &self.seeds,
            distances,
            &self.params,
            &no_progress,
        )
    }

    fn run(&self) -> Result<(Dictionary, DictionaryInfo), DictionaryError> {
        self.run_with(&oracle(&self.mesh, euclidean))
    }
}

fn with_params(f: impl FnOnce(&mut DictionaryParams)) -> DictionaryError {
    let mut case = Case::new();
    f(&mut case.params);
    case.run().unwrap_err()
}

#[test]
fn a_valid_case_builds() {
    assert!(Case::new().run().is_ok());
}

#[test]
fn bad_radii_are_rejected() {
    assert_eq!(with_params(|p| p.radii_m.clear()), DictionaryError::NoRadii);
    for bad in [0.0, -0.01, f64::NAN, f64::INFINITY] {
        let e = with_params(|p| p.radii_m = vec![0.005, bad]);
        assert!(
            matches!(e, DictionaryError::BadRadius { index: 1, .. }),
            "{e:?}"
        );
    }
    let e = with_params(|p| p.radii_m = vec![0.01, 0.005]);
    assert!(matches!(
        e,
        DictionaryError::RadiiNotIncreasing { index: 1, .. }
    ));
    let e = with_params(|p| p.radii_m = vec![0.01, 0.01]);
    assert!(matches!(
        e,
        DictionaryError::RadiiNotIncreasing { index: 1, .. }
    ));
    for bad in [-1e-9, 1.0, f64::NAN] {
        let e = with_params(|p| p.drop_relative_norm = bad);
        assert!(matches!(e, DictionaryError::BadDropThreshold(_)));
    }
    // The message names the field and what was expected.
    let text = with_params(|p| p.radii_m = vec![-1.0]).to_string();
    assert!(
        text.contains("radii_m[0]") && text.contains("> 0"),
        "{text}"
    );
}

#[test]
fn bad_lead_fields_are_rejected() {
    let mut case = Case::new();
    case.gain.pop();
    assert!(matches!(
        case.run().unwrap_err(),
        DictionaryError::GainShape { name: "gain", .. }
    ));

    let mut case = Case::new();
    let n = case.mesh.n_vertices();
    case.gain[2 * n + 5] = f64::NAN;
    let e = case.run().unwrap_err();
    assert_eq!(
        e,
        DictionaryError::NonFiniteGain {
            name: "gain",
            channel: 2,
            column: 5
        }
    );

    let mut case = Case::new();
    case.params.orientation = AtomOrientation::Free;
    assert_eq!(case.run().unwrap_err(), DictionaryError::MissingFreeGain);
    case.gain_xyz = Some(vec![0.0; N_CH * n]);
    assert!(matches!(
        case.run().unwrap_err(),
        DictionaryError::GainShape {
            name: "gain_xyz",
            ..
        }
    ));

    let mut case = Case::new();
    case.n_ch = 0;
    assert_eq!(case.run().unwrap_err(), DictionaryError::NoChannels);

    // An all-zero lead field leaves no atom to fit.
    let mut case = Case::new();
    case.gain.iter_mut().for_each(|v| *v = 0.0);
    assert!(matches!(
        case.run().unwrap_err(),
        DictionaryError::NoAtoms { .. }
    ));
}

#[test]
fn bad_meshes_and_seeds_are_rejected() {
    let mut case = Case::new();
    case.mesh.triangles[7][1] = 10_000;
    let e = case.run().unwrap_err();
    assert!(matches!(
        e,
        DictionaryError::BadTriangle {
            triangle: 7,
            vertex: 10_000,
            ..
        }
    ));

    let mut case = Case::new();
    case.mesh.vertices.clear();
    case.mesh.triangles.clear();
    case.gain.clear();
    assert_eq!(case.run().unwrap_err(), DictionaryError::NoSources);

    let mut case = Case::new();
    case.seeds = Seeds::Given(vec![]);
    assert_eq!(case.run().unwrap_err(), DictionaryError::NoSeeds);
    case.seeds = Seeds::Given(vec![3, 9999]);
    assert!(matches!(
        case.run().unwrap_err(),
        DictionaryError::SeedOutOfRange {
            position: 1,
            seed: 9999,
            ..
        }
    ));
    case.seeds = Seeds::Given(vec![3, 5, 3]);
    assert_eq!(
        case.run().unwrap_err(),
        DictionaryError::DuplicateSeed {
            seed: 3,
            first: 0,
            second: 2
        }
    );
}

#[test]
fn inconsistent_oracle_answers_are_rejected() {
    let case = Case::new();
    let good = oracle(&case.mesh, euclidean);
    let e = case.run_with(&|s, r| {
        let mut v = good(s, r);
        v.push((100_000, 0.001));
        v
    });
    assert!(matches!(
        e.unwrap_err(),
        DictionaryError::OracleVertexOutOfRange {
            vertex: 100_000,
            ..
        }
    ));
    for bad in [f64::NAN, -0.001, f64::INFINITY] {
        let e = case.run_with(&|s, r| {
            let mut v = good(s, r);
            v[0].1 = bad;
            v
        });
        assert!(matches!(
            e.unwrap_err(),
            DictionaryError::OracleBadDistance { .. }
        ));
    }
    let e = case.run_with(&|s, r| {
        let mut v = good(s, r);
        v.push(v[0]);
        v
    });
    assert!(matches!(
        e.unwrap_err(),
        DictionaryError::OracleDuplicateVertex { .. }
    ));
    let e = case.run_with(&|s, r| {
        good(s, r)
            .into_iter()
            .filter(|&(k, _)| k as usize != s)
            .collect()
    });
    assert_eq!(
        e.unwrap_err(),
        DictionaryError::OracleMissingSeed { seed: 0 }
    );
    // Entries beyond the radius are ignored, not an error.
    assert!(case.run_with(&|s, _| good(s, 1.0)).is_ok());
}

#[test]
fn bad_channel_subsets_and_profiles_are_rejected() {
    let case = Case::new();
    let (d, _) = case.run().unwrap();
    let e = d.atoms_for_channel_subset(&case.gain, None, &[], true, 1e-9);
    assert_eq!(e.unwrap_err(), DictionaryError::NoChannels);
    let e = d.atoms_for_channel_subset(&case.gain, None, &[0, 4], true, 1e-9);
    assert!(matches!(
        e.unwrap_err(),
        DictionaryError::ChannelOutOfRange {
            position: 1,
            channel: 4,
            ..
        }
    ));
    let e = d.atoms_for_channel_subset(&case.gain, None, &[1, 2, 1], true, 1e-9);
    assert_eq!(
        e.unwrap_err(),
        DictionaryError::DuplicateChannel {
            channel: 1,
            first: 0,
            second: 2
        }
    );
    let e = select_channels(&[1.0, 2.0, 3.0], 2, &[0]);
    assert!(matches!(
        e.unwrap_err(),
        DictionaryError::RaggedMatrix { len: 3, n_rows: 2 }
    ));

    let csr = d.profile.to_other_storage();
    let e = atoms_for_channels(&csr, &d.component, &case.gain, None, N_CH, true, 1e-9);
    assert!(matches!(e.unwrap_err(), DictionaryError::BadProfile(_)));
    let e = atoms_for_channels(
        &d.profile,
        &d.component[1..],
        &case.gain,
        None,
        N_CH,
        true,
        1e-9,
    );
    assert!(matches!(e.unwrap_err(), DictionaryError::BadProfile(_)));
    let free = vec![AtomComponent::X; d.n_atoms];
    let e = atoms_for_channels(&d.profile, &free, &case.gain, None, N_CH, true, 1e-9);
    assert_eq!(e.unwrap_err(), DictionaryError::MissingFreeGain);
    let e = atoms_for_channels(
        &d.profile,
        &d.component,
        &case.gain[1..],
        None,
        N_CH,
        true,
        1e-9,
    );
    assert!(matches!(e.unwrap_err(), DictionaryError::GainShape { .. }));
}
