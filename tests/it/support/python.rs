//! Locates a Python interpreter with the pinned reference libraries
//! (tests/reference/requirements.txt: numpy 2.4.6, h5py 3.16.0, scipy 1.17.1,
//! scikit-learn 1.9.1) and runs reference scripts with it.
//!
//! Order: the interpreter named by `PATCHWISE_PYTHON`; else a virtual
//! environment at `target/pyenv`, created once (guarded by a lock file) with
//! `pip install` of the pinned versions, and updated when the pins change
//! (the installed pins are kept as `target/pyenv/requirements.txt`); the
//! search runs once per test run. [`install_package`] builds and installs
//! the Python package (`python/`) into it.
//! When neither works, a test calling [`python`] fails. Where the build
//! found no Python at all (`build.rs` sets `no_reference_python`), every
//! such test carries `#[cfg_attr(no_reference_python, ignore = ...)]` and
//! the harness lists it as ignored: counted and shown as not run, never as
//! passed.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

/// The pinned requirements file.
pub fn requirements() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/requirements.txt")
}

fn has_references(python: &Path) -> bool {
    Command::new(python)
        .args(["-c", "import numpy, h5py"])
        .output()
        .map(|o| o.status.success())
        .unwrap_or(false)
}

fn create_venv() -> Result<PathBuf, String> {
    let target = Path::new(env!("CARGO_MANIFEST_DIR")).join("target");
    std::fs::create_dir_all(&target).map_err(|e| e.to_string())?;
    let venv = target.join("pyenv");
    let python = venv.join("bin").join("python");
    let lock_path = target.join("pyenv.lock");
    let lock = std::fs::File::create(&lock_path).map_err(|e| e.to_string())?;
    // Several test runs may race to create the environment; the lock
    // serialises them and the later ones find it ready. File::lock needs Rust
    // 1.89, which hdf5-pure 0.47 already requires of the whole crate.
    #[allow(clippy::incompatible_msrv)]
    lock.lock().map_err(|e| e.to_string())?;
    let pins = std::fs::read_to_string(requirements()).map_err(|e| e.to_string())?;
    let installed = venv.join("requirements.txt");
    if has_references(&python) && std::fs::read_to_string(&installed).is_ok_and(|p| p == pins) {
        return Ok(python);
    }
    let status = Command::new("python3")
        .args(["-m", "venv"])
        .arg(&venv)
        .status()
        .map_err(|e| format!("python3 -m venv: {e}"))?;
    if !status.success() {
        return Err("python3 -m venv failed".to_string());
    }
    let status = Command::new(&python)
        .args(["-m", "pip", "install", "--quiet", "-r"])
        .arg(requirements())
        .status()
        .map_err(|e| format!("pip install: {e}"))?;
    if !status.success() || !has_references(&python) {
        return Err("pip install -r tests/reference/requirements.txt failed".to_string());
    }
    std::fs::write(&installed, pins).map_err(|e| e.to_string())?;
    Ok(python)
}

/// Build the Python package (`python/`, by maturin, the crate into
/// `target/python`) and install it into `python`'s environment, one test run
/// at a time (a lock file). An unchanged crate makes cargo's part a no-op.
/// `Ok(false)` when that environment lacks maturin or pytest (a
/// `PATCHWISE_PYTHON` of the user's); an `Err` holds pip's output.
pub fn install_package(python: &Path) -> Result<bool, String> {
    let has_tools = Command::new(python)
        .args(["-c", "import maturin, pytest, sklearn"])
        .output()
        .is_ok_and(|o| o.status.success());
    if !has_tools {
        return Ok(false);
    }
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let target = root.join("target");
    let lock =
        std::fs::File::create(target.join("python-package.lock")).map_err(|e| e.to_string())?;
    #[allow(clippy::incompatible_msrv)]
    lock.lock().map_err(|e| e.to_string())?;
    let mut pip = Command::new(python);
    pip.args([
        "-m",
        "pip",
        "install",
        "--quiet",
        "--no-deps",
        "--no-build-isolation",
    ])
    .arg(root.join("python"))
    .env("CARGO_TARGET_DIR", target.join("python"));
    // pip runs the build backend's `maturin` command from the environment's
    // own bin folder, which need not be on PATH.
    if let Some(bin) = python.parent() {
        let path = std::env::var_os("PATH").unwrap_or_default();
        let mut paths = vec![bin.to_path_buf()];
        paths.extend(std::env::split_paths(&path));
        if let Ok(joined) = std::env::join_paths(paths) {
            pip.env("PATH", joined);
        }
    }
    // The test harness's own CARGO_* variables would describe this crate,
    // not the package's; cargo under maturin sets its own.
    for (name, _) in std::env::vars_os() {
        let name = name.to_string_lossy().to_string();
        if name.starts_with("CARGO_") && name != "CARGO_HOME" {
            pip.env_remove(&name);
        }
    }
    let out = pip
        .output()
        .map_err(|e| format!("pip install ./python: {e}"))?;
    if !out.status.success() {
        return Err(format!(
            "pip install ./python failed:\nstdout:\n{}\nstderr:\n{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        ));
    }
    Ok(true)
}

/// A Python with numpy and h5py; panics (the test fails) when there is
/// none, since a reference check that cannot run must not pass.
pub fn python() -> PathBuf {
    static FOUND: OnceLock<Result<PathBuf, String>> = OnceLock::new();
    let found = FOUND.get_or_init(|| match std::env::var_os("PATCHWISE_PYTHON") {
        Some(p) => {
            let p = PathBuf::from(p);
            if has_references(&p) {
                Ok(p)
            } else {
                Err(format!(
                    "PATCHWISE_PYTHON={} lacks numpy or h5py",
                    p.display()
                ))
            }
        }
        None => create_venv(),
    });
    match found {
        Ok(p) => p.clone(),
        Err(e) => panic!(
            "python reference not available: {e} (needs python3 with venv and pip able to \
             install tests/reference/requirements.txt, or PATCHWISE_PYTHON)"
        ),
    }
}

/// Run `script` with `python`, passing `args`; panics with Python's output
/// when the script fails (its assertions are the test).
pub fn run(python: &Path, script: &str, args: &[&Path]) {
    let out = Command::new(python)
        .arg("-c")
        .arg(script)
        .args(args)
        .output()
        .expect("run python");
    assert!(
        out.status.success(),
        "python script failed:\nstdout:\n{}\nstderr:\n{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}
