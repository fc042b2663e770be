//! Reading and writing electrode tables (BIDS-style electrodes.tsv, CSV) and channel lists.

use patchwise::io::electrodes::{
    read_channel_list, read_electrodes, read_electrodes_in, write_electrodes_tsv, LengthUnit,
};
use patchwise::io::table::{read_table, write_table, Delimiter, TableError};
use patchwise::montage::standard;
use std::path::PathBuf;

use crate::support;

/// A fresh folder for one test, named after this file.
fn scratch(name: &str) -> PathBuf {
    support::scratch(&format!("montage_electrodes_io_{name}"))
}

fn write(dir: &std::path::Path, file: &str, text: &str) -> PathBuf {
    let p = dir.join(file);
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn bids_tsv_in_millimetres_becomes_metres() {
    // BIDS electrodes.tsv: required columns name, x, y, z; extra columns allowed
    // (BIDS specification, EEG electrodes file, from memory). 1 mm = 1e-3 m exactly
    // representable to rounding: tolerance 1e-15 m.
    let dir = scratch("bids");
    let p = write(
        &dir,
        "sub-01_electrodes.tsv",
        "name\tx\ty\tz\timpedance\nCz\t0\t0\t90\t5\nT3\t-90.5\t0\t0\tn/a\n",
    );
    let m = read_electrodes(&p).unwrap();
    assert_eq!(m.labels, vec!["Cz", "T3"]);
    assert!((m.positions[0][2] - 0.090).abs() < 1e-15);
    assert!((m.positions[1][0] + 0.0905).abs() < 1e-15);
    assert_eq!(m.find("T7"), Some(1));
    let cm = read_electrodes_in(&p, LengthUnit::Centimetre).unwrap();
    assert!((cm.positions[0][2] - 0.90).abs() < 1e-15);
}

#[test]
fn csv_with_label_column_and_quotes() {
    let dir = scratch("csv");
    let p = write(
        &dir,
        "elec.csv",
        "label, x, y, z\n\"Fp1\", -27.8, 85.6, 0\n\"O,1\" , 1,2,3\n",
    );
    let m = read_electrodes(&p).unwrap();
    assert_eq!(m.labels, vec!["Fp1", "O,1"]);
    assert!((m.positions[0][1] - 0.0856).abs() < 1e-15);
}

#[test]
fn errors_name_file_line_and_column() {
    let dir = scratch("errors");
    let missing = write(&dir, "a.tsv", "name\tx\ty\nCz\t0\t0\n");
    let err = read_electrodes(&missing).unwrap_err();
    assert!(
        matches!(&err, TableError::MissingColumn { expected, .. } if expected == "z"),
        "{err}"
    );
    assert!(err.to_string().contains("a.tsv"), "{err}");

    let na = write(
        &dir,
        "b.tsv",
        "name\tx\ty\tz\nCz\t0\t0\t90\nFz\tn/a\t1\t2\n",
    );
    match read_electrodes(&na).unwrap_err() {
        TableError::NotAvailable {
            line: 3, column, ..
        } => assert_eq!(column, "x"),
        other => panic!("{other}"),
    }

    let nan = write(&dir, "c.csv", "name,x,y,z\nCz,0,0,90\nFz,1,1e,2\n");
    let err = read_electrodes(&nan).unwrap_err();
    match &err {
        TableError::NotANumber {
            line: 3,
            column,
            value,
            ..
        } => {
            assert_eq!((column.as_str(), value.as_str()), ("y", "1e"))
        }
        other => panic!("{other}"),
    }
    let text = err.to_string();
    assert!(
        text.contains("c.csv") && text.contains("line 3") && text.contains("column y"),
        "{text}"
    );

    let dup = write(
        &dir,
        "d.tsv",
        "name\tx\ty\tz\nT7\t0\t0\t1\nCz\t0\t0\t2\nt3\t0\t0\t3\n",
    );
    match read_electrodes(&dup).unwrap_err() {
        TableError::DuplicateLabel {
            line: 4,
            first_line: 2,
            label,
            first_label,
            ..
        } => {
            assert_eq!((label.as_str(), first_label.as_str()), ("t3", "T7"))
        }
        other => panic!("{other}"),
    }

    let short = write(&dir, "e.tsv", "name\tx\ty\tz\nCz\t0\t0\n");
    assert!(matches!(
        read_electrodes(&short).unwrap_err(),
        TableError::FieldCount {
            line: 2,
            expected: 4,
            found: 3,
            ..
        }
    ));

    let quote = write(&dir, "f.csv", "name,x,y,z\n\"Cz,0,0,1\n");
    assert!(matches!(
        read_electrodes(&quote).unwrap_err(),
        TableError::UnterminatedQuote {
            line: 2,
            column: 1,
            ..
        }
    ));
    let after = write(&dir, "g.csv", "name,x,y,z\n\"Cz\"x,0,0,1\n");
    assert!(matches!(
        read_electrodes(&after).unwrap_err(),
        TableError::BadQuote {
            line: 2,
            column: 5,
            ..
        }
    ));

    let empty = write(&dir, "h.tsv", "\n\n");
    assert!(matches!(
        read_electrodes(&empty).unwrap_err(),
        TableError::Empty { .. }
    ));
    let header_only = write(&dir, "i.tsv", "name\tx\ty\tz\n");
    assert!(matches!(
        read_electrodes(&header_only).unwrap_err(),
        TableError::Montage { .. }
    ));
    let absent = dir.join("nope.tsv");
    let err = read_electrodes(&absent).unwrap_err();
    assert!(matches!(err, TableError::Io { .. }) && err.to_string().contains("nope.tsv"));
}

#[test]
fn written_tsv_reads_back_exactly() {
    // Round trip of the 10-5 layout through write_electrodes_tsv: the shortest decimal of
    // x·1000 reads back to the same double, and /1000 again: two roundings, so within
    // 2 ulp (relative 4.5e-16).
    let dir = scratch("roundtrip");
    let m = standard("10-5", 0.0925).unwrap();
    let p = dir.join("electrodes.tsv");
    write_electrodes_tsv(&p, &m).unwrap();
    let text = std::fs::read_to_string(&p).unwrap();
    assert!(text.starts_with("name\tx\ty\tz\n"));
    let back = read_electrodes(&p).unwrap();
    assert_eq!(back.labels, m.labels);
    for (a, b) in back.positions.iter().zip(&m.positions) {
        for d in 0..3 {
            assert!((a[d] - b[d]).abs() <= 4.5e-16 * b[d].abs(), "{a:?} {b:?}");
        }
    }
    // No temporary file is left beside the target.
    let names: Vec<_> = std::fs::read_dir(&*dir)
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 1, "{names:?}");
}

