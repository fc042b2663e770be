"""Decoders trained the way users train them, for the trained-decoder benchmark
(docs/validation.md, "Trained decoders") and its CI test
(tests/it/validation_trained_decoders.rs).

An invented two-class paradigm on the template cortex: one or two generator
patches whose amplitude (LDA) or variance (CSP) differs between the classes,
background activity from many random sources, and white sensor noise. For each
case and trial count the script simulates the trials, trains the decoder on all
of them and, in a 5-fold cross-validation, once per fold, and writes

    <out>/<kind>_c<case>_n<trials>.npz        channels, weights (n_ch x 1), covariance,
                                              n_samples, folds (5 x n_ch x 1),
                                              fold_covariances (5 x n_ch x n_ch),
                                              component_names
    <out>/<kind>_c<case>_n<trials>_nsamples.npz   the same without folds
    <out>/<kind>_c<case>_n<trials>_bare.npz       weights + covariance only
    <out>/<kind>_c<case>_n<trials>.json       the truth

Usage (from the repository root; numpy, scipy, h5py and scikit-learn pinned in
tests/reference/requirements.txt):

    target/release/patchwise leadfield --montage 10-10 --sources template-5k --out lf.h5
    python benches/reference/trained_decoders.py make lf.h5 OUT [cases] [trials,...] [kinds]
    python benches/reference/trained_decoders.py run OUT target/release/patchwise [resamples]
        # attributes each decoder four ways (folds, n_samples only, neither, and
        # --noise-sd at the folds' sigma), prints table 6 and writes OUT/rows.json
    python benches/reference/trained_decoders.py dump OUT cases.tsv   # per-case lines for calib.py
    python benches/reference/trained_decoders.py sigma lf.h5 OUT   # assumed against true noise
    python benches/reference/trained_decoders.py one lf.h5 OUT trials   # the CI test's case

Formulas and their sources:
- Shrinkage LDA: scikit-learn's LinearDiscriminantAnalysis(solver="lsqr",
  shrinkage="auto"), whose shrinkage intensity is the Ledoit & Wolf 2004
  (J Multivar Anal 88:365, from memory) estimate; its use for ERP decoding:
  Blankertz, Lemm, Treder, Haufe & Müller 2011 (NeuroImage 56:814, from memory).
- CSP: the filters are the generalised eigenvectors of the class covariances,
  Σ1 w = λ (Σ0 + Σ1) w, the largest λ giving the filter whose output variance
  is largest in class 1 relative to both (Koles 1991, Electroenceph Clin
  Neurophysiol 79:440, from memory; Ramoser, Müller & Pfurtscheller 2000, IEEE Trans
  Rehabil Eng 8:441).
- The truth's region shares: share_r = <G x_r, G x> / ||G x||^2 on the average
  referenced lead field, x the generators' class difference (LDA) or the
  generator patch (CSP), the "pattern share" of the recovery benchmark
  (docs/validation.md). For LDA without shrinkage the activation pattern
  Σ w / (w' Σ w) is proportional to the class-mean difference (Haufe et al.
  2014, NeuroImage 87:96), whose expectation is G x; for CSP the pattern of
  the top filter is the generator's field when the background does not change
  with the class (the same paper, and Blankertz et al. 2008, IEEE Signal
  Process Mag 25(1):41, from memory).
- 5-fold stratified cross-validation keeping each fold's decoder: common
  practice, no source.
"""

import json
import os
import re
import subprocess
import sys

import h5py
import numpy as np
from scipy.linalg import eigh
from sklearn.discriminant_analysis import LinearDiscriminantAnalysis
from sklearn.model_selection import StratifiedKFold

N_FOLDS = 5
PATCH_SOURCES = 8  # sources in one generator patch (nearest to its seed)
BACKGROUND_SOURCES = 300
CSP_SAMPLES_PER_TRIAL = 20
SENSOR_NOISE_DB = -10.0  # white sensor noise power relative to the background's


