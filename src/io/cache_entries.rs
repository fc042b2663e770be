//! The entries of a cache folder as files: which files are entries (named
//! `<kind>-<hex key>.h5`), their size and last use, the use stamp that
//! reading an entry renews, and removal that never takes an entry a reader
//! holds.
//!
//! Readers hold a shared advisory lock (`flock`) on the entry while they
//! read it; removal takes the exclusive lock without waiting and skips the
//! entry when a reader has it, so that cleaning the cache while jobs run is
//! safe in this process and in others on the same machine. An entry is one
//! file, written by a rename and removed by one unlink, so a reader sees the
//! whole entry or none: there is no half-removed entry to read. The last use
//! is the file's modification time, which an entry's writer sets and every
//! successful read renews (entries never change after they are written).

use std::fs::{File, TryLockError};
use std::io::ErrorKind;
use std::path::{Path, PathBuf};
use std::time::SystemTime;

/// The kinds of cache entry patchwise writes.
pub const ENTRY_KINDS: [&str; 5] = ["leadfield", "dictionary", "atoms", "kernel", "bem"];

/// One cache entry.
#[derive(Clone, Debug, PartialEq)]
pub struct CacheEntry {
    /// The entry's file.
    pub path: PathBuf,
    /// Its kind (one of [`ENTRY_KINDS`]).
    pub kind: String,
    /// Its key: the hexadecimal start of the content hash in its name.
    pub key: String,
    /// Its size in bytes.
    pub bytes: u64,
    /// When it was last written or read (its modification time).
    pub last_use: SystemTime,
}

/// The kind and key of a file name `<kind>-<hex>.h5` of [`ENTRY_KINDS`];
/// `None` for every other name (temporaries, files we did not write).
pub fn parse_entry_name(name: &str) -> Option<(&str, &str)> {
    let stem = name.strip_suffix(".h5")?;
    let (kind, key) = stem.rsplit_once('-')?;
    let hex = !key.is_empty() && key.bytes().all(|b| b.is_ascii_hexdigit());
    (hex && ENTRY_KINDS.contains(&kind)).then_some((kind, key))
}

/// The entries of the cache folder `dir`, least recently used first (ties
/// by file name); a folder that does not exist holds none. Files of other
/// names are not entries and are never listed (nor, by the callers, removed).
pub fn list_entries(dir: &Path) -> std::io::Result<Vec<CacheEntry>> {
    let read = match std::fs::read_dir(dir) {
        Ok(r) => r,
        Err(e) if e.kind() == ErrorKind::NotFound => return Ok(Vec::new()),
        Err(e) => return Err(e),
    };
    let mut entries = Vec::new();
    for item in read {
        let item = item?;
        let name = item.file_name().to_string_lossy().into_owned();
        let Some((kind, key)) = parse_entry_name(&name) else {
            continue;
        };
        // An entry removed between the listing and this look is skipped.
        let Ok(meta) = item.metadata() else {
            continue;
        };
        if !meta.is_file() {
            continue;
        }
        entries.push(CacheEntry {
            path: item.path(),
            kind: kind.to_string(),
            key: key.to_string(),
            bytes: meta.len(),
            last_use: meta.modified().unwrap_or(SystemTime::UNIX_EPOCH),
        });
    }
    entries.sort_by(|a, b| (a.last_use, &a.path).cmp(&(b.last_use, &b.path)));
    Ok(entries)
}

/// An entry held for reading: a shared lock on its file, released on drop.
pub struct HeldEntry {
    file: File,
}

impl HeldEntry {
    /// Renew the entry's last use (its modification time) to now. A cache
    /// that cannot be stamped (a folder shared read-only) keeps the old
    /// stamp: the entry is then evicted a little earlier, never misread.
    pub fn mark_used(&self) {
        let _ = self.file.set_modified(SystemTime::now());
    }
}

/// Hold the entry `path` for reading: `None` when there is no such entry
/// (or it was removed while we waited for the lock).
pub fn hold_entry(path: &Path) -> std::io::Result<Option<HeldEntry>> {
    let file = match super::input::open_input(path) {
        Ok(f) => f,
        Err(e) if e.kind() == ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(e),
    };
    // A file system without advisory locks still gets the whole-or-nothing
    // guarantee of rename and unlink; only the wait is lost.
    let _ = file.lock_shared();
    if !path.is_file() {
        return Ok(None);
    }
    Ok(Some(HeldEntry { file }))
}

