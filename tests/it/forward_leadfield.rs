//! Checks of lead-field assembly: errors, references, orientations, thread
//! independence and agreement with the head model's own potential.

use patchwise::forward::{lead_field, ForwardError, Gain, Orientation, Reference};
use patchwise::geometry::Mesh;
use patchwise::head::SphereHead;
use std::sync::atomic::{AtomicUsize, Ordering};

/// Head, electrodes, sources and normals of the checks.
type Setup = (SphereHead, Vec<[f64; 3]>, Vec<[f64; 3]>, Vec<[f64; 3]>);

fn setup() -> Setup {
    let head = SphereHead::default_adult();
    // Electrodes: the upper half of a level-2 icosphere, a little off the
    // scalp so the radial projection is exercised.
    let electrodes: Vec<[f64; 3]> = Mesh::icosphere(2, 0.1)
        .vertices
        .into_iter()
        .filter(|v| v[2] > -0.01)
        .collect();
    // Sources: a level-2 icosphere scaled to 70 mm plus two deeper points;
    // normals radial, except at the centre.
    let mut sources: Vec<[f64; 3]> = Mesh::icosphere(2, 0.07).vertices;
    sources.push([0.0, 0.0, 0.0]);
    sources.push([0.01, -0.02, 0.03]);
    let normals = sources
        .iter()
        .map(|s| {
            let n = (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]).sqrt();
            if n > 0.0 {
                [s[0] / n, s[1] / n, s[2] / n]
            } else {
                [1.0, 0.0, 0.0]
            }
        })
        .collect();
    (head, electrodes, sources, normals)
}

fn run(orientation: Orientation, reference: Reference) -> Gain {
    let (head, e, s, n) = setup();
    lead_field(&head, &e, &s, &n, orientation, reference, &|_| {}).unwrap()
}

#[test]
fn entries_match_the_head_potential() {
    // The lead field is the head model's potential of unit dipoles
    // (definition; common practice, no source). Exact to 1e-13 relative.
    let (head, e, s, n) = setup();
    let lf = lead_field(
        &head,
        &e,
        &s,
        &n,
        Orientation::Free,
        Reference::None,
        &|_| {},
    )
    .unwrap();
    let xyz = lf.gain_xyz.as_ref().unwrap();
    for ch in [0, 7, e.len() - 1] {
        for src in [0, 5, s.len() - 2, s.len() - 1] {
            let v = head.potential_xyz(e[ch], s[src]).unwrap();
            for axis in 0..3 {
                let got = xyz[(ch * lf.n_sources + src) * 3 + axis];
                assert!((got - v[axis]).abs() <= 1e-13 * v[axis].abs().max(1e-9));
            }
            let along = v[0] * n[src][0] + v[1] * n[src][1] + v[2] * n[src][2];
            let got = lf.gain[ch * lf.n_sources + src];
            assert!((got - along).abs() <= 1e-13 * along.abs().max(1e-9));
        }
    }
}

#[test]
fn average_referenced_columns_sum_to_zero() {
    // Common average reference: every column sums to zero over the channels
    // (definition; common practice, no source). Tolerance 1e-12 of the
    // column's largest entry.
    let lf = run(Orientation::Free, Reference::Average);
    let plain = run(Orientation::Free, Reference::None);
    for src in 0..lf.n_sources {
        let column: Vec<f64> = (0..lf.n_channels)
            .map(|ch| lf.gain[ch * lf.n_sources + src])
            .collect();
        let peak = column.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let sum: f64 = column.iter().sum();
        assert!(
            sum.abs() <= 1e-12 * peak.max(1e-30),
            "source {src}: sum {sum}"
        );
        // And it is the unreferenced column minus its mean.
        let raw: Vec<f64> = (0..lf.n_channels)
            .map(|ch| plain.gain[ch * lf.n_sources + src])
            .collect();
        let mean = raw.iter().sum::<f64>() / raw.len() as f64;
        for (a, b) in column.iter().zip(&raw) {
            assert!((a - (b - mean)).abs() <= 1e-12 * peak.max(1e-30));
        }
    }
    let xyz = lf.gain_xyz.as_ref().unwrap();
    for src in 0..lf.n_sources {
        for axis in 0..3 {
            let sum: f64 = (0..lf.n_channels)
                .map(|ch| xyz[(ch * lf.n_sources + src) * 3 + axis])
                .sum();
            let peak = (0..lf.n_channels)
                .map(|ch| xyz[(ch * lf.n_sources + src) * 3 + axis].abs())
                .fold(0.0f64, f64::max);
            assert!(sum.abs() <= 1e-12 * peak.max(1e-30));
        }
    }
}

