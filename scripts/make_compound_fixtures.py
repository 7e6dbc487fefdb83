#!/usr/bin/env python3
"""Writes fixtures/compounds/*.h5: one small complex eigenbasis in several HDF5 spellings.

A random complex Hermitian matrix H (dimension 24, seeded), its eigenbasis from
numpy.linalg.eigh, a dense complex Hermitian observable `hop`, a diagonal observable `z`
and a complex initial state `psi`, written once per complex field-name pair:

  r_i.h5             {r, i}             (h5py's own convention: the README layout)
  real_imag.h5       {real, imag}       (MATLAB v7.3's spelling)
  re_im.h5           {re, im}
  Real_Imaginary.h5  {Real, Imaginary}
  r_i_f32.h5         {r, i} of float32 (NumPy's complex64: the data rounded to single precision)
  re_im_f32.h5       {re, im} of float32 (the same rounded data)
  x_y.h5             {x, y}             (not a complex spelling: must be refused)
  matlab73.h5        a file as MATLAB's `save -v7.3` lays it out (our emulation, written
                     without MATLAB): the MAT-file header in a 512-byte user block, every
                     array column-major (the transpose in HDF5's C order: eigenvectors
                     [n, dim], energies and vectors [1, n]), {real, imag} compounds,
                     MATLAB_class attributes, and the sparse observable `hop_sparse` as a
                     MATLAB sparse group {data, ir, jc} with attribute MATLAB_sparse

r_i.h5 and matlab73.h5 also hold `hop_sparse` (hop with its small entries set to zero; a
SciPy-style CSR group {data, indices, indptr} in r_i.h5).

The tests check that every accepted float64 spelling gives the figures of r_i.h5, and the
float32 one those of r_i_f32.h5.

Usage: python3 scripts/make_compound_fixtures.py   (from the repository root)
"""
import os

import h5py
import numpy as np

DIM = 24
OUT = os.path.join("fixtures", "compounds")


def data():
    rng = np.random.default_rng(20261204)
    x = rng.standard_normal((DIM, DIM)) + 1j * rng.standard_normal((DIM, DIM))
    h = (x + x.conj().T) / 2
    e, v = np.linalg.eigh(h)
    y = rng.standard_normal((DIM, DIM)) + 1j * rng.standard_normal((DIM, DIM))
    hop = (y + y.conj().T) / 2
    z = rng.choice([-1.0, 1.0], DIM)
    psi = rng.standard_normal(DIM) + 1j * rng.standard_normal(DIM)
    psi /= np.linalg.norm(psi)
    return e, v, hop, z, psi


def compound(a, re, im, dtype):
    if (re, im) == ("r", "i"):
        # h5py writes NumPy's complex types as the compound {r, i}
        return a.astype(np.complex128 if dtype == np.float64 else np.complex64)
    out = np.empty(a.shape, dtype=[(re, dtype), (im, dtype)])
    out[re] = a.real
    out[im] = a.imag
    return out


def sparse_hop(hop):
    """hop with entries below 1.0 in modulus set to zero (still Hermitian)."""
    return np.where(np.abs(hop) >= 1.0, hop, 0.0)


def compressed(a, by_rows):
    """(data, indices, pointers) of `a` compressed by rows (CSR) or by columns (CSC)."""
    m = a if by_rows else a.T
    data, idx, ptr = [], [], [0]
    for line in m:
        nz = np.nonzero(line)[0]
        data.extend(line[nz])
        idx.extend(nz)
        ptr.append(len(idx))
    return np.array(data), np.array(idx, dtype=np.uint64), np.array(ptr, dtype=np.uint64)


def write(name, re, im, dtype=np.float64):
    e, v, hop, z, psi = data()
    with h5py.File(os.path.join(OUT, name), "w") as f:
        if name == "r_i.h5":
            d, i, p = compressed(sparse_hop(hop), by_rows=True)
            g = f.create_group("observables/hop_sparse")
            g.create_dataset("data", data=d.astype(np.complex128))
            g.create_dataset("indices", data=i)
            g.create_dataset("indptr", data=p)
            g.attrs["shape"] = [DIM, DIM]
        f.create_dataset("energies", data=e.astype(dtype))
        f.create_dataset("eigenvectors", data=compound(v, re, im, dtype))
        f.create_dataset("observables/hop", data=compound(hop, re, im, dtype))
        f.create_dataset("observables/z", data=z.astype(dtype))
        f.create_dataset("states/psi", data=compound(psi, re, im, dtype))
        f.attrs["symmetry_class"] = "unitary"
        f.attrs["writer"] = f"numpy {np.__version__}, h5py {h5py.__version__}"


def mat_header():
    """The 128-byte MAT-file header of a v7.3 file (from memory of MATLAB's MAT-file format
    documentation): 116 bytes of text, 8 bytes of subsystem offset, version 0x0200, 'IM'."""
    text = b"MATLAB 7.3 MAT-file, Platform: GLNXA64, Created on: Fri Dec  4 12:00:00 2026 HDF5 schema 1.00 ."
    return text.ljust(116, b" ") + b"\0" * 8 + (0x0200).to_bytes(2, "little") + b"IM"


def write_matlab(name):
    e, v, hop, z, psi = data()
    path = os.path.join(OUT, name)

    def double(f, where, a):
        ds = f.create_dataset(where, data=a)
        ds.attrs["MATLAB_class"] = np.bytes_("double")
        return ds

    with h5py.File(path, "w", userblock_size=512) as f:
        # MATLAB column vectors (n x 1) appear as [1, n]; matrices as their transpose
        double(f, "energies", e.reshape(1, -1))
        double(f, "eigenvectors", compound(v.T, "real", "imag", np.float64))
        obs = f.create_group("observables")
        obs.attrs["MATLAB_class"] = np.bytes_("struct")
        double(f, "observables/hop", compound(hop.T, "real", "imag", np.float64))
        double(f, "observables/z", z.reshape(1, -1))
        d, i, p = compressed(sparse_hop(hop), by_rows=False)
        g = obs.create_group("hop_sparse")
        g.attrs["MATLAB_class"] = np.bytes_("double")
        g.attrs["MATLAB_sparse"] = np.uint64(DIM)
        g.create_dataset("data", data=compound(d, "real", "imag", np.float64))
        g.create_dataset("ir", data=i)
        g.create_dataset("jc", data=p)
        st = f.create_group("states")
        st.attrs["MATLAB_class"] = np.bytes_("struct")
        double(f, "states/psi", compound(psi.reshape(1, -1), "real", "imag", np.float64))
        # the one attribute of our layout, as MATLAB's h5writeatt would add it
        f.attrs["symmetry_class"] = "unitary"
    with open(path, "r+b") as raw:
        raw.write(mat_header())


def main():
    os.makedirs(OUT, exist_ok=True)
    write("r_i.h5", "r", "i")
    write("real_imag.h5", "real", "imag")
    write("re_im.h5", "re", "im")
    write("Real_Imaginary.h5", "Real", "Imaginary")
    write("r_i_f32.h5", "r", "i", np.float32)
    write("re_im_f32.h5", "re", "im", np.float32)
    write("x_y.h5", "x", "y")
    write_matlab("matlab73.h5")


if __name__ == "__main__":
    main()
