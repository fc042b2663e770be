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
    let mut extra = support::files::SMALL_ON_TEMPLATE_5K.to_vec();
    extra.extend(["--cache", "cache"]);
    support::files::attribute_quickly(dir, out, &extra)
}

/// Flip the lowest bit of one atom value inside the file's bytes (atoms
/// are stored as 32-bit floats): the value stays finite and plausible, so
/// only a checksum can tell.
fn flip_an_atom(path: &Path) {
    let d = read_dictionary(path).unwrap();
    let mut bytes = std::fs::read(path).unwrap();
    // The atoms are stored contiguously (row-major, little-endian f32):
    // find the block by its first 8 values, then flip the middle atom.
    let head: Vec<u8> = d.atoms[..8]
        .iter()
        .flat_map(|&v| (v as f32).to_le_bytes())
        .collect();
    let starts: Vec<usize> = (0..=bytes.len() - head.len())
        .filter(|&i| bytes[i..i + head.len()] == head[..])
        .collect();
    assert_eq!(
        starts.len(),
        1,
        "the atoms' first values occur once in the file"
    );
    let hits = [starts[0] + 4 * (d.atoms.len() / 2)];
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

/// The content hashes of the cache keys and inputs are BLAKE3: the empty
/// input and "abc" give the digests of the BLAKE3 reference implementation's
/// test vectors (O'Connor, Aumasson, Neves and Wilcox-O'Hearn 2020, the
/// BLAKE3 specification; values from memory of its published vectors).
#[test]
fn content_hash_is_blake3() {
    use patchwise::io::cache::bytes_hash;
    assert_eq!(
        bytes_hash(b""),
        "af1349b9f5f9a1a6a0404dea36dcc9499bcb25c9adc112b7cc9a93cae41f3262"
    );
    assert_eq!(
        bytes_hash(b"abc"),
        "6437b3ac38465133ffb63b75273a8db548c558465d79db03fd359c6cd5bd9d85"
    );
}

/// One flipped bit of one source position gives a new lead field key (so
/// a new dictionary key): the cache never serves an entry of other sources.
#[test]
fn one_flipped_bit_of_the_sources_changes_the_cache_key() {
    use patchwise::forward::Orientation;
    use patchwise::geometry::{template, SourceSpace, TemplateResolution};
    use patchwise::job::cache::leadfield_hash;
    let sources = SourceSpace::from_template(&template(TemplateResolution::Low));
    let montage = patchwise::montage::standard("10-20", 0.09).unwrap();
    let key = |s: &SourceSpace| leadfield_hash(&montage, s, "{}", Orientation::Normal);
    let mut flipped = sources.clone();
    let v = flipped.positions[1234][1];
    flipped.positions[1234][1] = f64::from_bits(v.to_bits() ^ 1);
    assert_ne!(key(&sources), key(&flipped));
    assert_eq!(key(&sources), key(&sources.clone()));
}

/// A decoder file with one byte flipped hashes differently, also when the
/// first hash was remembered by the process and the file's modification
/// time is set back to the old value (its status-change time still moves).
#[test]
fn one_flipped_byte_of_a_decoder_changes_its_hash_even_when_remembered() {
    use patchwise::io::cache::{bytes_hash, file_hash};
    use std::time::{Duration, SystemTime};
    let dir = scratch("flipped_decoder");
    let path = decoder(&dir);
    let old = SystemTime::now() - Duration::from_secs(3600);
    let set_mtime = |t| {
        std::fs::File::options()
            .write(true)
            .open(&path)
            .unwrap()
            .set_modified(t)
            .unwrap()
    };
    set_mtime(old);
    let first = file_hash(&path).unwrap();
    assert_eq!(first, bytes_hash(&std::fs::read(&path).unwrap()));
    // Remembered: the same answer without a change.
    assert_eq!(file_hash(&path).unwrap(), first);
    let mut bytes = std::fs::read(&path).unwrap();
    let middle = bytes.len() / 2;
    bytes[middle] ^= 0x10;
    std::fs::write(&path, &bytes).unwrap();
    set_mtime(old);
    let second = file_hash(&path).unwrap();
    assert_ne!(first, second);
    assert_eq!(second, bytes_hash(&bytes));
}