#[test]
fn normal_gain_is_the_free_gain_along_the_normal() {
    // Linearity of the potential in the dipole moment (common practice, no
    // source): gain = gain_xyz · normal; Normal and Free give the same gain.
    let (_, _, _, normals) = setup();
    let free = run(Orientation::Free, Reference::Average);
    let normal = run(Orientation::Normal, Reference::Average);
    assert!(normal.gain_xyz.is_none());
    assert_eq!(free.gain, normal.gain);
    let xyz = free.gain_xyz.as_ref().unwrap();
    for ch in 0..free.n_channels {
        for (src, n) in normals.iter().enumerate() {
            let i = ch * free.n_sources + src;
            let along = xyz[3 * i] * n[0] + xyz[3 * i + 1] * n[1] + xyz[3 * i + 2] * n[2];
            assert!((free.gain[i] - along).abs() <= 1e-13 * along.abs().max(1e-6));
        }
    }
}

#[test]
fn result_does_not_depend_on_the_thread_count() {
    // Project rule: identical results whatever the rayon thread count.
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap();
    let two = rayon::ThreadPoolBuilder::new()
        .num_threads(2)
        .build()
        .unwrap();
    let a = one.install(|| run(Orientation::Free, Reference::Average));
    let b = two.install(|| run(Orientation::Free, Reference::Average));
    assert_eq!(a, b);
}

#[test]
fn progress_counts_every_source_once() {
    let (head, e, s, n) = setup();
    let done = AtomicUsize::new(0);
    let calls = AtomicUsize::new(0);
    let progress = |k: usize| {
        done.fetch_add(k, Ordering::Relaxed);
        calls.fetch_add(1, Ordering::Relaxed);
    };
    lead_field(
        &head,
        &e,
        &s,
        &n,
        Orientation::Normal,
        Reference::None,
        &progress,
    )
    .unwrap();
    assert_eq!(done.load(Ordering::Relaxed), s.len());
    assert!(calls.load(Ordering::Relaxed) >= 1);
}

/// A caller that asks to stop from the start.
struct StopNow;

impl patchwise::numeric::Progress for StopNow {
    fn advance(&self, _n: usize) {}
    fn cancelled(&self) -> bool {
        true
    }
}

// A stage stops between its steps when its caller asks, with its own
// error, not a partial result (behaviour, common practice, no source).
#[test]
fn a_caller_can_stop_the_assembly() {
    let (head, e, s, n) = setup();
    let out = lead_field(
        &head,
        &e,
        &s,
        &n,
        Orientation::Normal,
        Reference::None,
        &StopNow,
    );
    assert_eq!(out.unwrap_err(), ForwardError::Cancelled);
}

#[test]
fn bad_inputs_are_typed_errors_naming_the_index() {
    let (head, e, s, n) = setup();
    let call = |e: &[[f64; 3]], s: &[[f64; 3]], n: &[[f64; 3]]| {
        lead_field(
            &head,
            e,
            s,
            n,
            Orientation::Normal,
            Reference::Average,
            &|_| {},
        )
        .unwrap_err()
    };
    assert_eq!(
        call(&e[..2], &s, &n),
        ForwardError::TooFewElectrodes { count: 2 }
    );
    let mut bad = e.clone();
    bad[4][1] = f64::NAN;
    assert_eq!(
        call(&bad, &s, &n),
        ForwardError::NotFinite {
            what: "electrode",
            index: 4
        }
    );
    let mut bad = e.clone();
    bad[2] = [0.0; 3];
    assert_eq!(
        call(&bad, &s, &n),
        ForwardError::ElectrodeAtCenter { index: 2 }
    );
    let mut bad = s.clone();
    bad[6][0] = f64::INFINITY;
    assert_eq!(
        call(&e, &bad, &n),
        ForwardError::NotFinite {
            what: "source",
            index: 6
        }
    );
    let mut bad = s.clone();
    bad[3] = [0.0, 0.0, 0.0815];
    let err = call(&e, &bad, &n);
    assert!(
        matches!(err, ForwardError::SourceOutside { index: 3, .. }),
        "{err}"
    );
    assert!(err.to_string().contains("source 3"));
    let mut bad = n.clone();
    bad[9] = [0.0, 0.0, 1.0 + 1e-5];
    assert!(matches!(
        call(&e, &s, &bad),
        ForwardError::NormalNotUnit { index: 9, .. }
    ));
    let mut bad = n.clone();
    bad[1][2] = f64::NAN;
    assert_eq!(
        call(&e, &s, &bad),
        ForwardError::NotFinite {
            what: "normal",
            index: 1
        }
    );
    assert!(matches!(
        call(&e, &s, &n[1..]),
        ForwardError::NormalCount { .. }
    ));
    // Within the 1e-6 tolerance a normal is accepted.
    let mut ok = n.clone();
    ok[9] = [0.0, 0.0, 1.0 + 5e-7];
    assert!(lead_field(
        &head,
        &e,
        &s,
        &ok,
        Orientation::Normal,
        Reference::Average,
        &|_| {}
    )
    .is_ok());
}
