//! Projection of operators onto a window of energy eigenstates (the hot path).
//!
//! For eigenvectors `|n⟩` (the columns of `V`) and an operator `A` given in the
//! computational basis, the matrix elements are
//!
//! ```text
//! A_nm = ⟨n|A|m⟩ = Σ_ij conj(V_in) A_ij V_jm ,   i.e.   A_W = V_Wᴴ (A V_W)
//! ```
//!
//! for the columns `V_W` of a window `W` of states. The product `B = A V_W` costs
//! a row scaling for a diagonal operator (`B_ij = d_i V_ij`), a sparse product for a
//! CSR operator (parallel over rows), and a dense product for a dense one; the second
//! product `V_Wᴴ B` is always dense (faer, parallel). An operator already stored in the
//! energy eigenbasis is only sliced.
//!
//! **Streaming.** The window is cut into column blocks `b₁ … b_k` so that the working
//! memory stays below a budget in bytes. For each block `J` the products `A V_J` of
//! all observables are formed once, then the blocks `I ≤ J` are streamed and
//! `A_IJ = V_Iᴴ (A V_J)` is handed to a sink ([`for_each_block`]). Observables are
//! Hermitian, so the blocks `I > J` are the adjoints `A_JI = A_IJᴴ` and are not
//! computed: the sink sees every unordered pair of states exactly once (inside a
//! diagonal block `I = J` it sees the full square, both `n < m` and `m < n`).
//! Several observables share one pass over the eigenvectors.
//!
//! The working set for block size `b`, dimension `dim`, `q` observables and element
//! size `s` bytes is about `(4 + q)·dim·b·s + q·b²·s` (two eigenvector blocks, one
//! product per observable, two scratch buffers of the sparse product, the blocks of
//! results); the block size is the largest `b` that fits the budget.

use crate::data::{c64, ColumnSource, Csr, Field, Matrix, OpData, Operator};
use crate::error::{Error, Result};
use faer::linalg::matmul::matmul;
use faer::{Accum, Mat, MatRef, Par};
use rayon::prelude::*;
use serde::Serialize;
use std::borrow::Cow;
use std::ops::Range;

/// Fraction of the machine's total memory used as the default budget.
pub const DEFAULT_MEMORY_FRACTION: f64 = 0.5;

/// Budget used when `/proc/meminfo` cannot be read: 4 GiB.
pub const FALLBACK_BUDGET_BYTES: usize = 4 << 30;

/// Options of the projector.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct ProjectOptions {
    /// Working-memory budget in bytes (eigenvector blocks, products, result blocks).
    pub budget_bytes: usize,
    /// Fixed number of columns per block, overriding the budget (at least 1).
    pub block: Option<usize>,
}

impl Default for ProjectOptions {
    /// Budget = [`DEFAULT_MEMORY_FRACTION`] of the total memory, automatic block size.
    fn default() -> Self {
        ProjectOptions {
            budget_bytes: default_budget_bytes(),
            block: None,
        }
    }
}

impl ProjectOptions {
    /// Options with a budget in bytes and automatic block size.
    pub fn with_budget(budget_bytes: usize) -> Self {
        ProjectOptions {
            budget_bytes,
            block: None,
        }
    }

    /// Options from an optional `--memory SIZE` string (see [`parse_memory`]).
    pub fn from_memory_arg(memory: Option<&str>) -> Result<Self> {
        Ok(match memory {
            Some(s) => ProjectOptions::with_budget(parse_memory(s)?),
            None => ProjectOptions::default(),
        })
    }
}

/// Default budget: `DEFAULT_MEMORY_FRACTION × MemTotal` from `/proc/meminfo`, or
/// [`FALLBACK_BUDGET_BYTES`] when that cannot be read.
pub fn default_budget_bytes() -> usize {
    std::fs::read_to_string("/proc/meminfo")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("MemTotal:"))
                .and_then(|l| l.split_whitespace().nth(1))
                .and_then(|kb| kb.parse::<f64>().ok())
        })
        .map(|kb| (kb * 1024.0 * DEFAULT_MEMORY_FRACTION) as usize)
        .unwrap_or(FALLBACK_BUDGET_BYTES)
}

