//! Plain data passed between the stages: matrices, vectors, operators, spectra.
//!
//! Everything here is real (`f64`) or complex ([`c64`]); element types read from
//! files (float32, complex float32) are promoted on reading. Matrices are faer
//! column-major matrices, so that column `j` of an eigenvector block is one
//! contiguous eigenvector.

pub use faer::c64;
use faer::{Mat, MatRef};
use serde::{Deserialize, Serialize};
use std::ops::Range;

/// Real or complex element type of a dataset.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Field {
    /// Real numbers (`float32` or `float64` in the file).
    Real,
    /// Complex numbers (compound `{r, i}` of two floats in the file).
    Complex,
}

impl std::fmt::Display for Field {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Field::Real => "real",
            Field::Complex => "complex",
        })
    }
}

/// The random-matrix symmetry class of a sector: the reference ensemble of its level
/// statistics and matrix elements. It is a property of the physics (an antiunitary symmetry
/// such as time reversal, or reflection times time reversal in a momentum sector), never
/// of how the numbers are stored: a real problem stored as complex, or with each
/// eigenvector multiplied by a phase, stays orthogonal.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum SymmetryClass {
    /// Orthogonal class: GOE references, ⟨r̃⟩ = 0.5307, Γ = π/2, diagonal/off-diagonal ratio 2.
    Orthogonal,
    /// Unitary class: GUE references, ⟨r̃⟩ = 0.5996, Γ = 4/π, ratio 1.
    Unitary,
}

impl SymmetryClass {
    /// Parses `orthogonal` or `unitary`.
    pub fn parse(s: &str) -> Option<SymmetryClass> {
        match s.trim().to_ascii_lowercase().as_str() {
            "orthogonal" => Some(SymmetryClass::Orthogonal),
            "unitary" => Some(SymmetryClass::Unitary),
            _ => None,
        }
    }

    /// The class of data known only by its element type (library callers that give no
    /// class): real is orthogonal, complex unitary.
    pub fn of_field(f: Field) -> SymmetryClass {
        match f {
            Field::Real => SymmetryClass::Orthogonal,
            Field::Complex => SymmetryClass::Unitary,
        }
    }
}

impl std::fmt::Display for SymmetryClass {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            SymmetryClass::Orthogonal => "orthogonal",
            SymmetryClass::Unitary => "unitary",
        })
    }
}

/// A sector's symmetry class and how it was decided (both in every JSON output).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ClassInfo {
    /// The class.
    pub symmetry_class: SymmetryClass,
    /// How it was decided, in words (`--class`, the attribute, real data, ...).
    pub class_source: String,
}

impl ClassInfo {
    /// The class of a field, decided by the element type alone.
    pub fn of_field(f: Field) -> ClassInfo {
        ClassInfo {
            symmetry_class: SymmetryClass::of_field(f),
            class_source: format!("{f} elements (no class given)"),
        }
    }
}

/// A dense real or complex matrix (column-major).
#[derive(Debug, Clone)]
pub enum Matrix {
    /// Real entries.
    Real(Mat<f64>),
    /// Complex entries.
    Complex(Mat<c64>),
}

impl Matrix {
    /// Number of rows.
    pub fn nrows(&self) -> usize {
        match self {
            Matrix::Real(m) => m.nrows(),
            Matrix::Complex(m) => m.nrows(),
        }
    }
    /// Number of columns.
    pub fn ncols(&self) -> usize {
        match self {
            Matrix::Real(m) => m.ncols(),
            Matrix::Complex(m) => m.ncols(),
        }
    }
    /// Element type.
    pub fn field(&self) -> Field {
        match self {
            Matrix::Real(_) => Field::Real,
            Matrix::Complex(_) => Field::Complex,
        }
    }
    /// Entry `(i, j)` promoted to complex.
    pub fn get_c(&self, i: usize, j: usize) -> c64 {
        match self {
            Matrix::Real(m) => c64::new(m[(i, j)], 0.0),
            Matrix::Complex(m) => m[(i, j)],
        }
    }
    /// Copy of the columns `cols` (a new matrix with `cols.len()` columns).
    pub fn columns(&self, cols: Range<usize>) -> Matrix {
        match self {
            Matrix::Real(m) => Matrix::Real(m.subcols(cols.start, cols.len()).to_owned()),
            Matrix::Complex(m) => Matrix::Complex(m.subcols(cols.start, cols.len()).to_owned()),
        }
    }
    /// Promotes to a complex matrix (a copy when real).
    pub fn to_complex(&self) -> Mat<c64> {
        match self {
            Matrix::Real(m) => Mat::from_fn(m.nrows(), m.ncols(), |i, j| c64::new(m[(i, j)], 0.0)),
            Matrix::Complex(m) => m.clone(),
        }
    }
}

