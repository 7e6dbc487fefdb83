//! From the computational basis to the energy eigenbasis, for the quench analysis.
//!
//! With the eigenvectors `V` (columns `vₙ`, in ascending-energy order) read in column blocks
//! from a [`ColumnSource`]:
//!
//! - coefficients `cₙ = ⟨n|ψ⟩ = vₙᴴ ψ` (blocks `V_Bᴴ ψ`);
//! - diagonal elements `Aₙₙ = Re vₙᴴ (A vₙ)` for all states, in the same pass;
//! - the matrix `A_KK = V_Kᴴ (A V_K)` over the kept states `K`, by the projector
//!   [`crate::project`] ([`kept_matrix`]: a second pass gathers `V_K`, or the enclosing range
//!   of states is projected when `V_K` would not fit the memory budget).
//!
//! `A vₙ` costs a row scaling for a diagonal operator, a sparse product for CSR, a dense
//! product otherwise; an operator stored in the energy basis is sliced directly.

use crate::data::{c64, ColumnSource, Csr, Field, Matrix, OpData, Operator};
use crate::error::{Error, Result};
use crate::project::{project_window, Budget};
use faer::linalg::matmul::matmul;
use faer::{Accum, Mat, MatRef, Par};
use serde::Serialize;

/// Bytes of eigenvector block read at once (64 MiB).
const BLOCK_BYTES: usize = 64 << 20;

fn block_columns(dim: usize) -> usize {
    (BLOCK_BYTES / (16 * dim.max(1))).max(1)
}

/// Dimension on which an operator acts: `dim` for computational-basis forms, `n` for the energy basis.
fn op_shape(op: &Operator) -> (usize, usize) {
    fn shape<T>(d: &OpData<T>) -> (usize, usize) {
        match d {
            OpData::Diagonal(v) => (v.len(), v.len()),
            OpData::Dense(m) | OpData::EnergyBasis(m) => (m.nrows(), m.ncols()),
            OpData::Csr(c) => (c.nrows, c.ncols),
        }
    }
    match op {
        Operator::Real(d) => shape(d),
        Operator::Complex(d) => shape(d),
    }
}

/// Checks that `op` fits eigenvectors of dimension `dim` and `n` states.
fn check_op(op: &Operator, dim: usize, n: usize) -> Result<()> {
    let (r, c) = op_shape(op);
    let want = if matches!(
        op,
        Operator::Real(OpData::EnergyBasis(_)) | Operator::Complex(OpData::EnergyBasis(_))
    ) {
        n
    } else {
        dim
    };
    if r != want || c != want {
        return Err(Error::other(format!(
            "operator ({} form) is {r}×{c} but the eigenbasis needs {want}×{want}",
            op.form()
        )));
    }
    if let Operator::Real(OpData::Csr(m)) = op {
        check_csr(m)?;
    }
    if let Operator::Complex(OpData::Csr(m)) = op {
        check_csr(m)?;
    }
    Ok(())
}

fn check_csr<T>(m: &Csr<T>) -> Result<()> {
    let nnz = m.data.len();
    if m.indptr.len() != m.nrows + 1
        || m.indices.len() != nnz
        || m.indptr.windows(2).any(|w| w[0] > w[1])
        || m.indptr.last().is_some_and(|&l| l != nnz)
        || m.indices.iter().any(|&j| j >= m.ncols)
    {
        return Err(Error::other(
            "CSR operator is inconsistent (indptr/indices/data lengths or column indices out of range)",
        ));
    }
    Ok(())
}