/// Parses a memory size: a number with an optional binary suffix `K`, `M`, `G`, `T`
/// (powers of 1024, an optional trailing `B` or `iB` accepted), e.g. `6G`, `512M`,
/// `1.5GiB`, `1000000`.
pub fn parse_memory(s: &str) -> Result<usize> {
    let bad = || {
        Error::usage(format!(
            "memory size '{s}': expected a number with an optional K, M, G or T suffix, e.g. 6G"
        ))
    };
    let t = s.trim();
    let upper = t.to_ascii_uppercase();
    let stripped = upper
        .strip_suffix("IB")
        .or_else(|| upper.strip_suffix('B'))
        .unwrap_or(&upper);
    let (num, mult) = match stripped.chars().last() {
        Some('K') => (&stripped[..stripped.len() - 1], 1u64 << 10),
        Some('M') => (&stripped[..stripped.len() - 1], 1 << 20),
        Some('G') => (&stripped[..stripped.len() - 1], 1 << 30),
        Some('T') => (&stripped[..stripped.len() - 1], 1 << 40),
        _ => (stripped, 1),
    };
    let x: f64 = num.trim().parse().map_err(|_| bad())?;
    if !x.is_finite() || x <= 0.0 {
        return Err(bad());
    }
    let bytes = x * mult as f64;
    if bytes < 1.0 || bytes > usize::MAX as f64 {
        return Err(bad());
    }
    Ok(bytes as usize)
}

/// Stand-in column source for sectors without stored eigenvectors: `n` states, no
/// vectors. Only operators stored in the energy basis can be projected with it.
#[derive(Debug, Clone, Copy)]
pub struct NoVectors {
    /// Number of states.
    pub n: usize,
}

impl ColumnSource for NoVectors {
    fn dim(&self) -> usize {
        0
    }
    fn n_states(&self) -> usize {
        self.n
    }
    fn field(&self) -> Field {
        Field::Real
    }
    fn read(&self, _range: Range<usize>) -> Result<Matrix> {
        Err(Error::other(
            "no eigenvectors stored: only observables stored in the energy basis can be used",
        ))
    }
}

/// One block of matrix elements handed to a sink by [`for_each_block`].
///
/// `elements[k]` holds, for the `k`-th operator, the entries
/// `(i, j) ↦ ⟨rows.start + i| A_k |cols.start + j⟩` (state indices in the ascending
/// spectrum). Blocks come with `rows.start ≤ cols.start`: either `rows == cols` (a
/// diagonal block) or every row index is below every column index.
#[derive(Debug, Clone)]
pub struct BlockPair {
    /// State indices of the rows (block `I`).
    pub rows: Range<usize>,
    /// State indices of the columns (block `J`).
    pub cols: Range<usize>,
    /// One matrix per operator, `rows.len() × cols.len()`; real when both the operator
    /// and the eigenvectors are real, complex otherwise.
    pub elements: Vec<Matrix>,
}

impl BlockPair {
    /// True for a diagonal block (`rows == cols`).
    pub fn is_diagonal(&self) -> bool {
        self.rows == self.cols
    }
}

/// Element type of the projected matrices: real only when the eigenvectors and all
/// operators are real.
pub fn result_field(src: &dyn ColumnSource, ops: &[&Operator]) -> Field {
    let vectors_needed = ops
        .iter()
        .any(|o| o.form() != crate::data::OperatorForm::EnergyBasis);
    let complex = ops.iter().any(|o| o.field() == Field::Complex)
        || (vectors_needed && src.field() == Field::Complex);
    if complex {
        Field::Complex
    } else {
        Field::Real
    }
}

