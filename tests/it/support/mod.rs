//! Helpers shared by the integration tests: running the binary (`cli`),
//! small input files (`files`), the pinned Python reference (`python`), the
//! batch, cohort, dictionary, render, report and solver fixtures, and the
//! one scratch-folder helper ([`scratch`]).
pub mod batch;
pub mod bem_head;
pub mod browser;
pub mod cli;
pub mod cohort;
pub mod dictionary;
pub mod files;
pub mod page;
pub mod python;
pub mod refusal;
pub mod render;
pub mod report;
pub mod solver;

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// `target/test-scratch`, where the tests write their files (kept after the
/// run so a person can look at them).
pub fn scratch_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("test-scratch")
}

/// A fresh empty folder `target/test-scratch/<name>` for one test's files.
///
/// All tests share one process, and run on parallel threads: two tests
/// asking for the same name would delete each other's files, so a name
/// asked for twice in one run panics.
pub fn scratch(name: &str) -> PathBuf {
    static TAKEN: Mutex<BTreeSet<String>> = Mutex::new(BTreeSet::new());
    let fresh = TAKEN
        .lock()
        .unwrap_or_else(|e| e.into_inner())
        .insert(name.to_string());
    assert!(fresh, "scratch folder {name:?} asked for twice in one run");
    let dir = scratch_root().join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("create scratch dir");
    dir
}
