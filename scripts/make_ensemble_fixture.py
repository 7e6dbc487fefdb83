#!/usr/bin/env python3
"""Writes fixtures/ensemble/: disorder ensembles of spectra and their NumPy realization averages.

An invented scenario (no physical model): for two "sizes" (8 and 10) and two disorder
strengths (1.0 and 3.0), six realizations each of a 240-level spectrum, drawn as GOE
eigenvalues (weak disorder) or a mixture of GOE and Poisson levels (strong disorder) so
that the larger size is more chaotic at W = 1 and less at W = 3. Realizations 0-2 of every
ensemble are sector groups of ensemble_a.h5, realizations 3-5 of ensemble_b.h5 (an
ensemble spread over files and groups). Each group stores only `energies` and the
attributes size, label, realization, disorder.

expected.json holds, computed here with NumPy, for every ensemble: the mean spacing
ratio of each realization over the window of indices floor(0.25 n) .. ceil(0.75 n)
(r_i = min(s_i, s_{i+1}) / max(s_i, s_{i+1})), their mean, sample standard deviation
(ddof = 1) and standard error, and the crossing strength of the two sizes by linear
interpolation of the difference of the averages; and the realization-averaged spectral
form factor K and connected form factor K_c (poly:5 unfolding of each window, Gaussian
filter eta = 0.5, 32 logarithmic bins from 1e-3 to 10 of 128 times each, direct sums;
K_c from the sample variance of Z over realizations, n/(n-1) included) with errors s/sqrt(n).

Usage: python3 scripts/make_ensemble_fixture.py   (from the repository root)
"""
import json
import math
import os

import h5py
import numpy as np

N = 240
SIZES = (8, 10)
STRENGTHS = (1.0, 3.0)
REALIZATIONS = 6


def goe_levels(rng, n):
    a = rng.standard_normal((n, n))
    return np.linalg.eigvalsh((a + a.T) / 2.0)


def spectrum(rng, size, w):
    # chaotic fraction: at W = 1 the larger size keeps more of it, at W = 3 less
    keep = (0.7 if size == 8 else 1.0) if w == 1.0 else (0.6 if size == 8 else 0.2)
    m = int(round(keep * N))
    e = goe_levels(rng, m) / math.sqrt(m) if m > 0 else np.empty(0)
    p = rng.uniform(-1.0, 1.0, N - m)
    return np.sort(np.concatenate([e, p]))


def mean_r(e):
    n = len(e)
    a, b = math.floor(0.25 * n), math.ceil(0.75 * n)
    s = np.diff(e[a:b])
    r = np.minimum(s[:-1], s[1:]) / np.maximum(s[:-1], s[1:])
    return float(r.mean())


def unfold(e):
    """poly:5 unfolding of the window: Chebyshev least squares of N(E_i) = i + 1/2 in
    x = (E - centre)/half, degree min(5, n // 10, distinct - 1), rescaled to unit mean spacing."""
    n = len(e)
    lo, hi = e[0], e[-1]
    x = np.clip((e - 0.5 * (hi + lo)) / (0.5 * (hi - lo)), -1.0, 1.0)
    distinct = 1 + int(np.count_nonzero(np.diff(e) > 0))
    d = min(5, max(n // 10, 1), distinct - 1)
    c = np.polynomial.chebyshev.chebfit(x, np.arange(n) + 0.5, d)
    u = np.polynomial.chebyshev.chebval(x, c)
    return u / np.mean(np.diff(u))


def averaged_form_factor(windows, eta=0.5, tau_range=(1e-3, 10.0), per_decade=8, samples=128):
    """Realization-averaged K and connected K on the logarithmic grid (direct sums)."""
    decades = math.log10(tau_range[1] / tau_range[0])
    nbins = max(int(round(decades * per_decade)), 1)
    edges = tau_range[0] * 10.0 ** (decades * np.arange(nbins + 1) / nbins)
    a, b = edges[:-1], edges[1:]
    delta = (b - a) / samples
    t = (a[:, None] + (np.arange(samples)[None, :] + 0.5) * delta[:, None]).ravel()
    zs, s2 = [], []
    for eps in windows:
        dd = eps - eps.mean()
        w = eta * math.sqrt(np.mean(dd ** 2))
        rho = np.exp(-dd ** 2 / (2 * w * w))
        zs.append(np.exp(-2j * np.pi * np.outer(t, dd)) @ rho)
        s2.append(np.sum(rho ** 2))
    z = np.array(zs)  # realizations x times
    n = len(windows)
    norm = np.mean(s2)
    k_r = (np.abs(z) ** 2).reshape(n, nbins, samples).mean(axis=2) / norm
    kc_r = (np.abs(z - z.mean(axis=0)) ** 2).reshape(n, nbins, samples).mean(axis=2) / norm * n / (n - 1)
    return [{
        "tau": float(math.sqrt(a[k] * b[k])),
        "k": float(k_r[:, k].mean()),
        "k_stderr": float(k_r[:, k].std(ddof=1) / math.sqrt(n)),
        "k_connected": float(kc_r[:, k].mean()),
        "k_connected_stderr": float(kc_r[:, k].std(ddof=1) / math.sqrt(n)),
    } for k in range(nbins)]


def main():
    rng = np.random.default_rng(20261202)
    out = "fixtures/ensemble"
    os.makedirs(out, exist_ok=True)
    files = {k: h5py.File(f"{out}/ensemble_{k}.h5", "w") for k in "ab"}
    ensembles = []
    for size in SIZES:
        for w in STRENGTHS:
            label = f"invented L={size} W={w}"
            values = []
            windows = []
            for k in range(REALIZATIONS):
                e = spectrum(rng, size, w)
                f = files["a" if k < 3 else "b"]
                g = f.create_group(f"L{size}/W{w}/r{k}")
                g["energies"] = e
                g.attrs["size"] = np.int64(size)
                g.attrs["label"] = label
                g.attrs["realization"] = np.int64(k)
                g.attrs["disorder"] = np.float64(w)
                values.append(mean_r(e))
                n = len(e)
                windows.append(unfold(e[math.floor(0.25 * n):math.ceil(0.75 * n)]))
            v = np.array(values)
            ensembles.append({
                "label": label, "size": size, "disorder": w,
                "mean_r_samples": values,
                "mean_r": float(v.mean()),
                "mean_r_spread": float(v.std(ddof=1)),
                "mean_r_stderr": float(v.std(ddof=1) / math.sqrt(len(v))),
                "form_factor": averaged_form_factor(windows),
            })
    for f in files.values():
        f.close()
    avg = {(e["size"], e["disorder"]): e["mean_r"] for e in ensembles}
    d = [avg[(10, w)] - avg[(8, w)] for w in STRENGTHS]
    assert d[0] > 0 >= d[1], d
    crossing = STRENGTHS[0] + (STRENGTHS[1] - STRENGTHS[0]) * d[0] / (d[0] - d[1])
    with open(f"{out}/expected.json", "w") as f:
        json.dump({
            "written_by": f"scripts/make_ensemble_fixture.py with numpy {np.__version__}, h5py {h5py.__version__}",
            "ensembles": ensembles,
            "crossing": crossing,
        }, f, indent=1)


if __name__ == "__main__":
    main()
