//! Block reads of eigenvectors by HDF5 hyperslab selection.
//!
//! The k-th state of the ascending spectrum is the file's state `order[k]`
//! ([`Spectrum::order`]). A read of the states `lo..hi` maps them to file
//! indices and reads either the whole span `min..=max` of those indices (when it
//! is at most twice as wide as the request) or each contiguous run separately,
//! so an unsorted file never forces a read of the whole dataset. Columns land in
//! a `[dim, w]` faer matrix: column-major, so each eigenvector is contiguous.
//!
//! A column-layout read goes through a staging copy in the stored order, which is
//! transposed into the block; it is cut into pieces (one chunk column of a chunked dataset,
//! slabs of rows of [`CONTIGUOUS_PIECE_BYTES`] of a contiguous one) so that the staging
//! copy stays small next to the block.

use super::h5::{self, Element};
use super::{Layout, Sector};
use crate::data::{c64, ColumnSource, Field, Matrix, Spectrum};
use crate::error::{Error, Result};
use faer::{Mat, MatMut};
use ndarray::Array2;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// Reads eigenvector columns of one sector from the file, by HDF5 hyperslab.
pub struct VectorReader {
    file: PathBuf,
    path: String,
    ds: hdf5::Dataset,
    layout: Layout,
    dim: usize,
    n: usize,
    field: Field,
    element: Element,
    /// `order[k]` = file index of the k-th lowest state; `None` when sorted.
    order: Option<Vec<usize>>,
    chunk_states: Option<usize>,
}

impl std::fmt::Debug for VectorReader {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("VectorReader")
            .field("file", &self.file)
            .field("path", &self.path)
            .field("layout", &self.layout)
            .field("dim", &self.dim)
            .field("n", &self.n)
            .field("element", &self.element)
            .field("sorted", &self.order.is_none())
            .field("chunk_states", &self.chunk_states)
            .finish()
    }
}

impl VectorReader {
    pub(super) fn new(
        file: &Path,
        f: &hdf5::File,
        sector: &Sector,
        spectrum: &Spectrum,
        layout: Layout,
        limit: &super::Limit,
    ) -> Result<VectorReader> {
        let (Some(path), Some(dim), Some(element)) =
            (&sector.eigenvectors_path, sector.dim, sector.element)
        else {
            return Err(Error::dataset(
                file,
                super::discover::join(&sector.group, "eigenvectors"),
                "missing dataset (this analysis needs the eigenvectors)",
            ));
        };
        if spectrum.len() != sector.n_states {
            return Err(Error::dataset(
                file,
                path.as_str(),
                format!(
                    "spectrum of {} states given for {} stored eigenvectors",
                    spectrum.len(),
                    sector.n_states
                ),
            ));
        }
        let ds = f
            .dataset(path)
            .map_err(|e| h5::h5err(file, path, "cannot open dataset", e))?;
        // the smallest working set of a pass: four eigenvectors (two in use, two read ahead)
        let shape = ds.shape();
        let need = 4.0 * dim as f64 * element.value_bytes() as f64;
        limit.check(
            file,
            path,
            &shape,
            &element.to_string(),
            need,
            "for the four eigenvectors a pass holds at least",
        )?;
        h5::require_written(file, path, &ds)?;
        let axis = match layout {
            Layout::Columns => 1,
            Layout::Rows => 0,
        };
        let chunk_states = sector.chunk.as_ref().and_then(|c| c.get(axis).copied());
        Ok(VectorReader {
            file: file.to_path_buf(),
            path: path.clone(),
            ds,
            layout,
            dim,
            n: sector.n_states,
            field: element.field(),
            element,
            order: (!spectrum.was_sorted()).then(|| spectrum.order.clone()),
            chunk_states,
        })
    }

    /// Chunk extent of the dataset along the state axis (`None`: contiguous storage).
    /// Reads whose ranges start and end on multiples of it decompress every chunk once.
    pub fn chunk_states(&self) -> Option<usize> {
        self.chunk_states
    }

    /// Element type as stored.
    pub fn element(&self) -> Element {
        self.element
    }

    /// Reads the file's states `a..b` (file order) as a `[dim, b − a]` matrix.
    fn read_span(&self, a: usize, b: usize) -> Result<Matrix> {
        match self.field {
            Field::Real => self
                .read_span_t::<f64>(a, b, |x| x.is_finite())
                .map(Matrix::Real),
            Field::Complex => self
                .read_span_t::<c64>(a, b, |x| x.re.is_finite() && x.im.is_finite())
                .map(Matrix::Complex),
        }
    }

    fn read_span_t<T: h5::Stored>(
        &self,
        a: usize,
        b: usize,
        finite: impl Fn(&T) -> bool,
    ) -> Result<Mat<T>> {
        let mut m = Mat::from_fn(self.dim, b - a, |_, _| T::default());
        self.read_span_into(a, b, m.as_mut(), finite)?;
        Ok(m)
    }

