//! HDF5 store: round trips, bad files, atomic writes, and interoperability
//! with h5py 3.16.0 / NumPy 2.4.6 (tests/reference/requirements.txt).

use crate::support;
use std::path::Path;

use patchwise::io::{Array, Attr, Dataset, IoError, Store};

fn sample_store() -> Store {
    let mut s = Store::new();
    s.insert(
        "/leadfield/gain",
        Dataset::f64(vec![2, 3], vec![1.5, -2.0, 3.25, 1e-300, 0.0, -7.0]),
    );
    s.insert("/sources/region", Dataset::i64(vec![4], vec![0, 1, -1, 7]));
    s.insert(
        "/montage/labels",
        Dataset::strings(vec!["Fp1".into(), "Cz".into(), "Ωmega".into()]),
    );
    s.insert("/fit/lambda", Dataset::f64(vec![], vec![0.125]));
    s.insert("/fit/empty", Dataset::f64(vec![0, 3], vec![]));
    s.insert("/fit/empty_int", Dataset::i64(vec![0], vec![]));
    s.insert("/fit/no_labels", Dataset::strings(vec![]));
    s.insert(
        "/grid/names",
        Dataset {
            shape: vec![2, 2],
            data: Array::Str(vec!["a".into(), "b".into(), "c".into(), "d".into()]),
            attrs: Default::default(),
            stored: Default::default(),
        },
    );
    s.insert(
        "/leadfield/gain_xyz",
        Dataset::f64(vec![1, 2, 3], (0..6).map(f64::from).collect()),
    );
    let mut ds = Dataset::i64(vec![2, 2], vec![1, 2, 3, 4]);
    ds.attrs.insert("unit".into(), Attr::Str("V/(A·m)".into()));
    ds.attrs.insert("scale".into(), Attr::F64(2.5));
    s.insert("/a/b/c/deep", ds);
    s.set_group_attr("/", "source_hash", Attr::Str("abc123".into()));
    s.set_group_attr("/leadfield", "reference", Attr::Str("average".into()));
    s.set_group_attr("/leadfield", "n", Attr::I64(42));
    s.set_group_attr(
        "/leadfield",
        "radii_mm",
        Attr::F64Array(vec![80.0, 85.0, 92.0]),
    );
    s.set_group_attr("/leadfield", "ids", Attr::I64Array(vec![3, 4]));
    s.set_group_attr(
        "/leadfield",
        "names",
        Attr::StrArray(vec!["x".into(), "y".into()]),
    );
    s
}

fn no_temporaries(dir: &Path) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let name = entry.unwrap().file_name().to_string_lossy().into_owned();
        assert!(
            !name.ends_with(".tmp"),
            "temporary file left behind: {name}"
        );
    }
}

#[test]
fn round_trip_keeps_every_dataset_and_attribute() {
    let dir = support::scratch("hdf5_round_trip");
    let path = dir.join("store.h5");
    let store = sample_store();
    store.write_atomic(&path).unwrap();
    no_temporaries(&dir);
    let back = Store::read(&path).unwrap();
    assert_eq!(back, store);
}

#[test]
fn missing_file_names_the_path() {
    let path = Path::new("/nonexistent/dir/leadfield.h5");
    let err = Store::read(path).unwrap_err();
    assert!(matches!(err, IoError::File { .. }));
    assert!(
        err.to_string().contains("/nonexistent/dir/leadfield.h5"),
        "{err}"
    );
}

#[test]
fn truncated_and_garbage_files_give_clean_errors() {
    let dir = support::scratch("hdf5_truncated");
    let path = dir.join("full.h5");
    sample_store().write_atomic(&path).unwrap();
    let bytes = std::fs::read(&path).unwrap();
    // Cut at many places, including inside the superblock and the heaps.
    let step = (bytes.len() / 40).max(1);
    for cut in (0..bytes.len()).step_by(step) {
        let bad = dir.join(format!("cut{cut}.h5"));
        std::fs::write(&bad, &bytes[..cut]).unwrap();
        let e = Store::read(&bad).unwrap_err();
        assert!(matches!(e, IoError::Hdf5 { .. }), "{e}");
        assert!(e.to_string().contains(&format!("cut{cut}.h5")), "{e}");
    }
    let junk = dir.join("junk.h5");
    std::fs::write(&junk, b"this is not an HDF5 file at all").unwrap();
    let e = Store::read(&junk).unwrap_err();
    assert!(e.to_string().contains("junk.h5"), "{e}");
}

