//! NumPy .npy/.npz: round trips, files written by NumPy 2.4.6 (C and
//! Fortran order, f32/f64/i32/i64, bool, unicode strings, savez and
//! savez_compressed), files we write checked by NumPy, and broken files.

use crate::support;
use std::collections::BTreeMap;

use patchwise::io::npy::{
    read_npy, read_npy_f64, read_npy_strings, read_npz, write_npy, write_npy_f64, write_npz,
    NpyArray, NpyData,
};
use patchwise::io::IoError;

fn samples() -> BTreeMap<String, NpyArray> {
    let mut m = BTreeMap::new();
    m.insert(
        "f64".to_string(),
        NpyArray {
            shape: vec![2, 3],
            data: NpyData::F64(vec![0.5, -1.0, 1e300, 2.0, 3.0, -0.0]),
        },
    );
    m.insert(
        "f32".to_string(),
        NpyArray {
            shape: vec![3],
            data: NpyData::F32(vec![1.5, 2.25, -8.0]),
        },
    );
    m.insert(
        "i32".to_string(),
        NpyArray {
            shape: vec![2, 2, 1],
            data: NpyData::I32(vec![-1, 2, i32::MAX, i32::MIN]),
        },
    );
    m.insert(
        "i64".to_string(),
        NpyArray {
            shape: vec![],
            data: NpyData::I64(vec![1 << 40]),
        },
    );
    m
}

#[test]
fn npy_and_npz_round_trip() {
    let dir = support::scratch("npy_round_trip");
    for (name, a) in samples() {
        let path = dir.join(format!("{name}.npy"));
        write_npy(&path, &a).unwrap();
        assert_eq!(read_npy(&path).unwrap(), a);
    }
    let strings = NpyArray {
        shape: vec![2, 2],
        data: NpyData::Str(vec!["Fp1".into(), "".into(), "Ωz".into(), "T8".into()]),
    };
    let path = dir.join("s.npy");
    write_npy(&path, &strings).unwrap();
    assert_eq!(read_npy(&path).unwrap(), strings);
    let path = dir.join("all.npz");
    write_npz(&path, &samples()).unwrap();
    assert_eq!(read_npz(&path).unwrap(), samples());
    let path = dir.join("g.npy");
    write_npy_f64(&path, &[1.0, 2.0, 3.0, 4.0], &[2, 2]).unwrap();
    assert_eq!(
        read_npy_f64(&path).unwrap(),
        (vec![1.0, 2.0, 3.0, 4.0], vec![2, 2])
    );
}

/// NumPy 2.4.6 writes; we read. Values follow formulas both sides compute:
/// a[i, j] = 1.5 (4 i + j) − 2 for a 3×4 array.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn works_like_numpy_writing_files_we_read() {
    let py = support::python::python();
    let dir = support::scratch("npy_numpy_writes");
    let script = r#"
import sys, os, numpy as np
d = sys.argv[1]
a = np.arange(12).reshape(3, 4) * 1.5 - 2
for dt in ["<f4", "<f8", ">f8", "<i4", "<i8"]:
    x = (a * 2).astype(dt)
    np.save(os.path.join(d, f"c_{dt[1:]}_{'be' if dt[0] == '>' else 'le'}.npy"), x)
    np.save(os.path.join(d, f"f_{dt[1:]}_{'be' if dt[0] == '>' else 'le'}.npy"), np.asfortranarray(x))