def load_leadfield(path):
    with h5py.File(path, "r") as f:
        gain = np.asarray(f["/leadfield/gain"], dtype=float)
        region = np.asarray(f["/sources/region"], dtype=int)
        names = [n.decode() if isinstance(n, bytes) else str(n) for n in f["/sources/region_names"][()]]
        pos = np.asarray(f["/sources/positions_mm"], dtype=float)
        labels = [n.decode() if isinstance(n, bytes) else str(n) for n in f["/montage/labels"][()]]
    # Average reference (the file's is already; this makes it explicit).
    gain = gain - gain.mean(axis=0, keepdims=True)
    # µV per nA·m: V/(A·m) x 1e-9 A·m x 1e6 µV/V.
    return gain * 1e-3, region, names, pos, labels


def patch(pos, region, rng, avoid=None, min_distance_mm=40.0):
    """The PATCH_SOURCES sources nearest (Euclidean, positions_mm) to a random
    seed in a region, at least min_distance_mm from the seed `avoid`."""
    while True:
        seed = int(rng.integers(len(pos)))
        if region[seed] < 0:
            continue
        if avoid is not None and np.linalg.norm(pos[seed] - pos[avoid]) < min_distance_mm:
            continue
        d = np.linalg.norm(pos - pos[seed], axis=1)
        return seed, np.argsort(d)[:PATCH_SOURCES]


def truth_shares(gain, region, names, x):
    """share_r = <G x_r, G x> / ||G x||^2 per region (the unassigned sources
    left out)."""
    y = gain @ x
    yy = float(y @ y)
    shares = {}
    for r, name in enumerate(names):
        xr = np.where(region == r, x, 0.0)
        if np.any(xr):
            shares[name] = float((gain @ xr) @ y / yy)
    return shares


class Case:
    """One invented scenario: generators, background sources and levels."""

    def __init__(self, gain, region, names, pos, kind, case, strength_db=None):
        rng = np.random.default_rng(1700 + 97 * case + (0 if kind == "lda" else 50_000))
        n_ch, n_src = gain.shape
        self.kind = kind
        self.gain = gain
        seed1, p1 = patch(pos, region, rng)
        gens = [(seed1, p1, 1.0)]
        if case % 2 == 1:  # odd cases: a second, weaker generator
            seed2, p2 = patch(pos, region, rng, avoid=seed1)
            gens.append((seed2, p2, float(rng.uniform(0.3, 0.8))))
        if kind == "csp":
            gens = gens[:1]
        self.x = np.zeros(n_src)
        for _, p, a in gens:
            self.x[p] += a
        self.gen_field = gain @ self.x  # µV per nA·m of generator amplitude
        self.bg = rng.choice(n_src, BACKGROUND_SOURCES, replace=False)
        self.bg_gain = gain[:, self.bg]
        bg_power = float(np.sum(self.bg_gain**2))  # per nA·m² of background variance
        # Background sources of unit variance (nA·m), sensor noise 10 dB below.
        self.noise_sd = np.sqrt(10 ** (SENSOR_NOISE_DB / 10) * bg_power / n_ch)
        total_noise = bg_power * (1 + 10 ** (SENSOR_NOISE_DB / 10))
        if strength_db is None:
            strength_db = float(rng.uniform(-14.0, -8.0) if kind == "lda" else rng.uniform(-12.0, -6.0))
        self.strength_db = strength_db
        # LDA: ||class difference field||^2 / total noise power per trial;
        # CSP: ||generator field||^2 x its class-0 variance / total noise power.
        self.amp = np.sqrt(10 ** (strength_db / 10) * total_noise / float(self.gen_field @ self.gen_field))
        self.rng = np.random.default_rng(rng.integers(2**63))
        shares = truth_shares(gain, region, names, self.x)
        order = sorted(shares, key=lambda r: -shares[r])
        self.truth = {
            "kind": kind,
            "case": case,
            "strength_db": strength_db,
            "generators": [
                {
                    "seed_source": int(s),
                    "seed_region": names[region[s]],
                    "regions": sorted({names[region[i]] for i in p if region[i] >= 0}),
                    "relative_amplitude": a,
                    "seed_mm": [float(v) for v in pos[s]],
                }
                for s, p, a in gens
            ],
            "shares": shares,
            "leading_region": order[0],
            "leading_share": shares[order[0]],
            "second_region": order[1] if len(order) > 1 else None,
            "margin": shares[order[0]] - (shares[order[1]] if len(order) > 1 else 0.0),
        }

    def trials(self, n):
        """Class labels (n,) and data: (n, n_ch) for LDA, (n, T, n_ch) for CSP."""
        y = np.arange(n) % 2
        self.rng.shuffle(y)
        t = 1 if self.kind == "lda" else CSP_SAMPLES_PER_TRIAL
        n_ch = self.gain.shape[0]
        bg = self.rng.standard_normal((n, t, len(self.bg))) @ self.bg_gain.T
        noise = self.noise_sd * self.rng.standard_normal((n, t, n_ch))
        if self.kind == "lda":
            # Class 1 adds amp to the generators, class 0 nothing; the
            # amplitude varies from trial to trial by 30 % (invented).
            a = self.amp * (y[:, None] * 1.0 + 0.3 * self.rng.standard_normal((n, 1)))
            data = bg + noise + a[:, :, None] * self.gen_field
            return y, data[:, 0, :]
        # CSP: the generator's variance is 3x larger in class 1 (invented).
        sd = self.amp * np.where(y == 1, np.sqrt(3.0), 1.0)
        g = sd[:, None] * self.rng.standard_normal((n, t))
        return y, bg + noise + g[:, :, None] * self.gen_field


