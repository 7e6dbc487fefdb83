//! Reading operators (diagonal, dense, CSR, energy basis) and state vectors, with
//! value checks: NaN/Inf, CSR index structure, and Hermiticity
//! `max |A_ij − conj(A_ji)| ≤ HERMITIAN_TOL · max |A_ij|` (a diagonal operator is
//! Hermitian when its entries are real).

use super::discover::join;
use super::h5::{self, Element};
use super::limit::{self, Limit};
use super::ObservableInfo;
use crate::data::{c64, Csr, Field, OpData, Operator, OperatorForm, Vector};
use crate::error::{Error, Result};
use faer::Mat;
use std::collections::HashMap;
use std::path::Path;

/// Relative tolerance of the Hermiticity check (relative to the largest |entry|).
pub const HERMITIAN_TOL: f64 = 1e-10;

/// Scalars an operator can hold: `f64` or [`c64`].
trait Scalar: Copy + Default + Send + Sync + hdf5::H5Type + std::fmt::Display + 'static {
    fn finite(&self) -> bool;
    fn conj(self) -> Self;
    fn abs(self) -> f64;
    fn sub(self, o: Self) -> Self;
    fn add(self, o: Self) -> Self;
    fn zero() -> Self;
    fn imag_abs(self) -> f64;
    /// Whether conjugation changes values (complex field).
    const IS_COMPLEX: bool;
}

impl Scalar for f64 {
    const IS_COMPLEX: bool = false;
    fn finite(&self) -> bool {
        self.is_finite()
    }
    fn conj(self) -> Self {
        self
    }
    fn abs(self) -> f64 {
        f64::abs(self)
    }
    fn sub(self, o: Self) -> Self {
        self - o
    }
    fn add(self, o: Self) -> Self {
        self + o
    }
    fn zero() -> Self {
        0.0
    }
    fn imag_abs(self) -> f64 {
        0.0
    }
}

impl Scalar for c64 {
    const IS_COMPLEX: bool = true;
    fn finite(&self) -> bool {
        self.re.is_finite() && self.im.is_finite()
    }
    fn conj(self) -> Self {
        c64::new(self.re, -self.im)
    }
    fn abs(self) -> f64 {
        self.norm()
    }
    fn sub(self, o: Self) -> Self {
        self - o
    }
    fn add(self, o: Self) -> Self {
        self + o
    }
    fn zero() -> Self {
        c64::new(0.0, 0.0)
    }
    fn imag_abs(self) -> f64 {
        self.im.abs()
    }
}

/// Opens a dataset to be read: its values must have been written ([`h5::require_written`]).
fn open(file: &Path, f: &hdf5::File, path: &str) -> Result<hdf5::Dataset> {
    let ds = f
        .dataset(path)
        .map_err(|e| h5::h5err(file, path, "cannot open dataset", e))?;
    h5::require_written(file, path, &ds)?;
    Ok(ds)
}

/// Opens a dataset without reading it (for its shape).
fn open_meta(file: &Path, f: &hdf5::File, path: &str) -> Result<hdf5::Dataset> {
    f.dataset(path)
        .map_err(|e| h5::h5err(file, path, "cannot open dataset", e))
}

/// Reads a 1-D dataset (state or diagonal) as a real or complex vector.
pub fn read_vector(
    file: &Path,
    f: &hdf5::File,
    path: &str,
    el: Element,
    limit: &Limit,
) -> Result<Vector> {
    let shape = open_meta(file, f, path)?.shape();
    let need = limit::elements(&shape) * el.value_bytes() as f64;
    limit.check(file, path, &shape, &el.to_string(), need, "to read")?;
    let ds = open(file, f, path)?;
    match el.field() {
        Field::Real => Ok(Vector::Real(h5::read_real(file, path, &ds)?)),
        Field::Complex => Ok(Vector::Complex(h5::read_complex(file, path, &ds)?)),
    }
}