/// Block size (columns per block) for a window of `w` states, `q` operators,
/// dimension `dim` and element size `elem` bytes: the largest `b ≤ w` with
/// `(4 + q)·dim·b·elem + q·b²·elem ≤ budget` (at least 1).
pub fn block_size(w: usize, q: usize, dim: usize, elem: usize, opts: &ProjectOptions) -> usize {
    if let Some(b) = opts.block {
        return b.clamp(1, w.max(1));
    }
    let fits = |b: usize| {
        let b = b as f64;
        let bytes =
            (4.0 + q as f64) * dim as f64 * b * elem as f64 + q as f64 * b * b * elem as f64;
        bytes <= opts.budget_bytes as f64
    };
    if fits(w) {
        return w.max(1);
    }
    // bisection on the monotone condition
    let (mut lo, mut hi) = (1usize, w.max(1));
    while hi - lo > 1 {
        let mid = lo + (hi - lo) / 2;
        if fits(mid) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    lo
}

/// Streams the matrix elements `⟨n|A_k|m⟩` of the states `range` (indices in the
/// ascending spectrum) for all operators `ops`, block pair by block pair
/// (`A_IJ = V_Iᴴ (A V_J)`, blocks `I ≤ J`, see [`BlockPair`]), calling `sink` on each.
/// The operators are assumed Hermitian (the blocks `I > J` are their adjoints).
pub fn for_each_block(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    opts: &ProjectOptions,
    mut sink: impl FnMut(&BlockPair) -> Result<()>,
) -> Result<()> {
    check_inputs(src, ops, &range)?;
    if range.is_empty() || ops.is_empty() {
        return Ok(());
    }
    match result_field(src, ops) {
        Field::Real => {
            let prepared = prepare::<f64>(ops)?;
            stream::<f64>(src, &prepared, range, opts, &mut sink)
        }
        Field::Complex => {
            let prepared = prepare::<c64>(ops)?;
            stream::<c64>(src, &prepared, range, opts, &mut sink)
        }
    }
}

/// The full matrices `A_W[i, j] = ⟨range.start + i| A_k |range.start + j⟩` of the window
/// `range` for every operator (lower blocks filled as adjoints of the upper ones).
/// Fails when the `q` matrices of `W²` elements do not fit the memory budget.
pub fn project_window(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    opts: &ProjectOptions,
) -> Result<Vec<Matrix>> {
    check_inputs(src, ops, &range)?;
    let w = range.len();
    let field = result_field(src, ops);
    let elem = elem_size(field);
    let need = (ops.len() * w * w * elem) as f64;
    if opts.block.is_none() && need > opts.budget_bytes as f64 {
        return Err(Error::other(format!(
            "the {w}×{w} matrix elements of {} observable(s) need {}, more than the memory budget {}: use a smaller window or a larger --memory",
            ops.len(),
            human_bytes(need),
            human_bytes(opts.budget_bytes as f64)
        )));
    }
    let start = range.start;
    let mut out: Vec<Matrix> = ops
        .iter()
        .map(|_| match field {
            Field::Real => Matrix::Real(Mat::zeros(w, w)),
            Field::Complex => Matrix::Complex(Mat::zeros(w, w)),
        })
        .collect();
    for_each_block(src, ops, range, opts, |blk| {
        let (r0, c0) = (blk.rows.start - start, blk.cols.start - start);
        for (dst, m) in out.iter_mut().zip(&blk.elements) {
            match (dst, m) {
                (Matrix::Real(d), Matrix::Real(b)) => fill_block(d, b.as_ref(), r0, c0, |x| x),
                (Matrix::Complex(d), Matrix::Complex(b)) => {
                    fill_block(d, b.as_ref(), r0, c0, |x| x.conj())
                }
                _ => {
                    return Err(Error::other(
                        "internal: element type changed while projecting",
                    ))
                }
            }
        }
        Ok(())
    })?;
    Ok(out)
}

fn fill_block<T: Copy>(
    d: &mut Mat<T>,
    b: MatRef<'_, T>,
    r0: usize,
    c0: usize,
    conj: impl Fn(T) -> T,
) {
    for j in 0..b.ncols() {
        for i in 0..b.nrows() {
            d[(r0 + i, c0 + j)] = b[(i, j)];
            if r0 != c0 {
                d[(c0 + j, r0 + i)] = conj(b[(i, j)]);
            }
        }
    }
}

/// Diagonal elements `A_nn = Σ_ij conj(V_in) A_ij V_jn` for the states `range`, one
/// vector per operator, streamed in column blocks (no `W × W` matrix). For Hermitian
/// operators `A_nn` is real; the real part is returned.
pub fn project_diagonal(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    opts: &ProjectOptions,
) -> Result<Vec<Vec<f64>>> {
    check_inputs(src, ops, &range)?;
    if ops.is_empty() {
        return Ok(Vec::new());
    }
    match result_field(src, ops) {
        Field::Real => diag_stream::<f64>(src, &prepare::<f64>(ops)?, range, opts),
        Field::Complex => diag_stream::<c64>(src, &prepare::<c64>(ops)?, range, opts),
    }
}

/// `"1.50 GiB"`-style rendering of a byte count.
pub fn human_bytes(b: f64) -> String {
    const UNITS: [&str; 5] = ["B", "KiB", "MiB", "GiB", "TiB"];
    let mut x = b;
    let mut u = 0;
    while x >= 1024.0 && u + 1 < UNITS.len() {
        x /= 1024.0;
        u += 1;
    }
    format!("{x:.2} {}", UNITS[u])
}

// ---------------------------------------------------------------------------
// internals

fn elem_size(f: Field) -> usize {
    match f {
        Field::Real => std::mem::size_of::<f64>(),
        Field::Complex => std::mem::size_of::<c64>(),
    }
}

/// Scalar types of the projector (f64 and c64).
trait Elem: Copy + Send + Sync + Default + std::fmt::Debug + 'static {
    fn zero() -> Self;
    fn conj(self) -> Self;
    fn mul(self, o: Self) -> Self;
    fn add(self, o: Self) -> Self;
    fn re(self) -> f64;
    /// `a · b`, parallel.
    fn product(a: MatRef<'_, Self>, b: MatRef<'_, Self>) -> Mat<Self>;
    /// `aᴴ · b`, parallel.
    fn adj_product(a: MatRef<'_, Self>, b: MatRef<'_, Self>) -> Mat<Self>;
    fn wrap(m: Mat<Self>) -> Matrix;
    fn from_matrix(m: Matrix) -> Result<Mat<Self>>;
    fn from_op(op: &Operator) -> Result<Cow<'_, OpData<Self>>>;
}

