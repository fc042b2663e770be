"""Decoders with a time axis from Python (docs/time_resolved.md).

An invented scenario of our own (no recordings): 300 trials of the 19
channels of the 10-20 system at 21 time points (0 to 400 ms every 20 ms);
class 1 adds one spatial bump with a Hann time course peaking at 140 ms and
another peaking at 300 ms over spatially correlated background activity.
A shrinkage LDA per time point (scikit-learn) is the sliding decoder.

References: the command line's own result.h5 on the same decoder saved as a
file (the same library code: identical to 1e-12 relative, the project's rule
for same inputs); the documented layout share_time[c, r, t] =
share[r, c * n_times + t] (docs/result_files.md); time_ranges.csv read with
the csv module.
"""

import csv
import os
import subprocess

import numpy as np
import pytest

import patchwise
from conftest import CHANNELS, SMALL, assert_same_datasets, h5_datasets, small_cli_args

TIMES = np.arange(21) * 0.02  # seconds


def hann(t, peak, half_width):
    x = np.clip((t - peak) / half_width, -1.0, 1.0)
    return 0.5 * (1.0 + np.cos(np.pi * x))


@pytest.fixture(scope="module")
def sliding():
    """(weights n_times x n_ch x 1, covariances n_times x n_ch x n_ch)."""
    from sklearn.discriminant_analysis import LinearDiscriminantAnalysis

    rng = np.random.default_rng(2612)
    n, n_ch = 300, len(CHANNELS)
    idx = np.arange(n_ch)
    first = np.exp(-0.5 * ((idx - 8.0) / 1.5) ** 2)   # around C3
    second = np.exp(-0.5 * ((idx - 16.0) / 1.5) ** 2)  # around P8
    y = rng.integers(0, 2, size=n)
    mixing = rng.normal(size=(n_ch, n_ch)) / np.sqrt(n_ch)
    weights, covariances = [], []
    for t in TIMES:
        evoked = hann(t, 0.14, 0.08)[()] * first + hann(t, 0.30, 0.08)[()] * second
        X = rng.normal(size=(n, n_ch)) @ mixing.T + 1.5 * np.outer(y, evoked)
        lda = LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto").fit(X, y)
        weights.append(lda.coef_.T)
        covariances.append(np.cov(X, rowvar=False))
    return np.array(weights), np.array(covariances)


@pytest.fixture(scope="module")
def result(sliding, cache):
    weights, covariances = sliding
    return patchwise.attribute(weights=weights, covariance=covariances, channels=CHANNELS,
                               times=TIMES, cache=cache, **SMALL)


def test_same_result_h5_as_the_command_line(sliding, result, cache, tmp_path):
    binary = os.environ.get("PATCHWISE_BIN")
    if not binary:
        pytest.skip("PATCHWISE_BIN (the command line) not set")
    weights, covariances = sliding
    path = tmp_path / "sliding.npz"
    np.savez(path, channels=np.array(CHANNELS), weights=weights, covariance=covariances,
             times=TIMES)
    out = tmp_path / "cli"
    done = subprocess.run(small_cli_args(binary, path, out, cache), capture_output=True,
                          text=True)
    assert done.returncode == 0, done.stderr
    saved = result.save(tmp_path / "py")
    assert_same_datasets(h5_datasets(out / "result.h5"), h5_datasets(saved / "result.h5"))


def test_time_arrays_follow_the_documented_layout(result):
    n_t = len(TIMES)
    np.testing.assert_array_equal(result.times, TIMES)
    share_time = result.share_time
    assert share_time.shape == (1, len(result.region_names), n_t)
    np.testing.assert_array_equal(share_time[0], result.shares[:, :n_t])
    low, high = result.share_time_intervals
    assert low.shape == high.shape == share_time.shape
    ok = np.isfinite(low)
    assert ok.any()
    assert np.all(low[ok] <= share_time[ok] + 1e-12)
    assert np.all(share_time[ok] <= high[ok] + 1e-12)


def test_time_ranges_are_those_of_time_ranges_csv(result):
    ranges = result.time_ranges()
    assert ranges, "the simulated evoked bumps give at least one leading region"
    with (result.folder / "time_ranges.csv").open(newline="", encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    assert len(rows) == len(ranges)
    for ours, row in zip(ranges, rows):
        assert ours["region"] == row["region"]
        # time_ranges.csv holds six decimals (four for held_frequency): half a
        # unit of the last one.
        for key, tol in (("onset_s", 5e-7), ("peak_s", 5e-7), ("offset_s", 5e-7),
                         ("peak_share", 5e-7), ("held_frequency", 5e-5)):
            assert ours[key] == pytest.approx(float(row[key]), rel=0, abs=tol), key
        assert TIMES[0] <= ours["onset_s"] <= ours["peak_s"] <= ours["offset_s"] <= TIMES[-1]


def test_a_result_without_time_axis_has_none(cache):
    rng = np.random.default_rng(5)
    r = patchwise.attribute(patterns=rng.normal(size=(len(CHANNELS), 1)), channels=CHANNELS,
                            cache=cache, **SMALL)
    assert r.times is None and r.share_time is None and r.share_time_intervals is None
    assert r.time_ranges() == []


@pytest.mark.parametrize("case", ["decreasing", "wrong length", "3-D without times"])
def test_bad_time_axes_raise_value_error(case, sliding, cache):
    weights, covariances = sliding
    times = {"decreasing": TIMES[::-1], "wrong length": TIMES[:-1],
             "3-D without times": None}[case]
    message = {"decreasing": "times", "wrong length": "times",
               "3-D without times": "3-D|shape"}[case]
    with pytest.raises(ValueError, match=message):
        patchwise.attribute(weights=weights, covariance=covariances, channels=CHANNELS,
                            times=times, cache=cache, **SMALL)