def train_lda(x, y):
    lda = LinearDiscriminantAnalysis(solver="lsqr", shrinkage="auto").fit(x, y)
    return lda.coef_[0][:, None], np.cov(x, rowvar=False), lda


def csp_class_covariances(x, y):
    covs = []
    for c in (0, 1):
        xc = x[y == c]
        xc = xc - xc.mean(axis=1, keepdims=True)  # each trial's mean removed
        covs.append(np.einsum("ntc,ntd->cd", xc, xc) / (xc.shape[0] * xc.shape[1]))
    return covs


def train_csp(x, y):
    """The top CSP filter (largest λ of Σ1 w = λ (Σ0 + Σ1) w), the pooled
    covariance it was trained on."""
    s0, s1 = csp_class_covariances(x, y)
    vals, vecs = eigh(s1, s0 + s1)
    w = vecs[:, -1:]
    return w, (s0 + s1) / 2.0


def csp_accuracy(w, x, y, w_train_x, w_train_y):
    """Log-variance of the filter output, threshold at the midpoint of the
    training classes' means (a one-feature classifier, common practice, no
    source)."""
    def feat(xx):
        return np.log(np.var(xx @ w[:, 0], axis=1))

    f_train = feat(w_train_x)
    thr = 0.5 * (f_train[w_train_y == 0].mean() + f_train[w_train_y == 1].mean())
    return float(np.mean((feat(x) > thr) == (y == 1)))


def write_case(case, n, out, labels, stem):
    y, x = case.trials(n)
    train = train_lda if case.kind == "lda" else train_csp
    w, cov, *_ = train(x, y)
    folds, fold_covs, accs = [], [], []
    cv = StratifiedKFold(N_FOLDS, shuffle=True, random_state=int(case.truth["case"]) + n)
    for tr, te in cv.split(np.zeros(n), y):
        res = train(x[tr], y[tr])
        fw, fc = res[0], res[1]
        if case.kind == "lda":
            accs.append(float(res[2].score(x[te], y[te])))
        else:
            accs.append(csp_accuracy(fw, x[te], y[te], x[tr], y[tr]))
        folds.append(fw)
        fold_covs.append(fc)
    n_samples = n if case.kind == "lda" else n * CSP_SAMPLES_PER_TRIAL
    common = {
        "channels": np.array(labels),
        "weights": w,
        "covariance": cov,
        "component_names": np.array([case.kind]),
    }
    np.savez(os.path.join(out, stem + ".npz"), **common, n_samples=np.array(float(n_samples)),
             folds=np.stack(folds), fold_covariances=np.stack(fold_covs))
    np.savez(os.path.join(out, stem + "_nsamples.npz"), **common, n_samples=np.array(float(n_samples)))
    np.savez(os.path.join(out, stem + "_bare.npz"), **common)
    truth = dict(case.truth, trials=n, n_samples=n_samples, cv_accuracy=float(np.mean(accs)))
    with open(os.path.join(out, stem + ".json"), "w") as f:
        json.dump(truth, f, indent=1)
    return truth