    /// Reads the file's states `a..b` into `dst` (`dim × (b − a)`).
    fn read_span_into<T: h5::Stored>(
        &self,
        a: usize,
        b: usize,
        mut dst: MatMut<'_, T>,
        finite: impl Fn(&T) -> bool,
    ) -> Result<()> {
        if b <= a {
            return Ok(());
        }
        // Column layout of a chunked dataset: read one chunk column per call (HDF5 1.10
        // copies a chunk with one file read only when it lands in a contiguous part of the
        // buffer) and transpose each into its columns of the result, so that no second
        // full-size copy of the block exists. A span within one chunk column is one call.
        if let (Layout::Columns, Some(c)) = (self.layout, self.chunk_states) {
            if c > 0 {
                let piece = c;
                let mut s0 = a;
                while s0 < b {
                    let s1 = ((s0 / piece + 1) * piece).min(b);
                    let arr = self.read_checked::<T>(0..self.dim, s0, s1, &finite)?;
                    put_block(&arr, self.layout, dst.as_mut().subcols_mut(s0 - a, s1 - s0));
                    s0 = s1;
                }
                return Ok(());
            }
        }
        // Column layout of a contiguous dataset: a block of columns is a strided selection,
        // whose rows HDF5 gathers through its sieve buffer at the same cost whatever the
        // cut; read it in slabs of rows of at most CONTIGUOUS_PIECE_BYTES so that the staging
        // copy stays small next to the block.
        if self.layout == Layout::Columns {
            let w = b - a;
            let budget = CONTIGUOUS_PIECE_BYTES;
            let rows = (budget / (w * std::mem::size_of::<T>()).max(1)).clamp(1, self.dim.max(1));
            let mut r0 = 0;
            while r0 < self.dim {
                let r1 = (r0 + rows).min(self.dim);
                let arr = self.read_checked::<T>(r0..r1, a, b, &finite)?;
                put_block(&arr, self.layout, dst.as_mut().subrows_mut(r0, r1 - r0));
                r0 = r1;
            }
            return Ok(());
        }
        let arr = self.read_checked::<T>(0..self.dim, a, b, &finite)?;
        put_block(&arr, self.layout, dst);
        Ok(())
    }

    /// Reads the components `comps` of the file's states `a..b` (`a < b`) as stored
    /// (`[comps, w]` or `[w, comps]`) and checks that every value is finite.
    fn read_checked<T: h5::Stored>(
        &self,
        comps: Range<usize>,
        a: usize,
        b: usize,
        finite: &impl Fn(&T) -> bool,
    ) -> Result<Array2<T>> {
        let c0 = comps.start;
        let arr: Array2<T> = match self.layout {
            Layout::Columns => T::read_2d(&self.ds, comps, a..b),
            Layout::Rows => T::read_2d(&self.ds, a..b, comps),
        }
        .map_err(|e| {
            h5::h5err(
                &self.file,
                &self.path,
                &format!("cannot read states {a}..{b}"),
                e,
            )
        })?;
        let cols = arr.dim().1;
        // Check values in storage order (fast path without early exit), then locate.
        let all_finite = match arr.as_slice() {
            Some(v) => v.iter().fold(true, |ok, x| ok & finite(x)),
            None => arr.iter().all(finite),
        };
        if !all_finite {
            if let Some((k, x)) = arr.iter().enumerate().find(|(_, x)| !finite(x)) {
                let (r, c) = (k / cols.max(1), k % cols.max(1));
                let (state, comp) = match self.layout {
                    Layout::Columns => (a + c, c0 + r),
                    Layout::Rows => (a + r, c0 + c),
                };
                return Err(Error::dataset(
                    &self.file,
                    &self.path,
                    format!("non-finite value {x} in component {comp} of the eigenvector of state {state} (file order)"),
                ));
            }
        }
        Ok(arr)
    }
}

/// Copies a block read as stored (`[dim, w]` for the column layout, `[w, dim]` for
/// the row layout) into the column-major `dim × w` destination.
fn put_block<T: Copy + Send + Sync>(arr: &Array2<T>, layout: Layout, mut dst: MatMut<'_, T>) {
    let (rows, cols) = arr.dim();
    match (layout, arr.as_slice()) {
        // C-order [dim, w]: entry (i, j) at i * w + j; cache-blocked transpose.
        (Layout::Columns, Some(v)) => transpose_into(v, rows, cols, dst),
        // C-order [w, dim] is column-major [dim, w]: column j is row j, one run.
        (Layout::Rows, Some(_)) => {
            for (j, row) in arr.rows().into_iter().enumerate() {
                let mut col = dst.as_mut().col_mut(j);
                for (i, &x) in row.iter().enumerate() {
                    col[i] = x;
                }
            }
        }
        (Layout::Columns, None) => {
            for j in 0..cols {
                for i in 0..rows {
                    dst[(i, j)] = arr[[i, j]];
                }
            }
        }
        (Layout::Rows, None) => {
            for j in 0..rows {
                for i in 0..cols {
                    dst[(i, j)] = arr[[j, i]];
                }
            }
        }
    }
}