/// Reads the operator described by `info`. For an energy-basis operator, `order`
/// (the sorting permutation of the energies) reorders rows and columns into
/// ascending-energy order: `A'[a, b] = A[order[a], order[b]]`.
pub fn read_operator(
    file: &Path,
    f: &hdf5::File,
    info: &ObservableInfo,
    order: Option<&[usize]>,
    limit: &Limit,
) -> Result<Operator> {
    check_operator_fits(file, f, info, order.is_some(), limit)?;
    match info.field {
        Field::Real => read_typed::<f64>(file, f, info, order, |ds| {
            h5::read_real(file, &info.path, ds)
        })
        .map(Operator::Real),
        Field::Complex => read_typed::<c64>(file, f, info, order, |ds| {
            h5::read_complex(file, &info.path, ds)
        })
        .map(Operator::Complex),
    }
}

/// An error unless the operator `info`, read and checked, fits `limit`: `dim·s` bytes for
/// a diagonal, `r·c·s` plus one read slab for a dense or energy-basis matrix (twice `r·c·s`
/// when an energy-basis matrix is reordered), and for a CSR group `nnz·(3s + 48) +
/// 16·(rows + 1)` (values, column indices read and converted, row pointers, and the map of
/// entries of the Hermiticity check).
fn check_operator_fits(
    file: &Path,
    f: &hdf5::File,
    info: &ObservableInfo,
    reordered: bool,
    limit: &Limit,
) -> Result<()> {
    let s = info.element.value_bytes() as f64;
    let el = info.element.to_string();
    let n = limit::elements(&info.shape);
    match info.form {
        OperatorForm::Diagonal => limit.check(file, &info.path, &info.shape, &el, n * s, "to read"),
        OperatorForm::Dense | OperatorForm::EnergyBasis => {
            let need = if reordered && info.form == OperatorForm::EnergyBasis {
                2.0 * n * s
            } else {
                n * s + (n * s).min(h5::SLAB_BYTES as f64)
            };
            let what = format!("to hold the {} operator whole", info.form);
            limit.check(file, &info.path, &info.shape, &el, need, &what)
        }
        OperatorForm::Csr => {
            let dpath = join(&info.path, "data");
            let dshape = open_meta(file, f, &dpath)?.shape();
            let nnz = limit::elements(&dshape);
            let rows = info.shape.first().copied().unwrap_or(0) as f64;
            let need = nnz * (3.0 * s + 48.0) + 16.0 * (rows + 1.0);
            limit.check(
                file,
                &dpath,
                &dshape,
                &el,
                need,
                "for the CSR arrays and the Hermiticity check",
            )
        }
    }
}

