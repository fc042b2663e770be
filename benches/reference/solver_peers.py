"""Times peer multi-task LASSO solvers on the dictionary of benches/solver.rs.

Pinned versions: numpy==2.4.6, scikit-learn==1.9.1, skglm==0.5 (numba 0.68.1).
Run:  python benches/reference/solver_peers.py [k ...]   (default: 1 4)
      PEERS=skglm python benches/reference/solver_peers.py 1   (skglm only)

The dictionary and patterns are rebuilt here from the formula documented at the
top of benches/solver.rs (no file exchange). Each solver runs the same path:
20 lambda values log-spaced from lambda_max to 0.05 lambda_max, warm-started,
one atom per group. scikit-learn stops when its duality gap <= tol * ||Y||_F^2,
so tol = 0.5e-6 matches our relative gap 1e-6 (relative to 1/2 ||Y||_F^2).
skglm stops on a KKT-violation measure instead; for both, this script reports
the relative duality gap of every solution computed with our formula, so the
comparison says what accuracy each reached. skglm is timed after a first
(compiling) call.
"""

import os
import sys
import time
import warnings

import numpy as np
import sklearn
from sklearn.linear_model import MultiTaskLasso as SkMultiTaskLasso

N_CH, N_SEEDS = 64, 20_000
SIGMAS = (0.15, 0.25, 0.40)


def spiral(n, span, radius):
    i = np.arange(n)
    golden = np.pi * (3.0 - np.sqrt(5.0))
    z = 1.0 - span * (i + 0.5) / n
    rho = np.sqrt(np.maximum(1.0 - z * z, 0.0))
    phi = i * golden
    return radius * np.stack([rho * np.cos(phi), rho * np.sin(phi), z], axis=1)


def dictionary():
    e = spiral(N_CH, 1.2, 1.0)
    p = spiral(N_SEEDS, 1.3, 0.85)
    d2 = ((e[:, None, :] - p[None, :, :]) ** 2).sum(axis=2)  # n_ch x n_seeds
    atoms = np.empty((N_CH, 3 * N_SEEDS))
    for w, s in enumerate(SIGMAS):
        atoms[:, w::3] = np.exp(-d2 / (2 * s * s))
    atoms -= atoms.mean(axis=0)
    atoms /= np.linalg.norm(atoms, axis=0)
    return atoms


def patterns(d, k):
    y = np.zeros((N_CH, k))
    c = np.arange(N_CH)
    for q in range(k):
        for t, a in enumerate((1.0, -0.7, 0.5)):
            y[:, q] += a * d[:, (7919 * (3 * q + t) + 12345) % d.shape[1]]
        y[:, q] += 0.02 * np.sin(1.3 * c + 0.7 * q + 1.0)
    return y


def relative_gap(d, y, w, lam):
    """Our certificate: primal minus dual at theta = R / max(lam, max_j ||d_j^T R||)."""
    r = y - d @ w
    corr = np.linalg.norm(d.T @ r, axis=1)
    primal = 0.5 * np.sum(r * r) + lam * np.sum(np.linalg.norm(w, axis=1))
    s = max(lam, corr.max())
    dual = 0.5 * np.sum(y * y) - 0.5 * np.sum((y - (lam / s) * r) ** 2)
    return (primal - dual) / (0.5 * np.sum(y * y))


def run_path(make, d, y, lambdas):
    model = make()
    gaps, active = [], 0
    start = time.perf_counter()
    for lam in lambdas:
        model.set_params(alpha=lam / N_CH)
        model.fit(d, y)
    elapsed = time.perf_counter() - start
    # Gaps are recomputed afterwards (not timed), refitting each lambda the same way.
    model = make()
    for lam in lambdas:
        model.set_params(alpha=lam / N_CH)
        model.fit(d, y)
        w = model.coef_.T
        gaps.append(relative_gap(d, y, w, lam))
        active = int(np.sum(np.any(w != 0, axis=1)))
    return elapsed, max(gaps), active


def main():
    ks = [int(a) for a in sys.argv[1:]] or [1, 4]
    d = dictionary()
    print(f"numpy {np.__version__}, scikit-learn {sklearn.__version__}, dictionary {d.shape}")
    for k in ks:
        y = patterns(d, k)
        lmax = np.linalg.norm(d.T @ y, axis=1).max()
        lambdas = lmax * np.exp(np.linspace(0.0, np.log(0.05), 20))
        warnings.simplefilter("ignore")
        # PEERS=skglm skips scikit-learn, whose path takes many minutes here.
        if os.environ.get("PEERS", "all") != "skglm":
            t, gap, active = run_path(
                lambda: SkMultiTaskLasso(fit_intercept=False, tol=0.5e-6, max_iter=100_000, warm_start=True),
                d, y, lambdas)
            print(f"k={k} scikit-learn MultiTaskLasso: {t:.3f} s, worst relative gap {gap:.2e}, active {active}")
        try:
            import skglm
            from skglm import MultiTaskLasso as GlmMultiTaskLasso
        except ImportError:
            print("skglm not installed")
            continue
        make = lambda: GlmMultiTaskLasso(fit_intercept=False, tol=1e-6, warm_start=True)
        run_path(make, d, y, lambdas[:2])  # compile
        t, gap, active = run_path(make, d, y, lambdas)
        print(f"k={k} skglm {skglm.__version__} MultiTaskLasso (tol 1e-6): {t:.3f} s, worst relative gap {gap:.2e}, active {active}")


if __name__ == "__main__":
    main()
