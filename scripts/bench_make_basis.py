#!/usr/bin/env python3
"""Writes a synthetic eigenbasis file for the performance benchmark (scripts/bench).

The file follows eigentherm's input layout (README / DESIGN.md), in the root group:

  energies            [n] float64, ascending
  eigenvectors        [dim, n] float64, column j is eigenvector j (default), or
                      [n, dim] with attribute layout="rows" (--layout rows)
  observables/diag_pm [dim]        diagonal operator, random entries +1 or -1
                                   (seed fixed)
  observables/sx_like CSR group    (1/L) sum_k X_k, X_k flips bit k of the basis
                                   index (the transverse magnetisation of L
                                   spins when dim = 2^L); attribute shape
  observables/dense_rand [dim,dim] random symmetric matrix (only dim <= 8192 by
                                   default), off-diagonal entries N(0, 1/dim),
                                   diagonal entries N(0, 2/dim) (GOE scaling)
  states/NAME         [dim]        optional initial states for `eigentherm quench`
                                   (--state NAME=random: a normalised vector of
                                   N(0, 1) entries, seed fixed; --state NAME=basis:K:
                                   the basis vector |K>)

The eigenvectors are the columns of the orthonormal DCT-II matrix
C[k, j] = sqrt(2/dim) * c_k * cos(pi * k * (2j + 1) / (2 dim)), c_0 = 1/sqrt(2),
c_k = 1 otherwise, which is orthogonal (C^T C = 1). Column j of the matrix
`scipy.fft.dct(I, norm="ortho", axis=0)` is C e_j, so a block of columns is the
DCT of a block of identity columns: a dim = 32768 basis costs seconds, not a
diagonalisation. It is not the eigenbasis of any particular Hamiltonian; the
benchmark measures cost, not physics. The energies are sorted standard normal
draws times sqrt(dim)/4 (a Gaussian density of states, seed fixed).

Everything is written in column blocks (chunked datasets, one chunk holding all
rows of a few columns), so memory stays bounded: a few hundred MB for dim = 32768.
"""

import argparse
import os
import sys
import time

import h5py
import numpy as np
import scipy.fft
import scipy.sparse


