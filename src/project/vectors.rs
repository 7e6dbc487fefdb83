//! A pass over the eigenvectors themselves (no operator): blocks of columns of a range of
//! states, read ahead through [`super::stream`] under the budget, handed to a sink (the
//! entanglement analysis reshapes each column).
//!
//! Block width: the largest `b` with `3·dim·b·s ≤ budget` (one block in use, one being
//! read, one waiting to be reused; `s` the element size), at least one state.

use super::kernels::Elem;
use super::stream::{blocks, with_prefetch, StageTiming};
use super::Budget;
use crate::data::{c64, ColumnSource, Field, Matrix};
use crate::error::Result;
use std::ops::Range;

/// Streams the eigenvectors of the states `range` in column blocks; `sink(first, block)`
/// gets the index of the block's first state and the `dim × b` block.
pub fn for_each_vector_block(
    src: &dyn ColumnSource,
    range: Range<usize>,
    budget: &Budget,
    timing: &mut StageTiming,
    mut sink: impl FnMut(usize, &Matrix) -> Result<()>,
) -> Result<()> {
    match src.field() {
        Field::Real => stream::<f64>(src, range, budget, timing, &mut sink),
        Field::Complex => stream::<c64>(src, range, budget, timing, &mut sink),
    }
}

fn stream<T: Elem>(
    src: &dyn ColumnSource,
    range: Range<usize>,
    budget: &Budget,
    timing: &mut StageTiming,
    sink: &mut impl FnMut(usize, &Matrix) -> Result<()>,
) -> Result<()> {
    if range.is_empty() {
        return Ok(());
    }
    let per_state = 3 * src.dim().max(1) * std::mem::size_of::<T>();
    let b = budget
        .block
        .unwrap_or_else(|| (budget.bytes / per_state).max(1));
    let bl = blocks(
        &range,
        b,
        src.chunk_states().filter(|_| budget.block.is_none()),
    );
    timing.blocks = bl.len();
    timing.block_states = bl.iter().map(|r| r.len()).max().unwrap_or(0);
    let starts: Vec<usize> = bl.iter().map(|r| r.start).collect();
    let mut sink_s = 0.0;
    with_prefetch::<T, ()>(src, bl, timing, |fetch| {
        for s in starts {
            let m = T::wrap(fetch.next()?);
            let t = std::time::Instant::now();
            sink(s, &m)?;
            sink_s += t.elapsed().as_secs_f64();
            fetch.recycle(T::from_matrix(m)?);
        }
        Ok(())
    })?;
    timing.sink_seconds += sink_s;
    Ok(())
}
