"""Platt recalibration of the lead frequency: fit the map, and score it on held-out cases.

Reads per-case lines (tab-separated: head, SNR dB, λ rule, stated support of the fit's leader,
leader right 0/1, truth margin) as written by
`cargo run --release --example trust -- ... --dump cases.tsv`, or by
`benches/reference/trained_decoders.py run ... --dump cases.tsv`.

The map is p = sigmoid(a logit(s) + b) (Platt 1999, "Probabilistic outputs for support vector
machines", in Advances in Large Margin Classifiers, MIT Press; from memory), fitted by
scikit-learn's LogisticRegression (no penalty to speak of, C = 1e6) on logit(s), s clipped to
[0.005, 0.995]. ECE over four bins of the stated value (< 0.5, 0.5-0.7, 0.7-0.9, >= 0.9; Guo, Pleiss,
Sun & Weinberger 2017, ICML, eq. 3; from memory). "If calibrated" is the ECE a value equal to the
true probability would show on the same cases: outcomes drawn as Bernoulli(stated value), 2000
draws (consistency resampling, Broecker & Smith 2007, Weather and Forecasting 22:651; from memory).

Usage:
  python benches/reference/calib.py fit cases.tsv            # a and b on every line (the shipped constants)
  python benches/reference/calib.py halves cases.tsv         # fitted on one half, scored on the other
  python benches/reference/calib.py score A B cases.tsv      # raw and mapped ECE per (head, SNR, rule) cell
"""
import sys

import numpy as np
from sklearn.linear_model import LogisticRegression

EDGES = [0.0, 0.5, 0.7, 0.9, 1.0 + 1e-9]


def read(path):
    rows = []
    for line in open(path):
        h, snr, rule, s, c, m = line.rstrip("\n").split("\t")[:6]
        s = float(s)
        if np.isfinite(s):
            rows.append((h, snr, rule, s, int(c)))
    return rows


def ece(s, c):
    s, c = np.asarray(s, float), np.asarray(c, float)
    e = 0.0
    for a, b in zip(EDGES[:-1], EDGES[1:]):
        m = (s >= a) & (s < b)
        if m.sum():
            e += m.sum() / len(s) * abs(c[m].mean() - s[m].mean())
    return e


def null_ece(s, draws=2000, seed=0):
    rng = np.random.default_rng(seed)
    s = np.asarray(s, float)
    vals = np.array([ece(s, rng.random(len(s)) < s) for _ in range(draws)])
    return vals.mean(), np.quantile(vals, 0.95)


def logit(s):
    s = np.clip(np.asarray(s, float), 0.005, 0.995)
    return np.log(s / (1 - s))


def fit(s, c):
    lr = LogisticRegression(C=1e6, tol=1e-10, max_iter=10000).fit(logit(s)[:, None], np.asarray(c))
    return lr.coef_[0][0], lr.intercept_[0]


def apply(a, b, s):
    return 1.0 / (1.0 + np.exp(-(a * logit(s) + b)))


def main():
    cmd = sys.argv[1]
    if cmd == "fit":
        rows = read(sys.argv[2])
        a, b = fit([r[3] for r in rows], [r[4] for r in rows])
        print(f"a {a:.6f} b {b:.6f} cases {len(rows)}")
    elif cmd == "halves":
        rows = read(sys.argv[2])
        s = np.array([r[3] for r in rows])
        c = np.array([r[4] for r in rows])
        idx = np.random.default_rng(0).permutation(len(rows))
        half = len(rows) // 2
        for tr, te in [(idx[:half], idx[half:]), (idx[half:], idx[:half])]:
            a, b = fit(s[tr], c[tr])
            print(f"fitted on {len(tr)}: a {a:.3f} b {b:.3f}; held out {len(te)}: "
                  f"raw ECE {ece(s[te], c[te]):.3f}, mapped ECE {ece(apply(a, b, s[te]), c[te]):.3f}")
    elif cmd == "score":
        a, b = float(sys.argv[2]), float(sys.argv[3])
        rows = read(sys.argv[4])
        cells = {}
        for h, snr, rule, s, c in rows:
            cells.setdefault((h, snr, rule), []).append((s, c))
        print("| cells | cases | raw ECE | mapped ECE | ECE if calibrated: mean, 95 % | right where mapped >= 0.9 % (cases) |")
        print("|---|---|---|---|---|---|")
        for key in sorted(cells):
            d = np.array(cells[key])
            s, c = d[:, 0], d[:, 1]
            p = apply(a, b, s)
            mean, q95 = null_ece(p)
            hi = p >= 0.9
            right = f"{100 * c[hi].mean():.0f} ({hi.sum()})" if hi.sum() else "- (0)"
            print(f"| {' '.join(key)} | {len(s)} | {ece(s, c):.3f} | {ece(p, c):.3f} | "
                  f"{mean:.3f}, {q95:.3f} | {right} |")
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main()