impl Elem for f64 {
    fn zero() -> Self {
        0.0
    }
    fn conj(self) -> Self {
        self
    }
    fn mul(self, o: Self) -> Self {
        self * o
    }
    fn add(self, o: Self) -> Self {
        self + o
    }
    fn re(self) -> f64 {
        self
    }
    fn product(a: MatRef<'_, f64>, b: MatRef<'_, f64>) -> Mat<f64> {
        let mut d = Mat::zeros(a.nrows(), b.ncols());
        matmul(d.as_mut(), Accum::Replace, a, b, 1.0, Par::rayon(0));
        d
    }
    fn adj_product(a: MatRef<'_, f64>, b: MatRef<'_, f64>) -> Mat<f64> {
        let mut d = Mat::zeros(a.ncols(), b.ncols());
        matmul(
            d.as_mut(),
            Accum::Replace,
            a.transpose(),
            b,
            1.0,
            Par::rayon(0),
        );
        d
    }
    fn wrap(m: Mat<f64>) -> Matrix {
        Matrix::Real(m)
    }
    fn from_matrix(m: Matrix) -> Result<Mat<f64>> {
        match m {
            Matrix::Real(m) => Ok(m),
            Matrix::Complex(_) => Err(Error::other(
                "eigenvector reader returned complex columns for a real eigenbasis",
            )),
        }
    }
    fn from_op(op: &Operator) -> Result<Cow<'_, OpData<f64>>> {
        match op {
            Operator::Real(d) => Ok(Cow::Borrowed(d)),
            Operator::Complex(_) => Err(Error::other(
                "internal: complex operator in a real projection",
            )),
        }
    }
}

impl Elem for c64 {
    fn zero() -> Self {
        c64::new(0.0, 0.0)
    }
    fn conj(self) -> Self {
        num_complex::Complex::conj(&self)
    }
    fn mul(self, o: Self) -> Self {
        self * o
    }
    fn add(self, o: Self) -> Self {
        self + o
    }
    fn re(self) -> f64 {
        self.re
    }
    fn product(a: MatRef<'_, c64>, b: MatRef<'_, c64>) -> Mat<c64> {
        let mut d = Mat::zeros(a.nrows(), b.ncols());
        matmul(
            d.as_mut(),
            Accum::Replace,
            a,
            b,
            c64::new(1.0, 0.0),
            Par::rayon(0),
        );
        d
    }
    fn adj_product(a: MatRef<'_, c64>, b: MatRef<'_, c64>) -> Mat<c64> {
        let mut d = Mat::zeros(a.ncols(), b.ncols());
        matmul(
            d.as_mut(),
            Accum::Replace,
            a.adjoint(),
            b,
            c64::new(1.0, 0.0),
            Par::rayon(0),
        );
        d
    }
    fn wrap(m: Mat<c64>) -> Matrix {
        Matrix::Complex(m)
    }
    fn from_matrix(m: Matrix) -> Result<Mat<c64>> {
        Ok(m.to_complex())
    }
    fn from_op(op: &Operator) -> Result<Cow<'_, OpData<c64>>> {
        Ok(match op {
            Operator::Complex(d) => Cow::Borrowed(d),
            Operator::Real(d) => Cow::Owned(promote(d)),
        })
    }
}

