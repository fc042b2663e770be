"""Time-resolved decoders trained the way users train them, for
tests/it/time_resolved_decoders.rs (docs/time_resolved.md).

An invented two-class event-related paradigm on the template cortex: two
generator patches in different regions, at least 60 mm apart, with different
time courses (a Hann window over 100-200 ms peaking at 150 ms, and one over
300-400 ms peaking at 350 ms); class 1 carries both responses, class 0 none.
Every trial adds background activity (300 random sources of unit variance,
independent over trials and samples) and white sensor noise 10 dB below it;
the evoked field at its peak is 20 dB above that noise (power over the
channels, one trial). Samples every 10 ms from 0 to 500 ms.

Writes into OUT:
    space_time.npz   channels, times, weights (n_ch x n_times), covariance
                     ((n_ch*n_times)^2, features flattened channel-major:
                     X.reshape(n_trials, -1) of an n_trials x n_ch x n_times
                     array): scikit-learn's shrinkage LDA on channel x time
                     features.
    sliding.npz      channels, times, weights (n_times x n_ch x 1), covariance
                     (n_times x n_ch x n_ch): one shrinkage LDA per time point
                     on its channels.
    sliding_folds.npz  the sliding decoder with folds (5 x n_times x n_ch x 1:
                     the LDA per time point of each cross-validation fold)
                     and fold_covariances (5 x n_times x n_ch x n_ch).
    sliding_bad_folds.npz  the same with folds of the wrong shape
                     (5 x n_times x n_ch: no component axis).
    truth.json       each generator's region (the region with the largest
                     share of its field, share_r = <G x_r, G x>/||G x||^2),
                     seed position (mm), and the time range it is active
                     (onset, peak, offset in seconds).

Usage: python tests/reference/time_resolved_decoders.py lf.h5 OUT
(numpy, h5py, scikit-learn pinned in tests/reference/requirements.txt).

Sources: shrinkage LDA as scikit-learn's LinearDiscriminantAnalysis(
solver="lsqr", shrinkage="auto") (Ledoit & Wolf 2004, J Multivar Anal 88:365,
from memory; for ERP decoding Blankertz, Lemm, Treder, Haufe & Müller 2011,
NeuroImage 56:814, from memory). The Hann window w(t) = sin^2(pi (t - t0)/T)
on [t0, t0 + T]: common practice, no source.
"""

import json
import sys

import h5py
import numpy as np
from sklearn.discriminant_analysis import LinearDiscriminantAnalysis

N_TRIALS = 400  # 200 per class
PATCH_SOURCES = 8
BACKGROUND_SOURCES = 300
SENSOR_NOISE_DB = -10.0
SNR_DB = 20.0
TIMES = np.round(np.arange(0.0, 0.5001, 0.01), 6)
COURSES = [(0.100, 0.100), (0.300, 0.100)]  # (onset, duration) in s
FOLDS = 5


def strings(ds):
    return [n.decode() if isinstance(n, bytes) else str(n) for n in ds[()]]


