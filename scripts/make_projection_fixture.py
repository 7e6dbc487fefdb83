#!/usr/bin/env python3
"""Writes fixtures/projection/projection.json: a reference projection computed with NumPy.

A small random orthonormal basis (QR of a Gaussian matrix, real and complex), three
Hermitian operators in the computational basis (diagonal, dense, sparse CSR via SciPy)
and their matrix elements V_W^H A V_W for the window of states 2..10, so that the Rust
projector can be checked against an independent implementation.

Usage: python3 scripts/make_projection_fixture.py   (from the repository root)
"""
import json
import os

import numpy as np
import scipy
import scipy.sparse as sp

DIM = 12
WINDOW = (2, 10)


def basis(rng, complex_):
    x = rng.standard_normal((DIM, DIM))
    if complex_:
        x = x + 1j * rng.standard_normal((DIM, DIM))
    q, _ = np.linalg.qr(x)
    return q


def hermitian_sparse(rng, complex_, density=0.25):
    a = np.zeros((DIM, DIM), dtype=complex if complex_ else float)
    for i in range(DIM):
        for j in range(i, DIM):
            if rng.random() < density:
                v = rng.standard_normal() + (1j * rng.standard_normal() if complex_ and i != j else 0)
                a[i, j] = v
                a[j, i] = np.conj(v)
    return a


def enc(m):
    m = np.asarray(m)
    return {"re": np.real(m).tolist(), "im": np.imag(m).tolist()}


def case(rng, complex_):
    v = basis(rng, complex_)
    d = rng.standard_normal(DIM)
    dense = hermitian_sparse(rng, complex_, density=0.9)
    csr = sp.csr_matrix(hermitian_sparse(rng, complex_, density=0.2))
    lo, hi = WINDOW
    vw = v[:, lo:hi]
    proj = lambda a: vw.conj().T @ a @ vw
    return {
        "complex": complex_,
        "vectors": enc(v),
        "diagonal": d.tolist(),
        "dense": enc(dense),
        "csr": {
            "indptr": csr.indptr.tolist(),
            "indices": csr.indices.tolist(),
            "data": enc(csr.data),
        },
        "projected": {
            "diagonal": enc(proj(np.diag(d))),
            "dense": enc(proj(dense)),
            "csr": enc(proj(csr.toarray())),
        },
    }


def main():
    rng = np.random.default_rng(20240917)
    out = {
        "generator": "scripts/make_projection_fixture.py",
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "dim": DIM,
        "window": list(WINDOW),
        "cases": [case(rng, False), case(rng, True)],
    }
    here = os.path.dirname(os.path.abspath(__file__))
    path = os.path.join(here, "..", "fixtures", "projection", "projection.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=0)
        f.write("\n")
    print("wrote", os.path.normpath(path))


if __name__ == "__main__":
    main()