fn promote(d: &OpData<f64>) -> OpData<c64> {
    let c = |x: f64| c64::new(x, 0.0);
    let cm = |m: &Mat<f64>| Mat::from_fn(m.nrows(), m.ncols(), |i, j| c(m[(i, j)]));
    match d {
        OpData::Diagonal(v) => OpData::Diagonal(v.iter().map(|&x| c(x)).collect()),
        OpData::Dense(m) => OpData::Dense(cm(m)),
        OpData::EnergyBasis(m) => OpData::EnergyBasis(cm(m)),
        OpData::Csr(s) => OpData::Csr(Csr {
            nrows: s.nrows,
            ncols: s.ncols,
            indptr: s.indptr.clone(),
            indices: s.indices.clone(),
            data: s.data.iter().map(|&x| c(x)).collect(),
        }),
    }
}

fn prepare<'a, T: Elem>(ops: &[&'a Operator]) -> Result<Vec<Cow<'a, OpData<T>>>> {
    ops.iter().map(|o| T::from_op(o)).collect()
}

/// Checks shapes against the source and the range; no panics later on.
fn check_inputs(src: &dyn ColumnSource, ops: &[&Operator], range: &Range<usize>) -> Result<()> {
    let n = src.n_states();
    if range.start > range.end || range.end > n {
        return Err(Error::other(format!(
            "window {}..{} outside the {n} available states",
            range.start, range.end
        )));
    }
    let dim = src.dim();
    for (k, op) in ops.iter().enumerate() {
        let (form, shape) = match op {
            Operator::Real(d) => (d.form(), op_shape(d)?),
            Operator::Complex(d) => (d.form(), op_shape(d)?),
        };
        let (r, c) = shape;
        match form {
            crate::data::OperatorForm::EnergyBasis => {
                if r != c || r < n {
                    return Err(Error::other(format!(
                        "observable {k} in the energy basis is {r}×{c}, expected {n}×{n}"
                    )));
                }
            }
            _ => {
                if r != dim || c != dim {
                    return Err(Error::other(format!(
                        "observable {k} ({form}) acts on dimension {r}×{c}, the eigenvectors have dimension {dim}"
                    )));
                }
            }
        }
    }
    Ok(())
}

/// Shape of an operator, validating CSR structure.
fn op_shape<T>(d: &OpData<T>) -> Result<(usize, usize)> {
    Ok(match d {
        OpData::Diagonal(v) => (v.len(), v.len()),
        OpData::Dense(m) | OpData::EnergyBasis(m) => (m.nrows(), m.ncols()),
        OpData::Csr(s) => {
            let bad = |p: &str| Err(Error::other(format!("sparse (CSR) observable: {p}")));
            if s.indptr.len() != s.nrows + 1 {
                return bad("indptr length is not nrows + 1");
            }
            if s.indptr.first() != Some(&0) || s.indptr.windows(2).any(|w| w[0] > w[1]) {
                return bad("indptr does not start at 0 or is not non-decreasing");
            }
            let nnz = s.indptr[s.nrows];
            if nnz != s.indices.len() || nnz != s.data.len() {
                return bad("indptr[-1], len(indices) and len(data) disagree");
            }
            if s.indices.iter().any(|&c| c >= s.ncols) {
                return bad("a column index is out of range");
            }
            (s.nrows, s.ncols)
        }
    })
}

