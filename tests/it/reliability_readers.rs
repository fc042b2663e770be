//! Readers give the numbers the file holds or one clear error (issue 18,
//! items 9, 13, 14 and 15): text matrices with their separator found from
//! the file, a decimal comma, one header line at most and errors naming the
//! row and column; NumPy's space-separated text. Each test writes its own
//! file.

use crate::support;
use std::path::PathBuf;

use patchwise::io::decoder_file::read_matrix;
use patchwise::io::dictionary_file::read_dictionary;
use patchwise::io::gifti::{read_gifti_labels, write_gifti_labels, GiftiEncoding};
use patchwise::io::leadfield_file::read_leadfield;
use patchwise::io::npy::write_npy_f64;
use patchwise::io::sources_file::{InputError, POINT_SOURCE_AREA_MM2};
use patchwise::io::{Dataset, Store};

fn scratch(name: &str) -> PathBuf {
    support::scratch(&format!("reliability_readers_{name}"))
}

fn write(dir: &std::path::Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn decimal_comma_csv_reads_its_columns() {
    let dir = scratch("decimal_comma");
    let path = write(&dir, "patterns.csv", "0,1257;-0,1321;2,5\n-1,0;0,25;3\n");
    let (values, rows, cols) = read_matrix(&path).unwrap();
    assert_eq!((rows, cols), (2, 3));
    assert_eq!(values, vec![0.1257, -0.1321, 2.5, -1.0, 0.25, 3.0]);
}

#[test]
fn first_data_row_with_a_bad_number_is_an_error_naming_row_and_column() {
    let dir = scratch("bad_first_row");
    let path = write(&dir, "patterns.csv", "1.5,0.5x,2\n1,2,3\n");
    let err = read_matrix(&path).unwrap_err();
    let text = err.to_string();
    assert!(matches!(err, InputError::Content { .. }), "{err:?}");
    assert!(text.contains("patterns.csv"), "{text}");
    assert!(
        text.contains("line 1 (data row 1), column 2: \"0.5x\" is not a number"),
        "{text}"
    );
}

#[test]
fn one_header_line_at_most() {
    let dir = scratch("header");
    let path = write(&dir, "ok.csv", "# made by hand\nc1,c2\n1,2\n3,4\n");
    assert_eq!(
        read_matrix(&path).unwrap(),
        (vec![1.0, 2.0, 3.0, 4.0], 2, 2)
    );
    let path = write(&dir, "two.csv", "c1,c2\nunit1,unit2\n1,2\n");
    let text = read_matrix(&path).unwrap_err().to_string();
    assert!(
        text.contains("two.csv") && text.contains("line 2 (data row 1), column 1"),
        "{text}"
    );
}

#[test]
fn space_separated_savetxt_matrix_is_read() {
    let dir = scratch("savetxt");
    // NumPy's `savetxt` default: '%.18e' with one space between fields.
    let path = write(
        &dir,
        "patterns.txt",
        "1.000000000000000000e+00 -2.500000000000000000e-01\n3.000000000000000000e+00 4.000000000000000000e+00\n",
    );
    assert_eq!(
        read_matrix(&path).unwrap(),
        (vec![1.0, -0.25, 3.0, 4.0], 2, 2)
    );
}

fn decoder(dir: &std::path::Path) -> usize {
    support::files::decoder_10_20(dir, 11).1
}

/// Points on the upper half of a 70 mm sphere (a golden-angle spiral), as
/// rows `x,y,z` in mm.
fn hemisphere_points(n: usize) -> Vec<[f64; 3]> {
    (0..n)
        .map(|i| {
            let z = 0.05 + 0.9 * (i as f64 + 0.5) / n as f64;
            let r = (1.0 - z * z).sqrt();
            let phi = i as f64 * 2.399_963;
            [70.0 * r * phi.cos(), 70.0 * r * phi.sin(), 70.0 * z]
        })
        .collect()
}

fn stderr_of(out: &std::process::Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

#[test]
fn table_sources_without_triangles_get_a_documented_point_area() {
    let dir = scratch("table_sources");
    decoder(&dir);
    let mut text = String::from("x,y,z\n");
    for p in hemisphere_points(300) {
        text.push_str(&format!("{},{},{}\n", p[0], p[1], p[2]));
    }
    let table = write(&dir, "sources.csv", &text);
    // Two regions by hemisphere: without regions `attribute` refuses (issue 22).
    let labels: String = hemisphere_points(300)
        .iter()
        .map(|p| if p[0] < 0.0 { "left\n" } else { "right\n" })
        .collect();
    write(&dir, "regions.txt", &labels);
    let sources = patchwise::io::sources_file::read_sources(&table).unwrap();
    assert!(sources
        .areas
        .iter()
        .all(|&a| a == POINT_SOURCE_AREA_MM2 * 1e-6));
    let (ok, text) = support::files::attribute_quickly(
        &dir,
        "out",
        &[
            "--montage",
            "10-20",
            "--sources",
            "sources.csv",
            "--regions",
            "regions.txt",
            "--radii-mm",
            "15",
        ],
    );
    assert!(ok, "{text}");
    assert!(
        text.contains("sources.csv has no triangles") && text.contains("1 mm²"),
        "{text}"
    );
}

#[test]
fn leadfield_import_without_triangles_gets_a_documented_point_area() {
    let dir = scratch("import_points");
    let labels = patchwise::montage::standard("10-20", 0.09).unwrap().labels;
    let points = hemisphere_points(50);
    let n_ch = labels.len();
    let gain: Vec<f64> = (0..n_ch * points.len())
        .map(|k| ((k * 7919) % 101) as f64 - 50.0)
        .collect();
    let positions: Vec<f64> = points.iter().flatten().copied().collect();
    let normals: Vec<f64> = points
        .iter()
        .flat_map(|p| {
            let r = (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt();
            [p[0] / r, p[1] / r, p[2] / r]
        })
        .collect();
    write_npy_f64(&dir.join("gain.npy"), &gain, &[n_ch, points.len()]).unwrap();
    write_npy_f64(&dir.join("positions.npy"), &positions, &[points.len(), 3]).unwrap();
    write_npy_f64(&dir.join("normals.npy"), &normals, &[points.len(), 3]).unwrap();
    write(&dir, "channels.txt", &(labels.join("\n") + "\n"));
    let out = support::cli::patchwise(
        &[
            "leadfield",
            "import",
            "--gain",
            "gain.npy",
            "--positions",
            "positions.npy",
            "--normals",
            "normals.npy",
            "--channels",
            "channels.txt",
            "--out",
            "lf.h5",
        ],
        &dir,
    );
    let text = stderr_of(&out);
    assert!(out.status.success(), "{text}");
    assert!(
        text.contains("has no triangles") && text.contains("1 mm²"),
        "{text}"
    );
    let lf = read_leadfield(&dir.join("lf.h5")).unwrap();
    assert!(lf.sources.areas.iter().all(|&a| a == 1e-6));
    let out = support::cli::patchwise(
        &[
            "dictionary",
            "--leadfield",
            "lf.h5",
            "--radii-mm",
            "20",
            "--out",
            "d.h5",
        ],
        &dir,
    );
    assert!(out.status.success(), "{}", stderr_of(&out));
}

#[test]
fn duplicate_region_names_in_a_gifti_label_table_are_refused() {
    let dir = scratch("duplicate_regions");
    let path = dir.join("regions.label.gii");
    // The writer refuses a name twice (io_gifti::writing_duplicate_region_names_is_refused),
    // so the table is written with a placeholder that is then renamed.
    let names: Vec<String> = ["frontal", "parietal", "duplicate-to-be"]
        .map(String::from)
        .to_vec();
    write_gifti_labels(&path, &[0, 1, 2, -1], &names, GiftiEncoding::Ascii).unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    assert_eq!(text.matches("duplicate-to-be").count(), 1, "{text}");
    std::fs::write(&path, text.replace("duplicate-to-be", "frontal")).unwrap();
    support::files::assert_value_error(
        read_gifti_labels(&path),
        &path,
        "LabelTable",
        "\"frontal\" is given to keys 1 and 3",
    );
}

#[test]
fn all_zero_dictionary_and_gain_are_refused() {
    let dir = scratch("all_zero");
    let mut store = Store::new();
    store.insert(
        "/dictionary/atoms",
        Dataset::f64(vec![19, 4], vec![0.0; 76]),
    );
    store.insert("/dictionary/group", Dataset::i64(vec![4], vec![0, 1, 2, 3]));
    store.write_atomic(&dir.join("zero.h5")).unwrap();
    support::files::assert_value_error(
        read_dictionary(&dir.join("zero.h5")),
        &dir.join("zero.h5"),
        "/dictionary/atoms",
        "every value is zero",
    );
    decoder(&dir);
    let out = support::cli::patchwise(
        &[
            "attribute",
            "--decoder",
            "decoder.h5",
            "--dictionary",
            "zero.h5",
            "--out",
            "out",
        ],
        &dir,
    );
    let text = stderr_of(&out);
    assert_eq!(out.status.code(), Some(2), "{text}");
    assert!(
        text.contains("zero.h5") && text.contains("/dictionary/atoms"),
        "{text}"
    );
    assert!(!dir.join("out").exists());
    let mut lf = Store::new();
    lf.insert(
        "/montage/labels",
        Dataset::strings(vec!["Cz".into(), "Pz".into()]),
    );
    lf.insert("/leadfield/gain", Dataset::f64(vec![2, 3], vec![0.0; 6]));
    lf.write_atomic(&dir.join("lf.h5")).unwrap();
    support::files::assert_value_error(
        read_leadfield(&dir.join("lf.h5")),
        &dir.join("lf.h5"),
        "/leadfield/gain",
        "every value is zero",
    );
}

#[test]
fn dictionary_without_channel_labels_matched_by_count_gives_a_note() {
    let dir = scratch("unlabelled_dictionary");
    let n = decoder(&dir);
    let atoms: Vec<f64> = (0..n * 6).map(|k| ((k * 37) % 17) as f64 - 8.0).collect();
    let mut store = Store::new();
    store.insert("/dictionary/atoms", Dataset::f64(vec![n, 6], atoms));
    store.insert(
        "/dictionary/group",
        Dataset::i64(vec![6], vec![0, 1, 2, 3, 4, 5]),
    );
    store.write_atomic(&dir.join("nolabels.h5")).unwrap();
    let (ok, text) =
        support::files::attribute_quickly(&dir, "out", &["--dictionary", "nolabels.h5"]);
    assert!(ok, "{text}");
    assert!(
        text.contains("nolabels.h5 has no channel labels")
            && text.contains("matched by count only"),
        "{text}"
    );
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn hdf5_soft_link_gives_a_clear_message() {
    let python = support::python::python();
    let dir = scratch("soft_link");
    let path = dir.join("decoder.h5");
    // h5py's default groups keep a soft link as a symbol-table entry
    // without an object address.
    support::python::run(
        &python,
        "import sys, h5py, numpy as np\n\
         with h5py.File(sys.argv[1], 'w') as f:\n\
         \x20   f['channels'] = np.array([b'Cz', b'Pz'])\n\
         \x20   f['data/p'] = np.ones((2, 3))\n\
         \x20   f['patterns'] = h5py.SoftLink('/data/p')\n",
        &[&path],
    );
    let out = support::cli::patchwise(
        &["attribute", "--decoder", "decoder.h5", "--out", "out"],
        &dir,
    );
    let text = stderr_of(&out);
    assert_eq!(out.status.code(), Some(2), "{text}");
    assert!(
        text.contains("decoder.h5") && text.contains("soft or external link"),
        "{text}"
    );
    assert!(!text.contains("18446744073709551615"), "{text}");
    assert!(!dir.join("out").exists());
}

/// Found by the fuzzer: a MATLAB matrix whose shape promises more values
/// than were read was transposed before its count was checked (a panic).
#[test]
fn matlab_matrix_declaring_more_values_than_it_holds_is_an_error() {
    let mut ds = Dataset::f64(vec![3, 2], vec![1.0; 4]);
    ds.attrs.insert(
        "MATLAB_class".to_string(),
        patchwise::io::Attr::Str("double".to_string()),
    );
    let mut store = Store::new();
    store.insert("/patterns", ds);
    let file = std::path::Path::new("decoder.mat");
    match store.f64_matrix(file, "/patterns", None, None) {
        Err(patchwise::io::IoError::Shape { path, dataset, .. }) => {
            assert_eq!(path, file);
            assert_eq!(dataset, "/patterns");
        }
        other => panic!("expected a shape error, got {other:?}"),
    }
}
