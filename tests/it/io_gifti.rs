//! GIFTI surfaces and labels: round trips in every encoding and layout,
//! files encoded independently (by hand and by NumPy 2.4.6), and bad inputs.

use crate::support;
use std::path::Path;

use patchwise::geometry::Mesh;
use patchwise::io::gifti::{
    read_gifti, read_gifti_labels, read_gifti_surface, write_gifti_labels, write_gifti_surface,
    write_gifti_surface_with, GiftiDataType, GiftiEncoding, GiftiLayout,
};
use patchwise::io::IoError;

const ENCODINGS: [GiftiEncoding; 3] = [
    GiftiEncoding::Ascii,
    GiftiEncoding::Base64Binary,
    GiftiEncoding::GZipBase64Binary,
];

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
fn surface_round_trip_in_every_encoding() {
    let dir = support::scratch("gifti_round_trip");
    let mesh = Mesh::icosphere(2, 0.09);
    for enc in ENCODINGS {
        let path = dir.join(format!("{enc:?}.surf.gii"));
        write_gifti_surface(&path, &mesh, enc).unwrap();
        let back = read_gifti_surface(&path).unwrap();
        // Positions are stored as float32 millimetres: relative rounding
        // 2^-24 (IEEE 754 single precision), so at most 90 mm · 2^-24 ≈ 5.4e-6 mm.
        assert_close(&mesh, &back, 90.0 * 2f64.powi(-24) * 1e-3);
    }
}

#[test]
fn every_layout_reads_back_exactly() {
    let dir = support::scratch("gifti_layouts");
    let mesh = Mesh::icosphere(1, 0.08);
    for enc in ENCODINGS {
        for column_major in [false, true] {
            for big_endian in [false, true] {
                let points = GiftiLayout {
                    encoding: enc,
                    data_type: GiftiDataType::Float64,
                    column_major,
                    big_endian,
                };
                let tris = GiftiLayout {
                    encoding: enc,
                    data_type: GiftiDataType::Int32,
                    column_major,
                    big_endian,
                };
                let path = dir.join(format!("{enc:?}_{column_major}_{big_endian}.gii"));
                write_gifti_surface_with(&path, &mesh, points, tris).unwrap();
                let back = read_gifti_surface(&path).unwrap();
                // Float64 in millimetres: the only loss is the mm ↔ m scaling,
                // a few ulps of 0.08 m.
                assert_close(&mesh, &back, 1e-15);
            }
        }
    }
}

/// A file written by hand: an ASCII column-major point set (values listed
/// first index fastest, as the GIFTI 1.0 standard defines ColumnMajorOrder)
/// and UINT8 triangles encoded as Base64 of the bytes 0 1 2 0 2 3.
#[test]
fn reads_hand_written_column_major_file() {
    let dir = support::scratch("gifti_hand");
    let path = dir.join("hand.surf.gii");
    // Points (mm): (0,0,0), (10,0,0), (0,10,0), (0,0,10), listed column by column.
    let xml = r#"<?xml version="1.0" encoding="UTF-8"?>
<GIFTI Version="1.0" NumberOfDataArrays="2">
 <MetaData><MD><Name><![CDATA[note]]></Name><Value><![CDATA[1 2 3]]></Value></MD></MetaData>
 <LabelTable/>
 <DataArray Intent="NIFTI_INTENT_POINTSET" DataType="NIFTI_TYPE_FLOAT32" ArrayIndexingOrder="ColumnMajorOrder"
   Dimensionality="2" Dim0="4" Dim1="3" Encoding="ASCII" Endian="LittleEndian" ExternalFileName="" ExternalFileOffset="">
  <CoordinateSystemTransformMatrix><DataSpace>NIFTI_XFORM_TALAIRACH</DataSpace>
   <TransformedSpace>NIFTI_XFORM_TALAIRACH</TransformedSpace>
   <MatrixData>1 0 0 0 0 1 0 0 0 0 1 0 0 0 0 1</MatrixData></CoordinateSystemTransformMatrix>
  <Data>0 10 0 0
        0 0 10 0
        0 0 0 10</Data>
 </DataArray>
 <DataArray Intent="NIFTI_INTENT_TRIANGLE" DataType="NIFTI_TYPE_UINT8" ArrayIndexingOrder="RowMajorOrder"
   Dimensionality="2" Dim0="2" Dim1="3" Encoding="Base64Binary" Endian="LittleEndian" ExternalFileName="" ExternalFileOffset="">
  <Data>AAECAAID</Data>
 </DataArray>
</GIFTI>"#;
    std::fs::write(&path, xml).unwrap();
    let m = read_gifti_surface(&path).unwrap();
    assert_eq!(
        m.vertices,
        vec![
            [0.0; 3],
            [0.01, 0.0, 0.0],
            [0.0, 0.01, 0.0],
            [0.0, 0.0, 0.01]
        ]
    );
    assert_eq!(m.triangles, vec![[0, 1, 2], [0, 2, 3]]);
    let g = read_gifti(&path).unwrap();
    assert_eq!(g.arrays.len(), 2);
}