/// A view of one column panel of a [`HermitianPanels`] matrix: rows `0..cols.end`,
/// columns `cols`.
#[derive(Debug, Clone, Copy)]
pub enum PanelRef<'a> {
    /// Real entries.
    Real(MatRef<'a, f64>),
    /// Complex entries.
    Complex(MatRef<'a, c64>),
}

/// Where one column panel of a [`HermitianPanels`] matrix is stored.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Panel {
    /// The columns `cols.start..cols.end` of the panel; its stored rows are `0..cols.end`.
    pub cols: Range<usize>,
    /// Index of the storage matrix that holds the panel.
    pub storage: usize,
    /// First column of the panel in that storage matrix (rows start at 0).
    pub offset: usize,
}

/// A Hermitian `k × k` matrix stored by the upper parts of its column panels.
///
/// The columns `0..k` are cut into consecutive panels `[j₀, j₁)`; a panel stores the
/// entries `(a, b)` with `a < j₁` and `j₀ ≤ b < j₁`: everything above its diagonal block and
/// the whole diagonal block (both triangles). The entries below are the adjoints,
/// `A[a, b] = conj(A[b, a])`. For panels of width `w` this takes about `k(k + w)/2`
/// elements instead of `k²`. A panel lives in rows `0..j₁` of consecutive columns of a
/// storage matrix; several panels may share one storage matrix (the projector writes the
/// panels of a block of eigenvectors over the eigenvectors it no longer needs).
#[derive(Debug, Clone)]
pub struct HermitianPanels {
    k: usize,
    field: Field,
    storage: Vec<Matrix>,
    panels: Vec<Panel>,
}

impl HermitianPanels {
    /// The matrix of dimension `k` whose panels `panels` are stored in `storage`. Fails
    /// (with the problem in words) unless the panels cover `0..k` in order, fit their
    /// storage matrices, and every storage matrix has the element type `field`.
    pub fn new(
        k: usize,
        field: Field,
        storage: Vec<Matrix>,
        panels: Vec<Panel>,
    ) -> std::result::Result<Self, String> {
        if let Some(m) = storage.iter().find(|m| m.field() != field) {
            return Err(format!(
                "a {} storage matrix in a {field} panel matrix",
                m.field()
            ));
        }
        let mut next = 0;
        for p in &panels {
            if p.cols.start != next || p.cols.end <= p.cols.start || p.cols.end > k {
                return Err(format!(
                    "panel {}..{} does not continue the panels of a {k}×{k} matrix at column {next}",
                    p.cols.start, p.cols.end
                ));
            }
            let fits = storage
                .get(p.storage)
                .is_some_and(|m| m.nrows() >= p.cols.end && m.ncols() >= p.offset + p.cols.len());
            if !fits {
                return Err(format!(
                    "panel {}..{} does not fit its storage matrix",
                    p.cols.start, p.cols.end
                ));
            }
            next = p.cols.end;
        }
        if next != k {
            return Err(format!("the panels end at column {next} of {k}"));
        }
        Ok(HermitianPanels {
            k,
            field,
            storage,
            panels,
        })
    }