/// `A V` for a block of eigenvectors `v` (`dim × b`); `None` for energy-basis operators.
fn apply<T: Elem>(op: &OpData<T>, v: MatRef<'_, T>) -> Option<Mat<T>> {
    let (dim, b) = (v.nrows(), v.ncols());
    match op {
        OpData::Diagonal(d) => Some(Mat::from_fn(dim, b, |i, j| d[i].mul(v[(i, j)]))),
        OpData::Dense(a) => Some(T::product(a.as_ref(), v)),
        OpData::Csr(s) => {
            // row-major copy of v so that the inner loop runs over contiguous memory
            let mut vt = vec![T::zero(); dim * b];
            vt.par_chunks_mut(b.max(1))
                .enumerate()
                .for_each(|(i, row)| {
                    for (j, x) in row.iter_mut().enumerate() {
                        *x = v[(i, j)];
                    }
                });
            let mut out = vec![T::zero(); s.nrows * b];
            out.par_chunks_mut(b.max(1))
                .enumerate()
                .for_each(|(i, row)| {
                    for k in s.indptr[i]..s.indptr[i + 1] {
                        let a = s.data[k];
                        let src = &vt[s.indices[k] * b..(s.indices[k] + 1) * b];
                        for (o, &x) in row.iter_mut().zip(src) {
                            *o = o.add(a.mul(x));
                        }
                    }
                });
            drop(vt);
            Some(Mat::from_fn(s.nrows, b, |i, j| out[i * b + j]))
        }
        OpData::EnergyBasis(_) => None,
    }
}

/// Reads columns `r` and checks their shape and element type.
fn read_block<T: Elem>(src: &dyn ColumnSource, r: Range<usize>) -> Result<Mat<T>> {
    let m = src.read(r.clone())?;
    if m.nrows() != src.dim() || m.ncols() != r.len() {
        return Err(Error::other(format!(
            "eigenvector reader returned a {}×{} block for states {}..{} (expected {}×{})",
            m.nrows(),
            m.ncols(),
            r.start,
            r.end,
            src.dim(),
            r.len()
        )));
    }
    T::from_matrix(m)
}

fn blocks(range: &Range<usize>, b: usize) -> Vec<Range<usize>> {
    let b = b.max(1);
    (range.start..range.end)
        .step_by(b)
        .map(|s| s..(s + b).min(range.end))
        .collect()
}

fn stream<T: Elem>(
    src: &dyn ColumnSource,
    ops: &[Cow<'_, OpData<T>>],
    range: Range<usize>,
    opts: &ProjectOptions,
    sink: &mut impl FnMut(&BlockPair) -> Result<()>,
) -> Result<()> {
    let needs_vectors = ops
        .iter()
        .any(|o| !matches!(o.as_ref(), OpData::EnergyBasis(_)));
    let b = block_size(
        range.len(),
        ops.len(),
        if needs_vectors { src.dim() } else { 0 },
        std::mem::size_of::<T>(),
        opts,
    );
    let bl = blocks(&range, b);
    let k = bl.len();
    let pb = crate::progress::bar((k * (k + 1) / 2) as u64, "projecting");
    for (jb, cj) in bl.iter().enumerate() {
        let (vj, bj): (Option<Mat<T>>, Vec<Option<Mat<T>>>) = if needs_vectors {
            let vj = read_block::<T>(src, cj.clone())?;
            let bj = ops.iter().map(|o| apply(o.as_ref(), vj.as_ref())).collect();
            (Some(vj), bj)
        } else {
            (None, ops.iter().map(|_| None).collect())
        };
        for ri in bl.iter().take(jb + 1) {
            let vi_owned;
            let vi: Option<MatRef<'_, T>> = if !needs_vectors {
                None
            } else if ri == cj {
                vj.as_ref().map(|m| m.as_ref())
            } else {
                vi_owned = read_block::<T>(src, ri.clone())?;
                Some(vi_owned.as_ref())
            };
            let mut elements = Vec::with_capacity(ops.len());
            for (op, bjk) in ops.iter().zip(&bj) {
                let m = match (op.as_ref(), bjk, vi) {
                    (OpData::EnergyBasis(a), _, _) => {
                        Mat::from_fn(ri.len(), cj.len(), |i, j| a[(ri.start + i, cj.start + j)])
                    }
                    (_, Some(bm), Some(vi)) => T::adj_product(vi, bm.as_ref()),
                    _ => return Err(Error::other("internal: missing eigenvector block")),
                };
                elements.push(T::wrap(m));
            }
            sink(&BlockPair {
                rows: ri.clone(),
                cols: cj.clone(),
                elements,
            })?;
            pb.inc(1);
        }
    }
    pb.finish_and_clear();
    Ok(())
}

