//! The content-hash cache for lead fields and dictionaries.
//!
//! A cached file is named by the BLAKE3 hash (O'Connor, Aumasson, Neves and
//! Wilcox-O'Hearn 2020, the BLAKE3 specification) of everything that
//! determines it (the inputs' values, not their file names), so a second run
//! on the same montage, sources, head and options finds it, and a change to
//! any input makes a new entry. Entries are written atomically, so
//! concurrent runs that build the same entry at worst both build it, and
//! readers never see a partial file.
//!
//! Input files are hashed with BLAKE3 too ([`file_hash`]), once per process
//! for a file that has not changed since ([`file_hash`] remembers the hash by
//! the file's identity and times). Entries an older patchwise keyed by
//! SHA-256 are simply never found again (their names cannot match the new
//! keys), and `patchwise cache clean` removes them.

use sha2::{Digest, Sha256};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Mutex, OnceLock};
use std::time::{Duration, SystemTime};

/// An incremental content hash over typed values.
#[derive(Clone, Default)]
pub struct ContentHash {
    hasher: blake3::Hasher,
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
        self.hasher.update(&(s.len() as u64).to_le_bytes());
        self.hasher.update(s.as_bytes());
        self
    }

    /// Add floats by their exact bits (little-endian).
    pub fn f64s(&mut self, values: &[f64]) -> &mut Self {
        self.hasher.update(&(values.len() as u64).to_le_bytes());
        self.words(values.iter().map(|v| v.to_bits()))
    }

    /// Add integers (little-endian).
    pub fn u64s(&mut self, values: &[u64]) -> &mut Self {
        self.hasher.update(&(values.len() as u64).to_le_bytes());
        self.words(values.iter().copied())
    }

    /// Feed 64-bit words in blocks, so the hasher sees long inputs at once
    /// (BLAKE3 is fast on long inputs, slow on 8-byte calls).
    fn words(&mut self, words: impl Iterator<Item = u64>) -> &mut Self {
        let mut block = Vec::with_capacity(8 * 1024);
        for w in words {
            block.extend_from_slice(&w.to_le_bytes());
            if block.len() == block.capacity() {
                self.hasher.update(&block);
                block.clear();
            }
        }
        self.hasher.update(&block);
        self
    }

    /// The hash as 64 lowercase hexadecimal digits.
    pub fn hex(&self) -> String {
        self.hasher.finalize().to_hex().to_string()
    }
}

/// What identifies a file's content without reading it: device, inode,
/// size, modification and status-change times.
type FileStamp = (u64, u64, u64, SystemTime, i64, i64);

fn file_stamp(meta: &std::fs::Metadata) -> std::io::Result<FileStamp> {
    use std::os::unix::fs::MetadataExt;
    Ok((
        meta.dev(),
        meta.ino(),
        meta.len(),
        meta.modified()?,
        meta.ctime(),
        meta.ctime_nsec(),
    ))
}

/// Files changed this recently are hashed again on every call: a second
/// write within the file system's time granularity could keep every stamp.
const SETTLED: Duration = Duration::from_secs(2);

/// The BLAKE3 hash of a file's bytes, as 64 hexadecimal digits (equal to
/// [`bytes_hash`] of the bytes). Within one process a file is read and
/// hashed once: the hash is kept with the file's [`FileStamp`] and used
/// again while the stamp is unchanged and the file was last changed more
/// than two seconds before it was hashed. Any write changes the
/// modification and status-change times, so a changed file is hashed again.
pub fn file_hash(path: &Path) -> std::io::Result<String> {
    static KNOWN: OnceLock<Mutex<HashMap<PathBuf, (FileStamp, String)>>> = OnceLock::new();
    let known = KNOWN.get_or_init(Default::default);
    let mut file = super::input::open_input(path)?;
    let before = file_stamp(&file.metadata()?)?;
    let key = std::fs::canonicalize(path)?;
    if let Some((stamp, hash)) = known.lock().unwrap_or_else(|e| e.into_inner()).get(&key) {
        if *stamp == before {
            return Ok(hash.clone());
        }
    }
    let started = SystemTime::now();
    let mut hasher = blake3::Hasher::new();
    hasher.update_reader(&mut file)?;
    let hash = hasher.finalize().to_hex().to_string();
    let after = file_stamp(&file.metadata()?)?;
    let settled = started
        .duration_since(after.3)
        .is_ok_and(|age| age > SETTLED);
    if after == before && settled {
        known
            .lock()
            .unwrap_or_else(|e| e.into_inner())
            .insert(key, (after, hash.clone()));
    }
    Ok(hash)
}

/// The BLAKE3 hash of bytes, as 64 hexadecimal digits.
pub fn bytes_hash(bytes: &[u8]) -> String {
    blake3::hash(bytes).to_hex().to_string()
}

/// The SHA-256 of a file's bytes, as hexadecimal (the comparison records
/// its result files by SHA-256, `/inputs/sha256`).
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

/// Adds 8-byte words to `crc` in blocks of bytes: the same bytes in the same
/// order, so the same sum, without a call per value.
fn update_words(crc: &mut flate2::Crc, words: impl Iterator<Item = [u8; 8]>) {
    let mut block: Vec<u8> = Vec::with_capacity(8 * 4096);
    for w in words {
        block.extend_from_slice(&w);
        if block.len() == block.capacity() {
            crc.update(&block);
            block.clear();
        }
    }
    crc.update(&block);
}

/// The CRC-32 of a dataset's values: floats and integers by their
/// little-endian bytes, strings length-prefixed, after the shape.
pub fn dataset_checksum(ds: &super::store::Dataset) -> i64 {
    use super::store::Array;
    let mut crc = flate2::Crc::new();
    for d in &ds.shape {
        crc.update(&(*d as u64).to_le_bytes());
    }
    match &ds.data {
        Array::F64(v) => update_words(&mut crc, v.iter().map(|x| x.to_le_bytes())),
        Array::I64(v) => update_words(&mut crc, v.iter().map(|x| x.to_le_bytes())),
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
