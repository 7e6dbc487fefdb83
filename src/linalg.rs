//! Dense linear algebra helpers over faer: Hermitian eigendecomposition and
//! conversions between the ndarray arrays of the I/O boundary and faer matrices.

use crate::data::c64;
use crate::error::{Error, Result};
use faer::{Mat, MatRef, Side};

/// Eigendecomposition `A = U diag(λ) Uᵀ` of a real symmetric matrix (lower triangle used).
/// Returns the eigenvalues ascending and the orthonormal eigenvectors as columns.
pub fn eigh_real(a: MatRef<'_, f64>) -> Result<(Vec<f64>, Mat<f64>)> {
    check_square(a.nrows(), a.ncols())?;
    let evd = a
        .self_adjoint_eigen(Side::Lower)
        .map_err(|e| Error::other(format!("symmetric eigensolver failed: {e:?}")))?;
    let s = evd.S();
    let vals = (0..a.nrows()).map(|i| s.column_vector()[i]).collect();
    Ok((vals, evd.U().to_owned()))
}

/// Eigendecomposition `A = U diag(λ) Uᴴ` of a complex Hermitian matrix (lower triangle used).
/// Returns the (real) eigenvalues ascending and the orthonormal eigenvectors as columns.
pub fn eigh_complex(a: MatRef<'_, c64>) -> Result<(Vec<f64>, Mat<c64>)> {
    check_square(a.nrows(), a.ncols())?;
    let evd = a
        .self_adjoint_eigen(Side::Lower)
        .map_err(|e| Error::other(format!("Hermitian eigensolver failed: {e:?}")))?;
    let s = evd.S();
    let vals = (0..a.nrows()).map(|i| s.column_vector()[i].re).collect();
    Ok((vals, evd.U().to_owned()))
}

/// Eigenvalues only (ascending) of a real symmetric matrix.
pub fn eigvalsh_real(a: MatRef<'_, f64>) -> Result<Vec<f64>> {
    check_square(a.nrows(), a.ncols())?;
    a.self_adjoint_eigenvalues(Side::Lower)
        .map_err(|e| Error::other(format!("symmetric eigensolver failed: {e:?}")))
}

/// Eigenvalues only (ascending) of a complex Hermitian matrix.
pub fn eigvalsh_complex(a: MatRef<'_, c64>) -> Result<Vec<f64>> {
    check_square(a.nrows(), a.ncols())?;
    a.self_adjoint_eigenvalues(Side::Lower)
        .map_err(|e| Error::other(format!("Hermitian eigensolver failed: {e:?}")))
}

fn check_square(r: usize, c: usize) -> Result<()> {
    if r != c {
        return Err(Error::other(format!("matrix is {r}×{c}, not square")));
    }
    Ok(())
}

/// Copies a faer matrix into a row-major ndarray.
pub fn ndarray_from_mat<T: Copy>(m: MatRef<'_, T>) -> ndarray::Array2<T> {
    ndarray::Array2::from_shape_fn((m.nrows(), m.ncols()), |(i, j)| m[(i, j)])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn eigh_of_pauli_x() {
        // σˣ has eigenvalues ±1 (textbook)
        let a = Mat::from_fn(2, 2, |i, j| if i != j { 1.0 } else { 0.0 });
        let (vals, u) = eigh_real(a.as_ref()).unwrap();
        assert!((vals[0] + 1.0).abs() < 1e-14 && (vals[1] - 1.0).abs() < 1e-14);
        let ut_u = u.transpose() * &u;
        assert!((ut_u[(0, 0)] - 1.0).abs() < 1e-14 && ut_u[(0, 1)].abs() < 1e-14);
    }

    #[test]
    fn eigh_of_pauli_y() {
        // σʸ = [[0, −i], [i, 0]] has eigenvalues ±1 (textbook)
        let a = Mat::from_fn(2, 2, |i, j| match (i, j) {
            (0, 1) => c64::new(0.0, -1.0),
            (1, 0) => c64::new(0.0, 1.0),
            _ => c64::new(0.0, 0.0),
        });
        let (vals, _) = eigh_complex(a.as_ref()).unwrap();
        assert!((vals[0] + 1.0).abs() < 1e-14 && (vals[1] - 1.0).abs() < 1e-14);
    }
}
