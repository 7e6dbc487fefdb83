//! MATLAB v7.3 MAT-files: HDF5 files written by MATLAB's `save -v7.3`.
//!
//! Such a file begins with a 512-byte user block whose first bytes are the text
//! `MATLAB 7.3 MAT-file` (the MAT-file header; from memory of MATLAB's MAT-file format
//! documentation). MATLAB stores arrays column-major, so a MATLAB matrix `A` of size
//! `r × c` appears in HDF5 (C order) as a `[c, r]` dataset holding `Aᵀ`: an eigenvector
//! matrix `V` (`dim × n`, eigenvectors in columns) reads as the row layout `[n, dim]`, and a
//! dense operator reads as `Aᵀ = conj(A)` for a Hermitian `A`. A sparse MATLAB matrix is a
//! group `{data, ir, jc}` with attribute `MATLAB_sparse` (the number of rows) in the
//! compressed-column form: column `j` holds `data[jc[j]..jc[j+1]]` in rows `ir[...]`, which
//! read as compressed rows is again `Aᵀ`. Complex MATLAB data are the compound
//! `{real, imag}`.

use std::io::Read;
use std::path::Path;

/// The first bytes of a MATLAB v7.3 MAT-file.
pub const MAT73_SIGNATURE: &[u8] = b"MATLAB 7.3 MAT-file";

/// Whether the file at `path` starts with the MATLAB v7.3 header (`false` when it cannot
/// be read: the HDF5 open reports that).
pub fn is_mat73(path: &Path) -> bool {
    let mut head = [0u8; 19];
    std::fs::File::open(path)
        .and_then(|mut f| f.read_exact(&mut head))
        .is_ok()
        && head == MAT73_SIGNATURE
}

/// The attribute naming a MATLAB sparse group's number of rows.
pub const SPARSE_ATTRIBUTE: &str = "MATLAB_sparse";
