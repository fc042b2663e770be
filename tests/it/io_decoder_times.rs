//! Decoder files with a time axis (issue 26, docs/time_resolved.md): the
//! per-time layout read into component-major columns (fold decoders too),
//! and each malformed
//! file refused with a message naming the file and the field (exit 2 on the
//! command line). Layout facts are our own format's; the per-time Haufe
//! transform is checked on Haufe et al. 2014 (NeuroImage 87:96), two-channel
//! example, in `patterns::time_resolved`'s unit tests.

use std::path::Path;

use patchwise::io::decoder_file::{read_decoder, DecoderContent};
use patchwise::io::decoder_times::TimeLayout;
use patchwise::io::store::{Dataset, Store};

use crate::support::cli::patchwise;

fn f64s(shape: Vec<usize>, values: Vec<f64>) -> Dataset {
    Dataset::f64(shape, values)
}

/// An HDF5 decoder file (the .npz reader shares the checks; it is
/// exercised by `time_resolved_decoders`).
fn h5(path: &Path, entries: Vec<(&str, Dataset)>) {
    let mut store = Store::new();
    for (n, a) in entries {
        store.insert(&format!("/{n}"), a);
    }
    store.write_atomic(path).expect("write h5");
}

fn labels() -> Vec<String> {
    ["Fz", "Cz", "Pz"].iter().map(|s| s.to_string()).collect()
}

fn channels() -> Dataset {
    Dataset::strings(labels())
}

#[test]
fn per_time_patterns_become_component_major_columns() {
    let dir = crate::support::scratch("io_decoder_times_columns");
    // n_times 2 × n_ch 3 × k 2, value 100 t + 10 ch + c.
    let values: Vec<f64> = (0..2)
        .flat_map(|t| {
            (0..3).flat_map(move |ch| (0..2).map(move |c| (100 * t + 10 * ch + c) as f64))
        })
        .collect();
    h5(
        &dir.join("d.h5"),
        vec![
            ("channels", channels()),
            ("times", f64s(vec![2], vec![0.1, 0.2])),
            ("patterns", f64s(vec![2, 3, 2], values)),
        ],
    );
    let a = read_decoder(&dir.join("d.h5"), None).expect("h5");
    assert_eq!(a.k, 4);
    let axis = a.extras.time.as_ref().expect("time axis");
    assert_eq!((axis.n_components, axis.layout), (2, TimeLayout::PerTime));
    assert_eq!(axis.times, vec![0.1, 0.2]);
    // Column c · n_times + t of channel 1: 10 + 100 t + c.
    let DecoderContent::Patterns(p) = &a.content else {
        panic!("patterns expected");
    };
    assert_eq!(&p[4..8], &[10.0, 110.0, 11.0, 111.0]);
}

#[test]
fn folds_with_a_time_axis_become_the_same_columns() {
    let dir = crate::support::scratch("io_decoder_times_folds");
    // n_times 2 × n_ch 3 × k 2, value 100 t + 10 ch + c; fold f adds 1000 f.
    let one = |f: usize| -> Vec<f64> {
        (0..2)
            .flat_map(|t| {
                (0..3).flat_map(move |ch| {
                    (0..2).map(move |c| (1000 * f + 100 * t + 10 * ch + c) as f64)
                })
            })
            .collect()
    };
    h5(
        &dir.join("d.h5"),
        vec![
            ("channels", channels()),
            ("times", f64s(vec![2], vec![0.1, 0.2])),
            ("patterns", f64s(vec![2, 3, 2], one(0))),
            (
                "folds",
                f64s(vec![3, 2, 3, 2], (1..4).flat_map(one).collect()),
            ),
        ],
    );
    let a = read_decoder(&dir.join("d.h5"), None).expect("h5");
    let folds = a.extras.folds.as_ref().expect("folds");
    assert_eq!(folds.len(), 3);
    // Fold 2 (value + 3000), column c · n_times + t of channel 1.
    let DecoderContent::Patterns(p) = &folds[2] else {
        panic!("pattern folds expected");
    };
    assert_eq!(&p[4..8], &[3010.0, 3110.0, 3011.0, 3111.0]);
}