fn read_typed<T: Scalar + h5::Stored>(
    file: &Path,
    f: &hdf5::File,
    info: &ObservableInfo,
    order: Option<&[usize]>,
    read: impl Fn(&hdf5::Dataset) -> Result<Vec<T>>,
) -> Result<OpData<T>> {
    let path = info.path.as_str();
    match info.form {
        OperatorForm::Diagonal => {
            let v = read(&open(file, f, path)?)?;
            if let Some((i, x)) = v.iter().enumerate().find(|(_, x)| x.imag_abs() > 0.0) {
                let max = v.iter().map(|x| x.abs()).fold(0.0, f64::max);
                if x.imag_abs() > HERMITIAN_TOL * max.max(f64::MIN_POSITIVE) {
                    return Err(Error::dataset(
                        file,
                        path,
                        format!("not Hermitian: diagonal entry {i} = {x} is not real"),
                    ));
                }
            }
            Ok(OpData::Diagonal(v))
        }
        OperatorForm::Dense | OperatorForm::EnergyBasis => {
            let m = match order {
                Some(o) if info.form == OperatorForm::EnergyBasis => {
                    let v = read(&open(file, f, path)?)?;
                    let c = info.shape[1];
                    // a column-major file holds Aᵀ = conj(A): conjugate back
                    let at = |k: usize| if info.column_major { v[k].conj() } else { v[k] };
                    let m = Mat::from_fn(info.shape[0], c, |a, b| at(o[a] * c + o[b]));
                    check_hermitian_dense(file, path, &m)?;
                    m
                }
                _ => {
                    // The C-order dataset read as its transpose is Aᵀ = conj(A) for a
                    // Hermitian A: check that (equivalent to checking A), then conjugate.
                    let mut m = h5::read_transposed::<T>(
                        file,
                        path,
                        &open(file, f, path)?,
                        h5::SLAB_BYTES,
                        T::finite,
                    )?;
                    check_hermitian_dense(file, path, &m)?;
                    // a column-major file (MATLAB) holds Aᵀ, whose transpose is A itself
                    if T::IS_COMPLEX && !info.column_major {
                        use rayon::prelude::*;
                        m.as_mut().par_col_chunks_mut(64).for_each(|mut cols| {
                            for j in 0..cols.ncols() {
                                for i in 0..cols.nrows() {
                                    cols[(i, j)] = cols[(i, j)].conj();
                                }
                            }
                        });
                    }
                    m
                }
            };
            if info.form == OperatorForm::Dense {
                Ok(OpData::Dense(m))
            } else {
                Ok(OpData::EnergyBasis(m))
            }
        }
        OperatorForm::Csr => {
            let dpath = join(path, "data");
            let mut data = read(&open(file, f, &dpath)?)?;
            // MATLAB's compressed columns of A are the compressed rows of Aᵀ = conj(A)
            let (indices_name, indptr_name) = if info.column_major {
                data.iter_mut().for_each(|x| *x = x.conj());
                ("ir", "jc")
            } else {
                ("indices", "indptr")
            };
            let ipath = join(path, indices_name);
            let indices = h5::read_indices(file, &ipath, &open(file, f, &ipath)?)?;
            let ppath = join(path, indptr_name);
            let indptr = h5::read_indices(file, &ppath, &open(file, f, &ppath)?)?;
            let csr = Csr {
                nrows: info.shape[0],
                ncols: info.shape[1],
                indptr,
                indices,
                data,
            };
            check_csr(file, path, &csr)?;
            check_hermitian_csr(file, path, &csr)?;
            Ok(OpData::Csr(csr))
        }
    }
}

fn check_hermitian_dense<T: Scalar>(file: &Path, path: &str, m: &Mat<T>) -> Result<()> {
    use rayon::prelude::*;
    let n = m.nrows();
    if m.ncols() != n {
        return Err(Error::dataset(
            file,
            path,
            format!("not square: {} x {}", n, m.ncols()),
        ));
    }
    let max = (0..n)
        .into_par_iter()
        .map(|j| m.col(j).iter().map(|x| x.abs()).fold(0.0f64, f64::max))
        .reduce(|| 0.0, f64::max);
    let tol = HERMITIAN_TOL * max;
    // Tiles of TILE × TILE entries: the pair (i, j), (j, i) of one tile pair stays in
    // cache; parallel over columns of tiles, lower triangle i ≥ j only.
    const TILE: usize = 64;
    let tiles = n.div_ceil(TILE);
    let worst = (0..tiles)
        .into_par_iter()
        .map(|jb| {
            let mut w = (0.0f64, 0usize, 0usize);
            let (j0, j1) = (jb * TILE, ((jb + 1) * TILE).min(n));
            for ib in jb..tiles {
                let (i0, i1) = (ib * TILE, ((ib + 1) * TILE).min(n));
                for j in j0..j1 {
                    for i in i0.max(j)..i1 {
                        let d = m[(i, j)].sub(m[(j, i)].conj()).abs();
                        if d > w.0 {
                            w = (d, i, j);
                        }
                    }
                }
            }
            w
        })
        .reduce(|| (0.0, 0, 0), |a, b| if b.0 > a.0 { b } else { a });
    if worst.0 > tol {
        return Err(not_hermitian(file, path, worst, max));
    }
    Ok(())
}

fn not_hermitian(file: &Path, path: &str, worst: (f64, usize, usize), max: f64) -> Error {
    let (d, i, j) = worst;
    Error::dataset(
        file,
        path,
        format!(
            "not Hermitian: |A[{i}, {j}] - conj(A[{j}, {i}])| = {d:.3e} exceeds {HERMITIAN_TOL:e} x max|A| = {:.3e}",
            HERMITIAN_TOL * max
        ),
    )
}

