"""The invented time-resolved decoder of the benchmark in docs/benchmarks.md
("A time-resolved decoder"): 64 channels (a seeded choice of the lead
field's), 100 samples every 5 ms, two single-source generators with Gaussian
time courses (peaks 150 and 350 ms, sigma 30 ms) plus 5 % white noise, saved
as patterns n_times x n_ch x 1 with times (s).

Usage: python benches/reference/time_resolved_bench.py lf.h5 tr64.npz
"""
import sys, h5py, numpy as np
lf, out = sys.argv[1], sys.argv[2]
with h5py.File(lf, "r") as f:
    gain = np.asarray(f["/leadfield/gain"], float)
    labels = [n.decode() if isinstance(n, bytes) else str(n) for n in f["/montage/labels"][()]]
gain -= gain.mean(axis=0, keepdims=True)
rng = np.random.default_rng(7)
n_ch, n_src = gain.shape
keep = np.sort(rng.choice(n_ch, 64, replace=False)) if n_ch > 64 else np.arange(n_ch)
gain = gain[keep]; labels = [labels[i] for i in keep]
times = np.round(np.arange(100) * 0.005, 6)
a, b = rng.choice(n_src, 2, replace=False)
ca = np.exp(-0.5 * ((times - 0.15) / 0.03) ** 2); cb = np.exp(-0.5 * ((times - 0.35) / 0.03) ** 2)
p = np.outer(gain[:, a], ca) + np.outer(gain[:, b], cb)
p += 0.05 * np.abs(p).max() * rng.standard_normal(p.shape)
np.savez(out, channels=np.array(labels), times=times, patterns=p.T[:, :, None] * 1e-9)
