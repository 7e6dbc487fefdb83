//! Writer of our HDF5 layout (see DESIGN.md, "Input layout").
//!
//! One group per [`SectorData`] holds:
//!
//! - `energies` `[n]` float64;
//! - `eigenvectors` `[dim, n]` (column `j` is the eigenvector of `energies[j]`), attribute
//!   `layout = "columns"`, chunked in blocks of whole columns `[dim, c]` of about 1 MiB,
//!   uncompressed, and written block by block (no second copy of the basis in memory);
//! - `hamiltonian` and `observables/<name>`: `[dim]` (diagonal), `[dim, dim]` (dense), a CSR
//!   group `{data, indices (int64), indptr (int64)}` with attribute `shape = [rows, cols]`, or
//!   `[n, n]` with attribute `basis = "energy"`;
//! - `states/<name>` `[dim]` with attribute `weight = ‖c‖² = Σ|cᵢ|²`;
//! - `embedding` (CSR, `[full_dim, dim]`) when the sector comes from a larger space;
//! - `basis` `[dim]` uint64 with attribute `local_dim = 2` when every row of the
//!   eigenvectors is one computational-basis configuration (bit `i − 1` = site `i`);
//! - attributes `size` (int64), `label`, the string and typed attributes, and `note` on the
//!   datasets listed in [`SectorData::notes`].
//!
//! Complex numbers are the compound `{r, i}` of two float64 (hdf5-metno's `complex`
//! feature, the h5py convention). The file is created under a temporary name in the target
//! folder and renamed when complete, so a failure never leaves a half-written file behind.

use super::{AttrValue, SectorData};
use crate::data::{Csr, Matrix, OpData, Operator, Vector};
use crate::error::{Error, Result};
use faer::Mat;
use hdf5::types::{H5Type, VarLenUnicode};
use hdf5::{Dataset, Group, Location};
use ndarray::{s, Array1, Array2};
use std::path::{Path, PathBuf};
use std::str::FromStr;

/// Target size of one eigenvector chunk, in bytes.
const CHUNK_BYTES: usize = 1 << 20;

/// Writes `sectors` to a new HDF5 file at `path` (temporary name in the same folder, then
/// rename). An existing file at `path` is replaced only once the new one is complete.
pub fn write_file(path: &Path, sectors: &[SectorData]) -> Result<()> {
    check_groups(path, sectors)?;
    crate::error::require_replaceable(path)?;
    if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
        if !parent.is_dir() {
            return Err(Error::file(
                path,
                format!("cannot write: folder {} does not exist", parent.display()),
            ));
        }
    }
    let tmp = temporary_name(path)?;
    let result = write_all(&tmp, path, sectors);
    match result {
        Ok(()) => std::fs::rename(&tmp, path).map_err(|e| {
            let _ = std::fs::remove_file(&tmp);
            Error::io(path, e)
        }),
        Err(e) => {
            let _ = std::fs::remove_file(&tmp);
            Err(e)
        }
    }
}

fn temporary_name(path: &Path) -> Result<PathBuf> {
    let name = path
        .file_name()
        .ok_or_else(|| Error::file(path, "output path has no file name"))?;
    let mut tmp_name = std::ffi::OsString::from(".");
    tmp_name.push(name);
    tmp_name.push(format!(".tmp-{}", std::process::id()));
    Ok(path.with_file_name(tmp_name))
}

fn normalise_group(g: &str) -> String {
    g.trim_matches('/').to_string()
}

fn check_groups(path: &Path, sectors: &[SectorData]) -> Result<()> {
    let mut seen = std::collections::HashSet::new();
    for s in sectors {
        let g = normalise_group(&s.group);
        if !seen.insert(g.clone()) {
            return Err(Error::file(
                path,
                format!("two sectors share the group '/{g}'"),
            ));
        }
        if s.energies.iter().any(|e| !e.is_finite()) {
            return Err(Error::dataset(
                path,
                format!("/{g}/energies"),
                "energies contain NaN or infinity",
            ));
        }
    }
    Ok(())
}

/// Context for error messages: the final file name and the current HDF5 path.
struct Ctx<'a> {
    file: &'a Path,
}

impl Ctx<'_> {
    fn err(&self, dataset: &str, e: impl std::fmt::Display) -> Error {
        Error::dataset(self.file, dataset, e.to_string())
    }
}

fn write_all(tmp: &Path, final_path: &Path, sectors: &[SectorData]) -> Result<()> {
    let ctx = Ctx { file: final_path };
    // Strong close degree: closing the file closes every object still open in it and
    // flushes, so the file is complete on disk before it is renamed and read elsewhere.
    // No file lock: nobody can see the temporary name before the rename, and a lock on it
    // would be inherited by any process the caller spawns meanwhile (flock follows the file
    // description), keeping the finished file locked against readers until that child exits.
    let file = hdf5::File::with_options()
        .with_fapl(|p| {
            p.fclose_degree(hdf5::file::FileCloseDegree::Strong)
                .file_locking(false)
        })
        .create(tmp)
        .map_err(|e| Error::file(final_path, e.to_string()))?;
    for s in sectors {
        write_sector(&ctx, &file, s)?;
    }
    file.flush()
        .map_err(|e| Error::file(final_path, e.to_string()))?;
    file.close()
        .map_err(|e| Error::file(final_path, e.to_string()))?;
    Ok(())
}