#[test]
fn failed_write_leaves_no_temporary_file() {
    let dir = support::scratch("hdf5_failed_write");
    // The target is a directory, so the final rename fails.
    let target = dir.join("occupied.h5");
    std::fs::create_dir(&target).unwrap();
    std::fs::write(target.join("keep"), b"x").unwrap();
    let err = sample_store().write_atomic(&target).unwrap_err();
    assert!(err.to_string().contains("occupied.h5"), "{err}");
    no_temporaries(&dir);
    // A store whose shape disagrees with its values is refused before writing.
    let mut bad = Store::new();
    bad.insert("/x", Dataset::f64(vec![2, 2], vec![1.0]));
    let path = dir.join("bad.h5");
    let err = bad.write_atomic(&path).unwrap_err();
    assert!(err.to_string().contains("/x"), "{err}");
    assert!(!path.exists());
    no_temporaries(&dir);
}

#[test]
fn accessors_check_shapes_and_values() {
    let dir = support::scratch("hdf5_accessors");
    let path = dir.join("dictionary.h5");
    let mut s = Store::new();
    s.insert(
        "/dictionary/group",
        Dataset::i64(vec![5], vec![0, 0, 1, 1, 2]),
    );
    s.insert("/dictionary/atoms", Dataset::f64(vec![2, 5], vec![1.0; 10]));
    s.insert("/bad", Dataset::f64(vec![3], vec![1.0, f64::NAN, 2.0]));
    s.write_atomic(&path).unwrap();
    let s = Store::read(&path).unwrap();
    assert_eq!(
        s.i64s(&path, "/dictionary/group", Some(5)).unwrap(),
        vec![0, 0, 1, 1, 2]
    );
    let e = s.i64s(&path, "/dictionary/group", Some(7)).unwrap_err();
    let msg = e.to_string();
    assert!(
        msg.contains("dictionary.h5") && msg.contains("/dictionary/group"),
        "{msg}"
    );
    assert!(msg.contains("[5]") && msg.contains("[7]"), "{msg}");
    let (v, r, c) = s
        .f64_matrix(&path, "/dictionary/atoms", Some(2), None)
        .unwrap();
    assert_eq!((v.len(), r, c), (10, 2, 5));
    assert!(s
        .f64_matrix(&path, "/dictionary/atoms", None, Some(4))
        .is_err());
    let e = s.f64s(&path, "/bad", None).unwrap_err();
    assert!(e.to_string().contains("/bad element 1"), "{e}");
    let e = s.strings(&path, "/dictionary/group", None).unwrap_err();
    assert!(e.to_string().contains("strings"), "{e}");
    let e = s.f64s(&path, "/nope", None).unwrap_err();
    assert!(matches!(e, IoError::MissingDataset { .. }), "{e}");
    let e = s.attr_str(&path, "/dictionary/atoms", "unit").unwrap_err();
    assert!(e.to_string().contains("unit"), "{e}");
}

/// h5py 3.16.0 reads what we write: shapes, dtypes, values, and string
/// attributes and datasets come back as `str` (vlen UTF-8), not bytes.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn works_like_h5py_reading_our_file() {
    let py = support::python::python();
    let dir = support::scratch("hdf5_h5py_reads");
    let path = dir.join("ours.h5");
    sample_store().write_atomic(&path).unwrap();
    let script = r#"
import sys, h5py, numpy as np
f = h5py.File(sys.argv[1], "r")
g = f["/leadfield/gain"]
assert g.shape == (2, 3) and g.dtype == np.float64, (g.shape, g.dtype)
assert np.array_equal(g[()], np.array([[1.5, -2.0, 3.25], [1e-300, 0.0, -7.0]]))
r = f["/sources/region"]
assert r.dtype == np.int64 and list(r[()]) == [0, 1, -1, 7]
labels = list(f["/montage/labels"].asstr()[()])
assert labels == ["Fp1", "Cz", "Ωmega"], labels
assert h5py.check_string_dtype(f["/montage/labels"].dtype).length is None
assert f["/fit/lambda"].shape == () and f["/fit/lambda"][()] == 0.125
assert f["/fit/empty"].shape == (0, 3)
assert f["/fit/empty_int"].shape == (0,) and f["/fit/empty_int"].dtype == np.int64
assert f["/fit/no_labels"].shape == (0,)
assert f["/grid/names"].asstr()[()].tolist() == [["a", "b"], ["c", "d"]]
assert f["/leadfield/gain_xyz"].shape == (1, 2, 3)
d = f["/a/b/c/deep"]
assert d.attrs["unit"] == "V/(A·m)" and type(d.attrs["unit"]) is str, repr(d.attrs["unit"])
assert d.attrs["scale"] == 2.5
assert type(f.attrs["source_hash"]) is str and f.attrs["source_hash"] == "abc123"
lf = f["/leadfield"].attrs
assert type(lf["reference"]) is str and lf["reference"] == "average"
assert lf["n"] == 42
assert list(lf["radii_mm"]) == [80.0, 85.0, 92.0]
assert list(lf["ids"]) == [3, 4]
assert [str(x) for x in lf["names"]] == ["x", "y"]
"#;
    support::python::run(&py, script, &[&path]);
}