def chunk_columns(dim, target_bytes=8 << 20):
    """Number of columns per chunk so one chunk of all rows is about target_bytes."""
    return max(1, min(dim, target_bytes // (8 * dim)))


def write_eigenvectors(group, dim, layout, block):
    """Writes the DCT-II basis, column j = C e_j, in blocks of `block` columns."""
    cols = chunk_columns(dim)
    if layout == "columns":
        dset = group.create_dataset(
            "eigenvectors", shape=(dim, dim), dtype="f8", chunks=(dim, cols)
        )
    else:
        dset = group.create_dataset(
            "eigenvectors", shape=(dim, dim), dtype="f8", chunks=(cols, dim)
        )
        dset.attrs["layout"] = "rows"
    for j0 in range(0, dim, block):
        j1 = min(dim, j0 + block)
        eye = np.zeros((dim, j1 - j0))
        eye[np.arange(j0, j1), np.arange(j1 - j0)] = 1.0
        v = scipy.fft.dct(eye, type=2, norm="ortho", axis=0)  # columns C e_j
        if layout == "columns":
            dset[:, j0:j1] = v
        else:
            dset[j0:j1, :] = v.T


def write_dense(group, dim, seed, tile):
    """Random symmetric dense operator, written tile by tile (upper tiles mirrored)."""
    cols = chunk_columns(dim)
    dset = group.create_dataset(
        "dense_rand", shape=(dim, dim), dtype="f8", chunks=(dim, cols)
    )
    scale = 1.0 / np.sqrt(dim)
    starts = list(range(0, dim, tile))
    # Write one column slab at a time so every chunk is written once, whole.
    for bj, j0 in enumerate(starts):
        j1 = min(dim, j0 + tile)
        slab = np.empty((dim, j1 - j0))
        for bi, i0 in enumerate(starts):
            i1 = min(dim, i0 + tile)
            lo, hi = min(bi, bj), max(bi, bj)
            rng = np.random.default_rng([seed, lo, hi])
            a0, a1 = starts[lo], min(dim, starts[lo] + tile)
            b0, b1 = starts[hi], min(dim, starts[hi] + tile)
            g = rng.standard_normal((a1 - a0, b1 - b0)) * scale
            if bi == bj:
                upper = np.triu(g, 1)
                # off-diagonal variance 1/dim, diagonal variance 2/dim
                slab[i0:i1, :] = upper + upper.T + np.diag(np.diag(g)) * np.sqrt(2.0)
            elif bi < bj:
                slab[i0:i1, :] = g
            else:
                slab[i0:i1, :] = g.T
        dset[:, j0:j1] = slab


def sx_like(dim):
    """CSR matrix of (1/L) sum_k X_k with X_k |i> = |i xor 2^k>, entries kept inside dim."""
    nbits = max(1, int(np.ceil(np.log2(dim))))
    rows, cols = [], []
    idx = np.arange(dim, dtype=np.int64)
    for k in range(nbits):
        j = idx ^ (1 << k)
        keep = j < dim
        rows.append(idx[keep])
        cols.append(j[keep])
    rows = np.concatenate(rows)
    cols = np.concatenate(cols)
    data = np.full(rows.size, 1.0 / nbits)
    mat = scipy.sparse.csr_matrix((data, (rows, cols)), shape=(dim, dim))
    mat.sort_indices()
    return mat


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("path", help="output HDF5 file (overwritten)")
    p.add_argument("--dim", type=int, required=True)
    p.add_argument("--layout", choices=["columns", "rows"], default="columns")
    p.add_argument(
        "--dense-max",
        type=int,
        default=8192,
        help="write dense_rand only when dim <= this (default 8192)",
    )
    p.add_argument("--seed", type=int, default=20240607)
    p.add_argument("--block", type=int, default=512, help="columns per write block")
    p.add_argument(
        "--state",
        action="append",
        default=[],
        metavar="NAME=KIND",
        help="write states/NAME: KIND is `random` (normalised, seed fixed) or `basis:K` "
        "(repeatable)",
    )
    args = p.parse_args()
    dim = args.dim
    if dim < 2:
        sys.exit(f"error: --dim must be at least 2, got {dim}")
    states = []
    for spec in args.state:
        name, _, kind = spec.partition("=")
        if not name or "/" in name:
            sys.exit(f"error: --state {spec!r}: expected NAME=random or NAME=basis:K")
        if kind == "random":
            v = np.random.default_rng([args.seed, 2, len(states)]).standard_normal(dim)
            v /= np.linalg.norm(v)
        elif kind.startswith("basis:") and kind[6:].isdigit() and int(kind[6:]) < dim:
            v = np.zeros(dim)
            v[int(kind[6:])] = 1.0
        else:
            sys.exit(f"error: --state {spec!r}: expected NAME=random or NAME=basis:K (K < dim)")
        states.append((name, v))

    t0 = time.perf_counter()
    tmp = args.path + ".part"
    with h5py.File(tmp, "w") as f:
        f.attrs["label"] = f"benchmark DCT basis, dim {dim}"
        f.attrs["size"] = int(np.ceil(np.log2(dim)))
        rng = np.random.default_rng(args.seed)
        energies = np.sort(rng.standard_normal(dim)) * (np.sqrt(dim) / 4.0)
        f.create_dataset("energies", data=energies)
        write_eigenvectors(f, dim, args.layout, args.block)
        obs = f.create_group("observables")
        signs = np.random.default_rng([args.seed, 1]).integers(0, 2, dim)
        obs.create_dataset("diag_pm", data=1.0 - 2.0 * signs)
        csr = sx_like(dim)
        g = obs.create_group("sx_like")
        g.create_dataset("data", data=csr.data)
        g.create_dataset("indices", data=csr.indices)
        g.create_dataset("indptr", data=csr.indptr)
        g.attrs["shape"] = np.array([dim, dim], dtype=np.int64)
        if dim <= args.dense_max:
            write_dense(obs, dim, args.seed, tile=min(dim, 1024))
        if states:
            st = f.create_group("states")
            for name, v in states:
                st.create_dataset(name, data=v)
    os.replace(tmp, args.path)
    size = os.path.getsize(args.path)
    print(
        f"wrote {args.path}: dim {dim}, layout {args.layout}, "
        f"{size / 1e9:.2f} GB in {time.perf_counter() - t0:.1f} s",
        file=sys.stderr,
    )


if __name__ == "__main__":
    main()
