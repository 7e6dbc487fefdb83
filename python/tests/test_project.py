"""``project`` against an independent projection with h5py and NumPy.

Reference: h5py 3.16.0 and NumPy 2.4.6 (the versions scripts/test installed when this test was
written; the check does not depend on them): read the sector, sort the energies, take the
window's states floor(lo*n) .. ceil(hi*n)-1 (the README's window rule), form V_W^H A V_W.
Tolerance 1e-12 absolute on elements of order one (common practice, no source).
"""

import math

import h5py
import numpy as np
import pytest

import eigentherm


def window(n, lo, hi):
    return math.floor(lo * n), math.ceil(hi * n)


def dense_operator(group, dim):
    """The operator of an ``observables/NAME`` entry as a dense dim x dim matrix: a diagonal
    [dim], a dense [dim, dim] or a CSR group {data, indices, indptr}."""
    if isinstance(group, h5py.Group):
        data, indices, indptr = (group[k][()] for k in ("data", "indices", "indptr"))
        a = np.zeros((dim, dim), dtype=data.dtype)
        for i in range(dim):
            for k in range(indptr[i], indptr[i + 1]):
                a[i, indices[k]] += data[k]
        return a
    a = group[()]
    return np.diag(a) if a.ndim == 1 else a


def reference(path, sector, observable, lo=0.4, hi=0.6):
    with h5py.File(path, "r") as f:
        g = f[sector]
        e = g["energies"][()].astype(np.float64)
        v = g["eigenvectors"][()]
        if g["eigenvectors"].attrs.get("layout") == "rows":
            v = v.T
        order = np.argsort(e, kind="stable")
        e, v = e[order], v[:, order]
        a = dense_operator(g["observables"][observable], v.shape[0])
    i0, i1 = window(len(e), lo, hi)
    vw = v[:, i0:i1]
    return vw.conj().T @ a @ vw, (i0, i1), e[i0:i1]


@pytest.mark.parametrize(
    "sector, observable",
    [("chain", "sz"), ("chain", "dense_x"), ("chain", "hop"), ("complex/rows", "current")],
)
def test_project_equals_h5py_numpy(good, sector, observable):
    expected, win, energies = reference(good, sector, observable)
    got, got_win, got_e = eigentherm.project(good, observable, sector=sector, return_window=True)
    assert isinstance(got, np.ndarray) and got.shape == expected.shape
    assert got.dtype == (np.complex128 if np.iscomplexobj(expected) else np.float64)
    assert got_win == win
    # 1e-12 (common practice, no source): both are sums of a few dozen products of order one
    assert np.max(np.abs(got - expected)) < 1e-12
    # energies: float32 promoted to float64 exactly on both sides
    assert np.array_equal(got_e, energies)


def test_project_window_option(good):
    expected, _, _ = reference(good, "chain", "dense_x", 0.1, 0.9)
    got = eigentherm.project(good, "dense_x", sector="chain", window="0.1:0.9")
    assert np.max(np.abs(got - expected)) < 1e-12  # same source and tolerance as above


def test_project_needs_a_sector_when_there_are_several(good):
    with pytest.raises(eigentherm.Error, match="give the sector"):
        eigentherm.project(good, "sz")


def test_per_state_diagonal_equals_h5py_numpy_and_the_binary(cli, good):
    # Reference: the h5py + NumPy projection above (diagonal of V^H A V over every state,
    # ascending energy); tolerance 1e-12 absolute (common practice, no source)
    r = eigentherm.diagonal(good, sector="chain", observable="sz", predictions="all",
                            per_state=True)
    ps = r["sectors"][0]["observables"][0]["per_state"]
    full, _, _ = reference(good, "chain", "sz", lo=0.0, hi=1.0)
    with h5py.File(good, "r") as f:
        e = np.sort(f["chain"]["energies"][()].astype(np.float64))
    assert ps["first_state"] == 0
    np.testing.assert_allclose(np.asarray(ps["values"]), np.real(np.diag(full)), rtol=0, atol=1e-12)
    np.testing.assert_array_equal(np.asarray(ps["energies"]), e)
    out = cli(["diagonal", good, "--sector", "chain", "--observable", "sz", "--predictions",
               "all", "--per-state", "--json"]).json()
    assert out["sectors"][0]["observables"][0]["per_state"]["values"] == list(ps["values"])
