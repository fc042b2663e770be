"""Vectorised NumPy reference for benches/leadfield.rs (docs/benchmarks.md, "Lead field").

Same head (4 shells, radii 81/83/88/94 mm, conductivities 0.47/1.79/0.02/0.41 S/m),
same points (formulas repeated from benches/leadfield.rs), same series
(Zhang 1995 with f_n, accelerated by subtracting f_inf times the homogeneous
closed form, de Munck & Peters 1993) and the same tail bound (1e-12 of
3|f_1|/(4 pi sigma_N R^2)). Free orientation, average reference.

Run: python benches/reference/leadfield_numpy.py [n_sources]
Versions used: Python 3, numpy==2.4.6 (scipy not needed here).
"""

import sys
import time

import numpy as np

RADII = np.array([0.081, 0.083, 0.088, 0.094])
SIGMA = np.array([0.47, 1.79, 0.02, 0.41])
TABLE_LEN = 4096
TAIL = 1e-12
CHUNK = 512


def electrodes(count):
    i = np.arange(count, dtype=float)
    z = (i + 0.5) / count
    r = np.sqrt(1.0 - z * z)
    phi = i * np.pi * (3.0 - np.sqrt(5.0))
    return 0.094 * np.stack([r * np.cos(phi), r * np.sin(phi), z], axis=1)


def van_der_corput(i):
    value = 0.0
    base = 0.5
    while i > 0:
        if i & 1:
            value += base
        i >>= 1
        base *= 0.5
    return value


def sources(count):
    i = np.arange(count, dtype=float)
    z = 1.0 - 2.0 * (i + 0.5) / count
    r = np.sqrt(1.0 - z * z)
    phi = i * np.pi * (3.0 - np.sqrt(5.0))
    direction = np.stack([r * np.cos(phi), r * np.sin(phi), z], axis=1)
    radius = 0.078 * np.cbrt(np.array([van_der_corput(k + 1) for k in range(count)]))
    return radius[:, None] * direction, direction


def series_factors():
    """f_n, n = 0..TABLE_LEN (f_0 unused), from the scalp inwards, vectorised over n."""
    n = np.arange(1, TABLE_LEN + 1, dtype=float)
    power = 2.0 * n + 1.0
    w = (n + 1.0) / n
    c_rel = np.ones_like(n)
    for k in range(len(RADII) - 2, -1, -1):
        w_prime = w * np.exp(power * np.log(RADII[k] / RADII[k + 1]))
        p = SIGMA[k + 1] / SIGMA[k]
        c_ratio = (n * (1.0 + w_prime) + p * ((n + 1.0) - n * w_prime)) / power
        w = ((1.0 + w_prime) - c_ratio) / c_ratio
        c_rel = c_rel * c_ratio
    f = np.concatenate([[0.0], SIGMA[-1] / SIGMA[0] / c_rel])
    f_inf = np.prod(2.0 * SIGMA[1:] / (SIGMA[:-1] + SIGMA[1:]))
    return f, f_inf


def terms_needed(rho, sup, tolerance):
    """Smallest N with B_{N+1}/(1 - kappa) <= tolerance, per source (vectorised)."""
    m = np.arange(1, TABLE_LEN + 1, dtype=float)  # m = N + 1
    n_terms = np.full(rho.shape, -1)
    done = np.zeros(rho.shape, dtype=bool)
    rho_power = np.ones_like(rho)
    for idx in range(TABLE_LEN):
        mm = m[idx]
        d = sup[idx + 1]
        bound = (2 * mm + 1) / mm * rho_power * d * (mm + np.sqrt(mm * (mm + 1) / 2))
        kappa = rho * (2 * mm + 3) / (2 * mm + 1)
        ok = (d == 0.0) | (rho_power == 0.0) | ((kappa < 1.0) & (bound <= tolerance * (1.0 - kappa)))
        new = ok & ~done
        n_terms[new] = idx
        done |= ok
        if done.all():
            break
        rho_power = rho_power * rho
    return n_terms


