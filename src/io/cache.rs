//! The content-hash cache for lead fields and dictionaries.
//!
//! A cached file is named by the SHA-256 of everything that determines it
//! (the inputs' values, not their file names), so a second run on the same
//! montage, sources, head and options finds it, and a change to any input
//! makes a new entry. Entries are written atomically, so concurrent runs
//! that build the same entry at worst both build it, and readers never see
//! a partial file.

use sha2::{Digest, Sha256};
use std::path::{Path, PathBuf};

/// An incremental content hash over typed values.
#[derive(Clone, Default)]
pub struct ContentHash {
    hasher: Sha256,
}

impl ContentHash {
    /// A new hash, seeded with a kind name (e.g. `"leadfield-v1"`), so that
    /// different kinds of entry never collide.
    pub fn new(kind: &str) -> Self {
        let mut h = ContentHash::default();
        h.str(kind);
        h
    }

    /// Add a string (length-prefixed, so concatenations cannot collide).
    pub fn str(&mut self, s: &str) -> &mut Self {
        self.hasher.update((s.len() as u64).to_le_bytes());
        self.hasher.update(s.as_bytes());
        self
    }

    /// Add floats by their exact bits.
    pub fn f64s(&mut self, values: &[f64]) -> &mut Self {
        self.hasher.update((values.len() as u64).to_le_bytes());
        for v in values {
            self.hasher.update(v.to_bits().to_le_bytes());
        }
        self
    }

    /// Add integers.
    pub fn u64s(&mut self, values: &[u64]) -> &mut Self {
        self.hasher.update((values.len() as u64).to_le_bytes());
        for v in values {
            self.hasher.update(v.to_le_bytes());
        }
        self
    }

    /// The hash as 64 lowercase hexadecimal digits.
    pub fn hex(&self) -> String {
        let digest = self.hasher.clone().finalize();
        digest.iter().map(|b| format!("{b:02x}")).collect()
    }
}

/// The SHA-256 of a file's bytes, as hexadecimal.
pub fn file_sha256(path: &Path) -> std::io::Result<String> {
    Ok(bytes_sha256(&super::input::read_input(path)?))
}

/// The SHA-256 of bytes, as hexadecimal (equal to [`file_sha256`] of a
/// file holding them).
pub fn bytes_sha256(bytes: &[u8]) -> String {
    let digest = Sha256::digest(bytes);
    digest.iter().map(|b| format!("{b:02x}")).collect()
}

/// The default cache folder: `$PATCHWISE_CACHE`, else
/// `$XDG_CACHE_HOME/patchwise`, else `$HOME/.cache/patchwise`, else
/// `.patchwise-cache` in the working folder.
pub fn default_cache_dir() -> PathBuf {
    if let Some(dir) = std::env::var_os("PATCHWISE_CACHE") {
        return PathBuf::from(dir);
    }
    if let Some(dir) = std::env::var_os("XDG_CACHE_HOME") {
        return PathBuf::from(dir).join("patchwise");
    }
    if let Some(home) = std::env::var_os("HOME") {
        return PathBuf::from(home).join(".cache").join("patchwise");
    }
    PathBuf::from(".patchwise-cache")
}

/// The path of a cache entry of `kind` with content hash `hash`.
pub fn entry_path(cache_dir: &Path, kind: &str, hash: &str) -> PathBuf {
    cache_dir.join(format!("{kind}-{}.h5", &hash[..hash.len().min(24)]))
}

/// The dataset attribute that holds the CRC-32 of a dataset's values in a
/// sealed file (see [`seal`]).
pub const CHECKSUM_ATTR: &str = "checksum_crc32";

/// The CRC-32 of a dataset's values: floats and integers by their
/// little-endian bytes, strings length-prefixed, after the shape.
pub fn dataset_checksum(ds: &super::store::Dataset) -> i64 {
    use super::store::Array;
    let mut crc = flate2::Crc::new();
    for d in &ds.shape {
        crc.update(&(*d as u64).to_le_bytes());
    }
    match &ds.data {
        Array::F64(v) => v.iter().for_each(|x| crc.update(&x.to_le_bytes())),
        Array::I64(v) => v.iter().for_each(|x| crc.update(&x.to_le_bytes())),
        Array::Str(v) => v.iter().for_each(|s| {
            crc.update(&(s.len() as u64).to_le_bytes());
            crc.update(s.as_bytes());
        }),
        Array::Unsupported(t) => crc.update(t.as_bytes()),
    }
    i64::from(crc.sum())
}

/// Give every dataset of `store` a [`CHECKSUM_ATTR`] attribute, so that a
/// reader finds flipped bytes in its values (a cache entry, damaged on disk,
/// must not be used as if it were sound; see [`verify`]).
pub fn seal(store: &mut super::store::Store) {
    for ds in store.datasets.values_mut() {
        let sum = dataset_checksum(ds);
        ds.attrs
            .insert(CHECKSUM_ATTR.to_string(), super::store::Attr::I64(sum));
    }
}

/// Check the values of every dataset of `store` that carries a
/// [`CHECKSUM_ATTR`] attribute; a mismatch is an error naming the file and
/// the dataset. Datasets without the attribute (files made elsewhere) pass.
pub fn verify(store: &super::store::Store, path: &Path) -> Result<(), super::IoError> {
    for (name, ds) in &store.datasets {
        let Some(stored) = ds.attrs.get(CHECKSUM_ATTR) else {
            continue;
        };
        let computed = dataset_checksum(ds);
        if *stored != super::store::Attr::I64(computed) {
            return Err(super::IoError::Value {
                path: path.to_path_buf(),
                object: name.clone(),
                message: format!(
                    "content checksum mismatch (stored {stored:?}, computed {computed}): the file is damaged, or the values were changed after patchwise wrote them (remove the attribute {CHECKSUM_ATTR} of a dataset changed on purpose)"
                ),
            });
        }
    }
    Ok(())
}