def make(lf, out, n_cases=8, trial_counts=(50, 100, 200, 500), kinds=("lda", "csp")):
    gain, region, names, pos, labels = load_leadfield(lf)
    os.makedirs(out, exist_ok=True)
    for kind in kinds:
        for c in range(n_cases):
            case = Case(gain, region, names, pos, kind, c)
            for n in trial_counts:
                t = write_case(case, n, out, labels, f"{kind}_c{c}_n{n}")
                print(f"{kind} case {c} n={n}: lead {t['leading_region']} "
                      f"(margin {t['margin']:.2f}) cv accuracy {t['cv_accuracy']:.2f}", file=sys.stderr)


def one(lf, out, trials):
    """The CI test's case: one LDA decoder, one strong generator."""
    gain, region, names, pos, labels = load_leadfield(lf)
    os.makedirs(out, exist_ok=True)
    case = Case(gain, region, names, pos, "lda", 0, strength_db=-3.0)
    t = write_case(case, trials, out, labels, "lda")
    print(json.dumps({"leading_region": t["leading_region"], "margin": t["margin"],
                      "cv_accuracy": t["cv_accuracy"]}))


def haufe_pattern(w, cov):
    """A = Σ W (Wᵀ Σ W)⁻¹ (Haufe et al. 2014, NeuroImage 87:96), average referenced."""
    a = cov @ w @ np.linalg.inv(w.T @ cov @ w)
    return a - a.mean(axis=0, keepdims=True)


def sigma(lf, out):
    """How large the pattern's noise really is, against what each rule assumed.

    The true noise per channel of a decoder's pattern a is the distance from the
    clean pattern g (the generators' field) after the best scaling,
    ||a - s g|| / sqrt(n_ch - 2), s = <a, g>/||g||^2 (one direction lost to
    the average reference, one to the scale). Printed per decoder and trial
    count: the median over cases of sigma_rule / sigma_true for each variant,
    with sigma_rule the summary's noise_sd_lambda_rule."""
    gain, region, names, pos, labels = load_leadfield(lf)
    n_ch = gain.shape[0]
    rows = json.load(open(os.path.join(out, "rows.json")))
    ratios = {}
    cases = {}
    for r in rows:
        if r["failed"]:
            continue
        t = r["truth"]
        key = (t["kind"], t["case"])
        if key not in cases:
            cases[key] = Case(gain, region, names, pos, t["kind"], t["case"])
        g = cases[key].gen_field
        g = g - g.mean()
        stem = f"{t['kind']}_c{t['case']}_n{t['trials']}"
        d = np.load(os.path.join(out, stem + ".npz"))
        a = haufe_pattern(d["weights"], d["covariance"])[:, 0]
        s = (a @ g) / (g @ g)
        true_sd = np.linalg.norm(a - s * g) / np.sqrt(n_ch - 2)
        summary = json.load(open(os.path.join(out, "res", stem + "_" + r["variant"], "summary.json")))
        rule_sd = summary["components"][0]["noise_sd_lambda_rule"]
        ratios.setdefault((t["kind"], t["trials"], r["variant"]), []).append(rule_sd / true_sd)
    variants = [v for v, _ in VARIANTS[:3]]  # fold_sd_white repeats the folds' σ
    print("| decoder | trials | " + " | ".join(variants) + " |")
    print("|---|---|" + "---|" * len(variants))
    for kind, n in sorted({(k, n) for k, n, _ in ratios}):
        cells = [f"{np.median(ratios[(kind, n, v)]):.2f}" for v in variants]
        print(f"| {kind.upper()} | {n} | " + " | ".join(cells) + " |")