fn join(base: &str, name: &str) -> String {
    if base.is_empty() {
        format!("/{name}")
    } else {
        format!("/{base}/{name}")
    }
}

fn open_or_create_group(ctx: &Ctx, root: &Group, path: &str) -> Result<Group> {
    let mut g = root.clone();
    let mut so_far = String::new();
    for part in path.split('/').filter(|p| !p.is_empty()) {
        so_far = if so_far.is_empty() {
            part.to_string()
        } else {
            format!("{so_far}/{part}")
        };
        g = if g.link_exists(part) {
            g.group(part)
        } else {
            g.create_group(part)
        }
        .map_err(|e| ctx.err(&format!("/{so_far}"), e))?;
    }
    Ok(g)
}

fn write_sector(ctx: &Ctx, file: &hdf5::File, s: &SectorData) -> Result<()> {
    let base = normalise_group(&s.group);
    let root: &Group = file;
    let g = open_or_create_group(ctx, root, &base)?;
    let here = |name: &str| join(&base, name);

    let n = s.energies.len();
    write_array(
        ctx,
        &g,
        "energies",
        &here("energies"),
        Array1::from(s.energies.clone()),
    )?;

    if let Some(v) = &s.eigenvectors {
        if v.ncols() != n {
            return Err(ctx.err(
                &here("eigenvectors"),
                format!("{} eigenvectors for {n} energies", v.ncols()),
            ));
        }
        let ds = match v {
            Matrix::Real(m) => write_columns(ctx, &g, &here("eigenvectors"), m)?,
            Matrix::Complex(m) => write_columns(ctx, &g, &here("eigenvectors"), m)?,
        };
        text_attr(ctx, &ds, &here("eigenvectors"), "layout", "columns")?;
    }

    if let Some(h) = &s.hamiltonian {
        write_operator(ctx, &g, "hamiltonian", &here("hamiltonian"), h)?;
    }
    if !s.observables.is_empty() {
        let og = open_or_create_group(ctx, &g, "observables")?;
        for o in &s.observables {
            let p = here(&format!("observables/{}", o.name));
            write_operator(ctx, &og, &o.name, &p, &o.op)?;
        }
    }
    if !s.states.is_empty() {
        let sg = open_or_create_group(ctx, &g, "states")?;
        for (name, v) in &s.states {
            let p = here(&format!("states/{name}"));
            let (ds, weight) = match v {
                Vector::Real(x) => (
                    write_array(ctx, &sg, name, &p, Array1::from(x.clone()))?,
                    x.iter().map(|a| a * a).sum::<f64>(),
                ),
                Vector::Complex(x) => (
                    write_array(ctx, &sg, name, &p, Array1::from(x.clone()))?,
                    x.iter().map(|a| a.norm_sqr()).sum::<f64>(),
                ),
            };
            scalar_attr(ctx, &ds, &p, "weight", weight)?;
        }
    }
    if let Some(p) = &s.embedding {
        write_csr(ctx, &g, "embedding", &here("embedding"), p)?;
    }
    if let Some(b) = &s.basis {
        let ds = write_array(ctx, &g, "basis", &here("basis"), Array1::from(b.clone()))?;
        scalar_attr(ctx, &ds, &here("basis"), "local_dim", 2i64)?;
    }

    let gp = if base.is_empty() {
        "/".to_string()
    } else {
        format!("/{base}")
    };
    if let Some(size) = s.size {
        scalar_attr(ctx, &g, &gp, "size", size as i64)?;
    }
    if let Some(label) = &s.label {
        text_attr(ctx, &g, &gp, "label", label)?;
    }
    for (k, v) in &s.attributes {
        text_attr(ctx, &g, &gp, k, v)?;
    }
    for (k, v) in &s.typed_attributes {
        match v {
            AttrValue::Int(i) => scalar_attr(ctx, &g, &gp, k, *i)?,
            AttrValue::Float(x) => scalar_attr(ctx, &g, &gp, k, *x)?,
            AttrValue::Text(t) => text_attr(ctx, &g, &gp, k, t)?,
        }
    }
    for (rel, support) in &s.supports {
        let p = here(rel);
        if let Ok(ds) = g.dataset(rel) {
            text_attr(ctx, &ds, &p, "observable_support", support)?;
        } else if let Ok(sub) = g.group(rel) {
            text_attr(ctx, &sub, &p, "observable_support", support)?;
        } else {
            return Err(ctx.err(&p, "a support refers to a dataset that was not written"));
        }
    }
    for (rel, note) in &s.notes {
        let p = here(rel);
        if !g.link_exists(rel) {
            return Err(ctx.err(&p, "a note refers to a dataset that was not written"));
        }
        if let Ok(ds) = g.dataset(rel) {
            text_attr(ctx, &ds, &p, "note", note)?;
        } else {
            let sub = g.group(rel).map_err(|e| ctx.err(&p, e))?;
            text_attr(ctx, &sub, &p, "note", note)?;
        }
    }
    Ok(())
}