    /// The upper panels of width `width` (at least 1; the last one may be narrower) of
    /// the square matrix `m`, assumed Hermitian (its lower triangle outside the diagonal
    /// blocks is not read). Each panel gets its own storage matrix.
    pub fn from_full(m: &Matrix, width: usize) -> Self {
        let k = m.nrows().min(m.ncols());
        let width = width.max(1);
        let mut storage = Vec::new();
        let mut panels = Vec::new();
        let mut j0 = 0;
        while j0 < k {
            let j1 = (j0 + width).min(k);
            storage.push(match m {
                Matrix::Real(x) => Matrix::Real(x.submatrix(0, j0, j1, j1 - j0).to_owned()),
                Matrix::Complex(x) => Matrix::Complex(x.submatrix(0, j0, j1, j1 - j0).to_owned()),
            });
            panels.push(Panel {
                cols: j0..j1,
                storage: storage.len() - 1,
                offset: 0,
            });
            j0 = j1;
        }
        HermitianPanels {
            k,
            field: m.field(),
            storage,
            panels,
        }
    }

    /// Dimension `k`.
    pub fn dim(&self) -> usize {
        self.k
    }

    /// Element type.
    pub fn field(&self) -> Field {
        self.field
    }

    /// The panels, in column order.
    pub fn panels(&self) -> &[Panel] {
        &self.panels
    }

    /// The stored part of panel `p` (rows `0..cols.end`, columns `cols`).
    pub fn panel(&self, p: usize) -> PanelRef<'_> {
        let q = &self.panels[p];
        let (r, w) = (q.cols.end, q.cols.len());
        match &self.storage[q.storage] {
            Matrix::Real(m) => PanelRef::Real(m.submatrix(0, q.offset, r, w)),
            Matrix::Complex(m) => PanelRef::Complex(m.submatrix(0, q.offset, r, w)),
        }
    }

    /// The storage of panel `p` and the columns after it in the same storage matrix:
    /// rows `0..` the end of the last column, `width` columns from the panel's first one.
    /// Only the rows each column's panel stores are meaningful. (For products over several
    /// panels that lie side by side.) Panics when the columns leave the storage matrix.
    pub fn storage_view(&self, p: usize, width: usize) -> PanelRef<'_> {
        let q = &self.panels[p];
        let rows = (q.cols.start + width).min(self.k);
        match &self.storage[q.storage] {
            Matrix::Real(m) => PanelRef::Real(m.submatrix(0, q.offset, rows, width)),
            Matrix::Complex(m) => PanelRef::Complex(m.submatrix(0, q.offset, rows, width)),
        }
    }

    /// Entry `(a, b)` promoted to complex (`a, b < k`).
    pub fn get_c(&self, a: usize, b: usize) -> c64 {
        if a > b {
            return self.get_c(b, a).conj();
        }
        let p = self.panels.partition_point(|q| q.cols.end <= b);
        match self.panel(p) {
            PanelRef::Real(m) => c64::new(m[(a, b - self.panels[p].cols.start)], 0.0),
            PanelRef::Complex(m) => m[(a, b - self.panels[p].cols.start)],
        }
    }

    /// The whole `k × k` matrix.
    pub fn to_full(&self) -> Matrix {
        fn fill<'a, T: Copy + Default + 'a>(
            h: &'a HermitianPanels,
            view: impl Fn(usize) -> Option<MatRef<'a, T>>,
            conj: impl Fn(T) -> T,
        ) -> Mat<T> {
            let mut out = Mat::from_fn(h.k, h.k, |_, _| T::default());
            for (p, q) in h.panels.iter().enumerate() {
                let Some(m) = view(p) else { continue };
                for (c, b) in q.cols.clone().enumerate() {
                    for a in 0..q.cols.end {
                        out[(a, b)] = m[(a, c)];
                        if a < q.cols.start {
                            out[(b, a)] = conj(m[(a, c)]);
                        }
                    }
                }
            }
            out
        }
        match self.field {
            Field::Real => Matrix::Real(fill(
                self,
                |p| match self.panel(p) {
                    PanelRef::Real(m) => Some(m),
                    PanelRef::Complex(_) => None,
                },
                |x| x,
            )),
            Field::Complex => Matrix::Complex(fill(
                self,
                |p| match self.panel(p) {
                    PanelRef::Complex(m) => Some(m),
                    PanelRef::Real(_) => None,
                },
                |x: c64| x.conj(),
            )),
        }
    }

    /// Bytes of the storage matrices (shared storage counted once).
    pub fn storage_bytes(&self) -> usize {
        self.storage
            .iter()
            .map(|m| {
                m.nrows()
                    * m.ncols()
                    * match m.field() {
                        Field::Real => 8,
                        Field::Complex => 16,
                    }
            })
            .sum()
    }

    /// Bytes of the panels of a `k × k` matrix cut into panels of width `width`
    /// (`Σ j₁·(j₁ − j₀)` elements of `field`), without shared storage.
    pub fn bytes(k: usize, width: usize, field: Field) -> f64 {
        let (k, w) = (k as f64, width.max(1) as f64);
        let elem = match field {
            Field::Real => 8.0,
            Field::Complex => 16.0,
        };
        // Σ over panels of j₁·w ≤ k(k + w)/2 + k·w/2
        (k * (k + w) / 2.0 + k.min(w) * w / 2.0) * elem
    }
}

