//! Label matching, validation, scalp projection and the sphere fit of montages.

use patchwise::montage::{fit_sphere, standard, Montage, MontageError};

fn labels(list: &[&str]) -> Vec<String> {
    list.iter().map(|s| s.to_string()).collect()
}

#[test]
fn find_ignores_case_and_accepts_temporal_aliases() {
    // 10-10 nomenclature renames T3/T4/T5/T6 to T7/T8/P7/P8 (Chatrian, Lettich & Nelson
    // 1985; American Electroencephalographic Society 1994 guideline, from memory).
    let m = standard("10-20", 0.09).unwrap();
    assert_eq!(m.find("cz"), m.find("Cz"));
    assert!(m.find("CZ").is_some());
    for (old, new) in [("T3", "T7"), ("T4", "T8"), ("T5", "P7"), ("t6", "P8")] {
        assert_eq!(m.find(old), m.find(new), "{old}");
        assert!(m.find(old).is_some());
    }
    // And the reverse: a montage with old names answers the new ones.
    let old = Montage::new(labels(&["T3", "T4", "T5", "T6"]), vec![[0.0, 0.0, 1.0]; 4]).unwrap();
    assert_eq!(old.find("t7"), Some(0));
    assert_eq!(old.find("P8"), Some(3));
    assert_eq!(m.find("Xy1"), None);
}

#[test]
fn select_lists_every_unknown_and_duplicate() {
    let m = standard("10-20", 0.09).unwrap();
    let ok = m.select(&labels(&["Cz", "t3", "O2"])).unwrap();
    assert_eq!(
        ok,
        vec![
            m.find("Cz").unwrap(),
            m.find("T7").unwrap(),
            m.find("O2").unwrap()
        ]
    );
    let err = m
        .select(&labels(&["Cz", "Foo", "T7", "t3", "Bar", "cz"]))
        .unwrap_err();
    match &err {
        MontageError::Selection {
            unknown,
            duplicates,
        } => {
            assert_eq!(unknown, &labels(&["Foo", "Bar"]));
            assert_eq!(duplicates, &labels(&["t3", "cz"]));
        }
        other => panic!("unexpected {other:?}"),
    }
    let text = err.to_string();
    for word in ["Foo", "Bar", "t3", "cz"] {
        assert!(text.contains(word), "{text}");
    }
}

#[test]
fn new_validates() {
    let p = [0.0, 0.0, 0.09];
    assert_eq!(Montage::new(vec![], vec![]), Err(MontageError::Empty));
    assert!(matches!(
        Montage::new(labels(&["Cz"]), vec![p, p]),
        Err(MontageError::LengthMismatch {
            labels: 1,
            positions: 2
        })
    ));
    assert!(matches!(
        Montage::new(labels(&["Cz", "Fz"]), vec![p, [f64::NAN, 0.0, 0.0]]),
        Err(MontageError::NotFinite { index: 1, .. })
    ));
    assert!(matches!(
        Montage::new(labels(&["Cz", " "]), vec![p, p]),
        Err(MontageError::EmptyLabel { index: 1 })
    ));
    match Montage::new(labels(&["T7", "Cz", "t3"]), vec![p; 3]) {
        Err(MontageError::DuplicateLabel {
            first,
            first_index,
            second,
            second_index,
        }) => {
            assert_eq!(
                (first.as_str(), first_index, second.as_str(), second_index),
                ("T7", 0, "t3", 2)
            );
        }
        other => panic!("unexpected {other:?}"),
    }
}

