//! Atomic writes: write to a temporary file beside the target, then rename.

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Distinguishes temporaries of concurrent writes within one process.
static NEXT_TEMPORARY: AtomicU64 = AtomicU64::new(0);

/// This machine's name as it appears in temporary file names: the kernel's
/// host name with every character other than an ASCII letter, digit or `-`
/// replaced by `-` (so it holds no dot), or `host` where it cannot be read.
/// Folders shared between machines (a cluster's cache) thereby keep each
/// machine's temporaries apart. Read once per process.
pub fn host_tag() -> String {
    static TAG: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    TAG.get_or_init(read_host_tag).clone()
}

fn read_host_tag() -> String {
    let name = fs::read_to_string("/proc/sys/kernel/hostname").unwrap_or_default();
    let tag: String = name
        .trim()
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || c == '-' {
                c
            } else {
                '-'
            }
        })
        .collect();
    if tag.is_empty() {
        "host".to_string()
    } else {
        tag
    }
}

/// A fresh temporary path beside `path` used while `path` is being written:
/// `.<name>.<host>.<pid>.<n>.tmp`, hidden, unique per machine, process and
/// call.
pub fn temporary_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    let n = NEXT_TEMPORARY.fetch_add(1, Ordering::Relaxed);
    path.with_file_name(format!(
        ".{name}.{}.{}.{n}.tmp",
        host_tag(),
        std::process::id()
    ))
}

/// Write `bytes` to `path` atomically: a reader sees either the old file or
/// the complete new one, never a partial write.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let tmp = temporary_path(path);
    let result = (|| {
        let mut file = fs::File::create(&tmp)?;
        file.write_all(bytes)?;
        file.sync_all()?;
        fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}

/// The target name and writer pid of a temporary file name made by
/// [`temporary_path`] on the machine tagged `host`, if it is one.
fn parse_temporary<'a>(file_name: &'a str, host: &str) -> Option<(&'a str, u32)> {
    let rest = file_name.strip_prefix('.')?.strip_suffix(".tmp")?;
    let (rest, n) = rest.rsplit_once('.')?;
    let (rest, pid) = rest.rsplit_once('.')?;
    let (target, tag) = rest.rsplit_once('.')?;
    let digits = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    if tag != host || !digits(n) || !digits(pid) || target.is_empty() {
        return None;
    }
    Some((target, pid.parse().ok()?))
}

/// Remove the temporaries in `dir` that a killed writer on this machine
/// left behind (for the target `target` only, or for any target): a
/// temporary file, or a temporary folder (a staged output folder), whose
/// process no longer exists. Temporaries of live processes and of other
/// machines are left alone, and where processes cannot be looked up (no
/// `/proc`) nothing is removed. Returns how many were removed.
pub fn remove_dead_temporaries(dir: &Path, target: Option<&str>) -> usize {
    let proc = Path::new("/proc");
    if !proc.join("self").exists() {
        return 0;
    }
    let Ok(entries) = fs::read_dir(dir) else {
        return 0;
    };
    let host = host_tag();
    let mut removed = 0;
    for entry in entries.flatten() {
        let file_name = entry.file_name().to_string_lossy().into_owned();
        let Some((name, pid)) = parse_temporary(&file_name, &host) else {
            continue;
        };
        if target.is_some_and(|t| t != name) || proc.join(pid.to_string()).exists() {
            continue;
        }
        // A staged folder is a directory; anything else (a file, a link)
        // is removed as a file, never followed.
        let is_folder = entry.file_type().is_ok_and(|t| t.is_dir());
        let gone = if is_folder {
            fs::remove_dir_all(entry.path())
        } else {
            fs::remove_file(entry.path())
        };
        if gone.is_ok() {
            removed += 1;
        }
    }
    removed
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn temporary_names_parse_back_to_their_target_and_pid() {
        let path = temporary_path(Path::new("/x/dictionary-ab.h5"));
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        assert_eq!(
            parse_temporary(&name, &host_tag()),
            Some(("dictionary-ab.h5", std::process::id()))
        );
        assert_eq!(parse_temporary(&name, "other-machine"), None);
        assert_eq!(parse_temporary(".a.h5.tmp", &host_tag()), None);
        assert_eq!(parse_temporary("dictionary-ab.h5", &host_tag()), None);
    }
}