/// A file name, its entries, and the words its error message must hold.
type Case = (
    &'static str,
    Vec<(&'static str, Dataset)>,
    &'static [&'static str],
);

#[test]
fn malformed_time_axes_are_refused_naming_file_and_field() {
    let dir = crate::support::scratch("io_decoder_times_errors");
    let cases: Vec<Case> = vec![
        (
            "not_increasing.h5",
            vec![
                ("channels", channels()),
                ("times", f64s(vec![3], vec![0.0, 0.2, 0.1])),
                ("patterns", f64s(vec![3, 3], vec![1.0; 9])),
            ],
            &["times", "not increasing", "index 2"],
        ),
        (
            "length.h5",
            vec![
                ("channels", channels()),
                ("times", f64s(vec![4], vec![0.0, 0.1, 0.2, 0.3])),
                ("patterns", f64s(vec![3, 3], vec![1.0; 9])),
            ],
            &["patterns", "[3, 3]", "times has 4"],
        ),
        (
            "covariance.h5",
            vec![
                ("channels", channels()),
                ("times", f64s(vec![2], vec![0.0, 0.1])),
                ("weights", f64s(vec![3, 2], vec![1.0; 6])),
                ("covariance", f64s(vec![3, 3], vec![1.0; 9])),
            ],
            &["covariance", "6 x 6", "channel * n_times"],
        ),
        (
            "per_time_covariance.h5",
            vec![
                ("channels", channels()),
                ("times", f64s(vec![2], vec![0.0, 0.1])),
                ("weights", f64s(vec![2, 3, 1], vec![1.0; 6])),
                ("covariance", f64s(vec![3, 3, 3], vec![1.0; 27])),
            ],
            &["covariance", "2 x 3 x 3"],
        ),
        (
            "fold_shape.h5",
            vec![
                ("channels", channels()),
                ("times", f64s(vec![2], vec![0.0, 0.1])),
                ("patterns", f64s(vec![2, 3, 1], vec![1.0; 6])),
                ("folds", f64s(vec![4, 2, 3], vec![1.0; 24])),
            ],
            &["folds", "[4, 2, 3]", "n_folds x 2 x 3 x 1"],
        ),
        (
            "one_fold.h5",
            vec![
                ("channels", channels()),
                ("times", f64s(vec![2], vec![0.0, 0.1])),
                ("patterns", f64s(vec![3, 2], vec![1.0; 6])),
                ("folds", f64s(vec![1, 3, 2], vec![1.0; 6])),
            ],
            &["folds", "at least 2 folds"],
        ),
        (
            "fold_covariances.h5",
            vec![
                ("channels", channels()),
                ("times", f64s(vec![2], vec![0.0, 0.1])),
                ("weights", f64s(vec![2, 3, 1], vec![1.0; 6])),
                ("covariance", f64s(vec![3, 3], vec![1.0; 9])),
                ("folds", f64s(vec![2, 2, 3, 1], vec![1.0; 12])),
                ("fold_covariances", f64s(vec![3, 3, 3], vec![1.0; 27])),
            ],
            &["fold_covariances", "[3, 3, 3]", "2 x 3 x 3"],
        ),
    ];
    for (name, entries, words) in cases {
        h5(&dir.join(name), entries);
        let err = read_decoder(&dir.join(name), None)
            .expect_err(name)
            .to_string();
        assert!(err.contains(name), "{name}: {err}");
        for w in words {
            assert!(err.contains(w), "{name}: {err:?} lacks {w:?}");
        }
        let run = patchwise(
            &[
                "attribute",
                "--decoder",
                name,
                "--sources",
                "template-5k",
                "--out",
                "out",
            ],
            &dir,
        );
        assert_eq!(run.status.code(), Some(2), "{name}: exit code");
        assert!(!dir.join("out").exists(), "{name}: no output folder");
    }
}
