//! Diagonal elements `Aₙₙ = Σ_ij conj(V_in) A_ij V_jn` of a range of states, streamed in
//! column blocks (no `W × W` matrix), and the policy that decides which states' `Aₙₙ` the
//! thermal predictions use.
//!
//! Cost per state: `O(nnz)` for diagonal and CSR operators (`⟨n|A|n⟩` is formed column by
//! column without storing `A V`), `2·dim²` flops for a dense one. Diagonal and CSR passes
//! gain nothing from wide blocks, so their blocks are kept near [`DIAG_BLOCK_BYTES`].
//!
//! The same pass serves a caller that needs every block once more, e.g. for the
//! coefficients `V_Bᴴψ` of a state ([`super::kept`]): each block goes to its consumer after
//! its diagonal elements, and comes back to the reader for refilling unless the consumer
//! keeps it.

use super::budget::{block_size, Budget};
use super::kernels::{apply_into, check_inputs, expectations, prepare, Elem, GROUP};
use super::result_field;
use super::stream::{blocks, with_prefetch, StageTiming};
use crate::data::{c64, ColumnSource, Field, OpData, Operator};
use crate::error::{Error, Result};
use faer::Mat;
use rayon::prelude::*;
use serde::Serialize;
use std::borrow::Cow;
use std::ops::Range;

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
    budget: &Budget,
) -> Result<Vec<Vec<f64>>> {
    project_diagonal_timed(src, ops, range, budget, &mut StageTiming::default())
}

/// [`project_diagonal`], adding the seconds spent reading and projecting to `timing`.
pub fn project_diagonal_timed(
    src: &dyn ColumnSource,
    ops: &[&Operator],
    range: Range<usize>,
    budget: &Budget,
    timing: &mut StageTiming,
) -> Result<Vec<Vec<f64>>> {
    check_inputs(src, ops, &range)?;
    if ops.is_empty() {
        return Ok(Vec::new());
    }
    match result_field(src, ops) {
        Field::Real => diag_stream::<f64>(src, &prepare::<f64>(ops)?, range, budget, timing, None),
        Field::Complex => {
            diag_stream::<c64>(src, &prepare::<c64>(ops)?, range, budget, timing, None)
        }
    }
}

/// A consumer of the eigenvector blocks of a diagonal pass ([`diag_stream`]): it gets each
/// block (the states `range`, `dim × range.len()`) after the diagonal elements, and returns
/// it to be refilled by the reader, or `None` when it keeps it.
pub(crate) type BlockConsumer<'a, T> =
    &'a mut dyn FnMut(&Range<usize>, Mat<T>) -> Result<Option<Mat<T>>>;

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

/// Eigenvector bytes per block of the diagonal pass ([`project_diagonal`]) when no
/// block size is forced: 64 MiB.
pub const DIAG_BLOCK_BYTES: usize = 64 << 20;

/// The diagonal pass: `A_nn` of every operator for the states `range`, one block of
/// eigenvectors at a time, each block then handed to `consumer` when one is given (the
/// eigenvectors are read even when no operator needs them). The block widths follow the
/// rule of the module doc.
pub(crate) fn diag_stream<T: Elem>(
    src: &dyn ColumnSource,
    ops: &[Cow<'_, OpData<T>>],
    range: Range<usize>,
    budget: &Budget,
    timing: &mut StageTiming,
    mut consumer: Option<BlockConsumer<'_, T>>,
) -> Result<Vec<Vec<f64>>> {
    let mut out: Vec<Vec<f64>> = ops
        .iter()
        .map(|_| Vec::with_capacity(range.len()))
        .collect();
    let needs_vectors = consumer.is_some()
        || ops
            .iter()
            .any(|o| !matches!(o.as_ref(), OpData::EnergyBasis(_)));
    let dim = if needs_vectors { src.dim() } else { 0 };
    // only dense operators need a product buffer
    let n_dense = ops
        .iter()
        .filter(|o| matches!(o.as_ref(), OpData::Dense(_)))
        .count();
    let elem = std::mem::size_of::<T>();
    let mut b = block_size(range.len(), n_dense, dim, elem, budget);
    if budget.block.is_none() && n_dense == 0 {
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
        src.chunk_states().filter(|_| budget.block.is_none()),
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
    let mut sink_s = 0.0;
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
                        apply_into(op.as_ref(), v.as_ref(), &mut buf, budget.par);
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
            let t = std::time::Instant::now();
            let back = match (v, consumer.as_mut()) {
                (Some(m), Some(c)) => c(r, m)?,
                (v, _) => v,
            };
            sink_s += t.elapsed().as_secs_f64();
            if let Some(m) = back {
                fetch.recycle(m);
            }
            pb.inc(1);
        }
        Ok(())
    })?;
    timing.project_seconds += project_s;
    timing.sink_seconds += sink_s;
    pb.finish_and_clear();
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::Mat;

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
}
