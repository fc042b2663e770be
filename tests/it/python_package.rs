//! The Python package (`python/`): built by maturin and installed into the
//! reference environment (`support::python`), then its pytest suite
//! (`python/tests`) run; the test fails with pytest's output. The suite's
//! references (the Haufe transform in NumPy, the command line's result.h5
//! read with h5py) are named beside its checks.

use std::process::Command;

use crate::support;

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn python_package_pytest_suite_passes() {
    let py = support::python::python();
    match support::python::install_package(&py) {
        Ok(true) => {}
        Ok(false) => panic!(
            "the Python package's tests need maturin, pytest and scikit-learn in the reference \
             environment (tests/reference/requirements.txt)"
        ),
        Err(e) => panic!("{e}"),
    }
    let dir = support::scratch("python_package");
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let out = Command::new(&py)
        .args(["-m", "pytest", "-q", "-p", "no:cacheprovider", "--basetemp"])
        .arg(dir.join("pytest"))
        .arg(root.join("python").join("tests"))
        .current_dir(root)
        .env("PATCHWISE_BIN", env!("CARGO_BIN_EXE_patchwise"))
        .env("PATCHWISE_TEST_CACHE", dir.join("cache"))
        .output()
        .expect("run pytest");
    assert!(
        out.status.success(),
        "the Python package's tests failed (exit {:?}):\nstdout:\n{}\nstderr:\n{}",
        out.status.code(),
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    // A check pytest skipped did not run: it must not pass here.
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        !stdout.contains(" skipped"),
        "some of the Python package's tests did not run:\n{stdout}"
    );
}