# (name, file suffix). "fold σ, white" is an experiment: the file without
# folds or n_samples, with --noise-sd set to the σ the folds gave (so λ is the
# folds' λ) but white resample noise instead of the folds' own shape.
VARIANTS = (("folds", ""), ("n_samples", "_nsamples"), ("estimate", "_bare"), ("fold_sd_white", "_bare"))


def read_regions(path):
    import csv

    with open(path) as f:
        return [r for r in csv.DictReader(f) if r["component"] in ("0", "lda", "csp")]


def run(out, binary, resamples=100):
    """Attribute every case three ways and print the table rows (markdown)."""
    cache = os.path.join(out, "cache")
    rows = []
    for stem in sorted(s[:-5] for s in os.listdir(out) if s.endswith(".json") and "_n" in s):
        truth = json.load(open(os.path.join(out, stem + ".json")))
        for variant, suffix in VARIANTS:
            res = os.path.join(out, "res", stem + "_" + variant)
            cmd = [binary, "attribute", "--decoder", os.path.join(out, stem + suffix + ".npz"),
                   "--sources", "template-5k", "--montage", "10-10", "--no-report",
                   "--resamples", str(resamples), "--cache", cache, "--out", res]
            if variant == "fold_sd_white":
                folds_summary = os.path.join(out, "res", stem + "_folds", "summary.json")
                sd = json.load(open(folds_summary))["components"][0]["noise_sd_lambda_rule"]
                cmd += ["--noise-sd", repr(sd)]
            if not os.path.exists(os.path.join(res, "summary.json")):
                p = subprocess.run(cmd, capture_output=True, text=True)
                if p.returncode != 0:
                    print(f"{stem} {variant}: exit {p.returncode}: {p.stderr.strip()[-300:]}", file=sys.stderr)
                    rows.append(dict(truth=truth, variant=variant, failed=True))
                    continue
            summary = json.load(open(os.path.join(res, "summary.json")))
            comp = summary["components"][0]
            regions = read_regions(os.path.join(res, "regions.csv"))
            share = {r["region"]: float(r["share"]) for r in regions}
            lead = max(share, key=share.get) if share else None
            if lead is not None and share[lead] <= 0.0:
                lead = None  # an empty fit leads with nothing
            tr = truth["shares"]
            t_lead = truth["leading_region"]
            row_t = next((r for r in regions if r["region"] == t_lead), None)
            covered = (row_t is not None and row_t["share_low"] not in ("", "nan")
                       and float(row_t["share_low"]) <= truth["leading_share"] <= float(row_t["share_high"]))
            rows.append(dict(
                truth=truth, variant=variant, failed=False, lead=lead,
                top1=lead == t_lead,
                tie=lead is not None and tr.get(lead, -1.0) >= truth["leading_share"] - 0.05,
                covered=covered,
                ratio=comp["lambda_ratio"], at_end=bool(comp["lambda_at_range_end"]),
                poor=bool(comp["poorly_explained"]), noise_level=summary["noise_level"],
                lead_frequency=comp["top_regions"][0]["lead_frequency"] if comp["top_regions"] else None,
                leader_probability=comp.get("leader_probability"),
                ev=comp["explained_variance"]))
    with open(os.path.join(out, "rows.json"), "w") as f:
        json.dump(rows, f, indent=1)
    table(rows)


