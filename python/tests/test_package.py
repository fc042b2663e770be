"""The Python package against the command line, NumPy and scikit-learn.

References beside each check: the Haufe transform A = Σ W (Wᵀ Σ W)⁻¹ (Haufe
et al. 2014, NeuroImage 87:96-110, eq. 6) computed in NumPy; the command
line's own result.h5 read with h5py (the same library code: identical to
1e-12 relative, the project's rule for same inputs).
"""

import os
import subprocess
from pathlib import Path

import h5py
import numpy as np
import pytest

import patchwise
from conftest import CHANNELS, SMALL, assert_same_datasets, small_cli_args, h5_datasets, relative


def haufe_patterns(weights, covariance):
    """Haufe et al. 2014 eq. 6, then the common average reference the fit
    uses (each column minus its mean over channels)."""
    a = covariance @ weights @ np.linalg.inv(weights.T @ covariance @ weights)
    return a - a.mean(axis=0)


@pytest.fixture(scope="module")
def decoder(trials):
    """Two spatial filters and the covariance of the simulated trials."""
    X, _, pattern = trials
    rng = np.random.default_rng(7)
    weights = np.column_stack([pattern + 0.1 * rng.normal(size=len(CHANNELS)),
                               rng.normal(size=len(CHANNELS))])
    return weights, np.cov(X, rowvar=False)


@pytest.fixture(scope="module")
def result(decoder, cache):
    weights, covariance = decoder
    return patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                               component_names=["motor", "random"], cache=cache, **SMALL)