/// We read what h5py 3.16.0 writes: float32/int32/uint8/uint64 datasets,
/// vlen and fixed-length strings, attributes of several kinds.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn works_like_h5py_writing_a_file_we_read() {
    let py = support::python::python();
    let dir = support::scratch("hdf5_h5py_writes");
    let path = dir.join("theirs.h5");
    let script = r#"
import sys, h5py, numpy as np
with h5py.File(sys.argv[1], "w") as f:
    f["f32"] = np.array([[1.5, 2.5], [3.5, -4.0]], dtype=np.float32)
    f["grp/i32"] = np.array([-3, 0, 9], dtype=np.int32)
    f["grp/u8"] = np.array([0, 255], dtype=np.uint8)
    f["grp/u64"] = np.array([2**40], dtype=np.uint64)
    f["f64_3d"] = np.arange(24, dtype=np.float64).reshape(2, 3, 4)
    f.create_dataset("vlen", data=["alpha", "βeta"], dtype=h5py.string_dtype())
    f.create_dataset("fixed", data=np.array([b"ab", b"cde"], dtype="S3"))
    f.attrs["title"] = "made by h5py"
    f.attrs["count"] = np.int32(5)
    f.attrs["ratio"] = 0.75
    f.attrs["fixed_attr"] = np.bytes_(b"fix")
    f["grp"].attrs["arr"] = np.array([1.0, 2.0])
    f.create_dataset("packed", data=np.arange(1000, dtype=np.float64).reshape(100, 10),
                     chunks=(10, 10), compression="gzip", shuffle=True)
    f["scalar"] = 3.5
    f["scalar_str"] = "one string"
"#;
    support::python::run(&py, script, &[&path]);
    let s = Store::read(&path).unwrap();
    // The C library's layout (version-0 superblock, symbol-table groups, B-trees)
    // cut short anywhere also gives a clean error.
    let bytes = std::fs::read(&path).unwrap();
    for k in 1..60 {
        let cut = bytes.len() * k / 60;
        let bad = dir.join(format!("theirs_cut{cut}.h5"));
        std::fs::write(&bad, &bytes[..cut]).unwrap();
        let e = Store::read(&bad).unwrap_err();
        assert!(
            e.to_string().contains(&format!("theirs_cut{cut}.h5")),
            "{e}"
        );
    }
    let (v, r, c) = s.f64_matrix(&path, "/f32", Some(2), Some(2)).unwrap();
    assert_eq!((v, r, c), (vec![1.5, 2.5, 3.5, -4.0], 2, 2));
    assert_eq!(s.i64s(&path, "/grp/i32", Some(3)).unwrap(), vec![-3, 0, 9]);
    assert_eq!(s.i64s(&path, "/grp/u8", None).unwrap(), vec![0, 255]);
    assert_eq!(s.i64s(&path, "/grp/u64", None).unwrap(), vec![1 << 40]);
    let (v, shape) = s.f64_array(&path, "/f64_3d").unwrap();
    assert_eq!(shape, vec![2, 3, 4]);
    assert_eq!(v, (0..24).map(f64::from).collect::<Vec<_>>());
    assert_eq!(
        s.strings(&path, "/vlen", None).unwrap(),
        vec!["alpha", "βeta"]
    );
    assert_eq!(s.strings(&path, "/fixed", None).unwrap(), vec!["ab", "cde"]);
    assert_eq!(s.attr_str(&path, "/", "title").unwrap(), "made by h5py");
    assert_eq!(s.attr_f64(&path, "/", "count").unwrap(), 5.0);
    assert_eq!(s.attr_f64(&path, "/", "ratio").unwrap(), 0.75);
    assert_eq!(s.attr_str(&path, "/", "fixed_attr").unwrap(), "fix");
    let (v, r, c) = s.f64_matrix(&path, "/packed", Some(100), Some(10)).unwrap();
    assert_eq!((r, c), (100, 10));
    assert_eq!(v, (0..1000).map(f64::from).collect::<Vec<_>>());
    assert_eq!(s.f64_scalar(&path, "/scalar").unwrap(), 3.5);
    assert_eq!(
        s.datasets["/scalar_str"].data,
        Array::Str(vec!["one string".into()])
    );
    assert_eq!(
        s.attr(&path, "/grp", "arr").unwrap(),
        &Attr::F64Array(vec![1.0, 2.0])
    );
}