def table(rows):
    print("| decoder | trials | noise level from | median CV accuracy | decisive top-1 % (cases) "
          "| tie-tolerant top-1 % | coverage % | median λ/λ_max | at range end | poorly explained | cases |")
    print("|---|---|---|---|---|---|---|---|---|---|---|")
    keys = sorted({(r["truth"]["kind"], r["truth"]["trials"]) for r in rows})
    for kind, n in keys:
        for variant, _ in VARIANTS:
            rs = [r for r in rows if r["truth"]["kind"] == kind and r["truth"]["trials"] == n
                  and r["variant"] == variant]
            ok = [r for r in rs if not r["failed"]]
            dec = [r for r in ok if r["truth"]["margin"] >= 0.10]
            pct = lambda xs: f"{100.0 * sum(xs) / len(xs):.0f}" if xs else "—"
            print(f"| {kind.upper()} | {n} | {variant} "
                  f"| {np.median([r['truth']['cv_accuracy'] for r in rs]):.2f} "
                  f"| {pct([r['top1'] for r in dec])} ({len(dec)}) "
                  f"| {pct([r['tie'] for r in ok])} | {pct([r['covered'] for r in ok])} "
                  f"| {np.median([r['ratio'] for r in ok]) if ok else float('nan'):.3f} "
                  f"| {sum(r['at_end'] for r in ok)} | {sum(r['poor'] for r in ok)} "
                  f"| {len(ok)}{'' if len(ok) == len(rs) else f' ({len(rs) - len(ok)} failed)'} |")
    # How often the leader is trusted (lead frequency >= 0.9) among hits and
    # misses of the decisive cases, over both decoders and every trial count.
    for variant, _ in VARIANTS:
        dec = [r for r in rows if not r["failed"] and r["variant"] == variant
               and r["truth"]["margin"] >= 0.10 and r["lead_frequency"] is not None]
        for name, group in (("hits", [r for r in dec if r["top1"]]), ("misses", [r for r in dec if not r["top1"]])):
            lf = [r["lead_frequency"] for r in group]
            print(f"{variant}: {len(group)} {name}, lead frequency >= 0.9 in {sum(v >= 0.9 for v in lf)}, "
                  f"median {np.median(lf) if lf else float('nan'):.2f}", file=sys.stderr)
    levels = sorted({re.sub(r"--noise-sd [0-9.e+-]+", "--noise-sd S", re.sub(r"= [0-9]+", "= N", r["noise_level"]))
                     for r in rows if not r["failed"]})
    print("\nnoise_level strings seen:", *levels, sep="\n  ", file=sys.stderr)


def dump(out, path):
    """Per-case lines for benches/reference/calib.py (head "trained-<decoder>", the trial count
    in the SNR column, the variant as the rule; stated support = the leader's lead frequency)."""
    rows = json.load(open(os.path.join(out, "rows.json")))
    with open(path, "w") as f:
        for r in rows:
            if r["failed"] or r["lead_frequency"] is None or r["lead"] is None:
                continue
            t = r["truth"]
            f.write(f"trained-{t['kind']}\t{t['trials']}\t{r['variant']}\t{r['lead_frequency']}\t"
                    f"{int(r['top1'])}\t{t['margin']}\n")


if __name__ == "__main__":
    cmd = sys.argv[1]
    if cmd == "make":
        make(sys.argv[2], sys.argv[3],
             int(sys.argv[4]) if len(sys.argv) > 4 else 8,
             tuple(int(v) for v in sys.argv[5].split(",")) if len(sys.argv) > 5 else (50, 100, 200, 500),
             tuple(sys.argv[6].split(",")) if len(sys.argv) > 6 else ("lda", "csp"))
    elif cmd == "run":
        run(sys.argv[2], sys.argv[3], int(sys.argv[4]) if len(sys.argv) > 4 else 100)
    elif cmd == "dump":
        dump(sys.argv[2], sys.argv[3])
    elif cmd == "sigma":
        sigma(sys.argv[2], sys.argv[3])
    elif cmd == "one":
        one(sys.argv[2], sys.argv[3], int(sys.argv[4]))
    else:
        sys.exit(f"unknown command {cmd}; expected make, run, dump, sigma or one")