/// A real or complex vector (a state or an operator diagonal).
#[derive(Debug, Clone, PartialEq)]
pub enum Vector {
    /// Real entries.
    Real(Vec<f64>),
    /// Complex entries.
    Complex(Vec<c64>),
}

impl Vector {
    /// Length.
    pub fn len(&self) -> usize {
        match self {
            Vector::Real(v) => v.len(),
            Vector::Complex(v) => v.len(),
        }
    }
    /// True when empty.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
    /// Element type.
    pub fn field(&self) -> Field {
        match self {
            Vector::Real(_) => Field::Real,
            Vector::Complex(_) => Field::Complex,
        }
    }
    /// Entries promoted to complex.
    pub fn to_complex(&self) -> Vec<c64> {
        match self {
            Vector::Real(v) => v.iter().map(|&x| c64::new(x, 0.0)).collect(),
            Vector::Complex(v) => v.clone(),
        }
    }
}

/// A sparse matrix in compressed sparse row form (the SciPy `csr_matrix` convention):
/// row `i` holds the entries `data[indptr[i]..indptr[i+1]]` in the columns
/// `indices[indptr[i]..indptr[i+1]]`.
#[derive(Debug, Clone, PartialEq)]
pub struct Csr<T> {
    /// Number of rows.
    pub nrows: usize,
    /// Number of columns.
    pub ncols: usize,
    /// Row pointers, length `nrows + 1`.
    pub indptr: Vec<usize>,
    /// Column indices, length `nnz`.
    pub indices: Vec<usize>,
    /// Values, length `nnz`.
    pub data: Vec<T>,
}

impl<T> Csr<T> {
    /// Checks the structure: `indptr` of length `nrows + 1`, starting at 0, non-decreasing,
    /// ending at `nnz = len(data) = len(indices)`, and every column index `< ncols`.
    /// On failure: the part at fault (`"indptr"`, `"indices"` or `"data"`) and the problem
    /// in words (callers add the file and dataset).
    pub fn check(&self) -> std::result::Result<(), (&'static str, String)> {
        let (p, nnz) = (&self.indptr, self.data.len());
        if p.len() != self.nrows.saturating_add(1) {
            return Err((
                "indptr",
                format!(
                    "has {} entries, expected nrows + 1 = {} + 1",
                    p.len(),
                    self.nrows
                ),
            ));
        }
        if p.first() != Some(&0) {
            let first = p.first().copied().unwrap_or(0);
            return Err(("indptr", format!("must start at 0, starts at {first}")));
        }
        if let Some(i) = (0..p.len() - 1).find(|&i| p[i + 1] < p[i]) {
            return Err((
                "indptr",
                format!(
                    "decreases at row {i} ({} > {}); row pointers must be non-decreasing",
                    p[i],
                    p[i + 1]
                ),
            ));
        }
        if p.last() != Some(&nnz) {
            let last = p.last().copied().unwrap_or(0);
            return Err((
                "indptr",
                format!("ends at {last}, but data holds {nnz} values"),
            ));
        }
        if self.indices.len() != nnz {
            return Err((
                "indices",
                format!("holds {} entries, but data holds {nnz}", self.indices.len()),
            ));
        }
        if let Some((k, &c)) = self
            .indices
            .iter()
            .enumerate()
            .find(|(_, &c)| c >= self.ncols)
        {
            return Err((
                "indices",
                format!(
                    "column index {c} at position {k} is out of range (the matrix has {} columns)",
                    self.ncols
                ),
            ));
        }
        Ok(())
    }
}