np.save(os.path.join(d, "u.npy"), np.array([["Fp1", "Cz", "Ωmega"], ["", "T8", "O2"]]))
np.save(os.path.join(d, "uf.npy"), np.asfortranarray(np.array([["a", "bb"], ["ccc", "d"]])))
np.save(os.path.join(d, "b.npy"), np.array([True, False, True]))
np.save(os.path.join(d, "u16.npy"), np.array([1, 65535], dtype=np.uint16))
kw = dict(gain=a, idx=np.array([3, 1, 2], dtype=np.int64), labels=np.array(["Fz", "Pz"]))
np.savez(os.path.join(d, "plain.npz"), **kw)
np.savez_compressed(os.path.join(d, "packed.npz"), **kw)
"#;
    support::python::run(&py, script, &[&dir]);
    let a: Vec<f64> = (0..12).map(|k| 1.5 * f64::from(k) - 2.0).collect();
    for order in ["c", "f"] {
        for dt in ["f4_le", "f8_le", "f8_be", "i4_le", "i8_le"] {
            let path = dir.join(format!("{order}_{dt}.npy"));
            let (v, shape) = read_npy_f64(&path).unwrap();
            assert_eq!(shape, vec![3, 4], "{dt}");
            // Twice the values are whole numbers and halves, exact in every type.
            let expected: Vec<f64> = a.iter().map(|x| 2.0 * x).collect();
            assert_eq!(v, expected, "{order} {dt}");
            let kind = &read_npy(&path).unwrap().data;
            let ok = match dt {
                "f4_le" => matches!(kind, NpyData::F32(_)),
                "i4_le" => matches!(kind, NpyData::I32(_)),
                "i8_le" => matches!(kind, NpyData::I64(_)),
                _ => matches!(kind, NpyData::F64(_)),
            };
            assert!(ok, "{dt}: {kind:?}");
        }
    }
    let (s, shape) = read_npy_strings(&dir.join("u.npy")).unwrap();
    assert_eq!(shape, vec![2, 3]);
    assert_eq!(s, vec!["Fp1", "Cz", "Ωmega", "", "T8", "O2"]);
    let (s, _) = read_npy_strings(&dir.join("uf.npy")).unwrap();
    assert_eq!(s, vec!["a", "bb", "ccc", "d"]);
    assert_eq!(
        read_npy_f64(&dir.join("b.npy")).unwrap().0,
        vec![1.0, 0.0, 1.0]
    );
    assert_eq!(
        read_npy_f64(&dir.join("u16.npy")).unwrap().0,
        vec![1.0, 65535.0]
    );
    for name in ["plain.npz", "packed.npz"] {
        let m = read_npz(&dir.join(name)).unwrap();
        assert_eq!(m.len(), 3);
        assert_eq!(m["gain"].shape, vec![3, 4]);
        assert_eq!(m["gain"].to_f64().unwrap(), a);
        assert_eq!(m["idx"].data, NpyData::I64(vec![3, 1, 2]));
        assert_eq!(
            m["labels"].data,
            NpyData::Str(vec!["Fz".into(), "Pz".into()])
        );
    }
}

/// We write; NumPy 2.4.6 checks dtype, shape and values, and that strings
/// load as `str`.
#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn works_like_numpy_reading_our_files() {
    let py = support::python::python();
    let dir = support::scratch("npy_numpy_reads");
    for (name, a) in samples() {
        write_npy(&dir.join(format!("{name}.npy")), &a).unwrap();
    }
    write_npy(
        &dir.join("s.npy"),
        &NpyArray {
            shape: vec![3],
            data: NpyData::Str(vec!["Fp1".into(), "Ωz".into(), "".into()]),
        },
    )
    .unwrap();
    write_npz(&dir.join("all.npz"), &samples()).unwrap();
    let script = r#"
import sys, os, numpy as np
d = sys.argv[1]
def check(get):
    x = get("f64"); assert x.dtype == np.float64 and x.shape == (2, 3)
    assert x.tolist() == [[0.5, -1.0, 1e300], [2.0, 3.0, -0.0]]
    x = get("f32"); assert x.dtype == np.float32 and x.tolist() == [1.5, 2.25, -8.0]
    x = get("i32"); assert x.dtype == np.int32 and x.shape == (2, 2, 1)
    assert x.ravel().tolist() == [-1, 2, 2**31 - 1, -2**31]
    x = get("i64"); assert x.dtype == np.int64 and x.shape == () and int(x) == 2**40