#[test]
fn labels_round_trip_and_unlabelled_vertices() {
    let dir = support::scratch("gifti_labels");
    let names: Vec<String> = ["frontal", "occipital & <parietal>"]
        .map(String::from)
        .to_vec();
    let indices = vec![0, -1, 1, 1, 0, -1];
    for enc in ENCODINGS {
        let path = dir.join(format!("{enc:?}.label.gii"));
        write_gifti_labels(&path, &indices, &names, enc).unwrap();
        let (back, back_names) = read_gifti_labels(&path).unwrap();
        assert_eq!(back, indices);
        assert_eq!(back_names, names);
    }
    let bad = write_gifti_labels(&dir.join("bad.label.gii"), &[0, 2], &names, ENCODINGS[0]);
    assert!(bad.unwrap_err().to_string().contains("vertex 1"));
}

/// Issue 18, item 13: the reader refuses a LabelTable that gives one name to
/// two keys, so the writer must not make one (and leaves no file).
#[test]
fn writing_duplicate_region_names_is_refused() {
    let dir = support::scratch("gifti_label_duplicates");
    let names: Vec<String> = ["frontal", "occipital", "frontal"]
        .map(String::from)
        .to_vec();
    let path = dir.join("dup.label.gii");
    let _ = std::fs::remove_file(&path);
    let err = write_gifti_labels(&path, &[0, 1, 2, -1], &names, ENCODINGS[0]).unwrap_err();
    let text = err.to_string();
    assert!(
        text.contains("\"frontal\"") && text.contains("regions 0 and 2"),
        "{text}"
    );
    assert!(!path.exists(), "no file is written");
    let left: Vec<_> = std::fs::read_dir(&dir).unwrap().flatten().collect();
    assert!(left.is_empty(), "nothing left in {}", dir.display());
}

/// NumPy 2.4.6 encodes the arrays (tobytes, zlib, base64 from the Python
/// standard library): big-endian float32 column-major gzip points, int32
/// triangles, and a label array with a LabelTable whose key 0 is "???".
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn reads_file_encoded_by_numpy() {
    let py = support::python::python();
    let dir = support::scratch("gifti_numpy");
    let surf = dir.join("np.surf.gii");
    let labels = dir.join("np.label.gii");
    let script = r#"
import sys, base64, zlib, numpy as np
pts = np.array([[1.5, 2.0, -3.0], [4.0, 5.25, 6.0], [-7.0, 8.0, 9.5]], dtype=">f4")
tri = np.array([[0, 1, 2]], dtype="<i4")
def arr(intent, dtype, order, endian, dims, data, enc="GZipBase64Binary"):
    d = " ".join(f'Dim{i}="{n}"' for i, n in enumerate(dims))
    return (f'<DataArray Intent="{intent}" DataType="{dtype}" ArrayIndexingOrder="{order}" '
            f'Dimensionality="{len(dims)}" {d} Encoding="{enc}" Endian="{endian}" ExternalFileName="">'
            f'<Data>{data}</Data></DataArray>')
p = base64.b64encode(zlib.compress(pts.tobytes(order="F"))).decode()
t = base64.b64encode(tri.tobytes()).decode()
doc = ('<?xml version="1.0"?><GIFTI Version="1.0" NumberOfDataArrays="2">'
       + arr("NIFTI_INTENT_POINTSET", "NIFTI_TYPE_FLOAT32", "ColumnMajorOrder", "BigEndian", pts.shape, p)
       + arr("NIFTI_INTENT_TRIANGLE", "NIFTI_TYPE_INT32", "RowMajorOrder", "LittleEndian", tri.shape, t, "Base64Binary")
       + "</GIFTI>")
open(sys.argv[1], "w").write(doc)
lab = np.array([0, 5, 9, 5], dtype="<i4")
l = base64.b64encode(zlib.compress(lab.tobytes())).decode()
doc = ('<?xml version="1.0"?><GIFTI Version="1.0" NumberOfDataArrays="1"><LabelTable>'
       '<Label Key="0" Red="1" Green="1" Blue="1" Alpha="0"><![CDATA[???]]></Label>'
       '<Label Key="9" Red="0" Green="1" Blue="0" Alpha="1"><![CDATA[temporal]]></Label>'
       '<Label Key="5" Red="1" Green="0" Blue="0" Alpha="1"><![CDATA[frontal]]></Label>'
       '</LabelTable>' + arr("NIFTI_INTENT_LABEL", "NIFTI_TYPE_INT32", "RowMajorOrder", "LittleEndian", lab.shape, l)
       + "</GIFTI>")
open(sys.argv[2], "w").write(doc)
"#;
    support::python::run(&py, script, &[&surf, &labels]);
    let m = read_gifti_surface(&surf).unwrap();
    // The values are exact in float32; only the mm → m scaling rounds.
    let expected = [[1.5, 2.0, -3.0], [4.0, 5.25, 6.0], [-7.0, 8.0, 9.5]];
    for (p, e) in m.vertices.iter().zip(expected) {
        for k in 0..3 {
            assert!((p[k] - e[k] * 1e-3).abs() < 1e-18);
        }
    }
    assert_eq!(m.triangles, vec![[0, 1, 2]]);
    let (idx, names) = read_gifti_labels(&labels).unwrap();
    assert_eq!(names, vec!["frontal", "temporal"]);
    assert_eq!(idx, vec![-1, 0, 1, 0]);
}

