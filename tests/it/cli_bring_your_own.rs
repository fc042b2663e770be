//! Files made outside the project: a lead field imported from NumPy arrays,
//! and a dictionary holding only /dictionary/atoms and /dictionary/group
//! fitted from the CLI (issues 3 and 4). The reference for the fit is
//! scikit-learn 1.9.1's MultiTaskLasso (alpha = λ / n_ch, fit_intercept =
//! False; one atom per group), run by the test's Python.

use crate::support;
use crate::support::cli::patchwise;

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn imported_leadfield_keeps_its_values_and_is_average_referenced() {
    let py = support::python::python();
    let dir = support::scratch("cli_import_leadfield");
    support::python::run(
        &py,
        r#"
import sys, os, numpy as np
d = sys.argv[1]
rng = np.random.default_rng(3)
G = rng.standard_normal((8, 50))
pos = rng.uniform(-50, 50, (50, 3))
n = rng.standard_normal((50, 3)); n /= np.linalg.norm(n, axis=1)[:, None]
np.save(os.path.join(d, "gain.npy"), G)
np.save(os.path.join(d, "pos.npy"), pos)
np.save(os.path.join(d, "nrm.npy"), n)
bad = n.copy(); bad[7] *= 2.0
np.save(os.path.join(d, "bad_nrm.npy"), bad)
open(os.path.join(d, "ch.txt"), "w").write("\n".join(["Fz","Cz","Pz","Oz","C3","C4","F3","F4"]))
"#,
        &[&dir],
    );
    let ok = patchwise(
        &[
            "leadfield",
            "import",
            "--gain",
            "gain.npy",
            "--positions",
            "pos.npy",
            "--normals",
            "nrm.npy",
            "--channels",
            "ch.txt",
            "--out",
            "lf.h5",
        ],
        &dir,
    );
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    let bad = patchwise(
        &[
            "leadfield",
            "import",
            "--gain",
            "gain.npy",
            "--positions",
            "pos.npy",
            "--normals",
            "bad_nrm.npy",
            "--channels",
            "ch.txt",
            "--out",
            "bad.h5",
        ],
        &dir,
    );
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("row 7"));
    assert!(!dir.join("bad.h5").exists());
    support::python::run(
        &py,
        r#"
import sys, os, h5py, numpy as np
d = sys.argv[1]
f = h5py.File(os.path.join(d, "lf.h5"), "r")
G = np.load(os.path.join(d, "gain.npy"))
# Re-referencing to the common average subtracts the channel mean of each column.
assert np.allclose(f["leadfield/gain"][()], G - G.mean(axis=0), rtol=0, atol=1e-12)
assert np.allclose(f["sources/positions_mm"][()], np.load(os.path.join(d, "pos.npy")), rtol=1e-12, atol=1e-12)
"#,
        &[&dir],
    );
}

#[test]
#[cfg_attr(
    no_reference_python,
    ignore = "no usable Python here: reference check not run"
)]
fn external_dictionary_fit_matches_scikit_learn() {
    let py = support::python::python();
    let dir = support::scratch("cli_external_dictionary");
    support::python::run(
        &py,
        r#"
import sys, os, h5py, numpy as np
from sklearn.linear_model import MultiTaskLasso
d = sys.argv[1]
rng = np.random.default_rng(7)
n_ch, n_atoms = 20, 60
D = rng.standard_normal((n_ch, n_atoms)); D /= np.linalg.norm(D, axis=0)
X = np.zeros((n_atoms, 2)); X[[3, 17, 40]] = rng.standard_normal((3, 2))
Y = D @ X + 0.01 * rng.standard_normal((n_ch, 2))
with h5py.File(os.path.join(d, "dict.h5"), "w") as f:
    f["dictionary/atoms"] = D
    f["dictionary/group"] = np.arange(n_atoms)
with h5py.File(os.path.join(d, "badgroup.h5"), "w") as f:
    f["dictionary/atoms"] = D
    g = np.arange(n_atoms); g[5] = n_atoms + 3
    f["dictionary/group"] = g
np.save(os.path.join(d, "y.npy"), Y)
np.save(os.path.join(d, "y_short.npy"), Y[:-1])
lmax = np.max(np.linalg.norm(D.T @ Y, axis=1))
lam = 0.2 * lmax
m = MultiTaskLasso(alpha=lam / n_ch, fit_intercept=False, tol=1e-14, max_iter=1000000).fit(D, Y)
np.save(os.path.join(d, "ref.npy"), m.coef_.T)
"#,
        &[&dir],
    );
    let out = patchwise(
        &[
            "attribute",
            "--dictionary",
            "dict.h5",
            "--patterns",
            "y.npy",
            "--joint",
            "--reference",
            "none",
            "--lambda-ratio",
            "0.2",
            "--resamples",
            "0",
            "--out",
            "res",
        ],
        &dir,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    support::python::run(
        &py,
        r#"
import sys, os, h5py, numpy as np
d = sys.argv[1]
f = h5py.File(os.path.join(d, "res", "result.h5"), "r")
X = f["fit/coefficients"][()]
ref = np.load(os.path.join(d, "ref.npy"))
err = np.linalg.norm(X - ref) / np.linalg.norm(ref)
assert err < 1e-6, err
assert f["fit/duality_gap"][()].max() <= 1e-8
assert "fit/coefficients_refit" in f
"#,
        &[&dir],
    );
    // Bad inputs: λ ratio out of range, wrong rows, group index out of range.
    for (args, needle) in [
        (
            vec![
                "--dictionary",
                "dict.h5",
                "--patterns",
                "y.npy",
                "--lambda-ratio",
                "0",
            ],
            "lambda-ratio",
        ),
        (
            vec![
                "--dictionary",
                "dict.h5",
                "--patterns",
                "y.npy",
                "--lambda-ratio",
                "1.5",
            ],
            "lambda-ratio",
        ),
        (
            vec!["--dictionary", "dict.h5", "--patterns", "y_short.npy"],
            "rows",
        ),
        (
            vec!["--dictionary", "badgroup.h5", "--patterns", "y.npy"],
            "group",
        ),
    ] {
        let mut full = vec!["attribute"];
        full.extend(args);
        full.extend(["--resamples", "0", "--out", "bad"]);
        let out = patchwise(&full, &dir);
        assert_eq!(out.status.code(), Some(2), "{full:?}");
        assert!(
            String::from_utf8_lossy(&out.stderr).contains(needle),
            "{full:?}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        assert!(!dir.join("bad").exists());
    }
}