# Same numbers as the command line: the decoder saved as a file for the
# command line, the arrays handed to the package.
def test_same_result_h5_as_the_command_line(decoder, result, cache, tmp_path):
    binary = os.environ.get("PATCHWISE_BIN")
    if not binary:
        pytest.skip("PATCHWISE_BIN (the command line) not set")
    weights, covariance = decoder
    path = tmp_path / "decoder.h5"
    with h5py.File(path, "w") as f:
        f["channels"] = np.array(CHANNELS, dtype=h5py.string_dtype())
        f["weights"] = weights
        f["covariance"] = covariance
        f["component_names"] = np.array(["motor", "random"], dtype=h5py.string_dtype())
    out = tmp_path / "cli"
    args = small_cli_args(binary, path, out, cache)
    done = subprocess.run(args, capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    saved = result.save(tmp_path / "py")
    cli = h5_datasets(out / "result.h5")
    ours = h5_datasets(saved / "result.h5")
    assert_same_datasets(cli, ours)
    # And the arrays the package returns are those of the file.
    np.testing.assert_array_equal(result.shares, cli["/attribution/share"])


def test_result_arrays_have_the_documented_shapes(result):
    k, n_regions = 2, len(result.region_names)
    assert result.component_names == ["motor", "random"]
    assert result.channels == CHANNELS
    assert result.shares.shape == (n_regions, k)
    low, high = result.intervals
    assert low.shape == high.shape == (n_regions, k)
    assert np.all(low <= result.shares + 1e-12) and np.all(result.shares <= high + 1e-12)
    assert result.selection_frequency.shape == (n_regions, k)
    assert result.lead_frequency.shape == (n_regions, k)
    assert result.leader_probability.shape == (k,)
    # A probability per component (NaN only where no region leads).
    p = result.leader_probability[np.isfinite(result.leader_probability)]
    assert np.all((p >= 0) & (p <= 1))
    assert result.source_map.shape[1] == k
    assert result.explained_variance.shape == (k,)
    assert result.lambda_path.shape[1] == k
    assert len(result.flags) == k
    assert "/attribution/share" in result.names()
    np.testing.assert_array_equal(result["attribution/share"], result.shares)
    with pytest.raises(KeyError):
        result["/no/such"]


def test_table_matches_the_shares(result):
    rows = result.table()
    assert rows, "no regions"
    names = result.region_names
    for r in rows:
        assert r.component_name == result.component_names[r.component]
        assert r.share == pytest.approx(result.shares[names.index(r.region), r.component], abs=5e-7)
    top = result.table(top=2)
    assert all(sum(1 for r in top if r.component == c) <= 2 for c in range(2))


def test_to_pandas_when_pandas_is_installed(result):
    pandas = pytest.importorskip("pandas")
    frame = result.to_pandas()
    assert isinstance(frame, pandas.DataFrame) and len(frame) == len(result.table())


def test_save_then_read_result_round_trip(result, tmp_path):
    folder = result.save(tmp_path / "saved")
    for name in ("result.h5", "regions.csv", "summary.json"):
        assert (folder / name).is_file()
    back = patchwise.read_result(folder)
    assert back.names() == result.names()
    for name in result.names():
        a, b = result[name], back[name]
        if isinstance(a, np.ndarray):
            np.testing.assert_array_equal(a, b)
        else:
            assert a == b
    assert repr(back.table()) == repr(result.table())  # NaN peaks compare by text
    assert patchwise.read_result(folder / "result.h5").names() == result.names()
    assert back.summary["params"]["resamples"] == SMALL["resamples"]


def test_save_refuses_a_folder_it_did_not_write(result, tmp_path):
    foreign = tmp_path / "foreign"
    foreign.mkdir()
    (foreign / "notes.txt").write_text("mine")
    with pytest.raises(ValueError, match="notes.txt|not written|ours|refus"):
        result.save(foreign)
    assert (foreign / "notes.txt").read_text() == "mine"


def test_report_writes_the_html_page(result, tmp_path):
    page = result.report(tmp_path / "report.html")
    text = page.read_text(encoding="utf-8")
    assert text.lstrip().lower().startswith("<!doctype html") and "motor" in text


def test_read_result_of_a_missing_folder_is_a_value_error(tmp_path):
    with pytest.raises(ValueError, match="result.h5"):
        patchwise.read_result(tmp_path / "nothing")


# The estimator path: patterns by the Haufe transform (Haufe et al. 2014,
# eq. 6) in NumPy, average referenced, to 1e-10 relative.
def test_lda_two_classes_patterns_match_haufe(trials, cache):
    from sklearn.discriminant_analysis import LinearDiscriminantAnalysis

    X, y, _ = trials
    lda = LinearDiscriminantAnalysis().fit(X, y)
    r = patchwise.from_estimator(lda, X, CHANNELS, cache=cache, **SMALL)
    expected = haufe_patterns(lda.coef_.T, np.cov(X, rowvar=False))
    assert r.patterns.shape == (len(CHANNELS), 1)
    assert relative(r.patterns, expected) <= 1e-10
    assert r.component_names == ["1 vs 0"]
    assert r.summary["params"]["decoder"]


@pytest.mark.parametrize("kind", ["lda", "logistic"])
def test_three_classes_take_each_class_alone(kind, three_class_trials, cache):
    """Both models' class weights are linearly dependent (a softmax's sum
    to zero; LDA's live in the span of the centred class means), so the
    joint transform does not exist: each column by Haufe et al. 2014 eq. 6
    with k = 1, A_c = Σ w_c / (w_cᵀ Σ w_c), then the average reference."""
    from sklearn.discriminant_analysis import LinearDiscriminantAnalysis
    from sklearn.linear_model import LogisticRegression

    X, y = three_class_trials
    model = LinearDiscriminantAnalysis() if kind == "lda" else LogisticRegression(max_iter=2000)
    model.fit(X, y)
    covariance = np.cov(X, rowvar=False)
    assert np.linalg.matrix_rank(model.coef_) < 3
    r = patchwise.from_estimator(model, X, CHANNELS, cache=cache, **SMALL)
    expected = np.column_stack([haufe_patterns(w[:, None], covariance)[:, 0] for w in model.coef_])
    assert r.patterns.shape == (len(CHANNELS), 3)
    assert relative(r.patterns, expected) <= 1e-10
    assert r.component_names == ["0", "1", "2"]
    assert r["/patterns/source"] == ["patterns"]


def test_binary_logistic_regression_patterns_match_haufe(trials, cache):
    from sklearn.linear_model import LogisticRegression

    X, y, _ = trials
    model = LogisticRegression(max_iter=2000).fit(X, y)
    r = patchwise.from_estimator(model, X, CHANNELS, cache=cache, **SMALL)
    expected = haufe_patterns(model.coef_.T, np.cov(X, rowvar=False))
    assert relative(r.patterns, expected) <= 1e-10


def test_spatial_filters_with_training_data_match_haufe(trials, cache):
    X, _, pattern = trials
    filters = np.column_stack([pattern, np.roll(pattern, 4)])
    r = patchwise.from_estimator(filters, X, CHANNELS, cache=cache, **SMALL)
    assert relative(r.patterns, haufe_patterns(filters, np.cov(X, rowvar=False))) <= 1e-10


# Bad arrays: each a ValueError with a message naming what is wrong.
def bad_cases(weights, covariance):
    nan = weights.copy()
    nan[3, 0] = np.nan
    skew = covariance.copy()
    skew[0, 1] += 0.5 * abs(skew[0, 1]) + 1.0
    duplicate = list(CHANNELS)
    duplicate[5] = duplicate[4]
    return {
        "NaN in the weights": (dict(weights=nan, covariance=covariance, channels=CHANNELS),
                               "finite|NaN"),
        "weights with a row too few": (dict(weights=weights[:-1], covariance=covariance,
                                            channels=CHANNELS), "shape|rows"),
        "covariance of the wrong shape": (dict(weights=weights, covariance=covariance[:-1],
                                               channels=CHANNELS), "covariance"),
        "duplicate channel labels": (dict(weights=weights, covariance=covariance,
                                          channels=duplicate), "Fz"),
        "non-symmetric covariance": (dict(weights=weights, covariance=skew, channels=CHANNELS),
                                     "symmetric"),
        "patterns as a 3-D array": (dict(patterns=weights[None], channels=CHANNELS),
                                    "3-D|shape"),
        "weights without covariance": (dict(weights=weights, channels=CHANNELS), "covariance"),
        "no channel labels": (dict(weights=weights, covariance=covariance), "channels"),
        "text in the weights": (dict(weights=[["a"] * 2] * len(CHANNELS), covariance=covariance,
                                     channels=CHANNELS), "weights"),
        "a bad option value": (dict(weights=weights, covariance=covariance, channels=CHANNELS,
                                    lambda_ratio=1.5), "--lambda-ratio"),
        "an unknown montage": (dict(weights=weights, covariance=covariance, channels=CHANNELS,
                                    montage="10-15"), "10-15"),
    }


@pytest.mark.parametrize("case", list(bad_cases(np.ones((19, 2)), np.eye(19))))
def test_bad_input_raises_value_error(case, decoder, cache):
    weights, covariance = decoder
    kwargs, message = bad_cases(weights, covariance)[case]
    options = dict(SMALL)
    options.update({k: v for k, v in kwargs.items() if k in ("lambda_ratio", "montage")})
    arrays = {k: v for k, v in kwargs.items() if k not in options}
    with pytest.raises(ValueError, match=message):
        patchwise.attribute(cache=cache, **arrays, **options)


def test_unknown_option_is_a_type_error(decoder, cache):
    weights, covariance = decoder
    with pytest.raises(TypeError, match="unknown option 'resample'"):
        patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            cache=cache, resample=3)


