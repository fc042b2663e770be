//! A small result folder for the report tests, made by the real binary.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

use super::cli::patchwise;

/// Run `patchwise demo` on the 5k template with 10 resamples into
/// `root`/demo (its own cache under `root`), which also writes report.html;
/// return the result folder.
pub fn demo_result(root: &Path) -> PathBuf {
    let out = root.join("demo");
    let cache = root.join("cache");
    let run = patchwise(
        &[
            "demo",
            "--sources",
            "template-5k",
            "--resamples",
            "10",
            "--out",
            out.to_str().unwrap(),
            "--cache",
            cache.to_str().unwrap(),
        ],
        root,
    );
    assert!(
        run.status.success(),
        "demo failed: {}",
        String::from_utf8_lossy(&run.stderr)
    );
    assert!(
        out.join("report.html").is_file(),
        "demo wrote no report.html"
    );
    out
}
