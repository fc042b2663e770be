"""Writes the scikit-learn MultiTaskLasso fixtures for tests/it/solver_reference.rs.

Pinned versions (also in tests/reference/requirements.txt):
    numpy==2.4.6
    scikit-learn==1.9.1

Run:  python tests/reference/make_solver_fixtures.py   (writes solver_multitask_lasso_*.json here)

Convention (scikit-learn 1.9 MultiTaskLasso, fit_intercept=False): it minimises
(1/(2 n)) ||Y - X W||_F^2 + alpha ||W||_21 with n = number of samples (here the
channels). Multiplying by n gives our objective 1/2 ||Y - D X||_F^2 + lambda sum_j ||X_j||
with one atom per group and lambda = n_ch * alpha. coef_ is (k, n_atoms); the
fixture stores its transpose, row-major n_atoms x k, like /fit/coefficients.
"""

import json
import pathlib

import numpy as np
import sklearn
from sklearn.linear_model import MultiTaskLasso

HERE = pathlib.Path(__file__).resolve().parent


def gaussian_dictionary(rng, n_ch, n_atoms, normalise=True):
    d = rng.standard_normal((n_ch, n_atoms))
    if normalise:
        d /= np.linalg.norm(d, axis=0)
    return d


def correlated_dictionary(rng, n_ch, n_atoms, rho):
    """Columns with correlation rho^|i-j| between atoms i and j (AR(1) across atoms)."""
    d = np.empty((n_ch, n_atoms))
    d[:, 0] = rng.standard_normal(n_ch)
    for j in range(1, n_atoms):
        d[:, j] = rho * d[:, j - 1] + np.sqrt(1 - rho**2) * rng.standard_normal(n_ch)
    return d / np.linalg.norm(d, axis=0)


def targets(rng, d, k, n_true, noise):
    n_ch, n_atoms = d.shape
    support = rng.choice(n_atoms, size=n_true, replace=False)
    w = np.zeros((n_atoms, k))
    w[support] = rng.standard_normal((n_true, k))
    y = d @ w + noise * rng.standard_normal((n_ch, k))
    return y


def solve(d, y, ratio):
    n_ch = d.shape[0]
    lambda_max = np.max(np.linalg.norm(d.T @ y, axis=1))
    lam = ratio * lambda_max
    model = MultiTaskLasso(alpha=lam / n_ch, fit_intercept=False, tol=1e-14, max_iter=1_000_000)
    model.fit(d, y)
    tight = model.coef_.T.copy()
    # Self-check: a looser tolerance must agree, so the fixture is converged.
    loose = MultiTaskLasso(alpha=lam / n_ch, fit_intercept=False, tol=1e-11, max_iter=1_000_000)
    loose.fit(d, y)
    drift = np.max(np.abs(loose.coef_.T - tight)) / max(np.max(np.abs(tight)), 1e-300)
    assert drift < 1e-7, drift
    return lam, lambda_max, tight, model


def write(name, d, y, ratio, note):
    lam, lambda_max, coef, model = solve(d, y, ratio)
    out = {
        "source": f"scikit-learn {sklearn.__version__} MultiTaskLasso(alpha=lambda/n_ch, "
        "fit_intercept=False, tol=1e-14, max_iter=1e6); numpy " + np.__version__,
        "note": note,
        "n_ch": d.shape[0],
        "n_atoms": d.shape[1],
        "k": y.shape[1],
        "lambda": lam,
        "lambda_ratio": ratio,
        "lambda_max": lambda_max,
        "alpha": lam / d.shape[0],
        "dictionary_row_major": d.ravel().tolist(),
        "y_row_major": y.ravel().tolist(),
        "coefficients_row_major": coef.ravel().tolist(),
        "sklearn_n_iter": int(model.n_iter_),
        "sklearn_dual_gap": float(model.dual_gap_),
        "n_active": int(np.sum(np.any(coef != 0, axis=1))),
    }
    path = HERE / f"solver_multitask_lasso_{name}.json"
    path.write_text(json.dumps(out))
    print(path.name, d.shape, y.shape, "active", out["n_active"], "n_iter", out["sklearn_n_iter"])


def main():
    rng = np.random.default_rng(20240601)
    d = gaussian_dictionary(rng, 20, 40)
    write("gaussian_k1", d, targets(rng, d, 1, 4, 0.05), 0.08, "Gaussian atoms, k=1")
    d = correlated_dictionary(rng, 32, 100, 0.9)
    write("correlated_k3", d, targets(rng, d, 3, 5, 0.05), 0.2, "AR(1) rho=0.9 atoms, k=3 joint")
    d = gaussian_dictionary(rng, 16, 200)
    write("overcomplete_k2", d, targets(rng, d, 2, 3, 0.02), 0.15, "16 x 200 overcomplete, k=2")
    d = gaussian_dictionary(rng, 50, 30)
    write("tall_k4", d, targets(rng, d, 4, 6, 0.1), 0.1, "tall 50 x 30, k=4")
    d = correlated_dictionary(rng, 24, 80, 0.95)
    write("correlated_k1", d, targets(rng, d, 1, 4, 0.05), 0.05, "AR(1) rho=0.95 atoms, k=1, small lambda")
    d = gaussian_dictionary(rng, 30, 60, normalise=False) * rng.uniform(0.3, 3.0, size=60)
    write("unnormalised_k2", d, targets(rng, d, 2, 4, 0.05), 0.05, "columns not unit norm, k=2")


if __name__ == "__main__":
    main()
