//! PLY and OFF surfaces: round trips, hand-written files following the PLY
//! and OFF format descriptions (common practice, no source), and bad inputs.

use crate::support;
use patchwise::geometry::Mesh;
use patchwise::io::off::{read_off, write_off};
use patchwise::io::ply::{read_ply, write_ply, PlyFormat};

fn assert_close(a: &Mesh, b: &Mesh, tol: f64) {
    assert_eq!(a.triangles, b.triangles);
    assert_eq!(a.vertices.len(), b.vertices.len());
    for (p, q) in a.vertices.iter().zip(&b.vertices) {
        for k in 0..3 {
            assert!((p[k] - q[k]).abs() <= tol, "{p:?} vs {q:?}");
        }
    }
}

#[test]
fn round_trips() {
    let dir = support::scratch("ply_round_trip");
    let mesh = Mesh::icosphere(2, 0.085);
    for fmt in [PlyFormat::Ascii, PlyFormat::BinaryLittleEndian] {
        let path = dir.join(format!("{fmt:?}.ply"));
        write_ply(&path, &mesh, fmt).unwrap();
        // Doubles in millimetres (Rust prints the shortest exact decimal):
        // only the mm ↔ m scaling rounds, a few ulps of 0.085 m.
        assert_close(&mesh, &read_ply(&path).unwrap(), 1e-15);
    }
    let path = dir.join("mesh.off");
    write_off(&path, &mesh).unwrap();
    assert_close(&mesh, &read_off(&path).unwrap(), 1e-15);
}

#[test]
fn reads_hand_written_binary_ply_with_extra_properties() {
    let dir = support::scratch("ply_binary_hand");
    let path = dir.join("hand.ply");
    let mut b = b"ply\nformat binary_little_endian 1.0\ncomment made by hand\n\
element vertex 4\nproperty float x\nproperty float y\nproperty float z\nproperty uchar red\n\
element face 1\nproperty list uchar int vertex_indices\n\
element edge 1\nproperty int vertex1\nproperty int vertex2\nend_header\n"
        .to_vec();
    for (p, red) in [
        ([0f32, 0.0, 0.0], 1u8),
        ([10.0, 0.0, 0.0], 2),
        ([10.0, 10.0, 0.0], 3),
        ([0.0, 10.0, 0.0], 4),
    ] {
        for x in p {
            b.extend_from_slice(&x.to_le_bytes());
        }
        b.push(red);
    }
    // One quad, split into the fan (0 1 2), (0 2 3).
    b.push(4);
    for i in [0i32, 1, 2, 3] {
        b.extend_from_slice(&i.to_le_bytes());
    }
    for i in [0i32, 1] {
        b.extend_from_slice(&i.to_le_bytes());
    }
    std::fs::write(&path, &b).unwrap();
    let m = read_ply(&path).unwrap();
    assert_eq!(m.triangles, vec![[0, 1, 2], [0, 2, 3]]);
    assert_eq!(m.vertices[2], [0.01, 0.01, 0.0]);
    // Cut the file short: a clean error naming the element.
    std::fs::write(&path, &b[..b.len() - 5]).unwrap();
    let e = read_ply(&path).unwrap_err().to_string();
    assert!(e.contains("hand.ply") && e.contains("truncated"), "{e}");
}

#[test]
fn non_finite_coordinates_name_the_vertex_line() {
    let dir = support::scratch("ply_nan");
    let path = dir.join("nan.ply");
    let text = "ply\nformat ascii 1.0\nelement vertex 3\nproperty double x\nproperty double y\n\
property double z\nelement face 1\nproperty list uchar int vertex_indices\nend_header\n\
0 0 0\n1 0 0\n0 nan 0\n3 0 1 2\n";
    std::fs::write(&path, text).unwrap();
    let e = read_ply(&path).unwrap_err().to_string();
    // The header has 9 lines, so the third vertex is on line 12.
    assert!(
        e.contains("nan.ply") && e.contains("vertex 2 (line 12)"),
        "{e}"
    );
    let off = dir.join("nan.off");
    std::fs::write(&off, "OFF\n3 1 0\n0 0 0\n1 0 inf\n0 1 0\n3 0 1 2\n").unwrap();
    let e = read_off(&off).unwrap_err().to_string();
    assert!(
        e.contains("nan.off") && e.contains("vertex 1 (line 4)"),
        "{e}"
    );
}

#[test]
fn bad_files_give_errors_naming_the_file() {
    let dir = support::scratch("ply_bad");
    let cases: [(&str, &str, &str); 6] = [
        ("notply.ply", "hello\n", "not a PLY"),
        ("noend.ply", "ply\nformat ascii 1.0\nelement vertex 1\n", "end_header"),
        (
            "range.ply",
            "ply\nformat ascii 1.0\nelement vertex 3\nproperty float x\nproperty float y\nproperty float z\n\
element face 1\nproperty list uchar int vertex_indices\nend_header\n0 0 0\n1 0 0\n0 1 0\n3 0 1 3\n",
            "face 0 (line 13)",
        ),
        (
            "short.ply",
            "ply\nformat ascii 1.0\nelement vertex 2\nproperty float x\nproperty float y\nproperty float z\nend_header\n0 0 0\n",
            "ends early",
        ),
        ("notoff.off", "PLY\n", "not an OFF"),
        ("trunc.off", "OFF\n3 1 0\n0 0 0\n1 0 0\n", "truncated"),
    ];
    for (name, text, needle) in cases {
        let path = dir.join(name);
        std::fs::write(&path, text).unwrap();
        let e = if name.ends_with(".off") {
            read_off(&path)
        } else {
            read_ply(&path)
        }
        .unwrap_err()
        .to_string();
        assert!(
            e.contains(name) && e.contains(needle),
            "{e} (expected {needle})"
        );
    }
    let e = read_ply(&dir.join("missing.ply")).unwrap_err().to_string();
    assert!(e.contains("missing.ply"), "{e}");
}

#[test]
fn failed_write_leaves_no_temporary_file() {
    let dir = support::scratch("ply_failed_write");
    let target = dir.join("occupied.ply");
    std::fs::create_dir(&target).unwrap();
    std::fs::write(target.join("keep"), b"x").unwrap();
    let mesh = Mesh::icosphere(0, 0.05);
    assert!(write_ply(&target, &mesh, PlyFormat::BinaryLittleEndian).is_err());
    assert!(write_off(&target, &mesh).is_err());
    for entry in std::fs::read_dir(&dir).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        assert!(!name.ends_with(".tmp"), "{name}");
    }
}
