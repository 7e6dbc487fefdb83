#!/usr/bin/env python3
"""Writes the small HDF5 fixtures of the reader tests with numpy + h5py (+ scipy.sparse).

Run from the repository root:  python3 scripts/make_fixtures.py
Written with numpy 2.4.6, h5py 3.16.0 (HDF5 2.0.0 bundled), scipy 1.17.1; the versions
used are also stored as attributes of the root group of fixtures/good.h5.

fixtures/good.h5            every supported form (see SECTORS below)
fixtures/good_expected.json values computed here by numpy, compared by tests/input_fixtures.rs
fixtures/bad/*.h5           one small bad file per error case (tests/cli_errors.rs)

The matrices are random Hermitian matrices from a fixed seed (an invented example,
no physical model): the point is that the Rust reader gets the same numbers as numpy.
"""
import json
import os

import h5py
import numpy as np
import scipy
import scipy.sparse as sp

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "fixtures")
rng = np.random.default_rng(20240611)


def herm(d, complex_=False, density=1.0):
    a = rng.normal(size=(d, d))
    if complex_:
        a = a + 1j * rng.normal(size=(d, d))
    if density < 1.0:
        a = a * (rng.random((d, d)) < density)
    return (a + a.conj().T) / 2


def cplx(x):
    x = complex(x)
    return [x.real, x.imag]


def col_sums(v):
    """Sum over components of every eigenvector (columns of v, ascending order)."""
    return [cplx(s) for s in v.sum(axis=0)]


expected = {
    "generator": {"numpy": np.__version__, "h5py": h5py.__version__, "scipy": scipy.__version__},
    "sectors": {},
}


