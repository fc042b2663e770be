//! Electrodes in another frame aligned to a boundary-element head (the
//! template's, or a head file's `landmarks_mm`) by their nasion, LPA and RPA
//! rows or by the landmarks of a BIDS `*_coordsystem.json` beside them, then
//! moved onto its scalp; missing landmarks, bad coordinate-system files and
//! electrodes far from the scalp refused.

use patchwise::head::template_head::template_landmarks;
use patchwise::montage::{
    align_to_landmarks, split_landmarks, standard_on_template_head, LandmarkTriple, Montage,
    MontageError,
};

use std::path::Path;

use patchwise::head::HeadLandmarksMm;
use patchwise::job::montage_frame::{load_bem_montage, BemFrame};
use patchwise::job::observer::NoteKeeper;
use patchwise::job::specs::MontageSpec;

use crate::support::bem_head::{bem_toml, write_shells, SHELLS};
use crate::support::cli::leadfield;
use crate::support::{self, refusal::assert_refused};

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

fn write_tsv(path: &Path, m: &Montage) {
    write_tsv_in(path, m, 1e3);
}

/// `m` as an electrodes table with the coordinates in metres times `per_metre`.
fn write_tsv_in(path: &Path, m: &Montage, per_metre: f64) {
    let mut text = String::from("name\tx\ty\tz\n");
    for (l, p) in m.labels.iter().zip(&m.positions) {
        let [x, y, z] = p.map(|c| c * per_metre);
        text += &format!("{l}\t{x}\t{y}\t{z}\n");
    }
    std::fs::write(path, text).unwrap();
}

#[test]
fn the_command_line_aligns_and_refuses_far_electrodes() {
    let dir = support::scratch("template_bem_coregister");
    let (layout, moved) = moved_montage([Some("nasion"), Some("LPA"), Some("RPA")]);
    write_tsv(&dir.join("moved.tsv"), &moved);
    let run = |file: &str, out: &str| leadfield(&dir, "template-bem", file, out);
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

/// The template head's landmarks in mm, as a head file gives them.
fn template_landmarks_mm() -> HeadLandmarksMm {
    let l = template_landmarks();
    HeadLandmarksMm {
        nasion: l.nasion.map(|c| c * 1e3),
        lpa: l.lpa.map(|c| c * 1e3),
        rpa: l.rpa.map(|c| c * 1e3),
    }
}

/// `p` (m) moved by [`rigid`], as a JSON array in mm.
fn moved_mm(p: [f64; 3]) -> String {
    let [x, y, z] = rigid(p).map(|c| c * 1e3);
    format!("[{x}, {y}, {z}]")
}

/// A BIDS coordinate-system file whose landmarks are the template's moved
/// by [`rigid`] (mm), the electrodes in `units`.
fn coordsystem_json(units: &str) -> String {
    let l = template_landmarks();
    format!(
        r#"{{"EEGCoordinateSystem": "Other", "EEGCoordinateUnits": "{units}",
  "AnatomicalLandmarkCoordinateUnits": "mm",
  "AnatomicalLandmarkCoordinates": {{"NAS": {}, "LPA": {}, "RPA": {}}}}}"#,
        moved_mm(l.nasion),
        moved_mm(l.lpa),
        moved_mm(l.rpa)
    )
}

fn largest_distance(a: &[[f64; 3]], b: &[[f64; 3]]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(p, q)| {
            ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)).sqrt()
        })
        .fold(0.0, f64::max)
}