fn write_array<T: H5Type, D: ndarray::Dimension>(
    ctx: &Ctx,
    g: &Group,
    name: &str,
    full: &str,
    data: ndarray::Array<T, D>,
) -> Result<Dataset> {
    g.new_dataset_builder()
        .with_data(&data)
        .create(name)
        .map_err(|e| ctx.err(full, e))
}

fn write_columns<T: H5Type + Copy>(
    ctx: &Ctx,
    g: &Group,
    full: &str,
    m: &Mat<T>,
) -> Result<Dataset> {
    let (dim, n) = (m.nrows(), m.ncols());
    let bytes_per_col = (dim * std::mem::size_of::<T>()).max(1);
    let c = (CHUNK_BYTES / bytes_per_col).clamp(1, n.max(1));
    let mut b = g.new_dataset::<T>().shape((dim, n));
    if dim > 0 && n > 0 {
        b = b.chunk((dim, c));
    }
    let ds = b.create("eigenvectors").map_err(|e| ctx.err(full, e))?;
    let mut c0 = 0;
    while c0 < n {
        let c1 = (c0 + c).min(n);
        let block = Array2::from_shape_fn((dim, c1 - c0), |(i, j)| m[(i, c0 + j)]);
        ds.write_slice(&block, s![.., c0..c1])
            .map_err(|e| ctx.err(full, e))?;
        c0 = c1;
    }
    Ok(ds)
}

fn write_operator(ctx: &Ctx, g: &Group, name: &str, full: &str, op: &Operator) -> Result<()> {
    match op {
        Operator::Real(d) => write_opdata(ctx, g, name, full, d),
        Operator::Complex(d) => write_opdata(ctx, g, name, full, d),
    }
}

fn write_opdata<T: H5Type + Copy>(
    ctx: &Ctx,
    g: &Group,
    name: &str,
    full: &str,
    d: &OpData<T>,
) -> Result<()> {
    match d {
        OpData::Diagonal(v) => {
            write_array(ctx, g, name, full, Array1::from(v.clone()))?;
        }
        OpData::Dense(m) => {
            write_array(
                ctx,
                g,
                name,
                full,
                crate::linalg::ndarray_from_mat(m.as_ref()),
            )?;
        }
        OpData::EnergyBasis(m) => {
            let ds = write_array(
                ctx,
                g,
                name,
                full,
                crate::linalg::ndarray_from_mat(m.as_ref()),
            )?;
            text_attr(ctx, &ds, full, "basis", "energy")?;
        }
        OpData::Csr(c) => write_csr(ctx, g, name, full, c)?,
    }
    Ok(())
}

fn write_csr<T: H5Type + Copy>(
    ctx: &Ctx,
    g: &Group,
    name: &str,
    full: &str,
    c: &Csr<T>,
) -> Result<()> {
    if c.indptr.len() != c.nrows + 1
        || c.indices.len() != c.data.len()
        || c.indptr.last().copied() != Some(c.data.len())
    {
        return Err(ctx.err(full, "inconsistent CSR arrays (indptr, indices, data)"));
    }
    let sub = g.create_group(name).map_err(|e| ctx.err(full, e))?;
    write_array(
        ctx,
        &sub,
        "data",
        &format!("{full}/data"),
        Array1::from(c.data.clone()),
    )?;
    let idx: Array1<i64> = c.indices.iter().map(|&i| i as i64).collect();
    write_array(ctx, &sub, "indices", &format!("{full}/indices"), idx)?;
    let ptr: Array1<i64> = c.indptr.iter().map(|&i| i as i64).collect();
    write_array(ctx, &sub, "indptr", &format!("{full}/indptr"), ptr)?;
    let shape = Array1::from(vec![c.nrows as i64, c.ncols as i64]);
    sub.new_attr_builder()
        .with_data(&shape)
        .create("shape")
        .map_err(|e| ctx.err(full, e))?;
    Ok(())
}

fn scalar_attr<T: H5Type>(ctx: &Ctx, loc: &Location, full: &str, name: &str, v: T) -> Result<()> {
    let a = loc
        .new_attr::<T>()
        .shape(())
        .create(name)
        .map_err(|e| ctx.err(full, format!("attribute {name}: {e}")))?;
    a.as_writer()
        .write_scalar(&v)
        .map_err(|e| ctx.err(full, format!("attribute {name}: {e}")))
}

fn text_attr(ctx: &Ctx, loc: &Location, full: &str, name: &str, v: &str) -> Result<()> {
    let s =
        VarLenUnicode::from_str(v).map_err(|e| ctx.err(full, format!("attribute {name}: {e}")))?;
    scalar_attr(ctx, loc, full, name, s)
}