/// Promotes real operator data to complex.
fn promote(d: &OpData<f64>) -> OpData<c64> {
    let z = |x: f64| c64::new(x, 0.0);
    match d {
        OpData::Diagonal(v) => OpData::Diagonal(v.iter().map(|&x| z(x)).collect()),
        OpData::Dense(m) => OpData::Dense(Mat::from_fn(m.nrows(), m.ncols(), |i, j| z(m[(i, j)]))),
        OpData::EnergyBasis(m) => {
            OpData::EnergyBasis(Mat::from_fn(m.nrows(), m.ncols(), |i, j| z(m[(i, j)])))
        }
        OpData::Csr(c) => OpData::Csr(Csr {
            nrows: c.nrows,
            ncols: c.ncols,
            indptr: c.indptr.clone(),
            indices: c.indices.clone(),
            data: c.data.iter().map(|&x| z(x)).collect(),
        }),
    }
}

/// `A · V` for an operator in the computational basis (diagonal, dense or CSR).
fn apply<T>(op: &OpData<T>, v: MatRef<'_, T>) -> Result<Mat<T>>
where
    T: faer::traits::ComplexField + Copy + std::ops::Mul<Output = T> + std::ops::AddAssign,
{
    match op {
        OpData::Diagonal(d) => Ok(Mat::from_fn(v.nrows(), v.ncols(), |i, j| d[i] * v[(i, j)])),
        OpData::Dense(a) => {
            let mut out = Mat::<T>::zeros(a.nrows(), v.ncols());
            matmul(
                out.as_mut(),
                Accum::Replace,
                a.as_ref(),
                v,
                T::one_impl(),
                Par::rayon(0),
            );
            Ok(out)
        }
        OpData::Csr(c) => {
            let mut out = Mat::<T>::zeros(c.nrows, v.ncols());
            for j in 0..v.ncols() {
                for i in 0..c.nrows {
                    let mut s = T::zero_impl();
                    for p in c.indptr[i]..c.indptr[i + 1] {
                        s += c.data[p] * v[(c.indices[p], j)];
                    }
                    out[(i, j)] = s;
                }
            }
            Ok(out)
        }
        OpData::EnergyBasis(_) => Err(Error::other(
            "internal: an energy-basis operator cannot act on computational-basis vectors",
        )),
    }
}

/// Checks that `op` can act on the eigenvectors of `src`: `dim × dim` for an operator in the
/// computational basis, `n × n` for one in the energy basis, and a consistent CSR structure.
pub fn check_operator(op: &Operator, src: &dyn ColumnSource) -> Result<()> {
    check_op(op, src.dim(), src.n_states())
}

/// Coefficients `cₙ = vₙᴴ ψ` of a state in the stored eigenbasis, and (when `op` is given)
/// the diagonal elements `Aₙₙ = Re vₙᴴ A vₙ` of all states, in one streamed pass
/// (see [`coefficients_and_diagonals`]).
/// `psi` is in the (sector's) computational basis, of length `src.dim()`.
pub fn coefficients_and_diagonal(
    src: &dyn ColumnSource,
    psi: &[c64],
    op: Option<&Operator>,
) -> Result<(Vec<c64>, Option<Vec<f64>>)> {
    let ops: Vec<&Operator> = op.into_iter().collect();
    let (coeffs, mut diags) = coefficients_and_diagonals(src, psi, &ops)?;
    Ok((coeffs, diags.pop()))
}

/// Coefficients `cₙ = vₙᴴ ψ` of a state in the stored eigenbasis and the diagonal elements
/// `Aₙₙ = Re vₙᴴ A vₙ` of all states for every operator of `ops`, in one streamed pass over
/// the eigenvectors: each block `V_B` is read once, and gives `V_Bᴴ ψ` and, per operator,
/// `Re diag(V_Bᴴ (A V_B))` (operators stored in the energy basis: their diagonal, read off).
/// `psi` is in the (sector's) computational basis, of length `src.dim()`. The diagonals come
/// back in the order of `ops`.
pub fn coefficients_and_diagonals(
    src: &dyn ColumnSource,
    psi: &[c64],
    ops: &[&Operator],
) -> Result<(Vec<c64>, Vec<Vec<f64>>)> {
    let (dim, n) = (src.dim(), src.n_states());
    if psi.len() != dim {
        return Err(Error::other(format!(
            "the state has length {} but the eigenvectors have dimension {dim}",
            psi.len()
        )));
    }
    for op in ops {
        check_op(op, dim, n)?;
    }
    let mut coeffs = Vec::with_capacity(n);
    // Energy-basis operators: the diagonal is read off directly; the others fill in per block.
    let mut diags: Vec<Vec<f64>> = ops
        .iter()
        .map(|op| match op {
            Operator::Real(OpData::EnergyBasis(m)) => (0..n).map(|i| m[(i, i)]).collect(),
            Operator::Complex(OpData::EnergyBasis(m)) => (0..n).map(|i| m[(i, i)].re).collect(),
            _ => Vec::with_capacity(n),
        })
        .collect();
    let streamed: Vec<bool> = ops
        .iter()
        .map(|op| {
            !matches!(
                op,
                Operator::Real(OpData::EnergyBasis(_)) | Operator::Complex(OpData::EnergyBasis(_))
            )
        })
        .collect();
    let bc = block_columns(dim);
    let mut start = 0;
    while start < n {
        let end = (start + bc).min(n);
        let blk = src.read(start..end)?;
        if blk.nrows() != dim || blk.ncols() != end - start {
            return Err(Error::other(format!(
                "eigenvector block {start}..{end} came back {}×{}",
                blk.nrows(),
                blk.ncols()
            )));
        }
        match &blk {
            Matrix::Real(v) => {
                for j in 0..v.ncols() {
                    let mut s = c64::new(0.0, 0.0);
                    for i in 0..dim {
                        s += psi[i] * v[(i, j)];
                    }
                    coeffs.push(s);
                }
            }
            Matrix::Complex(v) => {
                for j in 0..v.ncols() {
                    let mut s = c64::new(0.0, 0.0);
                    for i in 0..dim {
                        s += v[(i, j)].conj() * psi[i];
                    }
                    coeffs.push(s);
                }
            }
        }
        for ((op, d), &stream) in ops.iter().zip(diags.iter_mut()).zip(&streamed) {
            if stream {
                d.extend(block_diagonal(op, &blk)?);
            }
        }
        start = end;
    }
    Ok((coeffs, diags))
}

/// `Re vⱼᴴ A vⱼ` for the columns of one block.
fn block_diagonal(op: &Operator, blk: &Matrix) -> Result<Vec<f64>> {
    match (op, blk) {
        (Operator::Real(d), Matrix::Real(v)) => {
            let av = apply(d, v.as_ref())?;
            Ok((0..v.ncols())
                .map(|j| (0..v.nrows()).map(|i| v[(i, j)] * av[(i, j)]).sum())
                .collect())
        }
        _ => {
            let v = blk.to_complex();
            let av = match op {
                Operator::Real(d) => apply(&promote(d), v.as_ref())?,
                Operator::Complex(d) => apply(d, v.as_ref())?,
            };
            Ok((0..v.ncols())
                .map(|j| {
                    (0..v.nrows())
                        .map(|i| (v[(i, j)].conj() * av[(i, j)]).re)
                        .sum()
                })
                .collect())
        }
    }
}

/// Gathers the eigenvector columns `kept` (strictly ascending) by streaming blocks.
pub fn gather_columns(src: &dyn ColumnSource, kept: &[usize]) -> Result<Matrix> {
    let dim = src.dim();
    let n = src.n_states();
    if kept.windows(2).any(|w| w[0] >= w[1]) || kept.last().is_some_and(|&k| k >= n) {
        return Err(Error::other(
            "kept states must be strictly ascending indices into the eigenbasis",
        ));
    }
    let complex = src.field() == crate::data::Field::Complex;
    let mut re = Mat::<f64>::zeros(if complex { 0 } else { dim }, kept.len());
    let mut cx = Mat::<c64>::zeros(if complex { dim } else { 0 }, kept.len());
    let bc = block_columns(dim);
    let mut pos = 0; // next entry of `kept` to fill
    while pos < kept.len() {
        let start = kept[pos];
        let end = (start + bc).min(n);
        let blk = src.read(start..end)?;
        while pos < kept.len() && kept[pos] < end {
            let j = kept[pos] - start;
            match &blk {
                Matrix::Real(v) if !complex => {
                    for i in 0..dim {
                        re[(i, pos)] = v[(i, j)];
                    }
                }
                Matrix::Complex(v) if complex => {
                    for i in 0..dim {
                        cx[(i, pos)] = v[(i, j)];
                    }
                }
                _ => {
                    return Err(Error::other(
                        "eigenvector block has another element type than announced",
                    ))
                }
            }
            pos += 1;
        }
    }
    Ok(if complex {
        Matrix::Complex(cx)
    } else {
        Matrix::Real(re)
    })
}

/// How [`kept_matrix`] formed `A_KK`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum KeptPath {
    /// Sliced from an operator stored in the energy basis.
    EnergyBasis,
    /// `V_K` gathered into memory, then projected as the window `0..|K|` of it.
    Gathered,
    /// The enclosing range `k_first..=k_last` projected from the source, then sliced.
    Enclosing,
}

