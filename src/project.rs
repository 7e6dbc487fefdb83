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
//! all observables are formed once, then `I = J` and the blocks `I < J` are streamed
//! and `A_IJ = V_Iᴴ (A V_J)` is handed to a sink ([`for_each_block`]; the diagonal pair
//! comes first because it needs no read, so the next block is fetched meanwhile). Observables are
//! Hermitian, so the blocks `I > J` are the adjoints `A_JI = A_IJᴴ` and are not
//! computed: the sink sees every unordered pair of states exactly once (inside a
//! diagonal block `I = J` it sees the full square, both `n < m` and `m < n`).
//! Several observables share one pass over the eigenvectors.
//!
//! The working set for block size `b`, dimension `dim`, `q` observables and element
//! size `s` bytes is about `(4 + q)·dim·b·s + q·b²·s` (two eigenvector blocks in use,
//! up to two more in the reader thread that fetches the next block while the current
//! one is multiplied, one product buffer `A V_J` per observable allocated once, the
//! blocks of results); the block size is the largest `b` that fits the budget. With a
//! chunked file the block width is a multiple of the chunk extent and the cuts fall on
//! chunk boundaries. Consumed blocks go back to the reader thread, which refills them
//! in place: a long pass touches fresh memory for a few blocks only (first-touch page
//! faults cost as much as the read itself on some virtual machines). The diagonal
//! pass ([`project_diagonal`]) of diagonal and CSR operators needs no `b²` term and
//! gains nothing from wide blocks, so its blocks are kept near [`DIAG_BLOCK_BYTES`].
//!
//! **Products.** Dense: `faer::linalg::matmul::matmul` with `Par::rayon(0)` into the
//! preallocated buffers. CSR: `y = A x` row by row for each eigenvector column,
//! parallel over groups of columns, with no allocation and no transposition (a column
//! of `dim` entries stays in cache while the CSR arrays stream). Diagonal elements of
//! diagonal and CSR operators are formed as `⟨v|A|v⟩` column by column without storing
//! `A V`.

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
    sink: impl FnMut(&BlockPair) -> Result<()>,
) -> Result<()> {
    for_each_block_timed(src, ops, range, opts, &mut StageTiming::default(), sink)
}