def write_good(path):
    with h5py.File(path, "w") as f:
        f.attrs["written_by"] = "scripts/make_fixtures.py"
        f.attrs["numpy_version"] = np.__version__
        f.attrs["h5py_version"] = h5py.__version__
        f.attrs["hdf5_version"] = h5py.version.hdf5_version

        # --- /chain: real, columns layout, contiguous, every operator form, Hamiltonian, state
        d = 32
        h = herm(d)
        e, v = np.linalg.eigh(h)
        g = f.create_group("chain")
        g["energies"] = e
        g["eigenvectors"] = v
        g["hamiltonian"] = h
        g.attrs["size"] = np.int16(5)
        g.attrs["label"] = "chain L=5"
        sz = rng.choice([-1.0, 1.0], size=d)
        g["observables/sz"] = sz
        dense = herm(d)
        g["observables/dense_x"] = dense
        hop = sp.csr_matrix(herm(d, density=0.15))
        c = g.create_group("observables/hop")
        c["data"] = hop.data
        c["indices"] = hop.indices
        c["indptr"] = hop.indptr
        c.attrs["shape"] = hop.shape
        proj = v.T @ dense @ v
        g["observables/projected"] = proj
        g["observables/projected"].attrs["basis"] = "energy"
        neel = np.zeros(d)
        neel[0b10101] = 1.0
        g["states/neel"] = neel
        expected["sectors"]["chain"] = {
            "group": "/chain",
            "n": d, "dim": d, "field": "real", "layout": "columns", "chunk": None,
            "size": 5, "label": "chain L=5", "has_hamiltonian": True,
            "energies": e.tolist(),
            "vec_entries": [[i, k, cplx(v[i, k])] for (i, k) in [(0, 0), (5, 3), (31, 31), (17, 12)]],
            "col_sums": col_sums(v),
            "observables": {
                "sz": {"form": "diagonal", "field": "real", "sum": cplx(sz.sum()), "entry": [3, 3, cplx(sz[3])]},
                "dense_x": {"form": "dense", "field": "real", "sum": cplx(dense.sum()), "entry": [2, 7, cplx(dense[2, 7])]},
                "hop": {"form": "csr", "field": "real", "sum": cplx(hop.sum()), "nnz": int(hop.nnz),
                        "entry": [int(hop.nonzero()[0][0]), int(hop.nonzero()[1][0]),
                                  cplx(hop[hop.nonzero()[0][0], hop.nonzero()[1][0]])]},
                "projected": {"form": "energy_basis", "field": "real", "sum": cplx(proj.sum()),
                              "entry": [4, 9, cplx(proj[4, 9])]},
            },
            "states": {"neel": {"field": "real", "sum": cplx(neel.sum())}},
        }

        # --- /chain/half: nested sector inside a sector, energies only
        eh = np.sort(rng.normal(size=8))
        f["chain/half/energies"] = eh
        f["chain/half"].attrs["size"] = 6.0  # a float with an integral value
        expected["sectors"]["chain/half"] = {
            "group": "/chain/half", "n": 8, "dim": None, "size": 6, "label": None,
            "energies": eh.tolist(), "has_hamiltonian": False,
        }

        # --- /complex/rows: complex128, rows layout, gzip chunked, float32 energies,
        #     complex CSR observable, complex state
        d = 24
        h = herm(d, complex_=True)
        e, v = np.linalg.eigh(h)
        g = f.create_group("complex/rows")
        g["energies"] = e.astype(np.float32)
        g.create_dataset("eigenvectors", data=v.T.copy(), chunks=(4, d), compression="gzip", compression_opts=4)
        g["eigenvectors"].attrs["layout"] = "rows"
        g.attrs["label"] = np.bytes_(b"complex rows")  # fixed-length ASCII string
        cur = sp.csr_matrix(herm(d, complex_=True, density=0.2))
        c = g.create_group("observables/current")
        c["data"] = cur.data
        c["indices"] = cur.indices.astype(np.int64)
        c["indptr"] = cur.indptr.astype(np.int64)
        c.attrs["shape"] = np.array(cur.shape, dtype=np.uint32)
        psi = rng.normal(size=d) + 1j * rng.normal(size=d)
        psi /= np.linalg.norm(psi)
        g["states/random"] = psi
        expected["sectors"]["complex/rows"] = {
            "group": "/complex/rows",
            "n": d, "dim": d, "field": "complex", "layout": "rows", "chunk": [4, d],
            "size": None, "label": "complex rows", "has_hamiltonian": False,
            "energies": e.astype(np.float32).astype(np.float64).tolist(),
            "vec_entries": [[i, k, cplx(v[i, k])] for (i, k) in [(0, 0), (5, 3), (23, 23), (11, 17)]],
            "col_sums": col_sums(v),
            "observables": {
                "current": {"form": "csr", "field": "complex", "sum": cplx(cur.sum()), "nnz": int(cur.nnz),
                            "entry": [int(cur.nonzero()[0][0]), int(cur.nonzero()[1][0]),
                                      cplx(cur[cur.nonzero()[0][0], cur.nonzero()[1][0]])]},
            },
            "states": {"random": {"field": "complex", "sum": cplx(psi.sum())}},
        }

        # --- /partial: complex64 eigenvectors (float32 pairs), 12 lowest of dim 20
        d, n = 20, 12
        h = herm(d, complex_=True)
        e, v = np.linalg.eigh(h)
        e, v = e[:n], v[:, :n]
        g = f.create_group("partial")
        g["energies"] = e
        g["eigenvectors"] = v.astype(np.complex64)
        v32 = v.astype(np.complex64).astype(np.complex128)
        expected["sectors"]["partial"] = {
            "group": "/partial",
            "n": n, "dim": d, "field": "complex", "layout": "columns", "chunk": None,
            "size": None, "label": None, "has_hamiltonian": False,
            "energies": e.tolist(),
            "vec_entries": [[i, k, cplx(v32[i, k])] for (i, k) in [(0, 0), (19, 11), (7, 5)]],
            "col_sums": col_sums(v32),
            "observables": {}, "states": {},
        }

        # --- /unsorted: energies stored in shuffled order (eigenvectors and the
        #     energy-basis observable follow the file order), chunked columns
        d = 16
        h = herm(d)
        e, v = np.linalg.eigh(h)
        perm = rng.permutation(d)  # file index j holds ascending state perm[j]
        g = f.create_group("unsorted")
        g["energies"] = e[perm]
        g.create_dataset("eigenvectors", data=v[:, perm], chunks=(d, 4), compression="gzip")
        a = herm(d)
        proj = v.T @ a @ v  # ascending order
        g["observables/projected"] = proj[np.ix_(perm, perm)]
        g["observables/projected"].attrs["basis"] = "energy"
        g["hamiltonian"] = h
        g.attrs["size"] = np.uint8(4)
        expected["sectors"]["unsorted"] = {
            "group": "/unsorted",
            "n": d, "dim": d, "field": "real", "layout": "columns", "chunk": [d, 4],
            "size": 4, "label": None, "has_hamiltonian": True,
            "energies": e.tolist(),
            "order": np.argsort(e[perm], kind="stable").tolist(),
            "vec_entries": [[i, k, cplx(v[i, k])] for (i, k) in [(0, 0), (3, 7), (15, 15)]],
            "col_sums": col_sums(v),
            "observables": {
                "projected": {"form": "energy_basis", "field": "real", "sum": cplx(proj.sum()),
                              "entry": [1, 6, cplx(proj[1, 6])]},
            },
            "states": {},
        }
    expected["sector_order"] = ["chain", "chain/half", "complex/rows", "partial", "unsorted"]