/// `A_KK[a, b] = ⟨k_a|A|k_b⟩ = v_{k_a}ᴴ A v_{k_b}`: the operator over the kept states `K`
/// (strictly ascending indices), with the projector [`crate::project::project_window`].
///
/// The kept states are the largest weights `|cₙ|²`, not a contiguous range: for a state
/// in the middle of the spectrum they are scattered over an enclosing range `W` that is
/// often close to the whole spectrum, so projecting `W` would cost `dim·|W|²` operations
/// and `|W|²` elements of memory for `|K|²` wanted. Instead the kept columns are gathered
/// (one streamed pass) into an in-memory [`Matrix`] `V_K` (which is a [`ColumnSource`])
/// and its window `0..|K|` is projected: `dim·|K|²` operations. That holds `V_K`
/// (`dim·|K|` elements) in memory, so it is done when `V_K` takes at most half of the
/// budget `opts.bytes` (the projector gets the other half); otherwise the
/// enclosing range is streamed under the whole budget and sliced, which stays within the
/// budget as long as the `|W|²` result does (the projector reports an error otherwise).
/// Operators stored in the energy basis are sliced directly.
pub fn kept_matrix(
    src: &dyn ColumnSource,
    op: &Operator,
    kept: &[usize],
    opts: &Budget,
) -> Result<(Matrix, KeptPath)> {
    KeptBasis::new(kept.to_vec()).matrix(src, op, opts)
}

