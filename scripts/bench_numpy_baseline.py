#!/usr/bin/env python3
"""The NumPy/h5py baseline of the performance benchmark (scripts/bench).

The same eigenstate-thermalization figures as `eigentherm diagonal` and
`eigentherm offdiagonal`, written plainly, the way a group would write them in
a script: read the window's eigenvectors V_W = V[:, lo:hi] whole, form the
full window matrix A_W = V_W^T (A V_W) with NumPy/SciPy products, then reduce.

Window (DESIGN.md): with n states sorted by energy, indices
floor(LO n) ..= ceil(HI n) - 1.

diagonal (a_n = (A_W)_nn, d_n = a_{n+1} - a_n over consecutive window states):
  mean           = mean_n a_n
  diff_mean_abs  = mean |d_n|,  diff_max_abs = max |d_n|
  fluct_variance = 1/2 mean d_n^2
  smooth         = `bins` equal-width energy bins: energy (bin centre), mean a_n, count
offdiagonal (pairs n < m in the window):
  pairs              = number of pairs with |E_m - E_n| < omega_max
  low_omega_variance = mean |A_nm|^2 over those pairs
  gaussian_ratio     = mean |A_nm|^2 / (mean |A_nm|)^2 over those pairs
  diag_offdiag_ratio = fluct_variance / low_omega_variance
  envelope           = `bins` equal-width bins of omega = E_m - E_n over all
                       window pairs: omega (bin centre), mean |A_nm|^2, count
omega_max defaults to 20 mean level spacings of the window,
20 (E_hi - E_lo) / (W - 1), unless --omega-max is given.

Prints one JSON object with these keys and `timing` (seconds: read, project,
analysis, total). `blas-info` prints which BLAS NumPy uses.
"""

import argparse
import json
import math
import sys
import time


def blas_info():
    """Which BLAS/LAPACK NumPy was built with and, when threadpoolctl is present, runs."""
    import numpy as np

    info = {"numpy": np.__version__}
    try:
        cfg = np.show_config(mode="dicts")
        deps = cfg.get("Build Dependencies", {})
        for key in ("blas", "lapack"):
            d = deps.get(key, {})
            info[key] = {k: d.get(k) for k in ("name", "version", "openblas configuration") if k in d}
    except Exception as exc:  # older numpy: show_config has no mode argument
        info["show_config_error"] = str(exc)
    try:
        import threadpoolctl

        info["threadpool"] = [
            {k: p.get(k) for k in ("internal_api", "version", "num_threads", "architecture")}
            for p in threadpoolctl.threadpool_info()
        ]
    except ImportError:
        info["threadpool"] = "threadpoolctl not installed"
    return info


def window_range(n, spec):
    lo_f, hi_f = (float(x) for x in spec.split(":"))
    lo = max(0, math.floor(lo_f * n))
    hi = min(n, math.ceil(hi_f * n))
    if hi - lo < 2:
        sys.exit(f"error: window {spec} holds fewer than 2 of {n} states")
    return lo, hi


def read_operator(f, name, dim):
    """The observable as a dense array [dim,dim], a diagonal [dim] or a scipy CSR matrix."""
    import scipy.sparse

    node = f["observables/" + name]
    if hasattr(node, "keys"):  # CSR group
        shape = tuple(int(x) for x in node.attrs["shape"])
        return "csr", scipy.sparse.csr_matrix(
            (node["data"][...], node["indices"][...], node["indptr"][...]), shape=shape
        )
    data = node[...]
    if data.ndim == 1:
        return "diagonal", data
    return "dense", data


def binned(x, y, bins, lo=None, hi=None):
    """Equal-width bins of x: (centre, mean y, count) for non-empty bins."""
    import numpy as np

    lo = float(x.min()) if lo is None else lo
    hi = float(x.max()) if hi is None else hi
    if hi <= lo:
        hi = lo + 1.0
    idx = np.minimum(((x - lo) / (hi - lo) * bins).astype(np.int64), bins - 1)
    count = np.bincount(idx, minlength=bins)
    total = np.bincount(idx, weights=y, minlength=bins)
    width = (hi - lo) / bins
    rows = []
    for b in range(bins):
        if count[b] > 0:
            rows.append([lo + (b + 0.5) * width, total[b] / count[b], int(count[b])])
    return rows


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("mode", choices=["diagonal", "offdiagonal", "blas-info"])
    p.add_argument("file", nargs="?")
    p.add_argument("--observable")
    p.add_argument("--window", default="0.4:0.6")
    p.add_argument("--omega-max", type=float)
    p.add_argument("--bins", type=int, default=40)
    args = p.parse_args()
    if args.mode == "blas-info":
        print(json.dumps(blas_info()))
        return
    if not args.file or not args.observable:
        sys.exit("error: give FILE and --observable NAME")

    import h5py
    import numpy as np

    t0 = time.perf_counter()
    with h5py.File(args.file, "r") as f:
        energies = f["energies"][...]
        vec = f["eigenvectors"]
        rows = vec.attrs.get("layout", "columns") in ("rows", b"rows")
        n = energies.size
        lo, hi = window_range(n, args.window)
        vw = vec[lo:hi, :].T.copy() if rows else vec[:, lo:hi]
        dim = vw.shape[0]
        kind, op = read_operator(f, args.observable, dim)
    t_read = time.perf_counter()

    if kind == "diagonal":
        b = op[:, None] * vw
    else:
        b = op @ vw
    aw = vw.T @ b
    t_project = time.perf_counter()

    e = energies[lo:hi]
    w = hi - lo
    a = np.diag(aw).copy()
    d = np.diff(a)
    fluct = 0.5 * float(np.mean(d * d))
    out = {
        "file": args.file,
        "observable": args.observable,
        "kind": kind,
        "dimension": int(dim),
        "states": int(w),
        "window": [int(lo), int(hi - 1)],
        "mean": float(a.mean()),
        "diff_mean_abs": float(np.abs(d).mean()),
        "diff_max_abs": float(np.abs(d).max()),
        "fluct_variance": fluct,
    }
    if args.mode == "diagonal":
        out["smooth"] = binned(e, a, args.bins)
    else:
        omega_max = args.omega_max
        if omega_max is None:
            omega_max = 20.0 * (e[-1] - e[0]) / (w - 1)
        iu, ju = np.triu_indices(w, 1)
        omega = e[ju] - e[iu]
        sq = aw[iu, ju] ** 2
        low = np.abs(omega) < omega_max
        pairs = int(low.sum())
        low_var = float(sq[low].mean()) if pairs else float("nan")
        mean_abs = float(np.sqrt(sq[low]).mean()) if pairs else float("nan")
        out.update(
            {
                "omega_max": float(omega_max),
                "pairs": pairs,
                "low_omega_variance": low_var,
                "gaussian_ratio": low_var / mean_abs**2 if pairs else float("nan"),
                "diag_offdiag_ratio": fluct / low_var if pairs else float("nan"),
                "envelope": binned(np.abs(omega), sq, args.bins, lo=0.0),
            }
        )
    t_end = time.perf_counter()
    out["timing"] = {
        "read_seconds": t_read - t0,
        "project_seconds": t_project - t_read,
        "analysis_seconds": t_end - t_project,
        "total_seconds": t_end - t0,
    }
    print(json.dumps(out))


if __name__ == "__main__":
    main()
