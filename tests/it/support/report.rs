//! A small result folder for the report tests, made by the real binary.

use std::path::{Path, PathBuf};

use super::cli::patchwise;

/// Run `patchwise demo` on the 5k template into `root`/`name` with the
/// cache in `root`/cache and the `extra` arguments; panic unless it
/// succeeds. Returns the result folder.
pub fn run_demo(root: &Path, name: &str, extra: &[&str]) -> PathBuf {
    let out = root.join(name);
    let _ = std::fs::remove_dir_all(&out);
    let cache = root.join("cache");
    let mut args = vec![
        "demo",
        "--sources",
        "template-5k",
        "--out",
        out.to_str().unwrap(),
        "--cache",
        cache.to_str().unwrap(),
    ];
    args.extend_from_slice(extra);
    let run = patchwise(&args, root);
    assert!(
        run.status.success(),
        "demo failed: {}",
        String::from_utf8_lossy(&run.stderr)
    );
    out
}

/// The demo with 10 resamples in `root`/demo, which also writes
/// report.html; returns the result folder.
pub fn demo_result(root: &Path) -> PathBuf {
    let out = run_demo(root, "demo", &["--resamples", "10"]);
    assert!(
        out.join("report.html").is_file(),
        "demo wrote no report.html"
    );
    out
}

/// `patchwise dipole` on the demo's decoder (10-10, template-5k) plus `extra`.
pub fn dipole_on_demo(dir: &Path, extra: &[&str]) -> std::process::Output {
    let mut args = vec![
        "dipole",
        "--decoder",
        "demo/decoder.h5",
        "--montage",
        "10-10",
        "--sources",
        "template-5k",
    ];
    args.extend_from_slice(extra);
    patchwise(&args, dir)
}