#[test]
fn a_coordsystem_file_aligns_electrodes_to_a_head_files_landmarks() {
    // The worked example: the template's 10-20 layout under a known rigid
    // motion (0.35 rad about z, then -0.2 rad about x, then a shift of
    // (12, -31, 47) mm), written in cm, its landmarks moved alike in the
    // coordinate-system file in mm. The head file's landmarks are the
    // unmoved ones, so aligning the two landmark frames (built by the same
    // rule from corresponding points; common practice, no source) undoes
    // the motion: every electrode back within 1e-9 m (the decimal round
    // trip in cm and mm costs about 1e-16 m).
    let dir = support::scratch("coordsystem_align");
    let (layout, moved) = moved_montage([None, None, None]);
    let tsv = dir.join("sub-01_electrodes.tsv");
    write_tsv_in(&tsv, &moved, 100.0);
    std::fs::write(dir.join("sub-01_coordsystem.json"), coordsystem_json("cm")).unwrap();
    let spec = MontageSpec::File(tsv);
    let notes = NoteKeeper::default();
    let own = BemFrame::File {
        path: dir.join("head.toml"),
        landmarks: Some(template_landmarks_mm()),
    };
    let (m, from_file) = load_bem_montage(&spec, &own, &notes).unwrap();
    assert!(from_file);
    assert_eq!(m.labels, layout.labels);
    let d = largest_distance(&m.positions, &layout.positions);
    assert!(d < 1e-9, "{d}");
    let said = notes.notes().join("\n");
    assert!(said.contains("sub-01_coordsystem.json"), "{said}");
    // The template head's own landmarks are the same points.
    let (t, _) = load_bem_montage(&spec, &BemFrame::Template, &notes).unwrap();
    let d = largest_distance(&t.positions, &layout.positions);
    assert!(d < 1e-9, "{d}");
    // Without the coordinate-system file the table is read as mm and kept
    // in its frame: 100 times the size, nothing aligned.
    std::fs::remove_file(dir.join("sub-01_coordsystem.json")).unwrap();
    let (raw, _) = load_bem_montage(&spec, &own, &notes).unwrap();
    let d = largest_distance(
        &raw.positions,
        &moved
            .positions
            .iter()
            .map(|p| p.map(|c| c * 0.1))
            .collect::<Vec<_>>(),
    );
    assert!(d < 1e-12, "{d}");
}

#[test]
fn landmarks_without_a_place_to_go_or_given_twice_are_refused() {
    let dir = support::scratch("coordsystem_refusals");
    let (_, moved) = moved_montage([Some("NAS"), Some("LPA"), Some("RPA")]);
    let tsv = dir.join("sub-02_electrodes.tsv");
    write_tsv(&tsv, &moved);
    let spec = MontageSpec::File(tsv);
    let notes = NoteKeeper::default();
    // A head file without landmarks_mm cannot take landmark rows.
    let bare = BemFrame::File {
        path: dir.join("head.toml"),
        landmarks: None,
    };
    let err = load_bem_montage(&spec, &bare, &notes)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("landmarks_mm") && err.contains("sub-02_electrodes.tsv"),
        "{err}"
    );
    // Rows and a coordinate-system file both giving landmarks.
    std::fs::write(dir.join("sub-02_coordsystem.json"), coordsystem_json("mm")).unwrap();
    let err = load_bem_montage(&spec, &BemFrame::Template, &notes)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("given twice") && err.contains("sub-02_coordsystem.json"),
        "{err}"
    );
}

#[test]
fn bad_coordsystem_files_exit_2_naming_file_and_field() {
    // Refused while the electrodes are read, before any head is built:
    // exit 2, one message naming the file and the field, nothing written.
    let dir = support::scratch("coordsystem_cli_refusals");
    let (_, moved) = moved_montage([None, None, None]);
    write_tsv(&dir.join("sub-03_electrodes.tsv"), &moved);
    let json = dir.join("sub-03_coordsystem.json");
    let l = template_landmarks();
    let cases = [
        (
            "{\"EEGCoordinateUnits\": \"mm\",".to_string(),
            "not a JSON object",
        ),
        (
            format!(
                r#"{{"EEGCoordinateUnits": "mm", "AnatomicalLandmarkCoordinates": {{"NAS": {}, "LPA": {}}}}}"#,
                moved_mm(l.nasion),
                moved_mm(l.lpa)
            ),
            "AnatomicalLandmarkCoordinates has no RPA",
        ),
        (
            coordsystem_json("inches"),
            "EEGCoordinateUnits is \"inches\"",
        ),
    ];
    for (text, needle) in cases {
        std::fs::write(&json, text).unwrap();
        let o = leadfield(&dir, "template-bem", "sub-03_electrodes.tsv", "lf.h5");
        assert_refused(&o, needle);
        assert_refused(&o, "sub-03_coordsystem.json");
        assert!(!dir.join("lf.h5").exists());
    }
}