#[test]
fn generic_tables_round_trip_with_quoting() {
    let dir = scratch("tables");
    let p = dir.join("t.csv");
    let rows = vec![
        vec!["a,b".to_string(), "say \"hi\"".to_string()],
        vec!["plain".to_string(), String::new()],
    ];
    write_table(&p, Delimiter::Comma, &["k", "v"], &rows).unwrap();
    let t = read_table(&p).unwrap();
    assert_eq!(t.delimiter, Delimiter::Comma);
    assert_eq!(t.header, vec!["k", "v"]);
    assert_eq!(t.rows[0].fields, rows[0]);
    assert_eq!(t.rows[1].fields, rows[1]);
    assert_eq!(t.rows[1].line, 3);
    // Sniffing without an extension.
    let q = write(&dir, "noext", "a\tb\n1\t2\n");
    assert_eq!(read_table(&q).unwrap().delimiter, Delimiter::Tab);
    let bad = vec![vec!["x\ty".to_string()]];
    assert!(matches!(
        write_table(&dir.join("u.tsv"), Delimiter::Tab, &["k"], &bad),
        Err(TableError::Unwritable { row: 1, .. })
    ));
}

#[test]
fn channel_lists() {
    let dir = scratch("channels");
    let plain = write(&dir, "list.txt", "Fz\n\n  Cz \nPz\n");
    assert_eq!(read_channel_list(&plain).unwrap(), vec!["Fz", "Cz", "Pz"]);
    let bids = write(
        &dir,
        "sub-01_channels.tsv",
        "name\ttype\tunits\nFz\tEEG\tuV\nCz\tEEG\tuV\n",
    );
    assert_eq!(read_channel_list(&bids).unwrap(), vec!["Fz", "Cz"]);
    let dup = write(&dir, "dup.txt", "T5\nCz\nP7\n");
    assert!(matches!(
        read_channel_list(&dup).unwrap_err(),
        TableError::DuplicateLabel {
            line: 3,
            first_line: 1,
            ..
        }
    ));
    let empty = write(&dir, "empty.txt", "\n");
    assert!(matches!(
        read_channel_list(&empty).unwrap_err(),
        TableError::Empty { .. }
    ));
}