def basic(f, d=8, n=None):
    """A valid real sector at the root: energies, eigenvectors (identity-like basis)."""
    h = herm(d)
    e, v = np.linalg.eigh(h)
    n = d if n is None else n
    f["energies"] = e[:n]
    f["eigenvectors"] = v[:, :n]
    return e, v


def write_bad(dir_):
    os.makedirs(dir_, exist_ok=True)
    with open(os.path.join(dir_, "not_hdf5.h5"), "w") as fh:
        fh.write("energies\n1.0\n2.0\n")
    with h5py.File(os.path.join(dir_, "no_sector.h5"), "w") as f:
        f["results/evals"] = np.arange(4.0)
    with h5py.File(os.path.join(dir_, "shape_vectors.h5"), "w") as f:
        f["energies"] = np.arange(8.0)
        f["eigenvectors"] = np.zeros((10, 7))
    with h5py.File(os.path.join(dir_, "shape_observable.h5"), "w") as f:
        basic(f)
        f["observables/sz"] = np.ones(9)
    with h5py.File(os.path.join(dir_, "csr_missing.h5"), "w") as f:
        basic(f)
        f["observables/hop/data"] = np.ones(2)
        f["observables/hop/indices"] = np.array([0, 1])
        f["observables/hop"].attrs["shape"] = (8, 8)
    with h5py.File(os.path.join(dir_, "nan_energies.h5"), "w") as f:
        f["energies"] = np.array([0.0, 1.0, np.nan, 3.0])
    with h5py.File(os.path.join(dir_, "inf_vectors.h5"), "w") as f:
        e, v = basic(f)
        v = v.copy()
        v[2, 0] = np.inf
        del f["eigenvectors"]
        f["eigenvectors"] = v
    with h5py.File(os.path.join(dir_, "int_energies.h5"), "w") as f:
        f["energies"] = np.arange(4, dtype=np.int64)
    with h5py.File(os.path.join(dir_, "string_observable.h5"), "w") as f:
        basic(f)
        f["observables/name"] = np.array([b"up", b"down"] * 4)
    with h5py.File(os.path.join(dir_, "not_orthonormal.h5"), "w") as f:
        e, v = basic(f)
        v = v.copy()
        v[:, 1] = v[:, 0] + 1e-3 * v[:, 1]
        del f["eigenvectors"]
        f["eigenvectors"] = v
    with h5py.File(os.path.join(dir_, "not_hermitian.h5"), "w") as f:
        basic(f)
        a = herm(8)
        a[0, 5] += 0.5
        f["observables/x"] = a
    with h5py.File(os.path.join(dir_, "csr_bad_index.h5"), "w") as f:
        basic(f)
        c = f.create_group("observables/hop")
        c["data"] = np.array([1.0, 1.0])
        c["indices"] = np.array([1, 8])
        c["indptr"] = np.array([0, 1, 2, 2, 2, 2, 2, 2, 2])
        c.attrs["shape"] = (8, 8)
    with h5py.File(os.path.join(dir_, "many_sectors.h5"), "w") as f:
        for name in ["even", "odd"]:
            f[f"{name}/energies"] = np.arange(3.0)


if __name__ == "__main__":
    os.makedirs(ROOT, exist_ok=True)
    write_good(os.path.join(ROOT, "good.h5"))
    with open(os.path.join(ROOT, "good_expected.json"), "w") as fh:
        json.dump(expected, fh, indent=1)
    write_bad(os.path.join(ROOT, "bad"))
    print("numpy", np.__version__, "h5py", h5py.__version__, "scipy", scipy.__version__,
          "HDF5", h5py.version.hdf5_version)
