//! Issue 22, item 5: MATLAB decoders as MATLAB saves them. A v7.3 file
//! whose labels are cell arrays of char (object references into `#refs#`)
//! is read, component names included; an older v5 MAT-file is refused with
//! the advice to save with -v7.3. The files are written by h5py and SciPy
//! (tests/reference/requirements.txt) in the layouts MATLAB uses (from
//! memory of the MAT-file v7.3 convention, no source: a 512-byte user block
//! with the text header, `MATLAB_class` on every variable, matrices stored
//! transposed, each cell a dataset under `#refs#` named by an object
//! reference; an empty char stored as its dimensions with `MATLAB_empty`).

use crate::support;
use crate::support::cli::patchwise;

fn stderr(o: &std::process::Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// The 10-20 labels, in the montage's order.
fn labels() -> Vec<String> {
    patchwise::montage::standard("10-20", 0.09).unwrap().labels
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn cell_arrays_of_char_in_a_v73_file_are_read() {
    let py = support::python::python();
    let dir = support::scratch("first-hour-matlab");
    let script = r##"
import sys, h5py, numpy as np
path, labels = sys.argv[1], sys.argv[2].split(",")
names = ["left hand", "right hand"]
def char(group, name, text):
    d = group.create_dataset(name, data=np.array([[ord(c) for c in text]], dtype=np.uint16).T)
    d.attrs["MATLAB_class"] = np.bytes_(b"char")
    d.attrs["MATLAB_int_decode"] = np.int32(2)
    return d
def cell(f, name, texts, row):
    refs = f.require_group("#refs#")
    members = [char(refs, f"{name}_{i}", t).ref for i, t in enumerate(texts)]
    # MATLAB's 1xn cell is stored with HDF5 shape (n, 1); an nx1 cell as (1, n).
    data = np.array(members, dtype=h5py.ref_dtype).reshape((-1, 1) if row else (1, -1))
    d = f.create_dataset(name, data=data)
    d.attrs["MATLAB_class"] = np.bytes_(b"cell")
n = len(labels)
rng = np.random.default_rng(7)
with h5py.File(path, "w", userblock_size=512) as f:
    cell(f, "channels", labels, row=True)
    cell(f, "component_names", names, row=False)
    p = f.create_dataset("patterns", data=rng.standard_normal((n, 2)).T)  # MATLAB's n x 2
    p.attrs["MATLAB_class"] = np.bytes_(b"double")
header = b"MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Mon Jan  1 00:00:00 2024 HDF5 schema 1.00 ."
with open(path, "r+b") as fh:
    fh.write(header.ljust(116, b" ") + b"\x00" * 8 + b"\x00\x02IM")
"##;
    let path = dir.join("decoder.mat");
    let joined = labels().join(",");
    support::python::run(&py, script, &[&path, std::path::Path::new(&joined)]);

    let store = patchwise::io::Store::read(&path).unwrap();
    assert_eq!(store.strings(&path, "/channels", None).unwrap(), labels());
    assert_eq!(
        store.strings(&path, "/component_names", Some(2)).unwrap(),
        vec!["left hand", "right hand"]
    );

    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "decoder.mat",
            "--montage",
            "10-20",
            "--sources",
            "template-5k",
            "--resamples",
            "0",
            "--no-report",
            "--out",
            "r",
        ],
        &dir,
    );
    assert!(o.status.success(), "{}", stderr(&o));
    let regions = std::fs::read_to_string(dir.join("r/regions.csv")).unwrap();
    assert!(regions.contains(",left hand"), "{regions}");
    assert!(regions.contains(",right hand"), "{regions}");
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn a_v5_mat_file_is_refused_with_the_v73_advice() {
    let py = support::python::python();
    let dir = support::scratch("first-hour-matlab-v5");
    let script = r#"
import sys, numpy as np, scipy.io
labels = sys.argv[2].split(",")
scipy.io.savemat(sys.argv[1], {"channels": np.array(labels, dtype=object),
                               "patterns": np.ones((len(labels), 2))}, format="5")
"#;
    let path = dir.join("decoder.mat");
    let joined = labels().join(",");
    support::python::run(&py, script, &[&path, std::path::Path::new(&joined)]);
    let o = patchwise(
        &[
            "attribute",
            "--decoder",
            "decoder.mat",
            "--montage",
            "10-20",
            "--resamples",
            "0",
            "--out",
            "r",
        ],
        &dir,
    );
    let text = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "{text}");
    assert!(text.contains("decoder.mat"), "{text}");
    assert!(text.contains("'-v7.3'"), "{text}");
    assert!(!dir.join("r").exists());
}