/// A file laid out the way MATLAB v7.3 writes one (from memory of the
/// MAT-file v7.3 convention, no source): a 512-byte user block starting with
/// the MAT-file text header, a char array as uint16 with attribute
/// MATLAB_class = "char", and numeric m×n matrices stored transposed (n×m).
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn reads_matlab_style_user_block_file() {
    let py = support::python::python();
    let dir = support::scratch("hdf5_matlab");
    let path = dir.join("matlab.mat");
    let script = r#"
import sys, h5py, numpy as np
path = sys.argv[1]
with h5py.File(path, "w", userblock_size=512) as f:
    gain = np.array([[1.0, 2.0, 3.0], [4.0, 5.0, 6.0]])  # MATLAB's 2x3
    d = f.create_dataset("gain", data=gain.T)
    d.attrs["MATLAB_class"] = np.bytes_(b"double")
    labels = np.array([[ord(c) for c in "Fp1"], [ord(c) for c in "Cz "]], dtype=np.uint16)
    c = f.create_dataset("labels", data=labels.T)  # MATLAB's 2x3 char matrix
    c.attrs["MATLAB_class"] = np.bytes_(b"char")
    v = f.create_dataset("group", data=np.array([[1.0, 2.0, 2.0]]).T)  # MATLAB 1x3 row vector
    v.attrs["MATLAB_class"] = np.bytes_(b"double")
header = b"MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Mon Jan  1 00:00:00 2024 HDF5 schema 1.00 ."
with open(path, "r+b") as fh:
    fh.write(header.ljust(116, b" ") + b"\x00" * 8 + b"\x00\x02IM")
"#;
    support::python::run(&py, script, &[&path]);
    assert!(Store::is_matlab_file(&path).unwrap());
    let s = Store::read(&path).unwrap();
    let (v, r, c) = s.f64_matrix(&path, "/gain", Some(2), Some(3)).unwrap();
    assert_eq!((r, c), (2, 3));
    assert_eq!(v, vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0]);
    assert_eq!(
        s.strings(&path, "/labels", Some(2)).unwrap(),
        vec!["Fp1", "Cz"]
    );
    assert_eq!(s.i64s(&path, "/group", Some(3)).unwrap(), vec![1, 2, 2]);
    // The raw store keeps HDF5's own shape.
    assert_eq!(s.datasets["/gain"].shape, vec![3, 2]);
    assert!(matches!(s.datasets["/labels"].data, Array::I64(_)));
}

/// Narrowed datasets (the cached dictionary's 32-bit atoms and 16- or
/// 32-bit profile indices) read back as the values written: f32 rounding
/// is exact on values already rounded (IEEE 754-2008, binary32 ⊂ binary64),
/// and an index that does not fit its width is refused, not wrapped.
#[test]
fn narrowed_datasets_read_back_exactly() {
    let dir = crate::support::scratch("io_hdf5_narrowed");
    let path = dir.join("narrow.h5");
    let floats: Vec<f64> = (0..50)
        .map(|i| (f64::from(i) * 0.37).sin() * 1e-7)
        .collect();
    let mut s = Store::new();
    s.insert("/a", Dataset::f64_as_f32(vec![5, 10], &floats));
    s.insert(
        "/small",
        Dataset::index_array(vec![3], vec![0, 7, 65_535], 65_536),
    );
    s.insert(
        "/large",
        Dataset::index_array(vec![2], vec![0, 70_000], 70_001),
    );
    s.write_atomic(&path).unwrap();
    let r = Store::read(&path).unwrap();
    let rounded: Vec<f64> = floats.iter().map(|&v| v as f32 as f64).collect();
    assert_eq!(r.datasets["/a"].data, Array::F64(rounded));
    assert_eq!(r.datasets["/small"].data, Array::I64(vec![0, 7, 65_535]));
    assert_eq!(r.datasets["/large"].data, Array::I64(vec![0, 70_000]));
    let mut bad = Store::new();
    bad.insert("/i", Dataset::index_array(vec![1], vec![65_536], 65_536));
    assert!(bad.write_atomic(&dir.join("bad.h5")).is_err());
    assert!(!dir.join("bad.h5").exists());
}
