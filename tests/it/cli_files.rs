//! The real binary on files: the shipped template is sound and equals a
//! fresh generation; montage export; lead field files h5py reads with the
//! shapes of design.md; bad inputs exit 2 without output (issues 2 and 3).

use crate::support;
use std::path::Path;

use patchwise::geometry::{template, TemplateResolution};
use patchwise::io::gifti::{read_gifti_labels, read_gifti_surface};

use crate::support::cli::patchwise;

fn meshes() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("meshes")
}

/// The files in meshes/ are exactly what the generator makes (float64
/// GIFTI, so the comparison is exact).
#[test]
fn shipped_template_equals_a_fresh_generation() {
    for res in TemplateResolution::ALL {
        let t = template(res);
        let surf = meshes().join(format!("{}.surf.gii", res.name()));
        let mesh = read_gifti_surface(&surf).unwrap();
        assert_eq!(mesh.triangles, t.mesh.triangles);
        for (a, b) in mesh.vertices.iter().zip(&t.mesh.vertices) {
            for d in 0..3 {
                // mm in the file, m in memory: one multiplication each way.
                assert!((a[d] - b[d]).abs() <= 1e-15, "{} vs {}", a[d], b[d]);
            }
        }
        let (labels, names) =
            read_gifti_labels(&meshes().join(format!("{}.label.gii", res.name()))).unwrap();
        assert_eq!(labels, t.region);
        assert_eq!(names, t.region_names);
    }
}

#[test]
fn check_reports_the_template_sound() {
    let out = patchwise(
        &["check", "meshes/template.surf.gii"],
        Path::new(env!("CARGO_MANIFEST_DIR")),
    );
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("sound") && text.contains("20484 vertices") && text.contains("closed"),
        "{text}"
    );
}

#[test]
fn bad_files_exit_2_with_one_message() {
    let dir = support::scratch("cli_bad_files");
    let cases: [(&str, &[u8], &str); 5] = [
        ("nan.ply", b"ply\nformat ascii 1.0\nelement vertex 3\nproperty float x\nproperty float y\nproperty float z\nelement face 1\nproperty list uchar int vertex_indices\nend_header\n0 0 0\n1 0 nan\n0 1 0\n3 0 1 2\n", "vertex 1"),
        ("notxml.gii", b"this is not xml", "notxml.gii"),
        ("missing_column.tsv", b"name\tx\ty\nCz\t0\t0\n", "z"),
        ("duplicate.tsv", b"name\tx\ty\tz\nCz\t0\t0\t94\nCZ\t1\t0\t94\n", "uplicate"),
        ("broken.npy", b"\x93NUMPY\x01\x00\x10\x00{'descr': '<f8',", "broken.npy"),
    ];
    for (name, bytes, needle) in cases {
        std::fs::write(dir.join(name), bytes).unwrap();
        let out = patchwise(&["check", name], &dir);
        assert_eq!(out.status.code(), Some(2), "{name}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(needle), "{name}: {err}");
        assert!(!err.contains("panicked"), "{name}: {err}");
    }
    let out = patchwise(&["check", "no_such_file.gii"], &dir);
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn montage_export_writes_bids_electrodes() {
    let dir = support::scratch("cli_montage");
    let out = patchwise(&["montage", "export", "10-20", "--out", "e.tsv"], &dir);
    assert!(out.status.success());
    let text = std::fs::read_to_string(dir.join("e.tsv")).unwrap();
    assert!(text.starts_with("name\tx\ty\tz"));
    assert_eq!(text.lines().count(), 22);
    // Cz at the vertex of the 94 mm scalp sphere (the proportional rule
    // puts Cz at 50 % of both arcs; Jasper 1958).
    let cz = text.lines().find(|l| l.starts_with("Cz\t")).unwrap();
    let z: f64 = cz.split('\t').nth(3).unwrap().parse().unwrap();
    assert!((z - 94.0).abs() < 1e-6, "{cz}");
    let out = patchwise(&["montage", "show", "10-21"], &dir);
    assert_eq!(out.status.code(), Some(2));
}

/// `patchwise leadfield` writes what h5py (3.16.0) reads with design.md's
/// shapes and attributes; columns are average-referenced (sum zero).
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn leadfield_file_reads_in_h5py_with_design_shapes() {
    let dir = support::scratch("cli_leadfield");
    let out = patchwise(
        &[
            "leadfield",
            "--montage",
            "10-10",
            "--sources",
            "template-5k",
            "--out",
            "lf.h5",
        ],
        &dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // Bad head files: an unknown key, radii not increasing.
    std::fs::write(dir.join("bad.toml"), "model = \"spheres\"\nradii_mm = [81, 83, 88, 94]\nconductivities = [0.47, 1.79, 0.02, 0.41]\nskull = 1\n").unwrap();
    std::fs::write(dir.join("order.toml"), "model = \"spheres\"\nradii_mm = [81, 80, 88, 94]\nconductivities = [0.47, 1.79, 0.02, 0.41]\n").unwrap();
    for head in ["bad.toml", "order.toml"] {
        let out = patchwise(
            &[
                "leadfield",
                "--montage",
                "10-20",
                "--sources",
                "template-5k",
                "--head",
                head,
                "--out",
                "bad.h5",
            ],
            &dir,
        );
        assert_eq!(out.status.code(), Some(2), "{head}");
        assert!(!dir.join("bad.h5").exists());
    }
    let py = support::python::python();
    let script = r#"
import sys, json, h5py, numpy as np
f = h5py.File(sys.argv[1], "r")
g = f["leadfield/gain"]
assert g.shape == (85, 5124), g.shape
assert f["montage/labels"].shape == (85,)
assert f["montage/positions_mm"].shape == (85, 3)
assert f["sources/positions_mm"].shape == (5124, 3)
assert f["sources/normals"].shape == (5124, 3)
assert f["sources/triangles"].shape == (10240, 3)
assert f["sources/region"].shape == (5124,)
assert len(f["sources/region_names"]) == 30
assert g.attrs["unit"] == "V/(A*m)" and isinstance(g.attrs["unit"], str)
assert g.attrs["reference"] == "average"
h = json.loads(g.attrs["head_model"])
assert h["radii_mm"] == [81.0, 83.0, 88.0, 94.0], h
G = g[()]
assert np.abs(G.sum(axis=0)).max() < 1e-9 * np.abs(G).max()
n = f["sources/normals"][()]
assert np.allclose(np.linalg.norm(n, axis=1), 1.0, atol=1e-9)
"#;
    support::python::run(&py, script, &[&dir.join("lf.h5")]);
}
