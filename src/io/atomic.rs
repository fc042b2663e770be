//! Atomic writes: write to a temporary file beside the target, then rename.

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Distinguishes temporaries of concurrent writes within one process.
static NEXT_TEMPORARY: AtomicU64 = AtomicU64::new(0);

/// A fresh temporary path beside `path` (hidden, ending in `.tmp`, unique
/// per process and call) used while `path` is being written.
pub fn temporary_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".to_string());
    let n = NEXT_TEMPORARY.fetch_add(1, Ordering::Relaxed);
    path.with_file_name(format!(".{name}.{}.{n}.tmp", std::process::id()))
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