#[test]
fn projection_onto_the_scalp_sphere() {
    // Radial projection: the projected point is centre + R (p − centre)/|p − centre|
    // (common practice, no source). Tolerance 1e-12 m.
    let c = [0.001, -0.002, 0.003];
    let m = Montage::new(
        labels(&["A", "B", "C"]),
        vec![
            [0.0, 0.095, 0.003],
            [0.0815, -0.002, 0.003],
            [0.001, -0.002, 0.106],
        ],
    )
    .unwrap();
    let (p, warnings) = m.project_to_sphere(c, 0.09).unwrap();
    for q in &p.positions {
        let r = ((q[0] - c[0]).powi(2) + (q[1] - c[1]).powi(2) + (q[2] - c[2]).powi(2)).sqrt();
        assert!((r - 0.09).abs() < 1e-12);
    }
    // A moves 7 mm and B 9.5 mm (below the 10 mm limit); C moves 103 − 90 = 13 mm.
    assert!((p.positions[1][0] - 0.091).abs() < 1e-12);
    assert_eq!(warnings.len(), 1, "{warnings:?}");
    assert_eq!(warnings[0].label, "C");
    assert!((warnings[0].distance_m - 0.013).abs() < 1e-12);
    assert!(warnings[0].to_string().contains("13.0 mm"));
    assert!(matches!(
        m.project_to_sphere(c, 0.0),
        Err(MontageError::InvalidRadius { .. })
    ));
    let at_centre = Montage::new(labels(&["X"]), vec![c]).unwrap();
    assert!(matches!(
        at_centre.project_to_sphere(c, 0.09),
        Err(MontageError::AtCenter { index: 0, .. })
    ));
}

/// xorshift64* (Vigna 2016, ACM TOMS 42:30, multiplier from memory): a seeded,
/// deterministic generator for the test only.
struct Rng(u64);

impl Rng {
    fn next_f64(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        let x = self.0.wrapping_mul(0x2545_F491_4F6C_DD1D);
        (x >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Standard normal by Box–Muller.
    fn normal(&mut self) -> f64 {
        let u = self.next_f64().max(1e-300);
        let v = self.next_f64();
        (-2.0 * u.ln()).sqrt() * (2.0 * std::f64::consts::PI * v).cos()
    }
}

#[test]
fn sphere_fit_recovers_centre_and_radius() {
    // Points of the 10-10 layout (an upper cap, as on a real head) on a sphere of radius
    // 92 mm about (3, −5, 12) mm, with 1 mm Gaussian radial-and-tangential noise.
    // A least-squares fit of 85 points should recover the centre and radius to well
    // under the noise: tolerance 1 mm for the centre, 0.5 mm for the radius (common
    // practice, no source; the standard error here is about 0.1–0.3 mm).
    let center = [0.003, -0.005, 0.012];
    let radius = 0.092;
    let unit = standard("10-10", 1.0).unwrap();
    let mut rng = Rng(0x9E37_79B9_7F4A_7C15);
    let points: Vec<[f64; 3]> = unit
        .positions
        .iter()
        .map(|u| {
            let mut p = [0.0; 3];
            for d in 0..3 {
                p[d] = center[d] + radius * u[d] + 0.001 * rng.normal();
            }
            p
        })
        .collect();
    let (c, r) = fit_sphere(&points).unwrap();
    let dc = ((c[0] - center[0]).powi(2) + (c[1] - center[1]).powi(2) + (c[2] - center[2]).powi(2))
        .sqrt();
    assert!(dc < 0.001, "centre off by {dc} m: {c:?}");
    assert!((r - radius).abs() < 0.0005, "radius {r}");
    // Noise-free points: exact to rounding (tolerance 1e-12 m).
    let exact: Vec<[f64; 3]> = unit
        .positions
        .iter()
        .map(|u| {
            [
                center[0] + radius * u[0],
                center[1] + radius * u[1],
                center[2] + radius * u[2],
            ]
        })
        .collect();
    let (c, r) = fit_sphere(&exact).unwrap();
    for d in 0..3 {
        assert!((c[d] - center[d]).abs() < 1e-12);
    }
    assert!((r - radius).abs() < 1e-12);
}

#[test]
fn sphere_fit_rejects_degenerate_input() {
    assert!(matches!(
        fit_sphere(&[[0.0; 3]; 3]),
        Err(MontageError::TooFewPoints { found: 3 })
    ));
    let plane: Vec<[f64; 3]> = (0..10).map(|i| [i as f64, (i * i) as f64, 0.0]).collect();
    // Points on a parabola in the plane z = 0: not on any single sphere, coplanar.
    assert!(matches!(
        fit_sphere(&plane),
        Err(MontageError::Degenerate { .. })
    ));
    let mut bad = vec![
        [1.0, 0.0, 0.0],
        [0.0, 1.0, 0.0],
        [0.0, 0.0, 1.0],
        [-1.0, 0.0, 0.0],
    ];
    bad[2][1] = f64::INFINITY;
    assert!(matches!(
        fit_sphere(&bad),
        Err(MontageError::NotFinitePoint { index: 2, .. })
    ));
}
