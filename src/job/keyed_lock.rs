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
}

/// The process-wide locks around content-hash cache builds (keyed by the
/// entry's hash). Across processes the cache relies on atomic writes
/// instead: two processes may both build an entry, never read half of one.
pub fn cache_locks() -> &'static KeyedLocks {
    static LOCKS: OnceLock<KeyedLocks> = OnceLock::new();
    LOCKS.get_or_init(KeyedLocks::new)
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
}