check(lambda n: np.load(os.path.join(d, n + ".npy")))
z = np.load(os.path.join(d, "all.npz"))
assert sorted(z.files) == ["f32", "f64", "i32", "i64"], z.files
check(lambda n: z[n])
s = np.load(os.path.join(d, "s.npy"))
assert s.dtype.kind == "U" and s.tolist() == ["Fp1", "Ωz", ""]
assert all(type(v) is str for v in s.tolist())
"#;
    support::python::run(&py, script, &[&dir]);
}

#[test]
fn broken_files_give_errors_naming_the_file() {
    let dir = support::scratch("npy_broken");
    let path = dir.join("good.npy");
    write_npy_f64(&path, &[1.0, 2.0, 3.0], &[3]).unwrap();
    let good = std::fs::read(&path).unwrap();
    let mut cases: Vec<(&str, Vec<u8>, &str)> = vec![
        ("empty.npy", vec![], "magic"),
        ("text.npy", b"just some text, not numpy".to_vec(), "magic"),
        ("cut_header.npy", good[..30].to_vec(), "header"),
        ("cut_data.npy", good[..good.len() - 3].to_vec(), "truncated"),
    ];
    let mut bad_descr = good.clone();
    let at = bad_descr.windows(3).position(|w| w == b"<f8").unwrap();
    bad_descr[at..at + 3].copy_from_slice(b"<q9");
    cases.push(("bad_descr.npy", bad_descr, "not supported"));
    let mut bad_shape = good.clone();
    let at = bad_shape.windows(4).position(|w| w == b"(3,)").unwrap();
    bad_shape[at..at + 4].copy_from_slice(b"(x,)");
    cases.push(("bad_shape.npy", bad_shape, "shape"));
    let mut bad_order = good.clone();
    let at = bad_order.windows(5).position(|w| w == b"False").unwrap();
    bad_order[at..at + 5].copy_from_slice(b"Maybe");
    cases.push(("bad_order.npy", bad_order, "fortran_order"));
    for (name, bytes, needle) in cases {
        let p = dir.join(name);
        std::fs::write(&p, bytes).unwrap();
        let e = read_npy(&p).unwrap_err().to_string();
        assert!(
            e.contains(name) && e.contains(needle),
            "{e} (expected {needle})"
        );
    }
    let npz = dir.join("good.npz");
    write_npz(&npz, &samples()).unwrap();
    let bytes = std::fs::read(&npz).unwrap();
    for cut in [0, 10, bytes.len() / 2, bytes.len() - 1] {
        let p = dir.join(format!("cut{cut}.npz"));
        std::fs::write(&p, &bytes[..cut]).unwrap();
        let e = read_npz(&p).unwrap_err().to_string();
        assert!(e.contains(&format!("cut{cut}.npz")), "{e}");
    }
    let e = read_npy(&dir.join("missing.npy")).unwrap_err();
    assert!(matches!(e, IoError::File { .. }) && e.to_string().contains("missing.npy"));
}

#[test]
fn refused_writes_leave_nothing_behind() {
    let dir = support::scratch("npy_refused");
    let mut m = samples();
    m.insert(
        "labels".to_string(),
        NpyArray {
            shape: vec![1],
            data: NpyData::Str(vec!["Cz".into()]),
        },
    );
    let path = dir.join("with_strings.npz");
    let e = write_npz(&path, &m).unwrap_err();
    assert!(matches!(e, IoError::Unsupported { .. }), "{e}");
    let e = write_npy_f64(&dir.join("bad.npy"), &[1.0, 2.0], &[3]).unwrap_err();
    assert!(e.to_string().contains("bad.npy"), "{e}");
    let target = dir.join("occupied.npy");
    std::fs::create_dir(&target).unwrap();
    std::fs::write(target.join("keep"), b"x").unwrap();
    assert!(write_npy_f64(&target, &[1.0], &[1]).is_err());
    let names: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["occupied.npy"], "{names:?}");
}
