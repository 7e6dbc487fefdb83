//! The passes of a quench over the eigenvectors: the coefficients of a state with the
//! diagonal elements, and the operators over the kept states.
//!
//! **State pass** ([`state_pass`]). For a state `ψ` in the sector's computational basis
//! and the eigenvectors `V` (columns `vₙ`), one pass of the diagonal stream
//! ([`super::diagonal`]) gives, block by block, the coefficients `c_B = V_Bᴴ ψ` (one dot
//! product per eigenvector, parallel with the budget's parallelism) and the diagonal elements
//! `Aₙₙ = Re vₙᴴ A vₙ` of every operator (the kernels of the diagonal pass; operators stored
//! in the energy basis: their diagonal, read off). On the way it forms the overlaps
//! `V_Bᴴ S` with a few probe columns `S` when the caller gives them (the states the input
//! check compares with every stored state), so that check needs no pass of its own.
//!
//! **Kept-state matrices** ([`kept_matrices`]). For the kept states `K` (strictly ascending
//! indices, chosen by the caller from `|cₙ|²`) and every operator,
//! `A_KK[a, b] = v_{k_a}ᴴ A v_{k_b}`, stored as the upper parts of column panels
//! ([`HermitianPanels`], about `K(K + w)/2` elements for panels of width `w`). With the kept
//! eigenvectors `V_K` in memory as blocks `B₁ … B_r` (columns in `K` order), panel `J`
//! (columns of one block) is
//!
//! ```text
//! A_KK[0..j₁, J] = [B₁ … B_{J}]ᴴ (A V_J)      (upper part and the diagonal block of J)
//! ```
//!
//! one product `A V_J` per operator ([`super::kernels::apply_into`]) and one dense product
//! per block (the diagonal block: its upper triangle only, half the flops; the products in
//! blocks of 512 rows, whose packing scratch stays small): `dim·K²` flops in all. The panels
//! are formed from the last one to the first, so that once `A V_J` and the diagonal block of
//! panel `J` are formed the eigenvectors of `J` are not needed any more: the first
//! operator's rows above the diagonal block are written straight over them, in the same
//! storage (the panels still to come use the columns before `J` only). The eigenvectors of
//! `K` therefore turn into `A_KK` in place (when `dim ≥ K`), and the pass holds `dim·K`
//! elements plus one product `A V_J` of scratch, not `dim·K + K²`.
//!
//! **Where `V_K` comes from, and the memory model.** With element size `s`, `q` operators
//! (`q_v` of them acting on eigenvectors), `n` states of dimension `dim`, panel width `w`
//! and `R(K) = K(K + w)/2 · s` the bytes of one kept-state matrix:
//!
//! 1. *resident*: the state pass keeps every block it reads, when
//!    `dim·n·s + (q − 1)·R(n) + scratch ≤ budget` (the first operator's `A_KK` lives in the
//!    eigenvectors' storage; `R(n)` bounds `R(K)`): the eigenvectors are read once. The
//!    blocks are cut down to the kept columns afterwards.
//! 2. *gathered*: otherwise, when `dim·K·s + (q − 1)·R(K) + scratch ≤ budget`, a second
//!    pass through the same stream reads the blocks holding kept states and keeps their
//!    kept columns (reading each eigenvector of the enclosing range `k_first..=k_last` at
//!    most once).
//! 3. *pairs*: otherwise, when `q·R(K)` fits, the block pairs of the enclosing range
//!    ([`super::pairs`]) are scattered into panels allocated beforehand, under the rest of
//!    the budget (smaller blocks, more reads: `dim·W²` flops for the enclosing range `W`).
//! 4. otherwise the pass refuses with one line naming both sizes.
//!
//! The scratch is one product `A V_J` and one diagonal block (`(dim + w)·w·s`). The rule
//! prefers the path that reads and multiplies least: resident reads nothing more, gathered
//! reads the kept blocks once and multiplies `dim·K²`, pairs re-reads blocks and multiplies
//! `dim·W² ≥ dim·K²`. The panels are about [`KEPT_PANEL_BYTES`] of eigenvector columns
//! wide (`budget.block` when it is set): wider panels add `dim·K·w` flops but run the
//! products at a higher rate (see the constant). Operators stored in the
//! energy basis are sliced, `A_KK[a, b] = A[k_a, k_b]`, into panels of their own.

use super::budget::{human_bytes, Budget};
use super::diagonal::{diag_stream, DIAG_BLOCK_BYTES};
use super::kernels::{adj_vec, apply_into, check_inputs, elem_size, prepare, Elem, Probe};
use super::pairs::for_each_block_timed;
use super::stream::{blocks, with_prefetch, StageTiming};
use super::BlockPair;
use crate::data::{c64, ColumnSource, Field, HermitianPanels, Matrix, OpData, Operator, Panel};
use crate::error::{Error, Result};
use faer::{Mat, MatMut, MatRef, Par};
use serde::Serialize;
use std::borrow::Cow;
use std::ops::Range;