/// Checks the CSR structure ([`Csr::check`]), naming the dataset at fault.
fn check_csr<T>(file: &Path, path: &str, a: &Csr<T>) -> Result<()> {
    a.check()
        .map_err(|(part, problem)| Error::dataset(file, join(path, part), problem))
}

fn check_hermitian_csr<T: Scalar>(file: &Path, path: &str, a: &Csr<T>) -> Result<()> {
    // Sum duplicates (allowed by the SciPy convention) into a map of entries.
    let mut map: HashMap<(usize, usize), T> = HashMap::with_capacity(a.data.len());
    for i in 0..a.nrows {
        for k in a.indptr[i]..a.indptr[i + 1] {
            let e = map.entry((i, a.indices[k])).or_insert_with(T::zero);
            *e = e.add(a.data[k]);
        }
    }
    let max = map.values().map(|x| x.abs()).fold(0.0, f64::max);
    let mut worst = (0.0f64, 0, 0);
    for (&(i, j), &v) in &map {
        let t = map.get(&(j, i)).copied().unwrap_or_else(T::zero);
        let d = v.sub(t.conj()).abs();
        if d > worst.0 || (d == worst.0 && d > 0.0 && (i, j) < (worst.1, worst.2)) {
            worst = (d, i, j);
        }
    }
    if worst.0 > HERMITIAN_TOL * max {
        return Err(not_hermitian(file, path, worst, max));
    }
    Ok(())
}

/// Columns checked pairwise for orthonormality only while `Σ_rows nnz_row²` stays below
/// this (each row adds its `nnz_row²` products to `PᵀP`); above it only the column norms
/// are checked.
const EMBEDDING_PAIR_LIMIT: usize = 50_000_000;

/// Tolerance of the isometry check `max |(PᵀP)_ab − δ_ab| ≤ EMBEDDING_TOL`.
pub const EMBEDDING_TOL: f64 = 1e-10;