/// `read(path)` while holding the entry, renewing its last use when the
/// read succeeds; `None` when there is no entry at `path`.
pub fn read_held_entry<T, E: From<super::IoError>>(
    path: &Path,
    read: impl FnOnce(&Path) -> Result<T, E>,
) -> Option<Result<T, E>> {
    let held = match hold_entry(path) {
        Ok(Some(h)) => h,
        Ok(None) => return None,
        Err(e) => return Some(Err(super::IoError::file(path, e).into())),
    };
    let out = read(path);
    if out.is_ok() {
        held.mark_used();
    }
    Some(out)
}

/// An exclusive lock on the build of one entry, held by the process that
/// builds it and released on drop (or when the process dies).
pub struct BuildLock {
    _file: File,
}

/// The lock file of the entry `path`: `.<entry file name>.lock` beside it
/// (empty; it is never removed, since removing a lock file another process
/// has open would let a third one lock a new file of the same name).
pub fn build_lock_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map_or_else(|| "entry".to_string(), |n| n.to_string_lossy().into_owned());
    path.with_file_name(format!(".{name}.lock"))
}

/// Wait for the exclusive build lock of the entry `path` (an advisory
/// `flock` on [`build_lock_path`]), so that processes needing the same
/// entry build it once: the first builds, the others wait and then read
/// it. `None` when the lock file cannot be made or the file system has no
/// advisory locks: the caller builds anyway (at worst twice, never half an
/// entry, since entries are written by a rename).
pub fn lock_for_build(path: &Path) -> Option<BuildLock> {
    let file = std::fs::OpenOptions::new()
        .create(true)
        .truncate(false)
        .write(true)
        .open(build_lock_path(path))
        .ok()?;
    file.lock().ok()?;
    Some(BuildLock { _file: file })
}

/// What [`remove_entry`] did.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Removal {
    /// The entry was removed (or was already gone).
    Removed,
    /// A reader holds the entry; it was left in place.
    Busy,
}

/// Remove the entry `path` unless a reader holds it. The exclusive lock is
/// taken without waiting and kept until the file is unlinked, so no reader
/// starts on it in between (a reader that was waiting finds it gone).
pub fn remove_entry(path: &Path) -> std::io::Result<Removal> {
    let file = match File::open(path) {
        Ok(f) => f,
        Err(e) if e.kind() == ErrorKind::NotFound => return Ok(Removal::Removed),
        Err(e) => return Err(e),
    };
    match file.try_lock() {
        Ok(()) => {}
        Err(TryLockError::WouldBlock) => return Ok(Removal::Busy),
        // No advisory locks here: remove anyway (readers with the file
        // open keep reading the whole entry).
        Err(TryLockError::Error(_)) => {}
    }
    match std::fs::remove_file(path) {
        Ok(()) => Ok(Removal::Removed),
        Err(e) if e.kind() == ErrorKind::NotFound => Ok(Removal::Removed),
        Err(e) => Err(e),
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    /// Only our own names are entries; common practice, no source.
    #[test]
    fn entry_names() {
        assert_eq!(
            parse_entry_name("dictionary-0a1b2c.h5"),
            Some(("dictionary", "0a1b2c"))
        );
        assert_eq!(
            parse_entry_name("leadfield-ff.h5"),
            Some(("leadfield", "ff"))
        );
        assert_eq!(parse_entry_name(".dictionary-0a.h5.host.1.0.tmp"), None);
        assert_eq!(parse_entry_name("notes-0a.h5"), None);
        assert_eq!(parse_entry_name("dictionary-xyz.h5"), None);
        assert_eq!(parse_entry_name("dictionary-.h5"), None);
    }

    /// An entry another reader holds is not removed; once released it is.
    #[test]
    fn held_entries_are_not_removed() {
        let dir = std::env::temp_dir().join(format!("pw-cache-entries-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("leadfield-00ff.h5");
        std::fs::write(&path, b"entry").unwrap();
        let held = hold_entry(&path).unwrap().unwrap();
        assert_eq!(remove_entry(&path).unwrap(), Removal::Busy);
        assert!(path.is_file());
        drop(held);
        assert_eq!(remove_entry(&path).unwrap(), Removal::Removed);
        assert!(!path.exists());
        assert!(hold_entry(&path).unwrap().is_none());
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