/// Bytes of eigenvector columns per panel of the kept-state matrices (16 MiB): the panel
/// width is `KEPT_PANEL_BYTES / (dim·s)`, at least [`MIN_PANEL`] states. The panel width is
/// the inner dimension of the time trace's products and the column count of the products
/// here; faer's rate grows with it up to a few hundred columns (measured on this project's
/// 2-core bench machine: `aᵀb` with 3432 rows at 82 GFLOP/s for 152 columns, 104 GFLOP/s for
/// 512), so the panels of a 3432-state real sector are 611 states wide.
pub const KEPT_PANEL_BYTES: usize = 16 << 20;

/// Narrowest panel of the kept-state matrices (unless `budget.block` sets one).
pub const MIN_PANEL: usize = 32;

/// How the kept-state matrices of the operators acting on eigenvectors were formed (see
/// the module doc).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum KeptPath {
    /// From the blocks the state pass kept (the eigenvectors were read once).
    Resident,
    /// From the kept columns gathered by a second pass.
    Gathered,
    /// From the block pairs of the enclosing range.
    Pairs,
    /// Every operator is stored in the energy basis (sliced).
    EnergyBasis,
}

/// What the state pass found: the coefficients, the diagonal elements, and the blocks it
/// kept for [`kept_matrices`] (when the budget allowed).
#[derive(Debug)]
pub struct StatePass {
    /// `cₙ = vₙᴴ ψ` for all states.
    pub coefficients: Vec<c64>,
    /// `Aₙₙ` of all states, one vector per operator, in the order of the operators.
    pub diagonals: Vec<Vec<f64>>,
    /// `Vᴴ S` (`[n, q]`) for the probe columns `S` given to [`state_pass`] (`q = 0`
    /// without them).
    pub probe_overlaps: Mat<c64>,
    resident: Vec<(Range<usize>, Matrix)>,
}

impl StatePass {
    /// True when the pass kept the eigenvectors for [`kept_matrices`].
    pub fn kept_eigenvectors(&self) -> bool {
        !self.resident.is_empty()
    }
}

/// The kept-state matrices of a sector's operators.
#[derive(Debug, Clone)]
pub struct Kept {
    /// `A_KK` of each operator, in the order of the operators.
    pub matrices: Vec<HermitianPanels>,
    /// How the matrices of the operators acting on eigenvectors were formed.
    pub path: KeptPath,
}

impl Kept {
    /// Bytes held by the matrices.
    pub fn bytes(&self) -> usize {
        self.matrices.iter().map(|m| m.storage_bytes()).sum()
    }
}

fn is_energy(op: &Operator) -> bool {
    op.form() == crate::data::OperatorForm::EnergyBasis
}

/// Element type of the eigenvector passes: complex when the eigenvectors or an operator
/// acting on them are.
fn pass_field(src: &dyn ColumnSource, ops: &[&Operator]) -> Field {
    let complex = src.field() == Field::Complex
        || ops
            .iter()
            .any(|o| !is_energy(o) && o.field() == Field::Complex);
    if complex {
        Field::Complex
    } else {
        Field::Real
    }
}

/// Panel width for eigenvectors of dimension `dim` and element size `elem`.
fn panel_width(dim: usize, elem: usize, budget: &Budget) -> usize {
    match budget.block {
        Some(b) => b.max(1),
        None => (KEPT_PANEL_BYTES / (dim.max(1) * elem)).max(MIN_PANEL),
    }
}

/// Bytes of one kept-state matrix of `k` states in panels of width `w`.
fn matrix_bytes(k: usize, w: usize, field: Field) -> f64 {
    HermitianPanels::bytes(k, w, field)
}

