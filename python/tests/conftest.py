"""Fixtures of the package's tests: a shared cache of lead fields and
dictionaries, the small problem every test attributes, and simulated trials.

The trials are an invented scenario of our own (no recordings): on the 19
channels of the 10-20 system, class "right" adds a fixed spatial pattern to
Gaussian background activity with spatially correlated noise.

Run by the Rust test ``python_package`` (tests/it/python_package.rs) with
``PATCHWISE_BIN`` (the command line) and ``PATCHWISE_TEST_CACHE`` set; alone,
``python -m pytest python/tests`` after ``pip install ./python``.
"""

import os
from pathlib import Path

import h5py
import numpy as np
import pytest

CHANNELS = [
    "Fp1", "Fp2", "F7", "F3", "Fz", "F4", "F8", "T7", "C3", "Cz",
    "C4", "T8", "P7", "P3", "Pz", "P4", "P8", "O1", "O2",
]

# The small problem: the 10-20 montage on the 5k template, few resamples,
# no perturbed heads (each would be a lead field of its own).
SMALL = dict(
    montage="10-20",
    sources="template-5k",
    radii_mm=[10.0, 20.0],
    resamples=8,
    forward_perturbations=0,
)


@pytest.fixture(scope="session")
def cache(tmp_path_factory):
    given = os.environ.get("PATCHWISE_TEST_CACHE")
    return Path(given) if given else tmp_path_factory.mktemp("cache")


@pytest.fixture(scope="session")
def trials():
    """(X, y, pattern): 400 trials x 19 channels, two classes."""
    rng = np.random.default_rng(20140)
    n, n_ch = 400, len(CHANNELS)
    mixing = rng.normal(size=(n_ch, n_ch)) / np.sqrt(n_ch)
    background = rng.normal(size=(n, n_ch)) @ mixing.T
    pattern = np.exp(-0.5 * ((np.arange(n_ch) - 9.0) / 2.5) ** 2)  # around C3/Cz/C4
    y = rng.integers(0, 2, size=n)
    X = background + 0.8 * np.outer(y, pattern) + 0.3 * rng.normal(size=(n, n_ch))
    return X, y, pattern


@pytest.fixture(scope="session")
def three_class_trials(trials):
    X, _, pattern = trials
    rng = np.random.default_rng(20141)
    y = rng.integers(0, 3, size=X.shape[0])
    second = np.roll(pattern, 5)
    X = X + 0.6 * np.outer(y == 1, pattern) + 0.6 * np.outer(y == 2, second)
    return X, y


def relative(a, b):
    """max |a - b| over max |b|."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    scale = max(np.max(np.abs(b)), np.finfo(float).tiny)
    return np.max(np.abs(a - b)) / scale


def h5_datasets(path):
    """Every dataset of an HDF5 file by its path."""
    out = {}
    with h5py.File(path, "r") as f:
        def visit(name, obj):
            if isinstance(obj, h5py.Dataset):
                out["/" + name] = obj[()]
        f.visititems(visit)
    return out


def assert_same_datasets(expected, ours):
    """The same dataset names, shapes, NaN positions and values (1e-12
    relative: the project's rule for the same inputs; text exactly)."""
    assert sorted(expected) == sorted(ours)
    for name, value in expected.items():
        mine = ours[name]
        if value.dtype.kind in "fiu":
            assert mine.shape == value.shape, name
            finite = np.isfinite(value)
            assert np.array_equal(finite, np.isfinite(mine)), name
            if finite.any():
                assert relative(mine[finite], value[finite]) <= 1e-12, name
        else:
            assert mine.tolist() == value.tolist(), name


def small_cli_args(binary, decoder, out, cache):
    """The command line's `attribute` on the small problem (SMALL)."""
    return [str(binary), "attribute", "--decoder", str(decoder), "--out", str(out),
            "--cache", str(cache), "--montage", SMALL["montage"], "--sources", SMALL["sources"],
            "--radii-mm", ",".join(str(r) for r in SMALL["radii_mm"]),
            "--resamples", str(SMALL["resamples"]),
            "--forward-perturbations", str(SMALL["forward_perturbations"]), "--no-report"]