/// [`for_each_block`], adding the seconds spent reading, projecting and in the sink
/// to `timing` (the reading of the next block overlaps the products of the current one).
pub fn for_each_block_timed(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    opts: &ProjectOptions,
    timing: &mut StageTiming,
    mut sink: impl FnMut(&BlockPair) -> Result<()>,
) -> Result<()> {
    check_inputs(src, ops, &range)?;
    if range.is_empty() || ops.is_empty() {
        return Ok(());
    }
    match result_field(src, ops) {
        Field::Real => {
            let prepared = prepare::<f64>(ops)?;
            stream::<f64>(src, &prepared, range, opts, timing, &mut sink)
        }
        Field::Complex => {
            let prepared = prepare::<c64>(ops)?;
            stream::<c64>(src, &prepared, range, opts, timing, &mut sink)
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
///
/// Cost per state: `O(nnz)` for diagonal and CSR operators (`⟨n|A|n⟩` is formed
/// column by column without storing `A V`), `2·dim²` flops for a dense one.
pub fn project_diagonal(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    opts: &ProjectOptions,
) -> Result<Vec<Vec<f64>>> {
    project_diagonal_timed(src, ops, range, opts, &mut StageTiming::default())
}

/// [`project_diagonal`], adding the seconds spent reading and projecting to `timing`.
pub fn project_diagonal_timed(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    opts: &ProjectOptions,
    timing: &mut StageTiming,
) -> Result<Vec<Vec<f64>>> {
    check_inputs(src, ops, &range)?;
    if ops.is_empty() {
        return Ok(Vec::new());
    }
    match result_field(src, ops) {
        Field::Real => diag_stream::<f64>(src, &prepare::<f64>(ops)?, range, opts, timing),
        Field::Complex => diag_stream::<c64>(src, &prepare::<c64>(ops)?, range, opts, timing),
    }
}

/// Which states' diagonal elements `Aₙₙ` the thermal predictions use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum PredictionStates {
    /// Every stored state (microcanonical shells and canonical sums over the spectrum).
    All,
    /// The analysis window only (canonical prediction omitted).
    Window,
}

/// Flop count above which `auto` keeps the all-state diagonal of a dense operator
/// out: `2·dim²·n > 2·10¹¹` (a few seconds of dense products on a workstation).
pub const AUTO_ALL_STATES_MAX_FLOPS: f64 = 2e11;

/// The prediction policy `auto`: all states unless some operator is dense and the
/// all-state dense projection `Σ_dense 2·dim²·n` would exceed
/// [`AUTO_ALL_STATES_MAX_FLOPS`] — then the window only. Diagonal, CSR and
/// energy-basis operators cost `O(nnz)` per state and never limit it.
pub fn auto_prediction_states(ops: &[&Operator], dim: usize, n: usize) -> PredictionStates {
    let dense = ops
        .iter()
        .filter(|o| o.form() == crate::data::OperatorForm::Dense)
        .count() as f64;
    let flops = dense * 2.0 * (dim as f64).powi(2) * n as f64;
    if flops > AUTO_ALL_STATES_MAX_FLOPS {
        PredictionStates::Window
    } else {
        PredictionStates::All
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
    /// `dst = a · b`, parallel, into a preallocated output.
    fn product_into(dst: faer::MatMut<'_, Self>, a: MatRef<'_, Self>, b: MatRef<'_, Self>);
    /// `aᴴ · b`, parallel.
    fn adj_product(a: MatRef<'_, Self>, b: MatRef<'_, Self>) -> Mat<Self>;
    /// `aᴴ · a`-shaped Hermitian block `aᴴ · b` of a diagonal block pair: only the
    /// upper triangle is computed (half the flops), the lower one is its adjoint.
    fn adj_product_hermitian(a: MatRef<'_, Self>, b: MatRef<'_, Self>) -> Mat<Self> {
        let n = a.ncols();
        let mut d = Mat::from_fn(n, n, |_, _| Self::zero());
        Self::upper_adj_into(d.as_mut(), a, b);
        for j in 0..n {
            for i in j + 1..n {
                d[(i, j)] = d[(j, i)].conj();
            }
        }
        d
    }
    /// Upper triangle (diagonal included) of `dst = aᴴ · b`, parallel.
    fn upper_adj_into(dst: faer::MatMut<'_, Self>, a: MatRef<'_, Self>, b: MatRef<'_, Self>);
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
    fn product_into(dst: faer::MatMut<'_, f64>, a: MatRef<'_, f64>, b: MatRef<'_, f64>) {
        matmul(dst, Accum::Replace, a, b, 1.0, Par::rayon(0));
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
    fn upper_adj_into(dst: faer::MatMut<'_, f64>, a: MatRef<'_, f64>, b: MatRef<'_, f64>) {
        use faer::linalg::matmul::triangular::{matmul as tri, BlockStructure as S};
        tri(
            dst,
            S::TriangularUpper,
            Accum::Replace,
            a.transpose(),
            S::Rectangular,
            b,
            S::Rectangular,
            1.0,
            Par::rayon(0),
        );
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
    fn product_into(dst: faer::MatMut<'_, c64>, a: MatRef<'_, c64>, b: MatRef<'_, c64>) {
        matmul(dst, Accum::Replace, a, b, c64::new(1.0, 0.0), Par::rayon(0));
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
    fn upper_adj_into(dst: faer::MatMut<'_, c64>, a: MatRef<'_, c64>, b: MatRef<'_, c64>) {
        use faer::linalg::matmul::triangular::{matmul as tri, BlockStructure as S};
        tri(
            dst,
            S::TriangularUpper,
            Accum::Replace,
            a.adjoint(),
            S::Rectangular,
            b,
            S::Rectangular,
            c64::new(1.0, 0.0),
            Par::rayon(0),
        );
    }
    fn wrap(m: Mat<c64>) -> Matrix {
        Matrix::Complex(m)
    }
    fn from_matrix(m: Matrix) -> Result<Mat<c64>> {
        match m {
            Matrix::Complex(m) => Ok(m),
            real => Ok(real.to_complex()),
        }
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

/// Columns a sparse (CSR) product handles at once: they are interleaved so that the
/// `GROUP` values `x_k` one stored entry `A_ik` multiplies share a cache line, and the
/// CSR arrays are streamed once per group instead of once per column.
const GROUP: usize = 8;

/// `out = A V` for a block of eigenvectors `v` (`dim × w`) into the column-major
/// buffer `out` (length `≥ dim·w`, columns of stride `dim`). Returns false for
/// energy-basis operators (nothing to apply). Parallel over groups of columns; no
/// allocation in the inner loops.
fn apply_into<T: Elem>(op: &OpData<T>, v: &Mat<T>, out: &mut [T]) -> bool {
    let (dim, w) = (v.nrows(), v.ncols());
    if matches!(op, OpData::EnergyBasis(_)) {
        return false;
    }
    if dim == 0 || w == 0 {
        return true;
    }
    let out = &mut out[..dim * w];
    match op {
        OpData::Diagonal(d) => {
            out.par_chunks_mut(dim).enumerate().for_each(|(j, o)| {
                for ((o, &x), &di) in o.iter_mut().zip(v.col_as_slice(j)).zip(d) {
                    *o = di.mul(x);
                }
            });
            true
        }
        OpData::Dense(a) => {
            let dst = faer::MatMut::from_column_major_slice_mut(out, dim, w);
            T::product_into(dst, a.as_ref(), v.as_ref());
            true
        }
        OpData::Csr(s) => {
            out.par_chunks_mut(dim * GROUP).enumerate().for_each_init(
                || vec![T::zero(); dim * GROUP],
                |x, (g, o)| {
                    let cols: Vec<&[T]> = (g * GROUP..(g * GROUP + GROUP).min(w))
                        .map(|j| v.col_as_slice(j))
                        .collect();
                    csr_apply_group(s, &cols, x, |i, acc| {
                        for (c, oc) in o.chunks_mut(dim).enumerate() {
                            oc[i] = acc[c];
                        }
                    });
                },
            );
            true
        }
        OpData::EnergyBasis(_) => false,
    }
}

/// `y_c = A x_c` for up to [`GROUP`] columns `cols` (each a contiguous eigenvector) of
/// a CSR matrix, row by row: `emit(i, y[i, ·])` receives row `i` of the results. The
/// columns are first interleaved into `x` (row-major `dim × GROUP`), so the sums
/// `y_ic = Σ_k A_ik x_kc` run over the stored entries of row `i` in storage order for
/// all columns together (each column's sum is the same as a one-column product's).
#[inline]
fn csr_apply_group<T: Elem>(
    s: &Csr<T>,
    cols: &[&[T]],
    x: &mut [T],
    mut emit: impl FnMut(usize, &[T; GROUP]),
) {
    let g = cols.len().min(GROUP);
    for (c, col) in cols.iter().take(g).enumerate() {
        for (k, &val) in col.iter().enumerate() {
            x[k * GROUP + c] = val;
        }
    }
    for i in 0..s.nrows {
        let (lo, hi) = (s.indptr[i], s.indptr[i + 1]);
        let mut acc = [T::zero(); GROUP];
        for (&a, &k) in s.data[lo..hi].iter().zip(&s.indices[lo..hi]) {
            let xr = &x[k * GROUP..k * GROUP + GROUP];
            for (acc, &xv) in acc.iter_mut().zip(xr) {
                *acc = acc.add(a.mul(xv));
            }
        }
        emit(i, &acc);
    }
}

/// `⟨v_c|A|v_c⟩ = Σ_i conj(v_ic) (A v_c)_i` for the columns `cols` of a block, without
/// storing `A v`: diagonal operators column by column, CSR operators [`GROUP`] columns
/// at a time ([`csr_apply_group`]).
fn expectations<T: Elem>(op: &OpData<T>, cols: &[&[T]], x: &mut Vec<T>) -> Vec<f64> {
    match op {
        OpData::Csr(s) => {
            let mut out = Vec::with_capacity(cols.len());
            x.resize(s.ncols * GROUP, T::zero());
            for group in cols.chunks(GROUP) {
                let mut total = [0.0f64; GROUP];
                csr_apply_group(s, group, x, |i, acc| {
                    for (c, col) in group.iter().enumerate() {
                        total[c] += col[i].conj().mul(acc[c]).re();
                    }
                });
                out.extend_from_slice(&total[..group.len()]);
            }
            out
        }
        OpData::Diagonal(d) => cols
            .iter()
            .map(|col| {
                col.iter()
                    .zip(d)
                    .map(|(&xi, &di)| xi.conj().mul(di.mul(xi)).re())
                    .sum()
            })
            .collect(),
        // dense and energy-basis operators are handled by the caller
        _ => vec![f64::NAN; cols.len()],
    }
}

/// Reads columns `r` and checks their shape and element type, refilling `spare` when
/// it has the block's shape (no fresh memory) and reading a new matrix otherwise.
fn read_block<T: Elem>(
    src: &dyn ColumnSource,
    r: Range<usize>,
    spare: Option<Mat<T>>,
) -> Result<Mat<T>> {
    let m = match spare {
        Some(s) if s.nrows() == src.dim() && s.ncols() == r.len() => {
            let mut m = T::wrap(s);
            src.read_into(r.clone(), &mut m)?;
            m
        }
        _ => src.read(r.clone())?,
    };
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

/// Cuts `range` into blocks of at most `b` states. With a chunk extent `c ≤ b` along
/// the state axis, the width is rounded down to a multiple of `c` and the cuts fall on
/// multiples of `c`, so that every chunk is read by one block only.
fn blocks(range: &Range<usize>, b: usize, chunk: Option<usize>) -> Vec<Range<usize>> {
    let mut b = b.max(1);
    if b >= range.len() {
        return vec![range.clone()];
    }
    let mut first_end = range.start + b;
    if let Some(c) = chunk.filter(|&c| c > 0 && c <= b) {
        b = (b / c) * c;
        first_end = (range.start / c) * c + b;
    }
    let mut out = Vec::new();
    let mut s = range.start;
    let mut e = first_end.min(range.end);
    while s < range.end {
        out.push(s..e);
        s = e;
        e = (s + b).min(range.end);
    }
    out
}

/// Seconds spent by the projector, by stage (wall clock, summed over blocks).
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize)]
pub struct StageTiming {
    /// Waiting for eigenvector blocks: the part of the reading not hidden behind the
    /// products (a reader thread fetches the next block while the current one is used).
    pub read_wait_seconds: f64,
    /// Time the reader thread spent reading (HDF5 and copying), overlapped or not.
    pub read_seconds: f64,
    /// Forming `A V_J` and `V_Iᴴ (A V_J)` (or the diagonal elements).
    pub project_seconds: f64,
    /// Time spent in the caller's sink (the analysis of each block).
    pub sink_seconds: f64,
    /// Columns per block used.
    pub block_states: usize,
    /// Number of blocks the window was cut into.
    pub blocks: usize,
}

/// Eigenvector blocks handed out in order by [`with_prefetch`]: read ahead by one block
/// on a reader thread; blocks given back with [`Fetch::recycle`] are refilled by the
/// reader instead of new ones being allocated.
struct Fetch<T> {
    rx: std::sync::mpsc::Receiver<Result<Mat<T>>>,
    back: std::sync::mpsc::Sender<Mat<T>>,
    wait: f64,
}

impl<T: Elem> Fetch<T> {
    /// The next block (waiting for the reader when it is not ready yet).
    fn next(&mut self) -> Result<Mat<T>> {
        let t = std::time::Instant::now();
        let m = self
            .rx
            .recv()
            .map_err(|_| Error::other("internal: the eigenvector reader stopped early"))?;
        self.wait += t.elapsed().as_secs_f64();
        m
    }

    /// Gives a consumed block back to the reader for reuse.
    fn recycle(&self, m: Mat<T>) {
        // the reader may have finished; then the block is simply dropped
        let _ = self.back.send(m);
    }
}

/// Runs `body` with a [`Fetch`] that returns the blocks `reads` in order, read ahead by
/// one block on a separate thread (a rendezvous channel: at most one finished block
/// waits while the consumer works). Accumulates the waiting and reading times.
fn with_prefetch<T: Elem, R>(
    src: &dyn ColumnSource,
    reads: Vec<Range<usize>>,
    timing: &mut StageTiming,
    body: impl FnOnce(&mut Fetch<T>) -> Result<R>,
) -> Result<R> {
    let (tx, rx) = std::sync::mpsc::sync_channel::<Result<Mat<T>>>(0);
    let (back, back_rx) = std::sync::mpsc::channel::<Mat<T>>();
    let mut fetch = Fetch {
        rx,
        back,
        wait: 0.0,
    };
    if reads.is_empty() {
        drop(tx);
        return body(&mut fetch);
    }
    // The reader's own copies (transposing HDF5 pieces into blocks) run on a one-thread
    // pool: on the global pool they would queue behind the products they should overlap.
    let pool = rayon::ThreadPoolBuilder::new().num_threads(1).build().ok();
    std::thread::scope(|scope| {
        let reader = scope.spawn(move || {
            let mut busy = 0.0;
            for r in reads {
                // keep one given-back block (the latest), free any others
                let spare = back_rx.try_iter().last();
                let t = std::time::Instant::now();
                let m = match &pool {
                    Some(p) => p.install(|| read_block::<T>(src, r, spare)),
                    None => read_block::<T>(src, r, spare),
                };
                busy += t.elapsed().as_secs_f64();
                let failed = m.is_err();
                if tx.send(m).is_err() || failed {
                    break;
                }
            }
            busy
        });
        let out = body(&mut fetch);
        let wait = fetch.wait;
        drop(fetch);
        timing.read_wait_seconds += wait;
        timing.read_seconds += reader.join().unwrap_or(0.0);
        out
    })
}

fn stream<T: Elem>(
    src: &dyn ColumnSource,
    ops: &[Cow<'_, OpData<T>>],
    range: Range<usize>,
    opts: &ProjectOptions,
    timing: &mut StageTiming,
    sink: &mut impl FnMut(&BlockPair) -> Result<()>,
) -> Result<()> {
    let needs_vectors = ops
        .iter()
        .any(|o| !matches!(o.as_ref(), OpData::EnergyBasis(_)));
    let dim = if needs_vectors { src.dim() } else { 0 };
    let b = block_size(range.len(), ops.len(), dim, std::mem::size_of::<T>(), opts);
    let bl = blocks(
        &range,
        b,
        src.chunk_states().filter(|_| opts.block.is_none()),
    );
    let bmax = bl.iter().map(|r| r.len()).max().unwrap_or(0);
    timing.block_states = bmax;
    timing.blocks = bl.len();
    let k = bl.len();
    // read order: block J, then the blocks I < J
    let reads: Vec<Range<usize>> = if needs_vectors {
        (0..k)
            .flat_map(|j| std::iter::once(bl[j].clone()).chain(bl[..j].iter().cloned()))
            .collect()
    } else {
        Vec::new()
    };
    // one product buffer per operator that needs vectors, allocated once
    let mut bufs: Vec<Vec<T>> = ops
        .iter()
        .map(|o| match o.as_ref() {
            OpData::EnergyBasis(_) => Vec::new(),
            _ => vec![T::zero(); dim * bmax],
        })
        .collect();
    let pb = crate::progress::bar((k * (k + 1) / 2) as u64, "projecting");
    let mut project_s = 0.0;
    let mut sink_s = 0.0;
    with_prefetch::<T, ()>(src, reads, timing, |fetch| {
        for (jb, cj) in bl.iter().enumerate() {
            let vj = if needs_vectors {
                Some(fetch.next()?)
            } else {
                None
            };
            let t = std::time::Instant::now();
            if let Some(vj) = &vj {
                for (op, buf) in ops.iter().zip(bufs.iter_mut()) {
                    apply_into(op.as_ref(), vj, buf);
                }
            }
            project_s += t.elapsed().as_secs_f64();
            // the diagonal pair (J, J) first: it needs no read, so the reader fetches
            // block 0 while it is multiplied
            for ri in std::iter::once(cj).chain(bl.iter().take(jb)) {
                let mut vi_owned: Option<Mat<T>> = None;
                let vi: Option<&Mat<T>> = if !needs_vectors {
                    None
                } else if ri == cj {
                    vj.as_ref()
                } else {
                    vi_owned = Some(fetch.next()?);
                    vi_owned.as_ref()
                };
                let t = std::time::Instant::now();
                let mut elements = Vec::with_capacity(ops.len());
                for (op, buf) in ops.iter().zip(&bufs) {
                    let m = match (op.as_ref(), vi) {
                        (OpData::EnergyBasis(a), _) => {
                            Mat::from_fn(ri.len(), cj.len(), |i, j| a[(ri.start + i, cj.start + j)])
                        }
                        (_, Some(vi)) => {
                            let bm = MatRef::from_column_major_slice(
                                &buf[..dim * cj.len()],
                                dim,
                                cj.len(),
                            );
                            if ri == cj {
                                T::adj_product_hermitian(vi.as_ref(), bm)
                            } else {
                                T::adj_product(vi.as_ref(), bm)
                            }
                        }
                        _ => return Err(Error::other("internal: missing eigenvector block")),
                    };
                    elements.push(T::wrap(m));
                }
                project_s += t.elapsed().as_secs_f64();
                if let Some(m) = vi_owned.take() {
                    fetch.recycle(m);
                }
                let t = std::time::Instant::now();
                sink(&BlockPair {
                    rows: ri.clone(),
                    cols: cj.clone(),
                    elements,
                })?;
                sink_s += t.elapsed().as_secs_f64();
                pb.inc(1);
            }
            if let Some(m) = vj {
                fetch.recycle(m);
            }
        }
        Ok(())
    })?;
    timing.project_seconds += project_s;
    timing.sink_seconds += sink_s;
    pb.finish_and_clear();
    Ok(())
}

/// Eigenvector bytes per block of the diagonal pass ([`project_diagonal`]) when no
/// block size is forced: 64 MiB.
pub const DIAG_BLOCK_BYTES: usize = 64 << 20;

fn diag_stream<T: Elem>(
    src: &dyn ColumnSource,
    ops: &[Cow<'_, OpData<T>>],
    range: Range<usize>,
    opts: &ProjectOptions,
    timing: &mut StageTiming,
) -> Result<Vec<Vec<f64>>> {
    let mut out: Vec<Vec<f64>> = ops
        .iter()
        .map(|_| Vec::with_capacity(range.len()))
        .collect();
    let needs_vectors = ops
        .iter()
        .any(|o| !matches!(o.as_ref(), OpData::EnergyBasis(_)));
    let dim = if needs_vectors { src.dim() } else { 0 };
    // only dense operators need a product buffer
    let n_dense = ops
        .iter()
        .filter(|o| matches!(o.as_ref(), OpData::Dense(_)))
        .count();
    let elem = std::mem::size_of::<T>();
    let mut b = block_size(range.len(), n_dense, dim, elem, opts);
    if opts.block.is_none() && n_dense == 0 {
        // Only diagonal elements are formed, so a wider block saves no work: keep
        // blocks near DIAG_BLOCK_BYTES (at least one chunk), whose memory the reader
        // then refills, instead of one huge block of fresh memory. (Dense operators keep
        // the widest block the budget allows: their products run best undisturbed by
        // the reader and with the fewest passes.)
        let cap = (DIAG_BLOCK_BYTES / (dim.max(1) * elem))
            .max(src.chunk_states().unwrap_or(1))
            .max(1);
        b = b.min(cap);
    }
    let bl = blocks(
        &range,
        b,
        src.chunk_states().filter(|_| opts.block.is_none()),
    );
    let bmax = bl.iter().map(|r| r.len()).max().unwrap_or(0);
    timing.block_states = bmax;
    timing.blocks = bl.len();
    let reads = if needs_vectors {
        bl.clone()
    } else {
        Vec::new()
    };
    let mut buf: Vec<T> = if n_dense > 0 {
        vec![T::zero(); dim * bmax]
    } else {
        Vec::new()
    };
    let pb = crate::progress::bar(bl.len() as u64, "diagonal");
    let mut project_s = 0.0;
    with_prefetch::<T, ()>(src, reads, timing, |fetch| {
        for r in &bl {
            let v = if needs_vectors {
                Some(fetch.next()?)
            } else {
                None
            };
            let t = std::time::Instant::now();
            for (op, o) in ops.iter().zip(out.iter_mut()) {
                match (op.as_ref(), &v) {
                    (OpData::EnergyBasis(a), _) => o.extend(r.clone().map(|n| a[(n, n)].re())),
                    (OpData::Dense(_), Some(v)) => {
                        apply_into(op.as_ref(), v, &mut buf);
                        let av = &buf[..dim * r.len()];
                        let d: Vec<f64> = (0..r.len())
                            .into_par_iter()
                            .map(|j| {
                                v.col_as_slice(j)
                                    .iter()
                                    .zip(&av[j * dim..(j + 1) * dim])
                                    .fold(T::zero(), |s, (&x, &y)| s.add(x.conj().mul(y)))
                                    .re()
                            })
                            .collect();
                        o.extend(d);
                    }
                    (opd, Some(v)) => {
                        let d: Vec<f64> = (0..r.len())
                            .collect::<Vec<_>>()
                            .par_chunks(GROUP)
                            .map_init(Vec::new, |x, js| {
                                let cols: Vec<&[T]> =
                                    js.iter().map(|&j| v.col_as_slice(j)).collect();
                                expectations(opd, &cols, x)
                            })
                            .flatten_iter()
                            .collect();
                        o.extend(d);
                    }
                    _ => return Err(Error::other("internal: missing eigenvector block")),
                }
            }
            project_s += t.elapsed().as_secs_f64();
            if let Some(m) = v {
                fetch.recycle(m);
            }
            pb.inc(1);
        }
        Ok(())
    })?;
    timing.project_seconds += project_s;
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
    fn blocks_fall_on_chunk_boundaries() {
        // cuts at multiples of the chunk after the first block (common practice, no source)
        assert_eq!(
            blocks(&(30..135), 33, Some(16)),
            vec![30..48, 48..80, 80..112, 112..135]
        );
        assert_eq!(blocks(&(30..135), 200, Some(16)), vec![30..135]);
        assert_eq!(blocks(&(0..10), 4, None), vec![0..4, 4..8, 8..10]);
        // a chunk wider than the block is ignored
        assert_eq!(blocks(&(0..10), 4, Some(8)), vec![0..4, 4..8, 8..10]);
    }

    #[test]
    fn auto_policy_limits_dense_all_state_projections() {
        // 2·dim²·n against 2e11 flops (the documented policy; no source)
        let dense = Operator::Real(OpData::Dense(Mat::zeros(2, 2)));
        let diag = Operator::Real(OpData::Diagonal(vec![0.0; 2]));
        assert_eq!(
            auto_prediction_states(&[&dense], 2048, 2048),
            PredictionStates::All
        );
        assert_eq!(
            auto_prediction_states(&[&dense], 8192, 8192),
            PredictionStates::Window
        );
        assert_eq!(
            auto_prediction_states(&[&diag], 32768, 32768),
            PredictionStates::All
        );
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