/// Bytes per slab of rows of a column-layout read from a contiguous dataset: 1 MiB.
/// Every slab of a block costs HDF5 the same scan of the file rows it spans, so the cut
/// changes the staging memory, not the reading time.
pub const CONTIGUOUS_PIECE_BYTES: usize = 1 << 20;

/// Writes the C-order `rows × cols` slice `v` into `dst` (`rows × cols`), in tiles of
/// 8 columns × 256 rows so that each source cache line is read once, parallel over
/// strips of columns.
fn transpose_into<T: Copy + Send + Sync>(v: &[T], rows: usize, cols: usize, dst: MatMut<'_, T>) {
    use rayon::prelude::*;
    const STRIP: usize = 8;
    const ROWS: usize = 256;
    dst.par_col_chunks_mut(STRIP)
        .enumerate()
        .for_each(|(s, mut strip)| {
            let j0 = s * STRIP;
            for i0 in (0..rows).step_by(ROWS) {
                let i1 = (i0 + ROWS).min(rows);
                for c in 0..strip.ncols() {
                    let j = j0 + c;
                    let col = strip.as_mut().col_mut(c);
                    match col.try_as_col_major_mut() {
                        Some(col) => {
                            let d = &mut col.as_slice_mut()[i0..i1];
                            for (d, i) in d.iter_mut().zip(i0..i1) {
                                *d = v[i * cols + j];
                            }
                        }
                        None => {
                            let mut col = strip.as_mut().col_mut(c);
                            for i in i0..i1 {
                                col[i] = v[i * cols + j];
                            }
                        }
                    }
                }
            }
        });
}

/// Copies column `src_col` of `src` into column `dst_col` of `dst` (same field).
fn copy_col(dst: &mut Matrix, dst_col: usize, src: &Matrix, src_col: usize) {
    match (dst, src) {
        (Matrix::Real(d), Matrix::Real(s)) => d.col_mut(dst_col).copy_from(s.col(src_col)),
        (Matrix::Complex(d), Matrix::Complex(s)) => d.col_mut(dst_col).copy_from(s.col(src_col)),
        // Both come from the same dataset, so the fields always agree.
        _ => {}
    }
}

impl ColumnSource for VectorReader {
    fn dim(&self) -> usize {
        self.dim
    }
    fn n_states(&self) -> usize {
        self.n
    }
    fn field(&self) -> Field {
        self.field
    }
    fn chunk_states(&self) -> Option<usize> {
        // state indices are file indices only when the spectrum was stored sorted
        self.chunk_states.filter(|_| self.order.is_none())
    }
    fn read_into(&self, range: Range<usize>, out: &mut Matrix) -> Result<()> {
        let reusable = out.nrows() == self.dim
            && out.ncols() == range.len()
            && out.field() == self.field
            && self.order.is_none()
            && range.start <= range.end
            && range.end <= self.n;
        if !reusable {
            *out = self.read(range)?;
            return Ok(());
        }
        match out {
            Matrix::Real(m) => {
                self.read_span_into(range.start, range.end, m.as_mut(), |x: &f64| x.is_finite())
            }
            Matrix::Complex(m) => {
                self.read_span_into(range.start, range.end, m.as_mut(), |x: &c64| {
                    x.re.is_finite() && x.im.is_finite()
                })
            }
        }
    }
    fn read(&self, range: Range<usize>) -> Result<Matrix> {
        if range.start > range.end || range.end > self.n {
            return Err(Error::dataset(
                &self.file,
                &self.path,
                format!(
                    "states {}..{} requested, but only {} are stored",
                    range.start, range.end, self.n
                ),
            ));
        }
        let Some(order) = &self.order else {
            return self.read_span(range.start, range.end);
        };
        let w = range.len();
        let idx = &order[range.clone()];
        let mut out = match self.field {
            Field::Real => Matrix::Real(Mat::zeros(self.dim, w)),
            Field::Complex => Matrix::Complex(Mat::zeros(self.dim, w)),
        };
        if w == 0 {
            return Ok(out);
        }
        let lo = idx.iter().copied().min().unwrap_or(0);
        let hi = idx.iter().copied().max().unwrap_or(0) + 1;
        if hi - lo <= 2 * w + 8 {
            let span = self.read_span(lo, hi)?;
            for (k, &i) in idx.iter().enumerate() {
                copy_col(&mut out, k, &span, i - lo);
            }
            return Ok(out);
        }
        // Contiguous runs of increasing file indices.
        let mut k = 0;
        while k < w {
            let mut e = k + 1;
            while e < w && idx[e] == idx[e - 1] + 1 {
                e += 1;
            }
            let block = self.read_span(idx[k], idx[e - 1] + 1)?;
            for j in 0..(e - k) {
                copy_col(&mut out, k + j, &block, j);
            }
            k = e;
        }
        Ok(out)
    }
}
