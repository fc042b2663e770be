//! Decides, once per build, which outside tools the tests can use, so that a
//! check which cannot run here is listed by the test harness as `ignored`
//! (counted and shown as not run), never as passed.
//!
//! - `no_reference_python`: no Python able to make the reference
//!   environment (`python3` with `venv` and `ensurepip`, or the interpreter
//!   named by `PATCHWISE_PYTHON`). The reference checks are then ignored.
//! - `no_browser`: no Chromium (`PATCHWISE_CHROMIUM`, `/usr/bin/chromium`,
//!   or `chromium` on the PATH). The browser checks are then ignored.
//!
//! With `CI=true` neither flag is set: a missing tool fails its checks. The
//! library itself does not read these flags. After installing Python or
//! Chromium, `touch build.rs` (or `cargo clean -p patchwise`) to look again.

use std::path::{Path, PathBuf};
use std::process::Command;

fn succeeds(program: &Path, args: &[&str]) -> bool {
    Command::new(program)
        .args(args)
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false)
}

fn on_path(name: &str) -> Option<PathBuf> {
    let paths = std::env::var_os("PATH")?;
    std::env::split_paths(&paths)
        .map(|d| d.join(name))
        .find(|p| p.is_file())
}

fn python_available() -> bool {
    match std::env::var_os("PATCHWISE_PYTHON") {
        Some(p) => succeeds(Path::new(&p), &["-c", "import numpy, h5py"]),
        None => on_path("python3").is_some_and(|p| succeeds(&p, &["-c", "import venv, ensurepip"])),
    }
}

fn browser_available() -> bool {
    std::env::var_os("PATCHWISE_CHROMIUM").is_some()
        || Path::new("/usr/bin/chromium").is_file()
        || on_path("chromium").is_some()
}

fn main() {
    println!("cargo::rustc-check-cfg=cfg(no_reference_python)");
    println!("cargo::rustc-check-cfg=cfg(no_browser)");
    println!("cargo::rerun-if-changed=build.rs");
    println!("cargo::rerun-if-env-changed=CI");
    println!("cargo::rerun-if-env-changed=PATCHWISE_PYTHON");
    println!("cargo::rerun-if-env-changed=PATCHWISE_CHROMIUM");
    let ci = std::env::var("CI").is_ok_and(|v| v == "true");
    if !ci && !python_available() {
        println!(
            "cargo::warning=no usable Python (python3 with venv, or PATCHWISE_PYTHON with numpy and h5py): the reference checks will be listed as ignored"
        );
        println!("cargo::rustc-cfg=no_reference_python");
    }
    if !ci && !browser_available() {
        println!("cargo::warning=no chromium: the browser checks will be listed as ignored");
        println!("cargo::rustc-cfg=no_browser");
    }
}
