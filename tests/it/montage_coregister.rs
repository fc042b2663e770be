//! Electrodes in another frame aligned to the template head by their
//! nasion, LPA and RPA rows, then moved onto its scalp; missing landmarks
//! and electrodes far from the scalp refused.

use patchwise::head::template_head::template_landmarks;
use patchwise::montage::{
    align_to_landmarks, split_landmarks, standard_on_template_head, LandmarkTriple, Montage,
    MontageError,
};

use crate::support::{self, cli::patchwise};

/// A rigid motion: rotation by `a` about z then `b` about x, then a shift.
fn rigid(p: [f64; 3]) -> [f64; 3] {
    let (a, b) = (0.35f64, -0.2f64);
    let q = [
        a.cos() * p[0] - a.sin() * p[1],
        a.sin() * p[0] + a.cos() * p[1],
        p[2],
    ];
    let r = [
        q[0],
        b.cos() * q[1] - b.sin() * q[2],
        b.sin() * q[1] + b.cos() * q[2],
    ];
    [r[0] + 0.012, r[1] - 0.031, r[2] + 0.047]
}

/// The template's 10-20 layout moved into another frame, with the moved
/// landmark rows named as in `names` (nasion, LPA, RPA; `None` leaves one out).
fn moved_montage(names: [Option<&str>; 3]) -> (Montage, Montage) {
    let layout = standard_on_template_head("10-20").unwrap();
    let l = template_landmarks();
    let mut labels = layout.labels.clone();
    let mut positions: Vec<[f64; 3]> = layout.positions.iter().map(|&p| rigid(p)).collect();
    for (name, p) in names.iter().zip([l.nasion, l.lpa, l.rpa]) {
        if let Some(name) = name {
            labels.push(name.to_string());
            positions.push(rigid(p));
        }
    }
    (layout, Montage::new(labels, positions).unwrap())
}

#[test]
fn landmarks_bring_moved_electrodes_back() {
    // A rigid motion is undone exactly by the landmark frames (both built by
    // the same rule from corresponding points; common practice, no source):
    // every electrode back within 1e-12 m.
    let (layout, moved) = moved_montage([Some("Nasion"), Some("lpa"), Some("RPA")]);
    let (rest, from) = split_landmarks(&moved).unwrap();
    assert_eq!(rest.labels, layout.labels);
    let l = template_landmarks();
    let to = LandmarkTriple {
        nasion: l.nasion,
        lpa: l.lpa,
        rpa: l.rpa,
    };
    let back = align_to_landmarks(&rest, &from.unwrap(), &to).unwrap();
    for (p, q) in back.positions.iter().zip(&layout.positions) {
        let d = ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)).sqrt();
        assert!(d < 1e-12, "{d}");
    }
    // Without landmark rows nothing is split off.
    let (rest, none) = split_landmarks(&layout).unwrap();
    assert!(none.is_none());
    assert_eq!(rest, layout);
}

#[test]
fn a_missing_landmark_is_named() {
    let (_, moved) = moved_montage([Some("nasion"), Some("LPA"), None]);
    let err = split_landmarks(&moved).unwrap_err();
    assert_eq!(
        err,
        MontageError::MissingLandmarks {
            missing: vec!["RPA".to_string()]
        }
    );
    assert!(err.to_string().contains("RPA"));
}

fn write_tsv(path: &std::path::Path, m: &Montage) {
    let mut text = String::from("name\tx\ty\tz\n");
    for (l, p) in m.labels.iter().zip(&m.positions) {
        text += &format!("{l}\t{}\t{}\t{}\n", p[0] * 1e3, p[1] * 1e3, p[2] * 1e3);
    }
    std::fs::write(path, text).unwrap();
}

#[test]
fn the_command_line_aligns_and_refuses_far_electrodes() {
    let dir = support::scratch("template_bem_coregister");
    let (layout, moved) = moved_montage([Some("nasion"), Some("LPA"), Some("RPA")]);
    write_tsv(&dir.join("moved.tsv"), &moved);
    let run = |file: &str, out: &str| {
        patchwise(
            &[
                "leadfield",
                "--montage",
                file,
                "--sources",
                "template-5k",
                "--head",
                "template-bem",
                "--out",
                out,
            ],
            &dir,
        )
    };
    let o = run("moved.tsv", "lf.h5");
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(err.contains("aligned to the template head"), "{err}");
    let lf = patchwise::io::leadfield_file::read_leadfield(&dir.join("lf.h5")).unwrap();
    assert_eq!(lf.labels, layout.labels);
    // Back on the layout's places (the file holds mm with about 15
    // significant digits; the scalp projection moves them < 0.5 mm).
    for (p, q) in lf.electrode_positions.iter().zip(&layout.positions) {
        let d = ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)).sqrt();
        assert!(d < 5e-4, "{d}");
    }
    // One electrode 40 mm out from the head (after alignment): exit 2
    // naming it, nothing written (issue 21: farther than 30 mm).
    let mut far = moved.clone();
    let i = far.find("Cz").unwrap();
    far.positions[i] = rigid([
        layout.positions[i][0],
        layout.positions[i][1],
        layout.positions[i][2] + 0.040,
    ]);
    write_tsv(&dir.join("far.tsv"), &far);
    let o = run("far.tsv", "far.h5");
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("Cz"), "{err}");
    assert!(!dir.join("far.h5").exists());
}
