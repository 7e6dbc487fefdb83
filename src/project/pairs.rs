//! Block pairs of matrix elements `A_IJ = V_Iᴴ (A V_J)` over a window of states.
//!
//! The window is cut into column blocks `b₁ … b_k` under the budget
//! ([`super::budget::block_size`]). For each block `J` the products `A V_J` of all
//! operators are formed once, then `I = J` and the blocks `I < J` are streamed and
//! `A_IJ` is handed to a sink (the diagonal pair first: it needs no read, so the next
//! block is fetched meanwhile). Operators are Hermitian, so the blocks `I > J` are the
//! adjoints `A_JI = A_IJᴴ` and are not computed: the sink sees every unordered pair of
//! states exactly once (inside a diagonal block it sees the full square). Several
//! operators share one pass over the eigenvectors.

use super::budget::{block_size, human_bytes, Budget};
use super::kernels::{apply_into, check_inputs, elem_size, prepare, Elem};
use super::stream::{blocks, with_prefetch, StageTiming};
use super::{result_field, BlockPair};
use crate::data::{c64, ColumnSource, Field, Matrix, OpData, Operator};
use crate::error::{Error, Result};
use faer::{Mat, MatRef};
use std::borrow::Cow;
use std::ops::Range;

/// Streams the matrix elements `⟨n|A_k|m⟩` of the states `range` (indices in the
/// ascending spectrum) for all operators `ops`, block pair by block pair
/// (`A_IJ = V_Iᴴ (A V_J)`, blocks `I ≤ J`, see [`BlockPair`]), calling `sink` on each.
/// The operators are assumed Hermitian (the blocks `I > J` are their adjoints).
pub fn for_each_block(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    budget: &Budget,
    sink: impl FnMut(&BlockPair) -> Result<()>,
) -> Result<()> {
    for_each_block_timed(src, ops, range, budget, &mut StageTiming::default(), sink)
}

/// [`for_each_block`], adding the seconds spent reading, projecting and in the sink
/// to `timing` (the reading of the next block overlaps the products of the current one).
pub fn for_each_block_timed(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    budget: &Budget,
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
            pair_stream::<f64>(src, &prepared, range, budget, timing, &mut sink)
        }
        Field::Complex => {
            let prepared = prepare::<c64>(ops)?;
            pair_stream::<c64>(src, &prepared, range, budget, timing, &mut sink)
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
    budget: &Budget,
) -> Result<Vec<Matrix>> {
    check_inputs(src, ops, &range)?;
    let w = range.len();
    let field = result_field(src, ops);
    let elem = elem_size(field);
    let need = (ops.len() * w * w * elem) as f64;
    if budget.block.is_none() && need > budget.bytes as f64 {
        return Err(Error::other(format!(
            "the {w}×{w} matrix elements of {} observable(s) need {}, more than the memory budget {}: use a smaller window or a larger --memory",
            ops.len(),
            human_bytes(need),
            human_bytes(budget.bytes as f64)
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
    for_each_block(src, ops, range, budget, |blk| {
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

/// The block-pair stream of [`for_each_block`] for one scalar type.
fn pair_stream<T: Elem>(
    src: &dyn ColumnSource,
    ops: &[Cow<'_, OpData<T>>],
    range: Range<usize>,
    budget: &Budget,
    timing: &mut StageTiming,
    sink: &mut impl FnMut(&BlockPair) -> Result<()>,
) -> Result<()> {
    let needs_vectors = ops
        .iter()
        .any(|o| !matches!(o.as_ref(), OpData::EnergyBasis(_)));
    let dim = if needs_vectors { src.dim() } else { 0 };
    let b = block_size(
        range.len(),
        ops.len(),
        dim,
        std::mem::size_of::<T>(),
        budget,
    );
    let bl = blocks(
        &range,
        b,
        src.chunk_states().filter(|_| budget.block.is_none()),
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
                    apply_into(op.as_ref(), vj.as_ref(), buf, budget.par);
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
                                T::adj_product_hermitian(vi.as_ref(), bm, budget.par)
                            } else {
                                T::adj_product(vi.as_ref(), bm, budget.par)
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