/// The state pass of the module doc: coefficients `cₙ = vₙᴴ ψ` of the state `psi`
/// (length `src.dim()`), the overlaps `Vᴴ S` with the probe columns `probe` (`[dim, q]`,
/// `q` small; `None` for none) and the diagonal elements of every operator of `ops`, for
/// all states, in one pass through the stream under `budget`; the blocks are kept for
/// [`kept_matrices`] when the resident rule of the module doc allows.
pub fn state_pass(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    (psi, probe): (&[c64], Option<MatRef<'_, c64>>),
    budget: &Budget,
    timing: &mut StageTiming,
) -> Result<StatePass> {
    let (dim, n) = (src.dim(), src.n_states());
    if psi.len() != dim || probe.is_some_and(|p| p.nrows() != dim) {
        return Err(Error::other(format!(
            "the state has length {} but the eigenvectors have dimension {dim}",
            psi.len()
        )));
    }
    check_inputs(src, ops, &(0..n))?;
    let field = pass_field(src, ops);
    let vector_ops: Vec<&Operator> = ops.iter().copied().filter(|o| !is_energy(o)).collect();
    // the resident rule of the module doc (worst case K = n)
    let s = elem_size(field);
    let w = panel_width(dim, s, budget).min(n.max(1));
    let others = ops.len().saturating_sub(1) as f64;
    let resident_bytes =
        (dim * n * s) as f64 + others * matrix_bytes(n, w, field) + ((dim + n) * w * s) as f64;
    let keep = !vector_ops.is_empty() && resident_bytes <= budget.bytes as f64;
    let states = (psi, probe);
    let (coefficients, probe_overlaps, streamed, resident) = match field {
        Field::Real => state_stream::<f64>(src, &vector_ops, states, budget, timing, keep)?,
        Field::Complex => state_stream::<c64>(src, &vector_ops, states, budget, timing, keep)?,
    };
    let mut streamed = streamed.into_iter();
    let mut diagonals = Vec::with_capacity(ops.len());
    for op in ops {
        diagonals.push(match op {
            Operator::Real(OpData::EnergyBasis(m)) => (0..n).map(|i| m[(i, i)]).collect(),
            Operator::Complex(OpData::EnergyBasis(m)) => (0..n).map(|i| m[(i, i)].re).collect(),
            _ => streamed
                .next()
                .ok_or_else(|| Error::other("internal: a diagonal is missing"))?,
        });
    }
    Ok(StatePass {
        coefficients,
        diagonals,
        probe_overlaps,
        resident,
    })
}

/// Eigenvector blocks of the pass's element type, with the states they hold.
type Blocks = Vec<(Range<usize>, Matrix)>;

/// What the state pass streams out: coefficients, probe overlaps, diagonals, kept blocks.
type Streamed = (Vec<c64>, Mat<c64>, Vec<Vec<f64>>, Blocks);

/// The state pass for one element type.
fn state_stream<T: Elem>(
    src: &dyn ColumnSource,
    vector_ops: &[&Operator],
    (psi, probe): (&[c64], Option<MatRef<'_, c64>>),
    budget: &Budget,
    timing: &mut StageTiming,
    keep: bool,
) -> Result<Streamed> {
    let n = src.n_states();
    let prepared = prepare::<T>(vector_ops)?;
    let probe = probe.map(Probe::<T>::new);
    let mut overlaps = Mat::<c64>::zeros(n, probe.as_ref().map_or(0, |p| p.ncols()));
    let mut coefficients = Vec::with_capacity(n);
    let mut kept_blocks: Blocks = Vec::new();
    let par = budget.par;
    let mut consumer = |r: &Range<usize>, v: Mat<T>| -> Result<Option<Mat<T>>> {
        coefficients.extend(adj_vec(v.as_ref(), psi, par));
        if let Some(p) = &probe {
            let g = p.overlaps(v.as_ref(), par);
            copy_into(overlaps.as_mut().subrows_mut(r.start, r.len()), g.as_ref());
        }
        if keep {
            kept_blocks.push((r.clone(), T::wrap(v)));
            Ok(None)
        } else {
            Ok(Some(v))
        }
    };
    let diagonals = diag_stream::<T>(src, &prepared, 0..n, budget, timing, Some(&mut consumer))?;
    if coefficients.len() != n {
        return Err(Error::other(format!(
            "internal: {} coefficients for {n} states",
            coefficients.len()
        )));
    }
    Ok((coefficients, overlaps, diagonals, kept_blocks))
}

/// The kept-state matrices `A_KK` of every operator of `ops` (those given to
/// [`state_pass`], in the same order) for the kept states `kept` (strictly ascending), by
/// the rule of the module doc; the blocks `pass` kept are used up.
pub fn kept_matrices(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    kept: &[usize],
    pass: &mut StatePass,
    budget: &Budget,
    timing: &mut StageTiming,
) -> Result<Kept> {
    let n = src.n_states();
    if kept.windows(2).any(|w| w[0] >= w[1]) || kept.last().is_some_and(|&k| k >= n) {
        return Err(Error::other(
            "kept states must be strictly ascending indices into the eigenbasis",
        ));
    }
    check_inputs(src, ops, &(0..n))?;
    let resident = std::mem::take(&mut pass.resident);
    let field = pass_field(src, ops);
    let vector_ops: Vec<&Operator> = ops.iter().copied().filter(|o| !is_energy(o)).collect();
    let (vector, path) = if vector_ops.is_empty() {
        (Vec::new(), KeptPath::EnergyBasis)
    } else {
        let q = ops.len();
        match field {
            Field::Real => {
                vector_matrices::<f64>(src, &vector_ops, q, kept, resident, budget, timing)?
            }
            Field::Complex => {
                vector_matrices::<c64>(src, &vector_ops, q, kept, resident, budget, timing)?
            }
        }
    };
    let w = panel_width(src.dim(), elem_size(field), budget);
    let mut vector = vector.into_iter();
    let mut matrices = Vec::with_capacity(ops.len());
    for op in ops {
        matrices.push(match op {
            Operator::Real(OpData::EnergyBasis(m)) => {
                slice_energy(m, kept, w, (Field::Real, Matrix::Real))?
            }
            Operator::Complex(OpData::EnergyBasis(m)) => {
                slice_energy(m, kept, w, (Field::Complex, Matrix::Complex))?
            }
            _ => vector
                .next()
                .ok_or_else(|| Error::other("internal: a kept-state matrix is missing"))?,
        });
    }
    Ok(Kept { matrices, path })
}

/// `A_KK[a, b] = A[k_a, k_b]` of an operator stored in the energy basis, in panels of
/// width `w`.
fn slice_energy<T: Copy>(
    m: &Mat<T>,
    kept: &[usize],
    w: usize,
    (field, wrap): (Field, fn(Mat<T>) -> Matrix),
) -> Result<HermitianPanels> {
    let k = kept.len();
    let mut storage = Vec::new();
    let mut panels = Vec::new();
    let mut j0 = 0;
    while j0 < k {
        let j1 = (j0 + w.max(1)).min(k);
        storage.push(wrap(Mat::from_fn(j1, j1 - j0, |a, c| {
            m[(kept[a], kept[j0 + c])]
        })));
        panels.push(Panel {
            cols: j0..j1,
            storage: storage.len() - 1,
            offset: 0,
        });
        j0 = j1;
    }
    HermitianPanels::new(k, field, storage, panels).map_err(internal)
}

fn internal(e: String) -> Error {
    Error::other(format!("internal: kept-state matrix: {e}"))
}

/// The kept-state matrices of the operators acting on eigenvectors, for one element type:
/// the resident, gathered or pairs path of the module doc.
fn vector_matrices<T: Elem>(
    src: &dyn ColumnSource,
    vector_ops: &[&Operator],
    q: usize,
    kept: &[usize],
    resident: Blocks,
    budget: &Budget,
    timing: &mut StageTiming,
) -> Result<(Vec<HermitianPanels>, KeptPath)> {
    let dim = src.dim();
    let k = kept.len();
    let s = std::mem::size_of::<T>();
    let field = T::field();
    let prepared = prepare::<T>(vector_ops)?;
    let w = panel_width(dim, s, budget).min(k.max(1));
    if k == 0 {
        let empty = HermitianPanels::new(0, field, Vec::new(), Vec::new()).map_err(internal)?;
        return Ok((vec![empty; vector_ops.len()], KeptPath::Gathered));
    }
    if !resident.is_empty() {
        let mut blocks = Vec::new();
        for (r, m) in resident {
            let local = kept_in(kept, &r);
            if !local.is_empty() {
                blocks.push(compact(T::from_matrix(m)?, &local));
            }
        }
        let panels = panels_from_blocks(blocks, &prepared, k, w, budget.par)?;
        return Ok((panels, KeptPath::Resident));
    }
    let scratch = ((dim + w) * w * s) as f64;
    let one = matrix_bytes(k, w, field);
    let gathered = (dim * k * s) as f64 + (q - 1) as f64 * one + scratch;
    if gathered <= budget.bytes as f64 {
        let blocks = gather::<T>(src, kept, budget, timing)?;
        let panels = panels_from_blocks(blocks, &prepared, k, w, budget.par)?;
        return Ok((panels, KeptPath::Gathered));
    }
    let results = q as f64 * one;
    if results > budget.bytes as f64 {
        return Err(Error::other(format!(
            "the kept-state matrices ({k}×{k}) of {q} observable(s) need {}, more than the memory budget {}: use a larger --memory or a larger --drop-weight",
            human_bytes(results),
            human_bytes(budget.bytes as f64)
        )));
    }
    let rest = Budget {
        bytes: budget.bytes - results as usize,
        ..*budget
    };
    let panels = from_pairs(src, vector_ops, kept, (field, w), &rest, timing)?;
    Ok((panels, KeptPath::Pairs))
}

/// Rows of `A_KK` formed by one dense product at most: faer packs the left factor into
/// scratch of about its own size, so the products run on blocks of this many rows
/// (`aᴴ b` for 512 columns of `a`), which keeps that scratch near 2 MB at the same rate.
const PRODUCT_ROWS: usize = 512;

/// `dst = aᴴ · b` in blocks of [`PRODUCT_ROWS`] rows.
fn adj_rows_into<T: Elem>(mut dst: MatMut<'_, T>, a: MatRef<'_, T>, b: MatRef<'_, T>, par: Par) {
    let mut r0 = 0;
    while r0 < a.ncols() {
        let r1 = (r0 + PRODUCT_ROWS).min(a.ncols());
        T::adj_product_into(
            dst.as_mut().subrows_mut(r0, r1 - r0),
            a.subcols(r0, r1 - r0),
            b,
            par,
        );
        r0 = r1;
    }
}

/// The diagonal block `V_Jᴴ (A V_J)` into `dst`: its upper triangle by one triangular
/// product, then the adjoint below.
fn diagonal_block<T: Elem>(
    mut dst: MatMut<'_, T>,
    vj: MatRef<'_, T>,
    avj: MatRef<'_, T>,
    par: Par,
) {
    T::upper_adj_into(dst.as_mut(), vj, avj, par);
    for c in 0..dst.ncols() {
        for r in c + 1..dst.nrows() {
            dst[(r, c)] = dst[(c, r)].conj();
        }
    }
}

/// `dst = src` (same shape), column by column.
fn copy_into<T: Copy>(mut dst: MatMut<'_, T>, src: MatRef<'_, T>) {
    for j in 0..dst.ncols().min(src.ncols()) {
        for i in 0..dst.nrows().min(src.nrows()) {
            dst[(i, j)] = src[(i, j)];
        }
    }
}

/// Local column indices (in the block `r`) of the kept states inside `r`.
fn kept_in(kept: &[usize], r: &Range<usize>) -> Vec<usize> {
    let lo = kept.partition_point(|&x| x < r.start);
    let hi = kept.partition_point(|&x| x < r.end);
    kept[lo..hi].iter().map(|&x| x - r.start).collect()
}

/// The columns `cols` (ascending) of `m`: moved to the front in place when they are at
/// least half of it, copied into a matrix of their own otherwise (freeing the rest).
fn compact<T: Elem>(mut m: Mat<T>, cols: &[usize]) -> Mat<T> {
    let dim = m.nrows();
    if cols.len() == m.ncols() {
        return m;
    }
    if 2 * cols.len() < m.ncols() {
        let mut out = Mat::from_fn(dim, cols.len(), |_, _| T::zero());
        for (c, &j) in cols.iter().enumerate() {
            copy_into(out.as_mut().subcols_mut(c, 1), m.as_ref().subcols(j, 1));
        }
        return out;
    }
    for (c, &j) in cols.iter().enumerate() {
        if c != j {
            let (mut left, right) = m.as_mut().split_at_col_mut(j);
            copy_into(
                left.as_mut().subcols_mut(c, 1),
                right.as_ref().subcols(0, 1),
            );
        }
    }
    m.truncate(dim, cols.len());
    m
}

/// The kept columns of the enclosing range, gathered through the stream: each block that
/// holds kept states is read once and its kept columns copied out (the block goes back to
/// the reader).
fn gather<T: Elem>(
    src: &dyn ColumnSource,
    kept: &[usize],
    budget: &Budget,
    timing: &mut StageTiming,
) -> Result<Vec<Mat<T>>> {
    let (Some(&first), Some(&last)) = (kept.first(), kept.last()) else {
        return Ok(Vec::new());
    };
    let dim = src.dim();
    let s = std::mem::size_of::<T>();
    let b = match budget.block {
        Some(b) => b.max(1),
        None => (DIAG_BLOCK_BYTES / (dim.max(1) * s)).max(1),
    };
    let reads: Vec<Range<usize>> = blocks(
        &(first..last + 1),
        b,
        src.chunk_states().filter(|_| budget.block.is_none()),
    )
    .into_iter()
    .filter(|r| !kept_in(kept, r).is_empty())
    .collect();
    with_prefetch::<T, _>(src, reads.clone(), timing, |fetch| {
        let mut out = Vec::with_capacity(reads.len());
        for r in &reads {
            let v = fetch.next()?;
            let cols = kept_in(kept, r);
            let mut g = Mat::from_fn(dim, cols.len(), |_, _| T::zero());
            for (c, &j) in cols.iter().enumerate() {
                copy_into(g.as_mut().subcols_mut(c, 1), v.as_ref().subcols(j, 1));
            }
            fetch.recycle(v);
            out.push(g);
        }
        Ok(out)
    })
}

/// `A_KK` of every operator from the kept eigenvectors `blocks` (columns in `K` order),
/// panel by panel from the last (see the module doc): the first operator's panels are
/// written over the eigenvectors (when `dim ≥ K`), the others get storage of their own.
/// Scratch: one product `A V_J` (`dim × w`) and one diagonal block (`w × w`).
fn panels_from_blocks<T: Elem>(
    mut blocks: Vec<Mat<T>>,
    ops: &[Cow<'_, OpData<T>>],
    k: usize,
    w: usize,
    par: Par,
) -> Result<Vec<HermitianPanels>> {
    let field = T::field();
    let dim = blocks.first().map_or(0, |b| b.nrows());
    let mut starts = Vec::with_capacity(blocks.len());
    let mut total = 0;
    for b in &blocks {
        starts.push(total);
        total += b.ncols();
    }
    if total != k {
        return Err(internal(format!(
            "{total} kept eigenvectors for {k} states"
        )));
    }
    // panels: (block, first local column, columns in K order)
    let mut layout: Vec<(usize, usize, Range<usize>)> = Vec::new();
    for (i, b) in blocks.iter().enumerate() {
        let mut c0 = 0;
        while c0 < b.ncols() {
            let c1 = (c0 + w).min(b.ncols());
            layout.push((i, c0, starts[i] + c0..starts[i] + c1));
            c0 = c1;
        }
    }
    let in_place = dim >= k;
    // own storage: per operator (all but the first when in place), one matrix per panel
    let own_from = usize::from(in_place);
    let mut own: Vec<Vec<Mat<T>>> = (0..ops.len())
        .map(|o| {
            if o < own_from {
                Vec::new()
            } else {
                layout
                    .iter()
                    .map(|(_, _, j)| Mat::from_fn(j.end, j.len(), |_, _| T::zero()))
                    .collect()
            }
        })
        .collect();
    let mut buf = vec![T::zero(); dim * w];
    let mut tile = Mat::from_fn(w, w, |_, _| T::zero());
    for (p, (i, c0, j)) in layout.iter().enumerate().rev() {
        let (i, c0, pw) = (*i, *c0, j.len());
        // the operators with storage of their own first: they need V_J intact
        for (o, op) in ops.iter().enumerate().skip(own_from) {
            let vj = blocks[i].as_ref().subcols(c0, pw);
            apply_into(op.as_ref(), vj, &mut buf, par);
            let avj = MatRef::from_column_major_slice(&buf[..dim * pw], dim, pw);
            let mut dst = own[o][p].as_mut();
            for r in 0..i {
                let rows = dst.as_mut().subrows_mut(starts[r], blocks[r].ncols());
                adj_rows_into(rows, blocks[r].as_ref(), avj, par);
            }
            if c0 > 0 {
                let rows = dst.as_mut().subrows_mut(starts[i], c0);
                adj_rows_into(rows, blocks[i].as_ref().subcols(0, c0), avj, par);
            }
            diagonal_block(dst.subrows_mut(j.start, pw), vj, avj, par);
        }
        if !in_place {
            continue;
        }
        // the first operator in place: A V_J and the diagonal block need V_J; after them
        // the eigenvectors of this panel are not needed any more (the panels still to come
        // use the columns before it only), and the rows above the diagonal block go straight
        // into their storage
        let (before, rest) = blocks.split_at_mut(i);
        let (left, mut right) = rest[0].as_mut().split_at_col_mut(c0);
        let vj = right.as_ref().subcols(0, pw);
        apply_into(ops[0].as_ref(), vj, &mut buf, par);
        let avj = MatRef::from_column_major_slice(&buf[..dim * pw], dim, pw);
        let mut tile = tile.as_mut().submatrix_mut(0, 0, pw, pw);
        diagonal_block(tile.as_mut(), vj, avj, par);
        let mut dst = right.as_mut().submatrix_mut(0, 0, j.end, pw);
        for (r, b) in before.iter().enumerate() {
            let rows = dst.as_mut().subrows_mut(starts[r], b.ncols());
            adj_rows_into(rows, b.as_ref(), avj, par);
        }
        if c0 > 0 {
            let rows = dst.as_mut().subrows_mut(starts[i], c0);
            adj_rows_into(rows, left.as_ref(), avj, par);
        }
        copy_into(dst.subrows_mut(j.start, pw), tile.as_ref());
    }
    let mut out = Vec::with_capacity(ops.len());
    for (o, own) in own.into_iter().enumerate() {
        let (storage, panels): (Vec<Matrix>, Vec<Panel>) = if o < own_from {
            let panels = layout
                .iter()
                .map(|(i, c0, j)| Panel {
                    cols: j.clone(),
                    storage: *i,
                    offset: *c0,
                })
                .collect();
            (
                std::mem::take(&mut blocks)
                    .into_iter()
                    .map(T::wrap)
                    .collect(),
                panels,
            )
        } else {
            let panels = layout
                .iter()
                .enumerate()
                .map(|(p, (_, _, j))| Panel {
                    cols: j.clone(),
                    storage: p,
                    offset: 0,
                })
                .collect();
            (own.into_iter().map(T::wrap).collect(), panels)
        };
        out.push(HermitianPanels::new(k, field, storage, panels).map_err(internal)?);
    }
    Ok(out)
}

/// `A_KK` of every operator from the block pairs of the enclosing range (the pairs path of
/// the module doc), into panels of width `w` allocated before the pass (allocations
/// between the block pairs would scatter them over the heap): the kept entry `(a, b)` of a
/// block pair goes to the panel of column `b` when that panel stores row `a` (the others
/// lie below a diagonal block, and their mirror images come in the same pair).
fn from_pairs(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    kept: &[usize],
    (field, w): (Field, usize),
    budget: &Budget,
    timing: &mut StageTiming,
) -> Result<Vec<HermitianPanels>> {
    let k = kept.len();
    let (Some(&first), Some(&last)) = (kept.first(), kept.last()) else {
        return Err(internal("no kept states".into()));
    };
    let w = w.max(1);
    let layout: Vec<Range<usize>> = (0..k.div_ceil(w))
        .map(|p| p * w..((p + 1) * w).min(k))
        .collect();
    let mut storage: Vec<Vec<Matrix>> = ops
        .iter()
        .map(|_| {
            layout
                .iter()
                .map(|j| match field {
                    Field::Real => Matrix::Real(Mat::zeros(j.end, j.len())),
                    Field::Complex => Matrix::Complex(Mat::zeros(j.end, j.len())),
                })
                .collect()
        })
        .collect();
    let pos = |x: usize| kept.partition_point(|&y| y < x);
    for_each_block_timed(
        src,
        ops,
        first..last + 1,
        budget,
        timing,
        |blk: &BlockPair| {
            let (c0, c1) = (pos(blk.cols.start), pos(blk.cols.end));
            let (r0, r1) = (pos(blk.rows.start), pos(blk.rows.end));
            for (st, m) in storage.iter_mut().zip(&blk.elements) {
                for (pb, &kb) in (c0..c1).zip(&kept[c0..c1]) {
                    let p = pb / w;
                    let (end, col) = (layout[p].end, pb - layout[p].start);
                    let jj = kb - blk.cols.start;
                    let start = layout[p].start;
                    for (pa, &ka) in (r0..r1.min(end)).zip(&kept[r0..r1]) {
                        let i = ka - blk.rows.start;
                        // an entry above the diagonal inside the panel's diagonal block: its
                        // mirror image there may come from no block pair (the rows and columns
                        // lie in different blocks), so it is written too
                        let mirror = (pa >= start && pa < pb).then_some(pa - start);
                        match (&mut st[p], m) {
                            (Matrix::Real(d), Matrix::Real(x)) => {
                                d[(pa, col)] = x[(i, jj)];
                                if let Some(c) = mirror {
                                    d[(pb, c)] = x[(i, jj)];
                                }
                            }
                            (Matrix::Complex(d), Matrix::Complex(x)) => {
                                d[(pa, col)] = x[(i, jj)];
                                if let Some(c) = mirror {
                                    d[(pb, c)] = x[(i, jj)].conj();
                                }
                            }
                            _ => return Err(internal("element type changed".into())),
                        }
                    }
                }
            }
            Ok(())
        },
    )?;
    let panels: Vec<Panel> = layout
        .iter()
        .enumerate()
        .map(|(p, j)| Panel {
            cols: j.clone(),
            storage: p,
            offset: 0,
        })
        .collect();
    storage
        .into_iter()
        .map(|st| HermitianPanels::new(k, field, st, panels.clone()).map_err(internal))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Csr;

    /// Brute-force reference `V_Kᴴ A V_K` with dense matrices (test only).
    fn reference(v: &Mat<c64>, a: &Mat<c64>, kept: &[usize]) -> Mat<c64> {
        let vk = Mat::from_fn(v.nrows(), kept.len(), |i, j| v[(i, kept[j])]);
        vk.adjoint() * a * &vk
    }

    /// `A_KK` of each operator by the state pass and [`kept_matrices`], with the path taken.
    fn kept_of(
        src: &dyn ColumnSource,
        ops: &[&Operator],
        kept: &[usize],
        budget: &Budget,
    ) -> Result<(Vec<HermitianPanels>, KeptPath)> {
        let psi = vec![c64::new(1.0, 0.0); src.dim()];
        let mut t = StageTiming::default();
        let mut pass = state_pass(src, ops, (&psi, None), budget, &mut t)?;
        let kept = kept_matrices(src, ops, kept, &mut pass, budget, &mut t)?;
        Ok((kept.matrices, kept.path))
    }

    #[test]
    fn four_forms_agree() {
        // the same operator in the diagonal/dense/CSR/energy-basis forms gives the same
        // A_KK and the same diagonal (exact identity, linear algebra)
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
        let psi: Vec<c64> = (0..12).map(|i| c64::new(i as f64, 1.0)).collect();
        for op in &forms {
            let (a, _) = kept_of(&src, &[op], &kept, &Budget::default()).unwrap();
            for (x, &kx) in kept.iter().enumerate() {
                for (y, &ky) in kept.iter().enumerate() {
                    assert!((a[0].get_c(x, y).re - energy[(kx, ky)]).abs() < 1e-12);
                }
            }
            let pass = state_pass(
                &src,
                &[op],
                (&psi, None),
                &Budget::default(),
                &mut StageTiming::default(),
            )
            .unwrap();
            for i in 0..12 {
                assert!((pass.diagonals[0][i] - energy[(i, i)]).abs() < 1e-12);
            }
        }
        // complex eigenvectors with a real operator take the promoted path
        let srcc = Matrix::Complex(Matrix::Real(v).to_complex());
        let (a, _) = kept_of(&srcc, &[&forms[2]], &kept, &Budget::default()).unwrap();
        assert!((a[0].get_c(1, 2).re - energy[(4, 5)]).abs() < 1e-12);
    }

    #[test]
    fn projector_paths_agree_with_a_dense_reference() {
        // A_KK by the resident, gathered and pairs paths, in place or not, with panels
        // narrower than the blocks, equals the dense product V_Kᴴ A V_K (exact identity,
        // linear algebra); the coefficients are V^H ψ (definition)
        let mut rng = crate::model::rmt::rng(5);
        let h = crate::model::rmt::gue(20, &mut rng);
        let (_, v) = crate::linalg::eigh_complex(h.as_ref()).unwrap();
        let a = crate::model::rmt::goe(20, &mut rng);
        let dense = Operator::Real(OpData::Dense(a.clone()));
        let cd = crate::model::rmt::gue(20, &mut rng);
        let cdense = Operator::Complex(OpData::Dense(cd.clone()));
        let ad = Mat::from_fn(20, 20, |i, j| c64::new(a[(i, j)], 0.0));
        let src = Matrix::Complex(v.clone());
        let with = |bytes: usize, block: usize| Budget {
            block: Some(block),
            ..Budget::new(bytes)
        };
        // complex, dim 20, two operators: V = 6400 bytes; V_K of 5 states 1600 bytes,
        // one 5×5 matrix at most 480 bytes
        for (kept, budget, path) in [
            (vec![0, 3, 4, 9, 17], with(1 << 30, 3), KeptPath::Resident),
            (vec![0, 3, 4, 9, 17], with(4000, 3), KeptPath::Gathered),
            (vec![2, 9, 13], with(1200, 4), KeptPath::Pairs),
            (vec![5, 6, 7, 8], with(1 << 30, 2), KeptPath::Resident),
        ] {
            let (got, how) = kept_of(&src, &[&dense, &cdense], &kept, &budget).unwrap();
            assert_eq!(how, path);
            for (m, full) in got.iter().zip([&ad, &cd]) {
                let want = reference(&v, full, &kept);
                assert_eq!(m.dim(), kept.len());
                for x in 0..kept.len() {
                    for y in 0..kept.len() {
                        assert!((m.get_c(x, y) - want[(x, y)]).norm() < 1e-12);
                    }
                }
            }
        }
        let psi: Vec<c64> = (0..20).map(|i| c64::new(0.1 * i as f64, -0.3)).collect();
        let pass = state_pass(
            &src,
            &[&dense],
            (&psi, None),
            &with(1 << 30, 6),
            &mut StageTiming::default(),
        )
        .unwrap();
        for n in 0..20 {
            let want: c64 = (0..20).map(|i| v[(i, n)].conj() * psi[i]).sum();
            assert!((pass.coefficients[n] - want).norm() < 1e-12);
        }
        let energy = Operator::Complex(OpData::EnergyBasis(reference(
            &v,
            &cd,
            &(0..20).collect::<Vec<_>>(),
        )));
        let (e, how) = kept_of(&src, &[&energy], &[1, 7], &Budget::default()).unwrap();
        assert_eq!(how, KeptPath::EnergyBasis);
        let want = reference(&v, &cd, &[1, 7]);
        assert!((e[0].get_c(0, 1) - want[(0, 1)]).norm() < 1e-12);
        assert!(kept_of(&src, &[&dense], &[3, 2], &Budget::default()).is_err());
        assert_eq!(
            kept_of(&src, &[&dense], &[], &Budget::default()).unwrap().0[0].dim(),
            0
        );
        // the kept-state matrices themselves over the budget: one clear error
        let err = kept_of(
            &src,
            &[&dense],
            &(0..20).collect::<Vec<_>>(),
            &Budget::new(2000),
        )
        .unwrap_err()
        .to_string();
        assert!(err.contains("memory budget"), "{err}");
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
        // coefficients, diagonals and A_KK of several operators from shared passes are the
        // per-operator results (the same arithmetic; the blocks may be cut differently, so up
        // to rounding: exact identity), and the resident path reads every eigenvector once
        let mut rng = crate::model::rmt::rng(8);
        let h = crate::model::rmt::gue(20, &mut rng);
        let (_, v) = crate::linalg::eigh_complex(h.as_ref()).unwrap();
        let a = crate::model::rmt::goe(20, &mut rng);
        let cd = crate::model::rmt::gue(20, &mut rng);
        let d: Vec<f64> = (0..20).map(|i| (i % 4) as f64 - 1.5).collect();
        let src = Counting {
            m: Matrix::Complex(v.clone()),
            columns: 0.into(),
        };
        let energy = Operator::Complex(OpData::EnergyBasis(reference(
            &v,
            &cd,
            &(0..20).collect::<Vec<_>>(),
        )));
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
        let kept = vec![0, 3, 4, 9, 17];
        let close = |a: c64, b: c64| (a - b).norm() <= 1e-14 * (1.0 + a.norm());
        for budget in [Budget::new(1 << 30), Budget::new(12_000)] {
            src.columns.store(0, std::sync::atomic::Ordering::Relaxed);
            let mut t = StageTiming::default();
            let mut pass = state_pass(&src, &refs, (&psi, None), &budget, &mut t).unwrap();
            let all = kept_matrices(&src, &refs, &kept, &mut pass, &budget, &mut t).unwrap();
            let reads = src.columns.load(std::sync::atomic::Ordering::Relaxed);
            match all.path {
                // one pass: every column read once
                KeptPath::Resident => assert_eq!(reads, 20),
                // and the blocks holding kept states (0..18) once more
                KeptPath::Gathered => assert_eq!(reads, 20 + 18),
                p => panic!("unexpected path {p:?}"),
            }
            for (o, op) in refs.iter().enumerate() {
                let mut t = StageTiming::default();
                let mut one = state_pass(&src.m, &[op], (&psi, None), &budget, &mut t).unwrap();
                let single =
                    kept_matrices(&src.m, &[op], &kept, &mut one, &budget, &mut t).unwrap();
                for (a, b) in one.coefficients.iter().zip(&pass.coefficients) {
                    assert!(close(*a, *b));
                }
                for (a, b) in one.diagonals[0].iter().zip(&pass.diagonals[o]) {
                    assert!((a - b).abs() <= 1e-14 * (1.0 + a.abs()));
                }
                for x in 0..kept.len() {
                    for y in 0..kept.len() {
                        let (a, b) = (single.matrices[0].get_c(x, y), all.matrices[o].get_c(x, y));
                        assert!(close(a, b), "{o}: {a} vs {b}");
                    }
                }
            }
        }
    }

    #[test]
    fn shape_mismatch_is_an_error() {
        // clear error instead of a panic (common practice, no source)
        let src = Matrix::Real(Mat::identity(4, 4));
        let op = Operator::Real(OpData::Diagonal(vec![1.0; 5]));
        assert!(kept_of(&src, &[&op], &[0, 1], &Budget::default()).is_err());
        let ok = Operator::Real(OpData::Diagonal(vec![1.0; 4]));
        let mut t = StageTiming::default();
        assert!(state_pass(
            &src,
            &[&ok],
            (&[c64::new(1.0, 0.0); 3], None),
            &Budget::default(),
            &mut t
        )
        .is_err());
    }
}
