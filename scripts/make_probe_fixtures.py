#!/usr/bin/env python3
"""Writes fixtures/probes/: two small spin chains and, computed here with NumPy, the
adiabatic-gauge-potential norm chi_n(mu), the fidelity susceptibility F_n and the
bipartite entanglement entropies of every eigenstate.

Written with NumPy 2.4.6 and h5py 3.16.0 (numpy.linalg.eigh, numpy.linalg.svd).

Files (our layout, eigenvectors [dim, n] with attribute layout = "columns"; Pauli matrices, site i is bit i - 1 of a configuration, 1 = up):

- full_L8.h5: the open mixed-field Ising chain H = sum Z_i Z_{i+1} + 0.9045 sum X_i
  + 0.8090 sum Z_i + 0.3 Z_1 (the extra field on site 1 breaks the reflection), full
  2^8 = 256 space; `basis` = 0..255 (local_dim 2); observables sz_site (Z_4, diagonal form)
  only. Attribute size = 8.
- xxz_L10_sz0.h5: the open XXZ chain H = sum (X X + Y Y + 0.55 Z Z)_{i,i+1} + sum h_i Z_i
  with fixed fields h_i drawn once from uniform [-0.5, 0.5] (seed 14), in the sector of
  total S^z = 0 (252 configurations with 5 up spins, ascending); `basis` the configurations;
  observable sz_site (Z_5, diagonal form). Attribute size = 10.

expected.json, per file: `cutoff` mu (an absolute energy given to the command), and for
every state in ascending energy: `chi` = sum_{m != n} w^2 |V_nm|^2 / (w^2 + mu^2)^2 and
`fidelity` = sum_{m: |w| > 1e-10 * spacing} |V_nm|^2 / w^2 (w = E_n - E_m, the sums over
all states, spacing the mean level spacing of the whole spectrum, i.e. window 0:1), with
V = sz_site; and the von Neumann entropy `s_vn` = -sum p ln p and the second Renyi entropy
`s_2` = -ln sum p^2 of the Schmidt weights p = sigma^2 of the state, for the cut after
site L/2 (subsystem A = sites 1..L/2, the low bits), from numpy.linalg.svd of the state
embedded in the full 2^L space and reshaped as M[a, b], configuration = a + 2^(L/2) b.

Usage: python3 scripts/make_probe_fixtures.py   (from the repository root)
"""
import json
import os

import h5py
import numpy as np

OUT = "fixtures/probes"
def zval(s, i):
    """Z_i on configuration s: +1 if site i (bit i - 1) is up."""
    return 1.0 if (s >> (i - 1)) & 1 else -1.0


def mixed_field(n):
    dim = 2**n
    h = np.zeros((dim, dim))
    for s in range(dim):
        h[s, s] += sum(zval(s, i) * zval(s, i + 1) for i in range(1, n))
        h[s, s] += sum(0.8090 * zval(s, i) for i in range(1, n + 1)) + 0.3 * zval(s, 1)
        for i in range(1, n + 1):
            h[s ^ (1 << (i - 1)), s] += 0.9045
    return h


def xxz(n, fields):
    dim = 2**n
    h = np.zeros((dim, dim))
    for s in range(dim):
        for i in range(1, n):
            zz = zval(s, i) * zval(s, i + 1)
            h[s, s] += 0.55 * zz
            if zz < 0:  # X X + Y Y flips an antiparallel pair with amplitude 2
                h[s ^ (0b11 << (i - 1)), s] += 2.0
        h[s, s] += sum(fields[i - 1] * zval(s, i) for i in range(1, n + 1))
    return h


def gauge(e, v, mu):
    w = e[:, None] - e[None, :]
    a2 = np.abs(v) ** 2
    off = ~np.eye(len(e), dtype=bool)
    chi = np.where(off, w**2 * a2 / (w**2 + mu**2) ** 2, 0.0).sum(axis=1)
    spacing = (e[-1] - e[0]) / (len(e) - 1)
    keep = off & (np.abs(w) > 1e-10 * spacing)
    fid = np.where(keep, a2 / np.where(keep, w**2, 1.0), 0.0).sum(axis=1)
    return chi, fid


def entropies(vec_full, n, la):
    m = vec_full.reshape(2 ** (n - la), 2**la).T  # M[a, b], s = a + 2^la b
    s = np.linalg.svd(m, compute_uv=False)
    p = s**2
    p = p[p > 1e-300]
    return float(-(p * np.log(p)).sum()), float(-np.log((p**2).sum()))


def write(path, e, vecs, basis, obs, size):
    with h5py.File(path, "w") as f:
        f.attrs["size"] = size
        f["energies"] = e
        f["eigenvectors"] = vecs
        f["eigenvectors"].attrs["layout"] = "columns"
        d = f.create_dataset("basis", data=np.asarray(basis, dtype=np.uint64))
        d.attrs["local_dim"] = 2
        for name, val in obs.items():
            f["observables/" + name] = val


def main():
    os.makedirs(OUT, exist_ok=True)
    expected = {}
    # full space
    n = 8
    h = mixed_field(n)
    e, v = np.linalg.eigh(h)
    sz = np.array([zval(s, 4) for s in range(2**n)])
    write(f"{OUT}/full_L8.h5", e, v, np.arange(2**n), {"sz_site": sz}, n)
    mu = 0.05
    chi, fid = gauge(e, v.T @ (sz[:, None] * v), mu)
    ent = [entropies(v[:, k], n, n // 2) for k in range(len(e))]
    expected["full_L8.h5"] = {
        "cutoff": mu,
        "chi": chi.tolist(),
        "fidelity": fid.tolist(),
        "s_vn": [a for a, _ in ent],
        "s_2": [b for _, b in ent],
    }
    # S^z = 0 sector of a random-field XXZ chain
    n = 10
    fields = np.random.default_rng(14).uniform(-0.5, 0.5, n)
    hfull = xxz(n, fields)
    conf = [s for s in range(2**n) if bin(s).count("1") == n // 2]
    hs = hfull[np.ix_(conf, conf)]
    e, v = np.linalg.eigh(hs)
    sz = np.array([zval(s, 5) for s in conf])
    write(f"{OUT}/xxz_L10_sz0.h5", e, v, conf, {"sz_site": sz}, n)
    mu = 0.05
    chi, fid = gauge(e, v.T @ (sz[:, None] * v), mu)
    ent = []
    for k in range(len(e)):
        full = np.zeros(2**n)
        full[conf] = v[:, k]
        ent.append(entropies(full, n, n // 2))
    expected["xxz_L10_sz0.h5"] = {
        "cutoff": mu,
        "chi": chi.tolist(),
        "fidelity": fid.tolist(),
        "s_vn": [a for a, _ in ent],
        "s_2": [b for _, b in ent],
    }
    with open(f"{OUT}/expected.json", "w") as f:
        json.dump(expected, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
