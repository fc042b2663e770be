//! Readers give the numbers the file holds or one clear error (issue 18,
//! items 9, 13, 14 and 15): text matrices with their separator found from
//! the file, a decimal comma, one header line at most and errors naming the
//! row and column; NumPy's space-separated text. Each test writes its own
//! file.
#![allow(clippy::unwrap_used)]

mod common;

use std::path::PathBuf;

use patchwise::io::decoder_file::read_matrix;
use patchwise::io::sources_file::InputError;

fn scratch(name: &str) -> PathBuf {
    common::python::scratch_dir(&format!("reliability_readers_{name}"))
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
