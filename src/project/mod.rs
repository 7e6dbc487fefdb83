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
//! **Products.** Dense: `faer::linalg::matmul::matmul` with the budget's parallelism into the
//! preallocated buffers. CSR: `y = A x` row by row for each eigenvector column,
//! parallel over groups of columns, with no allocation and no transposition (a column
//! of `dim` entries stays in cache while the CSR arrays stream). Diagonal elements of
//! diagonal and CSR operators are formed as `⟨v|A|v⟩` column by column without storing
//! `A V`.
//!
//! **Files.** [`budget`]: the memory budget and block widths; [`kernels`]: `A·V` per
//! operator form and the shape checks; [`stream`]: the prefetching reader every pass goes
//! through; [`pairs`]: block pairs and whole windows; [`diagonal`]: diagonal elements and
//! the prediction policy; [`kept`]: the passes of a quench (a state's coefficients with the
//! diagonal elements, and the operators over the kept states); [`vectors`]: the eigenvectors
//! themselves in column blocks (entanglement); [`chebyshev`]: Chebyshev moments of a stored
//! Hamiltonian for the kernel polynomial method (no eigenvectors read).

pub mod budget;
pub mod chebyshev;
pub mod diagonal;
pub mod kept;
mod kernels;
pub mod pairs;
pub mod stream;
pub mod vectors;

pub use budget::{block_size, human_bytes, parse_memory, Budget};
pub use diagonal::{
    auto_prediction_states, project_diagonal, project_diagonal_timed, PredictionStates,
    AUTO_ALL_STATES_MAX_FLOPS, DIAG_BLOCK_BYTES,
};
pub use kept::{kept_matrices, state_pass, Kept, KeptPath, StatePass};
pub use pairs::{for_each_block, for_each_block_timed, project_window};
pub use stream::StageTiming;
pub use vectors::for_each_vector_block;

use crate::data::{ColumnSource, Field, Matrix, Operator};
use crate::error::{Error, Result};
use std::ops::Range;

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

/// Checks that `op` can act on the eigenvectors of `src`: `dim × dim` for an operator in
/// the computational basis, at least `n × n` for one in the energy basis, and a consistent
/// CSR structure ([`crate::data::Csr::check`]).
pub fn check_operator(src: &dyn ColumnSource, op: &Operator) -> Result<()> {
    kernels::check_inputs(src, &[op], &(0..0))
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::{Csr, OpData};
    use faer::Mat;

    #[test]
    fn shape_errors_are_reported() {
        // bad input gives an error, not a panic (common practice, no source)
        let v = Matrix::Real(Mat::identity(4, 4));
        let op = Operator::Real(OpData::Diagonal(vec![1.0; 3]));
        assert!(project_window(&v, &[&op], 0..4, &Budget::new(1 << 20)).is_err());
        let ok = Operator::Real(OpData::Diagonal(vec![1.0; 4]));
        assert!(project_window(&v, &[&ok], 0..5, &Budget::new(1 << 20)).is_err());
        let bad_csr = Operator::Real(OpData::Csr(Csr {
            nrows: 4,
            ncols: 4,
            indptr: vec![0, 1, 1, 1, 1],
            indices: vec![7],
            data: vec![1.0],
        }));
        assert!(project_diagonal(&v, &[&bad_csr], 0..4, &Budget::new(1 << 20)).is_err());
    }
}