/// How an operator is stored.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum OperatorForm {
    /// `[dim]`: diagonal in the computational basis.
    Diagonal,
    /// `[dim, dim]`: dense in the computational basis.
    Dense,
    /// CSR group `{data, indices, indptr}` with attribute `shape`.
    Csr,
    /// `[n, n]` with attribute `basis = "energy"`: already in the energy eigenbasis.
    EnergyBasis,
}

impl std::fmt::Display for OperatorForm {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            OperatorForm::Diagonal => "diagonal",
            OperatorForm::Dense => "dense",
            OperatorForm::Csr => "csr",
            OperatorForm::EnergyBasis => "energy-basis",
        })
    }
}

/// Operator data of one element type.
#[derive(Debug, Clone)]
pub enum OpData<T> {
    /// Diagonal in the computational basis: `A = diag(d)`.
    Diagonal(Vec<T>),
    /// Dense in the computational basis.
    Dense(Mat<T>),
    /// Sparse (CSR) in the computational basis.
    Csr(Csr<T>),
    /// Already in the energy eigenbasis: entry `(n, m)` is `⟨n|A|m⟩`, in ascending-energy order.
    EnergyBasis(Mat<T>),
}

impl<T> OpData<T> {
    /// Storage form.
    pub fn form(&self) -> OperatorForm {
        match self {
            OpData::Diagonal(_) => OperatorForm::Diagonal,
            OpData::Dense(_) => OperatorForm::Dense,
            OpData::Csr(_) => OperatorForm::Csr,
            OpData::EnergyBasis(_) => OperatorForm::EnergyBasis,
        }
    }
}

/// A real or complex operator in one of the four storage forms.
#[derive(Debug, Clone)]
pub enum Operator {
    /// Real entries.
    Real(OpData<f64>),
    /// Complex entries.
    Complex(OpData<c64>),
}

impl Operator {
    /// Storage form.
    pub fn form(&self) -> OperatorForm {
        match self {
            Operator::Real(d) => d.form(),
            Operator::Complex(d) => d.form(),
        }
    }
    /// Element type.
    pub fn field(&self) -> Field {
        match self {
            Operator::Real(_) => Field::Real,
            Operator::Complex(_) => Field::Complex,
        }
    }
}

/// A named observable.
#[derive(Debug, Clone)]
pub struct Observable {
    /// Name (the dataset or group name under `observables/`).
    pub name: String,
    /// The operator.
    pub op: Operator,
}

/// An ascending spectrum with the permutation that sorted it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Spectrum {
    /// Eigenvalues in ascending order.
    pub energies: Vec<f64>,
    /// `order[k]` is the index in the file of the k-th lowest eigenvalue
    /// (the identity when the file was already sorted).
    pub order: Vec<usize>,
}

impl Spectrum {
    /// Sorts `raw` ascending and keeps the permutation.
    pub fn from_unsorted(raw: Vec<f64>) -> Spectrum {
        let mut order: Vec<usize> = (0..raw.len()).collect();
        order.sort_by(|&a, &b| raw[a].total_cmp(&raw[b]));
        let energies = order.iter().map(|&i| raw[i]).collect();
        Spectrum { energies, order }
    }
    /// True when the file order was already ascending.
    pub fn was_sorted(&self) -> bool {
        self.order.iter().enumerate().all(|(k, &i)| k == i)
    }
    /// Number of states.
    pub fn len(&self) -> usize {
        self.energies.len()
    }
    /// True when there are no states.
    pub fn is_empty(&self) -> bool {
        self.energies.is_empty()
    }
}