def test_estimator_with_mismatched_data_is_a_value_error(trials):
    X, y, _ = trials
    with pytest.raises(ValueError, match="X: has shape"):
        patchwise.from_estimator(np.ones((19, 1)), X[:, :5], CHANNELS)


def test_montage_as_positions_in_mm_gives_the_same_shares_as_its_file(decoder, cache, tmp_path):
    """An (n, 3) array of positions is the electrodes file it stands for
    (same montage, same numbers; common practice, no source)."""
    weights, covariance = decoder
    rng = np.random.default_rng(3)
    direction = rng.normal(size=(len(CHANNELS), 3))
    direction[:, 2] = np.abs(direction[:, 2]) + 0.5
    positions = 90.0 * direction / np.linalg.norm(direction, axis=1, keepdims=True)
    path = tmp_path / "electrodes.tsv"
    with path.open("w") as f:
        f.write("name\tx\ty\tz\n")
        for label, (x, y, z) in zip(CHANNELS, positions):
            f.write(f"{label}\t{float(x)!r}\t{float(y)!r}\t{float(z)!r}\n")
    options = {k: v for k, v in SMALL.items() if k != "montage"}
    a = patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            montage=positions, cache=cache, **options)
    b = patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            montage=path, cache=cache, **options)
    np.testing.assert_array_equal(a.shares, b.shares)