/// The kept states `K` of one state in one eigenbasis, for forming `A_KK` of several
/// operators with [`KeptBasis::matrix`] (the same computation as [`kept_matrix`]): the
/// gathered eigenvectors `V_K`, when that path is taken, are read once and kept for the
/// next operator instead of being gathered again.
#[derive(Debug, Clone)]
pub struct KeptBasis {
    kept: Vec<usize>,
    gathered: Option<Matrix>,
}

impl KeptBasis {
    /// The kept states `kept` (strictly ascending indices; checked by [`KeptBasis::matrix`]).
    pub fn new(kept: Vec<usize>) -> Self {
        KeptBasis {
            kept,
            gathered: None,
        }
    }

    /// The kept states.
    pub fn kept(&self) -> &[usize] {
        &self.kept
    }

    /// `A_KK[a, b] = v_{k_a}ᴴ A v_{k_b}` for the operator `op` (see [`kept_matrix`]).
    pub fn matrix(
        &mut self,
        src: &dyn ColumnSource,
        op: &Operator,
        opts: &Budget,
    ) -> Result<(Matrix, KeptPath)> {
        check_op(op, src.dim(), src.n_states())?;
        let n = src.n_states();
        let kept = self.kept.as_slice();
        if kept.windows(2).any(|w| w[0] >= w[1]) || kept.last().is_some_and(|&k| k >= n) {
            return Err(Error::other(
                "kept states must be strictly ascending indices into the eigenbasis",
            ));
        }
        let k = kept.len();
        match op {
            Operator::Real(OpData::EnergyBasis(m)) => {
                return Ok((
                    Matrix::Real(Mat::from_fn(k, k, |a, b| m[(kept[a], kept[b])])),
                    KeptPath::EnergyBasis,
                ))
            }
            Operator::Complex(OpData::EnergyBasis(m)) => {
                return Ok((
                    Matrix::Complex(Mat::from_fn(k, k, |a, b| m[(kept[a], kept[b])])),
                    KeptPath::EnergyBasis,
                ))
            }
            _ => {}
        }
        let (Some(&first), Some(&last)) = (kept.first(), kept.last()) else {
            let empty = match crate::project::result_field(src, &[op]) {
                Field::Real => Matrix::Real(Mat::zeros(0, 0)),
                Field::Complex => Matrix::Complex(Mat::zeros(0, 0)),
            };
            return Ok((empty, KeptPath::Gathered));
        };
        let elem = match src.field() {
            Field::Real => 8.0,
            Field::Complex => 16.0,
        };
        let gathered_bytes = elem * src.dim() as f64 * k as f64;
        let one = |mut v: Vec<Matrix>| {
            v.pop()
                .ok_or_else(|| Error::other("internal: the projector returned no matrix"))
        };
        if last + 1 - first == k || gathered_bytes <= 0.5 * opts.bytes as f64 {
            // A contiguous K is its own window; otherwise gather V_K (once).
            if last + 1 - first == k {
                let m = one(project_window(src, &[op], first..last + 1, opts)?)?;
                return Ok((m, KeptPath::Enclosing));
            }
            let vk = match self.gathered.take() {
                Some(vk) => vk,
                None => gather_columns(src, kept)?,
            };
            let half = Budget {
                bytes: opts.bytes / 2,
                ..*opts
            };
            let m = one(project_window(&vk, &[op], 0..k, &half)?)?;
            self.gathered = Some(vk);
            return Ok((m, KeptPath::Gathered));
        }
        let w = one(project_window(src, &[op], first..last + 1, opts)?)?;
        let pick = |a: usize| kept[a] - first;
        let m = match &w {
            Matrix::Real(x) => Matrix::Real(Mat::from_fn(k, k, |a, b| x[(pick(a), pick(b))])),
            Matrix::Complex(x) => Matrix::Complex(Mat::from_fn(k, k, |a, b| x[(pick(a), pick(b))])),
        };
        Ok((m, KeptPath::Enclosing))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute-force reference `V_Kᴴ A V_K` with dense matrices (test only).
    fn reference(v: &Mat<c64>, a: &Mat<c64>, kept: &[usize]) -> Mat<c64> {
        let vk = Mat::from_fn(v.nrows(), kept.len(), |i, j| v[(i, kept[j])]);
        vk.adjoint() * a * &vk
    }

    #[test]
    fn four_forms_agree() {
        // the same operator in the diagonal/dense/CSR/energy-basis forms gives the same
        // A_KK (exact identity, linear algebra)
        let mut rng = crate::model::rmt::rng(11);
        let h = crate::model::rmt::goe(12, &mut rng);
        let (_, v) = crate::linalg::eigh_real(h.as_ref()).unwrap();
        let d: Vec<f64> = (0..12)
            .map(|i| if i % 3 == 0 { 1.0 } else { -0.5 })
            .collect();
        let dense = Mat::from_fn(12, 12, |i, j| if i == j { d[i] } else { 0.0 });
        let csr = Csr {
            nrows: 12,
            ncols: 12,
            indptr: (0..=12).collect(),
            indices: (0..12).collect(),
            data: d.clone(),
        };
        let energy = v.transpose() * &dense * &v;
        let src = Matrix::Real(v.clone());
        let kept = [1, 4, 5, 11];
        let forms = [
            Operator::Real(OpData::Diagonal(d.clone())),
            Operator::Real(OpData::Dense(dense.clone())),
            Operator::Real(OpData::Csr(csr)),
            Operator::Real(OpData::EnergyBasis(energy.clone())),
        ];
        for op in &forms {
            let (a, _) = kept_matrix(&src, op, &kept, &Budget::default()).unwrap();
            for (x, &kx) in kept.iter().enumerate() {
                for (y, &ky) in kept.iter().enumerate() {
                    assert!((a.get_c(x, y).re - energy[(kx, ky)]).abs() < 1e-12);
                }
            }
            let psi: Vec<c64> = (0..12).map(|i| c64::new(i as f64, 1.0)).collect();
            let (_, diag) = coefficients_and_diagonal(&src, &psi, Some(op)).unwrap();
            let diag = diag.unwrap();
            for i in 0..12 {
                assert!((diag[i] - energy[(i, i)]).abs() < 1e-12);
            }
        }
        // complex eigenvectors with a real operator take the promoted path
        let srcc = Matrix::Complex(Matrix::Real(v).to_complex());
        let (a, _) = kept_matrix(&srcc, &forms[2], &kept, &Budget::default()).unwrap();
        assert!((a.get_c(1, 2).re - energy[(4, 5)]).abs() < 1e-12);
    }

    #[test]
    fn projector_paths_agree_with_a_dense_reference() {
        // A_KK from crate::project (gathered V_K, enclosing range, contiguous K, energy
        // basis) equals the dense product V_Kᴴ A V_K (exact identity, linear algebra; this
        // test first compared with the earlier in-module stand-in, which it replaced)
        let mut rng = crate::model::rmt::rng(5);
        let h = crate::model::rmt::gue(20, &mut rng);
        let (_, v) = crate::linalg::eigh_complex(h.as_ref()).unwrap();
        let a = crate::model::rmt::goe(20, &mut rng);
        let dense = Operator::Real(OpData::Dense(a.clone()));
        let cd = crate::model::rmt::gue(20, &mut rng);
        let cdense = Operator::Complex(OpData::Dense(cd.clone()));
        let ad = Mat::from_fn(20, 20, |i, j| c64::new(a[(i, j)], 0.0));
        let src = Matrix::Complex(v.clone());
        let big = Budget::new(1 << 30);
        // 20 × 3 complex columns = 960 bytes: a 1000-byte budget forces the enclosing range
        let small = Budget {
            block: Some(4),
            ..Budget::new(1000)
        };
        for (op, full) in [(&dense, &ad), (&cdense, &cd)] {
            for (kept, opts, path) in [
                (vec![0, 3, 4, 9, 17], &big, KeptPath::Gathered),
                (vec![2, 9, 13], &small, KeptPath::Enclosing),
                (vec![5, 6, 7, 8], &big, KeptPath::Enclosing),
            ] {
                let want = reference(&v, full, &kept);
                let (got, how) = kept_matrix(&src, op, &kept, opts).unwrap();
                assert_eq!(how, path);
                assert_eq!((got.nrows(), got.ncols()), (kept.len(), kept.len()));
                for x in 0..kept.len() {
                    for y in 0..kept.len() {
                        assert!((got.get_c(x, y) - want[(x, y)]).norm() < 1e-12);
                    }
                }
            }
        }
        let energy = Operator::Complex(OpData::EnergyBasis(
            project_window(&src, &[&cdense], 0..20, &big).unwrap()[0].to_complex(),
        ));
        let (e, how) = kept_matrix(&src, &energy, &[1, 7], &big).unwrap();
        assert_eq!(how, KeptPath::EnergyBasis);
        let want = reference(&v, &cd, &[1, 7]);
        assert!((e.get_c(0, 1) - want[(0, 1)]).norm() < 1e-12);
        assert!(kept_matrix(&src, &dense, &[3, 2], &big).is_err());
        assert_eq!(kept_matrix(&src, &dense, &[], &big).unwrap().0.nrows(), 0);
    }

    /// An in-memory source that counts the eigenvector columns read (test only).
    struct Counting {
        m: Matrix,
        columns: std::sync::atomic::AtomicUsize,
    }

    impl ColumnSource for Counting {
        fn dim(&self) -> usize {
            self.m.nrows()
        }
        fn n_states(&self) -> usize {
            self.m.ncols()
        }
        fn field(&self) -> Field {
            self.m.field()
        }
        fn read(&self, range: std::ops::Range<usize>) -> Result<Matrix> {
            self.columns
                .fetch_add(range.len(), std::sync::atomic::Ordering::Relaxed);
            Ok(self.m.columns(range))
        }
    }

    #[test]
    fn shared_passes_give_the_per_operator_results_exactly() {
        // coefficients and diagonals of several operators in one pass, and A_KK of several
        // operators from one gathered V_K, are the per-operator results bit for bit (the
        // same arithmetic on the same blocks; exact identity)
        let mut rng = crate::model::rmt::rng(8);
        let h = crate::model::rmt::gue(20, &mut rng);
        let (_, v) = crate::linalg::eigh_complex(h.as_ref()).unwrap();
        let a = crate::model::rmt::goe(20, &mut rng);
        let cd = crate::model::rmt::gue(20, &mut rng);
        let d: Vec<f64> = (0..20).map(|i| (i % 4) as f64 - 1.5).collect();
        let src = Counting {
            m: Matrix::Complex(v),
            columns: 0.into(),
        };
        let big = Budget::new(1 << 30);
        let energy = Operator::Complex(OpData::EnergyBasis(
            project_window(
                &src.m,
                &[&Operator::Complex(OpData::Dense(cd.clone()))],
                0..20,
                &big,
            )
            .unwrap()[0]
                .to_complex(),
        ));
        let ops = [
            Operator::Real(OpData::Dense(a)),
            Operator::Complex(OpData::Dense(cd)),
            Operator::Real(OpData::Diagonal(d)),
            energy,
        ];
        let refs: Vec<&Operator> = ops.iter().collect();
        let psi: Vec<c64> = (0..20)
            .map(|i| c64::new((i as f64).sin(), (i as f64 * 0.3).cos()))
            .collect();
        let (coeffs, diags) = coefficients_and_diagonals(&src, &psi, &refs).unwrap();
        // one pass: every column read once
        assert_eq!(src.columns.load(std::sync::atomic::Ordering::Relaxed), 20);
        assert_eq!(diags.len(), 4);
        for (op, diag) in ops.iter().zip(&diags) {
            let (c1, d1) = coefficients_and_diagonal(&src.m, &psi, Some(op)).unwrap();
            assert_eq!(c1, coeffs);
            assert_eq!(d1.as_ref(), Some(diag));
        }
        let kept = vec![0, 3, 4, 9, 17];
        let mut basis = KeptBasis::new(kept.clone());
        src.columns.store(0, std::sync::atomic::Ordering::Relaxed);
        for op in &ops {
            let (got, how) = basis.matrix(&src, op, &big).unwrap();
            let (want, how1) = kept_matrix(&src.m, op, &kept, &big).unwrap();
            assert_eq!(how, how1);
            for x in 0..kept.len() {
                for y in 0..kept.len() {
                    assert_eq!(got.get_c(x, y), want.get_c(x, y));
                }
            }
        }
        // V_K was gathered once for the three operators that need it (blocks from kept[0]
        // onwards: the whole 0..20 here), not three times
        assert_eq!(src.columns.load(std::sync::atomic::Ordering::Relaxed), 20);
    }

    #[test]
    fn shape_mismatch_is_an_error() {
        // clear error instead of a panic (common practice, no source)
        let src = Matrix::Real(Mat::identity(4, 4));
        let op = Operator::Real(OpData::Diagonal(vec![1.0; 5]));
        assert!(kept_matrix(&src, &op, &[0, 1], &Budget::default()).is_err());
        assert!(coefficients_and_diagonal(&src, &[c64::new(1.0, 0.0); 3], None).is_err());
    }
}