fn diag_stream<T: Elem>(
    src: &dyn ColumnSource,
    ops: &[Cow<'_, OpData<T>>],
    range: Range<usize>,
    opts: &ProjectOptions,
) -> Result<Vec<Vec<f64>>> {
    let mut out: Vec<Vec<f64>> = ops
        .iter()
        .map(|_| Vec::with_capacity(range.len()))
        .collect();
    let needs_vectors = ops
        .iter()
        .any(|o| !matches!(o.as_ref(), OpData::EnergyBasis(_)));
    let b = block_size(
        range.len(),
        ops.len(),
        if needs_vectors { src.dim() } else { 0 },
        std::mem::size_of::<T>(),
        opts,
    );
    let bl = blocks(&range, b);
    let pb = crate::progress::bar(bl.len() as u64, "diagonal");
    for r in &bl {
        let v = if needs_vectors {
            Some(read_block::<T>(src, r.clone())?)
        } else {
            None
        };
        for (op, o) in ops.iter().zip(out.iter_mut()) {
            match (op.as_ref(), &v) {
                (OpData::EnergyBasis(a), _) => o.extend(r.clone().map(|n| a[(n, n)].re())),
                (opd, Some(v)) => {
                    if let Some(av) = apply(opd, v.as_ref()) {
                        let d: Vec<f64> = (0..r.len())
                            .into_par_iter()
                            .map(|j| {
                                let mut s = T::zero();
                                for i in 0..v.nrows() {
                                    s = s.add(v[(i, j)].conj().mul(av[(i, j)]));
                                }
                                s.re()
                            })
                            .collect();
                        o.extend(d);
                    }
                }
                _ => return Err(Error::other("internal: missing eigenvector block")),
            }
        }
        pb.inc(1);
    }
    pb.finish_and_clear();
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn memory_sizes() {
        // binary suffixes (common practice, no source)
        assert_eq!(parse_memory("6G").unwrap(), 6 << 30);
        assert_eq!(parse_memory("512m").unwrap(), 512 << 20);
        assert_eq!(parse_memory("1.5GiB").unwrap(), 3 << 29);
        assert_eq!(parse_memory("1000").unwrap(), 1000);
        for s in ["", "G", "-1G", "abc", "0"] {
            assert!(parse_memory(s).is_err(), "{s}");
        }
    }

    #[test]
    fn block_size_respects_budget() {
        // (4 + q)·dim·b·s + q·b²·s ≤ budget (the documented working-set model; no source)
        let opts = ProjectOptions::with_budget(1 << 20);
        let b = block_size(1000, 2, 1000, 8, &opts);
        let used = |b: usize| (6 * 1000 * b * 8 + 2 * b * b * 8) as f64;
        assert!(
            used(b) <= (1 << 20) as f64 && used(b + 1) > (1 << 20) as f64,
            "b = {b}"
        );
        assert_eq!(block_size(10, 1, 10, 8, &opts), 10);
        let fixed = ProjectOptions {
            budget_bytes: 1,
            block: Some(3),
        };
        assert_eq!(block_size(10, 1, 10, 8, &fixed), 3);
    }

    #[test]
    fn shape_errors_are_reported() {
        // bad input gives an error, not a panic (common practice, no source)
        let v = Matrix::Real(Mat::identity(4, 4));
        let op = Operator::Real(OpData::Diagonal(vec![1.0; 3]));
        assert!(project_window(&v, &[&op], 0..4, &ProjectOptions::with_budget(1 << 20)).is_err());
        let ok = Operator::Real(OpData::Diagonal(vec![1.0; 4]));
        assert!(project_window(&v, &[&ok], 0..5, &ProjectOptions::with_budget(1 << 20)).is_err());
        let bad_csr = Operator::Real(OpData::Csr(Csr {
            nrows: 4,
            ncols: 4,
            indptr: vec![0, 1, 1, 1, 1],
            indices: vec![7],
            data: vec![1.0],
        }));
        assert!(
            project_diagonal(&v, &[&bad_csr], 0..4, &ProjectOptions::with_budget(1 << 20)).is_err()
        );
    }
}
