"""The stages run alone from Python against the command line's own files
(the same library calls: identical datasets to 1e-12 relative, the
project's rule for same inputs, read with h5py)."""

import os
import subprocess

import h5py
import numpy as np
import pytest

import patchwise
from conftest import CHANNELS, SMALL


def cli(*args):
    binary = os.environ.get("PATCHWISE_BIN")
    if not binary:
        pytest.skip("PATCHWISE_BIN (the command line) not set")
    done = subprocess.run([binary, *map(str, args)], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr


def assert_same_datasets(ours, theirs_path):
    with h5py.File(theirs_path, "r") as f:
        names = []
        f.visititems(lambda n, o: names.append("/" + n) if isinstance(o, h5py.Dataset) else None)
        assert sorted(names) == ours.names()
        for name in names:
            value = f[name][()]
            if value.dtype.kind == "f":
                mine = ours[name]
                scale = max(np.nanmax(np.abs(value)) if value.size else 0.0, 1e-300)
                assert np.array_equal(np.isnan(mine), np.isnan(value)), name
                assert np.nanmax(np.abs(mine - value), initial=0.0) <= 1e-12 * scale, name


def test_leadfield_and_dictionary_match_the_command_line(tmp_path):
    lf = patchwise.leadfield(tmp_path / "lf.h5", montage="10-20", sources="template-5k")
    gain = lf["/leadfield/gain"]
    assert gain.shape == (len(lf["/montage/labels"]), len(lf["/sources/positions_mm"]))
    cli("leadfield", "--montage", "10-20", "--sources", "template-5k", "--out", tmp_path / "cli_lf.h5")
    assert_same_datasets(lf, tmp_path / "cli_lf.h5")
    d = patchwise.dictionary(tmp_path / "lf.h5", tmp_path / "d.h5", radii_mm=[10.0])
    atoms = d["/dictionary/atoms"]
    # Atoms are stored as 32-bit floats (docs/architecture.md): unit norm up
    # to binary32 rounding, unit roundoff 2^-24 = 6e-8 per value (IEEE 754-2008).
    np.testing.assert_allclose(np.linalg.norm(atoms, axis=0), 1.0, rtol=1e-7)
    cli("dictionary", "--leadfield", tmp_path / "cli_lf.h5", "--radii-mm", "10", "--out",
        tmp_path / "cli_d.h5")
    assert_same_datasets(d, tmp_path / "cli_d.h5")


def test_stage_options_are_checked(tmp_path):
    with pytest.raises(ValueError, match="10-15"):
        patchwise.leadfield(tmp_path / "lf.h5", montage="10-15")
    with pytest.raises(TypeError, match="unknown option 'radius_mm'"):
        patchwise.dictionary(tmp_path / "lf.h5", tmp_path / "d.h5", radius_mm=[10.0])
    with pytest.raises(ValueError):
        patchwise.dictionary(tmp_path / "missing.h5", tmp_path / "d.h5")


def test_dipole_from_arrays_matches_the_command_line(trials, tmp_path):
    X, _, pattern = trials
    weights = np.column_stack([pattern, np.roll(pattern, 6)])
    covariance = np.cov(X, rowvar=False)
    d = patchwise.dipole(weights=weights, covariance=covariance, channels=CHANNELS,
                         montage="10-20", sources="template-5k", out=tmp_path / "py")
    assert any(n.startswith("/dipole/") for n in d.names())
    path = tmp_path / "decoder.h5"
    with h5py.File(path, "w") as f:
        f["channels"] = np.array(CHANNELS, dtype=h5py.string_dtype())
        f["weights"] = weights
        f["covariance"] = covariance
    cli("dipole", "--decoder", path, "--montage", "10-20", "--sources", "template-5k",
        "--out", tmp_path / "cli", "--no-report")
    assert_same_datasets(d, tmp_path / "cli" / "result.h5")
    with pytest.raises(ValueError, match="finite"):
        bad = weights.copy()
        bad[0, 0] = np.inf
        patchwise.dipole(weights=bad, covariance=covariance, channels=CHANNELS,
                         out=tmp_path / "bad")


def test_compare_two_subjects(decoder_pair, cache, tmp_path):
    folders = []
    for name, (weights, covariance) in zip(("subject-a", "subject-b", "subject-c"), decoder_pair):
        r = patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                                cache=cache, **SMALL)
        folders.append(r.save(tmp_path / name))
    c = patchwise.compare(folders, tmp_path / "comparison", cache=cache, bootstrap=50,
                          sign_flips=100)
    k, n_s = 1, 3
    share = c["/group/share"]
    assert share.shape[:2] == (k, n_s)
    with pytest.raises(TypeError, match="unknown option"):
        patchwise.compare(folders, tmp_path / "other", cache=cache, bootstraps=50)


@pytest.fixture(scope="module")
def decoder_pair(trials):
    X, _, pattern = trials
    rng = np.random.default_rng(11)
    covariance = np.cov(X, rowvar=False)
    return [((pattern + 0.05 * rng.normal(size=pattern.size))[:, None], covariance)
            for _ in range(3)]