/// Reads the sector embedding: the CSR group at `path` (datasets `data`, `indices`,
/// `indptr`, attribute `shape = [full_dim, dim]`) whose columns are the sector basis
/// vectors in the full computational basis. Checks: a group (not a dataset), real
/// `data`, `shape` with two entries whose second is `dim` (when known), the optional
/// group attribute `full_dim` equal to `shape[0]`, the CSR structure, finite values,
/// and that `P` is an isometry, `PᵀP = 1` (see [`EMBEDDING_TOL`], [`EMBEDDING_PAIR_LIMIT`]).
pub fn read_embedding(
    file: &Path,
    f: &hdf5::File,
    path: &str,
    dim: Option<usize>,
    limit: &Limit,
) -> Result<Csr<f64>> {
    let g = f
        .group(path)
        .map_err(|_| {
            Error::dataset(
                file,
                path,
                "is not a group: an embedding is a CSR group {data, indices, indptr} with attribute shape = [full_dim, dim]",
            )
        })?;
    for part in ["data", "indices", "indptr"] {
        if super::discover::kind(file, f, &join(path, part))? != Some(hdf5::LocationType::Dataset) {
            return Err(Error::dataset(
                file,
                join(path, part),
                "missing dataset (an embedding is a CSR group with data, indices, indptr and attribute shape)",
            ));
        }
    }
    let shape = h5::attr_counts(file, path, &g, "shape")?.ok_or_else(|| {
        Error::dataset(
            file,
            path,
            "CSR group without attribute shape = [full_dim, dim]",
        )
    })?;
    let [full_dim, ncols] = shape[..] else {
        return Err(Error::dataset(
            file,
            path,
            format!(
                "attribute shape has {} entries, expected 2 ([full_dim, dim])",
                shape.len()
            ),
        ));
    };
    if let Some(d) = dim {
        if ncols != d {
            return Err(Error::dataset(
                file,
                path,
                format!("shape [{full_dim}, {ncols}] does not match the sector dimension {d} (expected [full_dim, {d}])"),
            ));
        }
    }
    if ncols > full_dim {
        return Err(Error::dataset(
            file,
            path,
            format!("shape [{full_dim}, {ncols}] has more columns than rows: an embedding maps a sector into a larger space"),
        ));
    }
    if let Some(fd) = h5::attr_count(file, path, &g, "full_dim")? {
        if fd != full_dim {
            return Err(Error::dataset(
                file,
                path,
                format!("attribute full_dim = {fd} differs from shape[0] = {full_dim}"),
            ));
        }
    }
    let dpath = join(path, "data");
    let dds = open_meta(file, f, &dpath)?;
    // values, indices (read and converted), row pointers, column norms, the full-space state
    let dshape = dds.shape();
    let need =
        limit::elements(&dshape) * 24.0 + (full_dim as f64 + 1.0) * 32.0 + ncols as f64 * 8.0;
    limit.check(
        file,
        &dpath,
        &dshape,
        "an embedding",
        need,
        "for the embedding and a full-space state",
    )?;
    let dds = open(file, f, &dpath)?;
    let el = h5::element(file, &dpath, &dds)?;
    if el.field() != Field::Real {
        return Err(Error::dataset(
            file,
            &dpath,
            format!("found {el}; an embedding must be real"),
        ));
    }
    // the declared lengths of indices and indptr are checked before anything is read
    let ipath = join(path, "indices");
    let ppath = join(path, "indptr");
    let (ids, pds) = (open_meta(file, f, &ipath)?, open_meta(file, f, &ppath)?);
    if ids.size() != dds.size() || ids.ndim() != 1 {
        return Err(Error::dataset(
            file,
            &ipath,
            format!(
                "shape {} does not match {} values in data",
                h5::format_shape(&ids.shape()),
                dds.size()
            ),
        ));
    }
    if Some(pds.size()) != full_dim.checked_add(1) || pds.ndim() != 1 {
        return Err(Error::dataset(
            file,
            &ppath,
            format!(
                "shape {} does not match full_dim + 1 = {full_dim} + 1 entries",
                h5::format_shape(&pds.shape()),
            ),
        ));
    }
    let data = h5::read_real(file, &dpath, &dds)?;
    let indices = h5::read_indices(file, &ipath, &open(file, f, &ipath)?)?;
    let indptr = h5::read_indices(file, &ppath, &open(file, f, &ppath)?)?;
    let csr = Csr {
        nrows: full_dim,
        ncols,
        indptr,
        indices,
        data,
    };
    check_csr(file, path, &csr)?;
    check_isometry(file, path, &csr, limit)?;
    Ok(csr)
}

