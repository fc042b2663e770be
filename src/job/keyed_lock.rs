//! In-process locks keyed by a string, so that parallel jobs needing the
//! same cache entry build it once while jobs on other entries go on.

use std::collections::HashMap;
use std::sync::{Arc, Mutex, OnceLock};

/// A map from keys to mutexes, created on first use.
#[derive(Default)]
pub struct KeyedLocks {
    map: Mutex<HashMap<String, Arc<Mutex<()>>>>,
}

impl KeyedLocks {
    /// An empty map.
    pub fn new() -> Self {
        Self::default()
    }

    /// Run `f` holding the lock of `key`; other callers with the same key
    /// wait, callers with other keys do not. A panic inside a previous
    /// holder does not poison the key: the lock only orders work, it guards
    /// no data.
    pub fn with_lock<T>(&self, key: &str, f: impl FnOnce() -> T) -> T {
        let entry = {
            let mut map = self.map.lock().unwrap_or_else(|e| e.into_inner());
            map.entry(key.to_string()).or_default().clone()
        };
        let _guard = entry.lock().unwrap_or_else(|e| e.into_inner());
        f()
    }

    /// Run `f` holding the lock of `key` when no other caller holds it;
    /// `None` (and `f` not run) when one does. Eviction uses it to leave an
    /// entry alone while a job of this process builds or reads it.
    pub fn try_with_lock<T>(&self, key: &str, f: impl FnOnce() -> T) -> Option<T> {
        let entry = {
            let mut map = self.map.lock().unwrap_or_else(|e| e.into_inner());
            map.entry(key.to_string()).or_default().clone()
        };
        let _guard = match entry.try_lock() {
            Ok(g) => g,
            Err(std::sync::TryLockError::Poisoned(e)) => e.into_inner(),
            Err(std::sync::TryLockError::WouldBlock) => return None,
        };
        Some(f())
    }
}

/// The process-wide locks around content-hash cache builds and removals
/// (keyed by the entry's path, [`entry_lock_key`]). Across processes
/// builds take the entry's file lock too ([`with_entry_lock`]); where file
/// locks do not work, two processes may both build an entry, never read
/// half of one (atomic writes), and an entry being read is never removed.
pub fn cache_locks() -> &'static KeyedLocks {
    static LOCKS: OnceLock<KeyedLocks> = OnceLock::new();
    LOCKS.get_or_init(KeyedLocks::new)
}

/// The key of the cache entry `path` in [`cache_locks`].
pub fn entry_lock_key(path: &std::path::Path) -> String {
    path.to_string_lossy().into_owned()
}

/// Run `f` holding the build lock of the cache entry `path`: this
/// process's lock of [`cache_locks`], then the entry's file lock
/// ([`crate::io::cache_entries::lock_for_build`]), so that threads of this
/// process and processes of other shards (on this machine, or on others
/// where the shared file system passes locks on) build the entry once.
pub fn with_entry_lock<T>(path: &std::path::Path, f: impl FnOnce() -> T) -> T {
    cache_locks().with_lock(&entry_lock_key(path), || {
        let _held = crate::io::cache_entries::lock_for_build(path);
        f()
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use std::sync::atomic::{AtomicUsize, Ordering};

    /// Threads on one key never overlap inside the lock (checked with a
    /// counter of holders); common practice, no source.
    #[test]
    fn one_holder_per_key() {
        let locks = KeyedLocks::new();
        let inside = AtomicUsize::new(0);
        let max = AtomicUsize::new(0);
        std::thread::scope(|s| {
            for _ in 0..4 {
                s.spawn(|| {
                    for _ in 0..50 {
                        locks.with_lock("entry", || {
                            let n = inside.fetch_add(1, Ordering::SeqCst) + 1;
                            max.fetch_max(n, Ordering::SeqCst);
                            std::thread::yield_now();
                            inside.fetch_sub(1, Ordering::SeqCst);
                        });
                    }
                });
            }
        });
        assert_eq!(max.load(Ordering::SeqCst), 1);
    }

    /// `try_with_lock` skips a key held elsewhere and takes a free one;
    /// common practice, no source.
    #[test]
    fn try_skips_a_held_key() {
        let locks = KeyedLocks::new();
        let inner = locks.with_lock("a", || {
            (
                locks.try_with_lock("a", || 1),
                locks.try_with_lock("b", || 2),
            )
        });
        assert_eq!(inner, (None, Some(2)));
        assert_eq!(locks.try_with_lock("a", || 3), Some(3));
    }
}