/// Where eigenvector columns come from: a file read in blocks, or a matrix in memory.
///
/// Indices are positions in the ascending spectrum (after sorting), not in the file.
pub trait ColumnSource: Sync {
    /// Dimension of the (sector's) Hilbert space, the length of one eigenvector.
    fn dim(&self) -> usize;
    /// Number of eigenvectors available.
    fn n_states(&self) -> usize;
    /// Element type of the eigenvectors.
    fn field(&self) -> Field;
    /// Reads the eigenvectors of the states `range` as the columns of a `[dim, range.len()]` matrix.
    fn read(&self, range: Range<usize>) -> crate::error::Result<Matrix>;
    /// Reads the states `range` into `out`, reusing its storage when it already is a
    /// `[dim, range.len()]` matrix of the right field (the default reads a new one).
    /// Streaming passes hand back consumed blocks this way, so that a long pass does
    /// not touch fresh memory for every block.
    fn read_into(&self, range: Range<usize>, out: &mut Matrix) -> crate::error::Result<()> {
        *out = self.read(range)?;
        Ok(())
    }
    /// Chunk extent of the storage along the state axis, when reads aligned to its
    /// multiples are cheaper (chunked HDF5 datasets); `None` by default.
    fn chunk_states(&self) -> Option<usize> {
        None
    }
}

/// Eigenvectors held in memory (columns in ascending-energy order).
impl ColumnSource for Matrix {
    fn dim(&self) -> usize {
        self.nrows()
    }
    fn n_states(&self) -> usize {
        self.ncols()
    }
    fn field(&self) -> Field {
        Matrix::field(self)
    }
    fn read(&self, range: Range<usize>) -> crate::error::Result<Matrix> {
        Ok(self.columns(range))
    }
}

/// Serialises a dimension held as `f64` (a fit's abscissa, or a mean over merged sectors) as
/// the nearest non-negative integer, so that every JSON `dimension` is an integer
/// (`#[serde(serialize_with = "crate::data::dimension_as_integer")]`).
pub fn dimension_as_integer<S: serde::Serializer>(
    d: &f64,
    s: S,
) -> std::result::Result<S::Ok, S::Error> {
    s.serialize_u64(d.round().max(0.0) as u64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hermitian_panels_round_trip() {
        // the upper panels hold the whole Hermitian matrix (definition of the storage)
        let a = Mat::from_fn(7, 7, |i, j| {
            let (lo, hi) = (i.min(j) as f64, i.max(j) as f64);
            c64::new(
                lo + 10.0 * hi,
                if i < j {
                    0.5
                } else if i > j {
                    -0.5
                } else {
                    0.0
                },
            )
        });
        let h = HermitianPanels::from_full(&Matrix::Complex(a.clone()), 3);
        assert_eq!(h.panels().len(), 3);
        let full = h.to_full();
        for i in 0..7 {
            for j in 0..7 {
                assert_eq!(full.get_c(i, j), a[(i, j)]);
                assert_eq!(h.get_c(i, j), a[(i, j)]);
            }
        }
        // panels must cover the columns in order and fit their storage
        let bad = vec![Panel {
            cols: 0..2,
            storage: 0,
            offset: 0,
        }];
        let st = vec![Matrix::Real(Mat::zeros(3, 3))];
        assert!(HermitianPanels::new(3, Field::Real, st.clone(), bad).is_err());
        let wide = vec![Panel {
            cols: 0..3,
            storage: 0,
            offset: 1,
        }];
        assert!(HermitianPanels::new(3, Field::Real, st.clone(), wide).is_err());
        assert!(HermitianPanels::new(3, Field::Complex, st, Vec::new()).is_err());
    }

    #[test]
    fn spectrum_sorting_keeps_permutation() {
        // common practice, no source: argsort semantics
        let s = Spectrum::from_unsorted(vec![3.0, -1.0, 2.0]);
        assert_eq!(s.energies, vec![-1.0, 2.0, 3.0]);
        assert_eq!(s.order, vec![1, 2, 0]);
        assert!(!s.was_sorted());
    }
}
