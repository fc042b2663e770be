//! Cache entries carry a checksum of their values: flipped bytes inside a
//! cached dictionary's atoms are found and the entry is rebuilt with a note
//! (issue 18, item 12); numeric options are checked before any cache lookup
//! (item 11).

use crate::support;
use std::path::{Path, PathBuf};

use patchwise::io::dictionary_file::read_dictionary;

use crate::support::cli::patchwise;

fn scratch(name: &str) -> PathBuf {
    support::scratch(&format!("reliability_cache_{name}"))
}

fn decoder(dir: &Path) -> PathBuf {
    support::files::decoder_10_20(dir, 7).0
}

fn attribute(dir: &Path, out: &str) -> (bool, String) {
    support::files::attribute_quickly(
        dir,
        out,
        &[
            "--montage",
            "10-20",
            "--sources",
            "template-5k",
            "--radii-mm",
            "10",
            "--spacing-mm",
            "20",
            "--cache",
            "cache",
        ],
    )
}

/// Flip the lowest bit of one atom value inside the file's bytes: the value
/// stays finite and plausible, so only a checksum can tell.
fn flip_an_atom(path: &Path) {
    let d = read_dictionary(path).unwrap();
    let mut bytes = std::fs::read(path).unwrap();
    let value = d.atoms[d.atoms.len() / 2].to_le_bytes();
    let hits: Vec<usize> = (0..=bytes.len() - 8)
        .filter(|&i| bytes[i..i + 8] == value)
        .collect();
    assert_eq!(hits.len(), 1, "the atom value must be unique in the file");
    bytes[hits[0]] ^= 1;
    std::fs::write(path, bytes).unwrap();
}

fn the_entry(cache: &Path, kind: &str) -> PathBuf {
    std::fs::read_dir(cache)
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| {
            p.file_name()
                .unwrap()
                .to_string_lossy()
                .starts_with(&format!("{kind}-"))
        })
        .unwrap()
}

#[test]
fn cached_dictionary_with_flipped_atom_bytes_is_detected_and_rebuilt() {
    let dir = scratch("flipped");
    decoder(&dir);
    let (ok, text) = attribute(&dir, "first");
    assert!(ok, "{text}");
    let entry = the_entry(&dir.join("cache"), "dictionary");
    flip_an_atom(&entry);
    support::files::assert_value_error(
        read_dictionary(&entry),
        &entry,
        "/dictionary/atoms",
        "checksum mismatch",
    );
    let (ok, text) = attribute(&dir, "second");
    assert!(ok, "{text}");
    assert!(text.contains("the cached dictionary is damaged"), "{text}");
    assert!(text.contains("checksum mismatch"), "{text}");
    // The rebuilt entry is sound and gives the same result.
    read_dictionary(&entry).unwrap();
    let a = std::fs::read(dir.join("first").join("regions.csv")).unwrap();
    let b = std::fs::read(dir.join("second").join("regions.csv")).unwrap();
    assert_eq!(a, b);
}

#[test]
fn nan_spacing_is_refused_before_the_cache_is_looked_up() {
    let dir = scratch("nan_spacing");
    decoder(&dir);
    for (option, value) in [
        ("--spacing-mm", "nan"),
        ("--radii-mm", "nan"),
        ("--spacing-mm", "-3"),
    ] {
        let mut args = vec![
            "attribute",
            "--decoder",
            "decoder.h5",
            "--cache",
            "cache",
            "--out",
            "out",
        ];
        let given = format!("{option}={value}");
        args.push(&given);
        let out = patchwise(&args, &dir);
        let text = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{option} {value}: {text}");
        let word = option[2..].split('-').next().unwrap();
        assert!(text.contains(word), "{option} {value}: {text}");
        assert!(
            !dir.join("cache").exists(),
            "no cache lookup for {option} {value}"
        );
        assert!(!dir.join("out").exists());
    }
}