def lead_field(elec, src, normals, f, f_inf):
    R = RADII[-1]
    sigma_n = SIGMA[-1]
    e_hat = elec / np.linalg.norm(elec, axis=1, keepdims=True)
    r_el = R * e_hat
    b = np.linalg.norm(src, axis=1)
    rho = b / R
    r0_hat = np.where(b[:, None] > 0, src / np.where(b > 0, b, 1.0)[:, None], [0.0, 0.0, 1.0])
    delta = np.abs(f - f_inf)
    delta[0] = 0.0
    sup = np.maximum.accumulate(delta[::-1])[::-1]
    n_terms = terms_needed(rho, sup, TAIL * 3.0 * abs(f[1]))
    k_series = 1.0 / (4 * np.pi * sigma_n * R * R)
    k_closed = f_inf / (4 * np.pi * sigma_n)
    n_src, n_ch = len(src), len(elec)
    gain_xyz = np.empty((n_ch, n_src, 3))
    order = np.argsort(n_terms, kind="stable")  # similar series lengths in a chunk
    for start in range(0, n_src, CHUNK):
        idx = order[start:start + CHUNK]
        n_max = int(n_terms[idx].max())
        x = r0_hat[idx] @ e_hat.T  # (s, e)
        nn = np.arange(1, n_max + 1, dtype=float)
        keep = nn[None, :] <= n_terms[idx][:, None]
        common = (2 * nn + 1)[None, :] * rho[idx][:, None] ** (nn - 1)[None, :] * (f[1:n_max + 1] - f_inf)[None, :]
        common = np.where(keep, common * k_series, 0.0)
        radial = common
        tangential = common / nn[None, :]
        p_prev = np.ones_like(x)
        p = x.copy()
        dp = np.ones_like(x)
        sr = np.zeros_like(x)
        st = np.zeros_like(x)
        for j in range(n_max):
            n = j + 1.0
            sr += radial[:, j:j + 1] * p
            st += tangential[:, j:j + 1] * dp
            p_next = ((2 * n + 1) / (n + 1)) * x * p - (n / (n + 1)) * p_prev
            dp = (n + 1) * p + x * dp
            p_prev = p
            p = p_next
        tangent = e_hat[None, :, :] - x[:, :, None] * r0_hat[idx][:, None, :]
        g = sr[:, :, None] * r0_hat[idx][:, None, :] + st[:, :, None] * tangent
        d = r_el[None, :, :] - src[idx][:, None, :]
        dn = np.linalg.norm(d, axis=2)
        denom = R * dn * (R * dn + np.einsum("ek,sek->se", r_el, d))
        h = (2.0 / dn**3)[:, :, None] * d + (dn[:, :, None] * r_el[None, :, :] + R * d) / denom[:, :, None]
        g += k_closed * h
        g -= g.mean(axis=1, keepdims=True)  # average reference
        gain_xyz[:, idx, :] = g.transpose(1, 0, 2)
    gain = np.einsum("csk,sk->cs", gain_xyz, normals)
    return gain, gain_xyz, n_terms


def main():
    n_src = int(sys.argv[1]) if len(sys.argv) > 1 else 20000
    elec = electrodes(64)
    src, normals = sources(n_src)
    t0 = time.perf_counter()
    f, f_inf = series_factors()
    t1 = time.perf_counter()
    gain, gain_xyz, n_terms = lead_field(elec, src, normals, f, f_inf)
    t2 = time.perf_counter()
    print(f"numpy {np.__version__}; {n_src} sources x 64 channels, free orientation")
    print(f"series table {t1 - t0:.3f} s, lead field {t2 - t1:.3f} s")
    print(
        f"gain Frobenius {np.linalg.norm(gain):.15e}, gain_xyz Frobenius {np.linalg.norm(gain_xyz):.15e}, "
        f"mean terms {n_terms.mean():.2f}, gain[0,0] {gain[0, 0]:.15e}, gain[63,{n_src - 1}] {gain[63, -1]:.15e}"
    )


if __name__ == "__main__":
    main()