def main(lf_path, out):
    with h5py.File(lf_path, "r") as f:
        gain = np.asarray(f["/leadfield/gain"], dtype=float)
        region = np.asarray(f["/sources/region"], dtype=int)
        names = strings(f["/sources/region_names"])
        pos = np.asarray(f["/sources/positions_mm"], dtype=float)
        labels = strings(f["/montage/labels"])
    gain = gain - gain.mean(axis=0, keepdims=True)
    n_ch, n_src = gain.shape
    rng = np.random.default_rng(2612)

    def share_lead(x):
        y = gain @ x
        shares = {}
        for r, name in enumerate(names):
            xr = np.where(region == r, x, 0.0)
            if np.any(xr):
                shares[name] = float((gain @ xr) @ y / (y @ y))
        order = sorted(shares, key=lambda r: -shares[r])
        margin = shares[order[0]] - (shares[order[1]] if len(order) > 1 else 0.0)
        return order[0], margin

    # Two patches in different regions, each decisively led by its region.
    gens = []
    while len(gens) < 2:
        seed = int(rng.integers(n_src))
        if region[seed] < 0:
            continue
        if gens and np.linalg.norm(pos[seed] - pos[gens[0][0]]) < 60.0:
            continue
        p = np.argsort(np.linalg.norm(pos - pos[seed], axis=1))[:PATCH_SOURCES]
        x = np.zeros(n_src)
        x[p] = 1.0
        lead, margin = share_lead(x)
        if margin < 0.3 or (gens and lead == gens[0][2]):
            continue
        gens.append((seed, x, lead))
    fields = [gain @ x for _, x, _ in gens]
    courses = []
    for t0, dur in COURSES:
        c = np.where((TIMES >= t0) & (TIMES <= t0 + dur), np.sin(np.pi * (TIMES - t0) / dur) ** 2, 0.0)
        courses.append(c)
    # Equal peak power for both generators.
    fields = [f / np.linalg.norm(f) for f in fields]
    evoked = sum(np.outer(f, c) for f, c in zip(fields, courses))  # n_ch x n_t
    bg = rng.choice(n_src, BACKGROUND_SOURCES, replace=False)
    bg_gain = gain[:, bg]
    bg_power = float(np.sum(bg_gain**2))
    sensor_sd = np.sqrt(10 ** (SENSOR_NOISE_DB / 10) * bg_power / n_ch)
    noise_power = bg_power * (1 + 10 ** (SENSOR_NOISE_DB / 10))
    peak_power = max(float(np.sum(evoked[:, t] ** 2)) for t in range(len(TIMES)))
    scale = np.sqrt(10 ** (SNR_DB / 10) * noise_power / peak_power)
    evoked *= scale
    n_t = len(TIMES)
    y = np.repeat([0, 1], N_TRIALS // 2)
    x = np.empty((N_TRIALS, n_ch, n_t))
    for i in range(N_TRIALS):
        noise = bg_gain @ rng.standard_normal((BACKGROUND_SOURCES, n_t))
        noise += sensor_sd * rng.standard_normal((n_ch, n_t))
        x[i] = noise + (evoked if y[i] == 1 else 0.0)
    # Microvolt-sized numbers (the lead field is V/(A m); any unit is accepted).
    x *= 1e-3
    features = x.reshape(N_TRIALS, -1)
    lda = LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto").fit(features, y)
    np.savez(
        f"{out}/space_time.npz",
        channels=np.array(labels),
        times=TIMES,
        weights=lda.coef_[0].reshape(n_ch, n_t),
        covariance=np.cov(features, rowvar=False),
    )
    weights = np.empty((n_t, n_ch, 1))
    covs = np.empty((n_t, n_ch, n_ch))
    for t in range(n_t):
        xt = x[:, :, t]
        weights[t, :, 0] = LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto").fit(xt, y).coef_[0]
        covs[t] = np.cov(xt, rowvar=False)
    np.savez(f"{out}/sliding.npz", channels=np.array(labels), times=TIMES, weights=weights, covariance=covs)
    # The same sliding decoder with its cross-validation folds: fold f leaves
    # out every FOLDS-th trial from f (each class in every fold), its weights
    # and covariances laid out like the main ones with the fold in front.
    fold_weights = np.empty((FOLDS, n_t, n_ch, 1))
    fold_covs = np.empty((FOLDS, n_t, n_ch, n_ch))
    for f in range(FOLDS):
        train = np.arange(N_TRIALS) % FOLDS != f
        for t in range(n_t):
            xt = x[train, :, t]
            lda = LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto").fit(xt, y[train])
            fold_weights[f, t, :, 0] = lda.coef_[0]
            fold_covs[f, t] = np.cov(xt, rowvar=False)
    np.savez(f"{out}/sliding_folds.npz", channels=np.array(labels), times=TIMES, weights=weights,
             covariance=covs, folds=fold_weights, fold_covariances=fold_covs)
    # A malformed one: folds without the component axis.
    np.savez(f"{out}/sliding_bad_folds.npz", channels=np.array(labels), times=TIMES,
             weights=weights, covariance=covs, folds=fold_weights[..., 0])
    truth = {
        "generators": [
            {
                "region": lead,
                "seed_mm": pos[seed].tolist(),
                "onset_s": t0,
                "peak_s": t0 + dur / 2,
                "offset_s": t0 + dur,
            }
            for (seed, _, lead), (t0, dur) in zip(gens, COURSES)
        ]
    }
    with open(f"{out}/truth.json", "w") as f:
        json.dump(truth, f, indent=1)


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
