//! The one stream of eigenvector blocks: every pass over the eigenvectors reads through it.
//!
//! A pass names the column ranges it needs, in order ([`blocks`] cuts a range of states
//! into blocks on chunk boundaries); [`with_prefetch`] hands them out one by one, read
//! ahead by one block on a reader thread while the caller multiplies the current one.
//! Consumed blocks go back to the reader ([`Fetch::recycle`]), which refills them in
//! place, so a long pass touches fresh memory for a few blocks only (first-touch page
//! faults cost as much as the read itself on some virtual machines). The reader's own
//! copies run on a one-thread rayon pool: on the global pool they would wait behind the
//! products they are meant to overlap.

use super::kernels::Elem;
use crate::data::ColumnSource;
use crate::error::{Error, Result};
use faer::Mat;
use serde::Serialize;
use std::ops::Range;

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
pub(crate) fn blocks(range: &Range<usize>, b: usize, chunk: Option<usize>) -> Vec<Range<usize>> {
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
pub(crate) struct Fetch<T> {
    rx: std::sync::mpsc::Receiver<Result<Mat<T>>>,
    back: std::sync::mpsc::Sender<Mat<T>>,
    wait: f64,
}

impl<T: Elem> Fetch<T> {
    /// The next block (waiting for the reader when it is not ready yet).
    pub(crate) fn next(&mut self) -> Result<Mat<T>> {
        crate::progress::check_interrupt()?;
        let t = std::time::Instant::now();
        let m = self
            .rx
            .recv()
            .map_err(|_| Error::other("internal: the eigenvector reader stopped early"))?;
        self.wait += t.elapsed().as_secs_f64();
        m
    }

    /// Gives a consumed block back to the reader for reuse.
    pub(crate) fn recycle(&self, m: Mat<T>) {
        // the reader may have finished; then the block is simply dropped
        let _ = self.back.send(m);
    }
}

/// Runs `body` with a [`Fetch`] that returns the blocks `reads` in order, read ahead by
/// one block on a separate thread (a rendezvous channel: at most one finished block
/// waits while the consumer works). Accumulates the waiting and reading times.
pub(crate) fn with_prefetch<T: Elem, R>(
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

#[cfg(test)]
mod tests {
    use super::*;

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
}