def test_progress_lines_go_to_stderr(decoder, cache, capsys):
    weights, covariance = decoder
    patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS, cache=cache,
                        progress=True, **SMALL)
    assert "patchwise: resampling" in capsys.readouterr().err


def test_keyboard_interrupt_stops_the_job(decoder, tmp_path):
    """Ctrl-C (here the same interrupt from a timer) raises KeyboardInterrupt
    while the lead field is computed on a fresh cache; the job stops at its
    next stage and writes nothing."""
    import _thread
    import signal
    import threading
    import time

    weights, covariance = decoder
    # A process started in the background inherits SIGINT ignored, and then
    # interrupt_main does nothing: restore Python's own handler for the test.
    previous = signal.signal(signal.SIGINT, signal.default_int_handler)
    timer = threading.Timer(0.2, _thread.interrupt_main)
    returned = False
    timer.start()
    with pytest.raises(KeyboardInterrupt):
        patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            cache=tmp_path / "fresh", **SMALL)
        returned = True
        time.sleep(5)  # the interrupt lands here if the job ended first
    timer.cancel()
    signal.signal(signal.SIGINT, previous)
    assert not returned, "the job ended before the interrupt: nothing was checked"


def test_lambda_keyword_is_the_flag_lambda(decoder, cache):
    weights, covariance = decoder
    with pytest.raises(ValueError, match="--lambda -1"):
        patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            cache=cache, lambda_=-1.0, **SMALL)


def test_noise_covariance_as_an_array_whitens_the_fit(decoder, cache):
    weights, covariance = decoder
    r = patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            noise_covariance=np.eye(len(CHANNELS)), cache=cache, **SMALL)
    assert "noise_covariance" in r.summary["hashes"]
    assert not any("no noise covariance" in n for n in r.summary["notes"])
    with pytest.raises(ValueError, match="noise_covariance"):
        patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            noise_covariance=np.eye(3), cache=cache, **SMALL)


def test_an_unsaved_result_leaves_no_temporary_folder(decoder, cache):
    import gc

    weights, covariance = decoder
    r = patchwise.attribute(weights=weights, covariance=covariance, channels=CHANNELS,
                            cache=cache, **SMALL)
    folder = r.folder.parent
    assert folder.is_dir()
    del r
    gc.collect()
    assert not folder.exists()


# The filters' gain maps come back as arrays, the same as result.h5's
# datasets (their values are checked against |W^T L| in NumPy by
# tests/it/attribution_gain.rs; here shapes, the mean below the maximum, and
# equality with the file; common practice, no source).
def test_filter_gain_arrays(result):
    gain = result.filter_gain
    n_src, k = result.source_map.shape
    assert gain is not None and gain.shape == (n_src, k)
    assert np.all(gain >= 0)
    mean, peak = result.region_gain
    assert mean.shape == (len(result.region_names), k) and peak.shape == mean.shape
    assert np.all(peak >= mean - 1e-15)
    assert result.filter_gain_normalised.shape == (n_src, k)
    with h5py.File(result.folder / "result.h5", "r") as f:
        np.testing.assert_array_equal(f["/filter_gain/source"][()], gain)