fn one_array(intent: &str, enc: &str, dims: &str, data: &str) -> String {
    format!(
        r#"<?xml version="1.0"?><GIFTI Version="1.0" NumberOfDataArrays="2">
<DataArray Intent="NIFTI_INTENT_POINTSET" DataType="NIFTI_TYPE_FLOAT32" Dimensionality="2" Dim0="3" Dim1="3" Encoding="ASCII">
<Data>0 0 0 1 0 0 0 1 0</Data></DataArray>
<DataArray Intent="{intent}" DataType="NIFTI_TYPE_INT32" Dimensionality="2" {dims} Encoding="{enc}" Endian="LittleEndian">
<Data>{data}</Data></DataArray></GIFTI>"#
    )
}

fn expect_error(path: &Path, text: &str, needles: &[&str]) {
    std::fs::write(path, text).unwrap();
    let e = read_gifti_surface(path).unwrap_err();
    let msg = e.to_string();
    let name = path.file_name().unwrap().to_string_lossy().into_owned();
    assert!(msg.contains(&name), "{msg}");
    for n in needles {
        assert!(msg.contains(n), "{msg} lacks {n}");
    }
}

#[test]
fn bad_files_name_the_file_and_the_array() {
    let dir = support::scratch("gifti_bad");
    expect_error(&dir.join("notxml.gii"), "this is not XML <<<", &[]);
    expect_error(&dir.join("html.gii"), "<html><body/></html>", &["GIFTI"]);
    expect_error(
        &dir.join("unclosed.gii"),
        r#"<GIFTI Version="1.0"><DataArray Intent="x">"#,
        &[],
    );
    let dims = r#"Dim0="1" Dim1="3""#;
    expect_error(
        &dir.join("encoding.gii"),
        &one_array("NIFTI_INTENT_TRIANGLE", "Base65", dims, "0 1 2"),
        &["DataArray 1", "encoding"],
    );
    expect_error(
        &dir.join("base64.gii"),
        &one_array(
            "NIFTI_INTENT_TRIANGLE",
            "Base64Binary",
            dims,
            "!!!not base64",
        ),
        &["DataArray 1", "Base64"],
    );
    expect_error(
        &dir.join("gzip.gii"),
        &one_array(
            "NIFTI_INTENT_TRIANGLE",
            "GZipBase64Binary",
            dims,
            "AAECAAID",
        ),
        &["DataArray 1", "decompress"],
    );
    // 8 bytes where 1×3 int32 needs 12.
    expect_error(
        &dir.join("truncated.gii"),
        &one_array(
            "NIFTI_INTENT_TRIANGLE",
            "Base64Binary",
            dims,
            "AAAAAAEAAAA=",
        ),
        &["DataArray 1", "truncated", "12"],
    );
    expect_error(
        &dir.join("truncated_ascii.gii"),
        &one_array("NIFTI_INTENT_TRIANGLE", "ASCII", dims, "0 1"),
        &["DataArray 1", "truncated"],
    );
    expect_error(
        &dir.join("intent.gii"),
        &one_array("NIFTI_INTENT_LABEL", "ASCII", dims, "0 1 2"),
        &[
            "NIFTI_INTENT_TRIANGLE",
            "DataArray 1 has intent NIFTI_INTENT_LABEL",
        ],
    );
    expect_error(
        &dir.join("range.gii"),
        &one_array("NIFTI_INTENT_TRIANGLE", "ASCII", dims, "0 1 3"),
        &["DataArray 1 triangle 0", "out of range"],
    );
    let missing = read_gifti_surface(&dir.join("missing.gii")).unwrap_err();
    assert!(matches!(missing, IoError::File { .. }));
    assert!(missing.to_string().contains("missing.gii"));
}

#[test]
fn failed_write_leaves_no_temporary_file() {
    let dir = support::scratch("gifti_failed_write");
    let target = dir.join("occupied.gii");
    std::fs::create_dir(&target).unwrap();
    std::fs::write(target.join("keep"), b"x").unwrap();
    let mesh = Mesh::icosphere(0, 0.05);
    let e = write_gifti_surface(&target, &mesh, GiftiEncoding::Ascii).unwrap_err();
    assert!(e.to_string().contains("occupied.gii"), "{e}");
    for entry in std::fs::read_dir(&dir).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        assert!(!name.ends_with(".tmp"), "{name}");
    }
    let mut bad = mesh.clone();
    bad.vertices[3][1] = f64::NAN;
    let e = write_gifti_surface(&dir.join("nan.gii"), &bad, GiftiEncoding::Ascii).unwrap_err();
    assert!(e.to_string().contains("vertex 3"), "{e}");
    assert!(!dir.join("nan.gii").exists());
}