/// Checks `PᵀP = 1` for an embedding: all column norms, and all column overlaps when
/// `Σ_rows nnz_row² ≤ EMBEDDING_PAIR_LIMIT` and their map (about 48 bytes per pair) fits
/// `limit`.
fn check_isometry(file: &Path, path: &str, p: &Csr<f64>, limit: &Limit) -> Result<()> {
    let mut norms = vec![0.0f64; p.ncols];
    let mut pairs = 0usize;
    for i in 0..p.nrows {
        let r = p.indptr[i + 1] - p.indptr[i];
        pairs = pairs.saturating_add(r.saturating_mul(r));
        for k in p.indptr[i]..p.indptr[i + 1] {
            norms[p.indices[k]] += p.data[k] * p.data[k];
        }
    }
    if let Some((a, &x)) = norms
        .iter()
        .enumerate()
        .find(|(_, &x)| (x - 1.0).abs() > EMBEDDING_TOL)
    {
        return Err(Error::dataset(
            file,
            path,
            format!("column {a} has squared norm {x:.12}, not 1: the columns of an embedding must be orthonormal"),
        ));
    }
    if pairs > EMBEDDING_PAIR_LIMIT || !limit.fits(48.0 * pairs as f64) {
        return Ok(());
    }
    let mut overlaps: HashMap<(usize, usize), f64> = HashMap::new();
    for i in 0..p.nrows {
        let row = p.indptr[i]..p.indptr[i + 1];
        for k in row.clone() {
            for l in row.clone() {
                let (a, b) = (p.indices[k], p.indices[l]);
                if a < b {
                    *overlaps.entry((a, b)).or_insert(0.0) += p.data[k] * p.data[l];
                }
            }
        }
    }
    let worst = overlaps
        .iter()
        .map(|(&ab, &x)| (ab, x))
        .filter(|(_, x)| x.abs() > EMBEDDING_TOL)
        .min_by_key(|&(ab, _)| ab);
    if let Some(((a, b), x)) = worst {
        return Err(Error::dataset(
            file,
            path,
            format!("columns {a} and {b} overlap by {x:.3e}: the columns of an embedding must be orthonormal"),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn csr(indptr: Vec<usize>, indices: Vec<usize>, data: Vec<f64>) -> Csr<f64> {
        Csr {
            nrows: indptr.len() - 1,
            ncols: indptr.len() - 1,
            indptr,
            indices,
            data,
        }
    }

    #[test]
    fn csr_structure_errors_name_the_dataset_and_problem() {
        // SciPy CSR convention (scipy.sparse.csr_matrix documentation)
        let f = Path::new("x.h5");
        let ok = csr(vec![0, 1, 2], vec![1, 0], vec![2.0, 2.0]);
        assert!(check_csr(f, "/op", &ok).is_ok());
        assert!(check_hermitian_csr(f, "/op", &ok).is_ok());
        let dec = csr(vec![0, 2, 1], vec![1, 0], vec![2.0, 2.0]);
        let e = check_csr(f, "/op", &dec).unwrap_err().to_string();
        assert!(e.contains("/op/indptr: decreases at row 1"), "{e}");
        let short = csr(vec![0, 1, 1], vec![1, 0], vec![2.0, 2.0]);
        let e = check_csr(f, "/op", &short).unwrap_err().to_string();
        assert!(e.contains("ends at 1, but data holds 2 values"), "{e}");
    }

    #[test]
    fn hermiticity_uses_a_relative_tolerance_and_sums_duplicates() {
        // definition A = Aᴴ; duplicates add up in the SciPy convention
        let f = Path::new("x.h5");
        // (0,1) stored twice as 1.0 + 1.0 = 2.0 against (1,0) = 2.0: Hermitian
        let dup = csr(vec![0, 2, 3], vec![1, 1, 0], vec![1.0, 1.0, 2.0]);
        assert!(check_hermitian_csr(f, "/op", &dup).is_ok());
        // missing transpose entry
        let lone = csr(vec![0, 1, 1], vec![1], vec![1.0]);
        let e = check_hermitian_csr(f, "/op", &lone)
            .unwrap_err()
            .to_string();
        assert!(e.contains("not Hermitian"), "{e}");
        // a deviation of 1e-12 relative to entries of 1e3 passes (tol 1e-10 relative)
        let m = Mat::from_fn(2, 2, |i, j| if i == 0 && j == 1 { 1e3 + 1e-9 } else { 1e3 });
        assert!(check_hermitian_dense(f, "/op", &m).is_ok());
        let m = Mat::from_fn(2, 2, |i, j| if i == 0 && j == 1 { 1e3 + 1e-6 } else { 1e3 });
        assert!(check_hermitian_dense(f, "/op", &m).is_err());
        // complex: A_01 = i, A_10 = -i is Hermitian; A_10 = +i is not
        let h = Mat::from_fn(2, 2, |i, j| match (i, j) {
            (0, 1) => c64::new(0.0, 1.0),
            (1, 0) => c64::new(0.0, -1.0),
            _ => c64::new(1.0, 0.0),
        });
        assert!(check_hermitian_dense(f, "/op", &h).is_ok());
        let s = Mat::from_fn(2, 2, |i, j| match (i, j) {
            (0, 1) | (1, 0) => c64::new(0.0, 1.0),
            _ => c64::new(1.0, 0.0),
        });
        assert!(check_hermitian_dense(f, "/op", &s).is_err());
    }
}