#[test]
fn a_head_files_landmarks_align_electrodes_end_to_end() {
    // A user's bem head (three 642-vertex shells) with landmarks_mm: the
    // 10-20 layout on its scalp sphere given once in the head's frame and
    // once moved by `rigid` with the moved landmarks in a coordinate-system
    // file (metres). Both runs give the same electrodes (1e-9 m) and the
    // same lead field (1e-9 relative; common practice, no source).
    let dir = support::scratch("coordsystem_own_head");
    write_shells(&dir, &[0.083, 0.088, 0.094]);
    bem_toml(&dir, "bem.toml", &SHELLS, &[0.47, 0.02, 0.41]);
    let head_landmarks = [
        [0.0, 0.090, -0.02],
        [-0.085, 0.0, -0.03],
        [0.085, 0.0, -0.03],
    ];
    let mm = |p: [f64; 3]| p.map(|c| c * 1e3);
    let [n, a, b] = head_landmarks.map(mm);
    let toml = std::fs::read_to_string(dir.join("head/bem.toml")).unwrap()
        + &format!("landmarks_mm = {{ nasion = {n:?}, lpa = {a:?}, rpa = {b:?} }}\n");
    std::fs::write(dir.join("head/bem.toml"), toml).unwrap();
    let layout = patchwise::montage::standard("10-20", 0.094).unwrap();
    write_tsv(&dir.join("plain.tsv"), &layout);
    let moved = Montage::new(
        layout.labels.clone(),
        layout.positions.iter().map(|&p| rigid(p)).collect(),
    )
    .unwrap();
    write_tsv_in(&dir.join("sub-04_electrodes.tsv"), &moved, 1.0);
    let [n, a, b] = head_landmarks.map(moved_mm);
    std::fs::write(
        dir.join("sub-04_coordsystem.json"),
        format!(
            r#"{{"EEGCoordinateUnits": "m", "AnatomicalLandmarkCoordinateUnits": "mm", "AnatomicalLandmarkCoordinates": {{"NAS": {n}, "LPA": {a}, "RPA": {b}}}}}"#
        ),
    )
    .unwrap();
    let o = leadfield(&dir, "head/bem.toml", "plain.tsv", "plain.h5");
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let o = leadfield(&dir, "head/bem.toml", "sub-04_electrodes.tsv", "moved.h5");
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(err.contains("aligned to head head/bem.toml"), "{err}");
    let read = |f: &str| patchwise::io::leadfield_file::read_leadfield(&dir.join(f)).unwrap();
    let (plain, aligned) = (read("plain.h5"), read("moved.h5"));
    assert_eq!(plain.labels, aligned.labels);
    let d = largest_distance(&plain.electrode_positions, &aligned.electrode_positions);
    assert!(d < 1e-9, "{d}");
    let scale = plain.gain.iter().fold(0.0f64, |m, g| m.max(g.abs()));
    let diff = plain
        .gain
        .iter()
        .zip(&aligned.gain)
        .fold(0.0f64, |m, (p, q)| m.max((p - q).abs()));
    assert!(diff <= 1e-9 * scale, "{diff} of {scale}");
    // landmarks_mm belongs to bem heads only.
    std::fs::write(
        dir.join("spheres.toml"),
        "model = \"spheres\"\nradii_mm = [83.0, 88.0, 94.0]\nconductivities = [0.47, 0.02, 0.41]\nlandmarks_mm = { nasion = [0.0, 90.0, 0.0], lpa = [-85.0, 0.0, 0.0], rpa = [85.0, 0.0, 0.0] }\n",
    )
    .unwrap();
    let o = leadfield(&dir, "spheres.toml", "plain.tsv", "spheres.h5");
    assert_refused(&o, "landmarks_mm");
    assert!(!dir.join("spheres.h5").exists());
}
