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


def write(name, re, im, dtype=np.float64):
    e, v, hop, z, psi = data()
    with h5py.File(os.path.join(OUT, name), "w") as f:
        f.create_dataset("energies", data=e.astype(dtype))
        f.create_dataset("eigenvectors", data=compound(v, re, im, dtype))
        f.create_dataset("observables/hop", data=compound(hop, re, im, dtype))
        f.create_dataset("observables/z", data=z.astype(dtype))
        f.create_dataset("states/psi", data=compound(psi, re, im, dtype))
        f.attrs["symmetry_class"] = "unitary"
        f.attrs["writer"] = f"numpy {np.__version__}, h5py {h5py.__version__}"


def main():
    os.makedirs(OUT, exist_ok=True)
    write("r_i.h5", "r", "i")
    write("real_imag.h5", "real", "imag")
    write("re_im.h5", "re", "im")
    write("Real_Imaginary.h5", "Real", "Imaginary")
    write("r_i_f32.h5", "r", "i", np.float32)
    write("re_im_f32.h5", "re", "im", np.float32)
    write("x_y.h5", "x", "y")


if __name__ == "__main__":
    main()
