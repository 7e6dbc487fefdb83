//! Square eigenvector sets without a `layout` attribute.
//!
//! A `[n, n]` dataset reads as an orthonormal basis both as columns and as rows (the
//! transpose of an orthogonal matrix is orthogonal), so neither the shape nor
//! orthonormality tells how it was written: NumPy/h5py write the eigenvector of `E_j` as
//! column `j`, column-major writers (Julia, Fortran, MATLAB) produce row `j`. When a
//! Hamiltonian is stored, both readings are tried on a few states and the one whose
//! residuals `‖H v_j − E_j v_j‖` are small is kept ([`by_residual`]); otherwise the set is
//! read as columns and the first use of the eigenvectors warns that this is an assumption
//! ([`ambiguity_warning`]).

use super::h5::{self, Element};
use super::validate::{self, residual_tolerance};
use super::{EigenFile, Layout, Sector};
use crate::data::{c64, Field};
use crate::error::Result;
use serde::Serialize;
use std::path::Path;

/// How the eigenvector layout of a sector was determined.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LayoutSource {
    /// The dataset's attribute `layout`.
    Attribute,
    /// The command line (`--layout`).
    Option,
    /// The shape: only one reading matches the number of energies.
    Shape,
    /// A square set without attribute, decided by the residuals `‖Hv − Ev‖` of both readings.
    Residual,
    /// A square set without attribute or a deciding Hamiltonian: assumed columns (the
    /// NumPy/h5py convention).
    Assumed,
    /// A MATLAB v7.3 MAT-file without attribute or option: rows (MATLAB stores column-major,
    /// so its `dim × n` matrix of eigenvectors reads as `[n, dim]`; see `input::matlab`).
    MatFile,
}

/// States tried in each reading.
const TRIED: usize = 4;

/// The layout whose readings of [`TRIED`] states have residuals `‖H v − E v‖` within the
/// residual tolerance (columns when both do), or `None` when neither does. Prints a note
/// when the rows reading is chosen (it departs from the usual convention).
pub fn by_residual(file: &EigenFile, s: &Sector) -> Result<Option<Layout>> {
    let (Some(vp), Some(el), Some(h)) = (&s.eigenvectors_path, s.element, file.hamiltonian(s)?)
    else {
        return Ok(None);
    };
    let spectrum = file.spectrum_quiet(s)?;
    let ds = file
        .h5
        .dataset(vp)
        .map_err(|e| h5::h5err(&file.path, vp, "cannot open dataset", e))?;
    let shape = ds.shape();
    let need = 2.0 * 16.0 * shape.iter().copied().max().unwrap_or(0) as f64;
    let what = "to try both readings of a square set";
    file.limit
        .check(&file.path, vp, &shape, &el.to_string(), need, what)?;
    h5::require_written(&file.path, vp, &ds)?;
    let scale = spectrum.energies.iter().fold(1.0f64, |m, e| m.max(e.abs()));
    let tol = residual_tolerance(s) * scale;
    let mut worst = [0.0f64; 2];
    for k in validate::sample_indices(spectrum.len(), TRIED) {
        let (j, e) = (spectrum.order[k], spectrum.energies[k]);
        for (w, layout) in worst.iter_mut().zip([Layout::Columns, Layout::Rows]) {
            let x = read_line(&file.path, vp, &ds, el, layout, j)?;
            let hx = validate::apply(&h, &x).map_err(|e| e.at(&file.path, vp))?;
            let norm = x.iter().map(|a| a.norm_sqr()).sum::<f64>().sqrt();
            let r = hx
                .iter()
                .zip(&x)
                .map(|(a, b)| (a - b * e).norm_sqr())
                .sum::<f64>()
                .sqrt()
                / norm;
            *w = if r.is_nan() { f64::INFINITY } else { w.max(r) };
        }
    }
    let chosen = if worst[0] <= tol {
        Some(Layout::Columns)
    } else if worst[1] <= tol {
        crate::progress::note(&format!(
            "{}: {vp}: square eigenvector set without a layout attribute read as rows [n, dim]: residual ||Hv - Ev|| {:.1e} as rows, {:.1e} as columns (set attribute layout = \"rows\" to skip this check)",
            file.path.display(),
            worst[1],
            worst[0]
        ));
        Some(Layout::Rows)
    } else {
        None
    };
    Ok(chosen)
}

/// Column `j` (or row `j`) of the square dataset `ds`, promoted to complex.
fn read_line(
    file: &Path,
    path: &str,
    ds: &hdf5::Dataset,
    el: Element,
    layout: Layout,
    j: usize,
) -> Result<Vec<c64>> {
    use h5::Stored;
    let err = |e| h5::h5err(file, path, &format!("cannot read state {j}"), e);
    let dim = ds.shape().first().copied().unwrap_or(0);
    let width = ds.shape().get(1).copied().unwrap_or(0);
    let (rows, cols) = match layout {
        Layout::Columns => (0..dim, j..j + 1),
        Layout::Rows => (j..j + 1, 0..width),
    };
    let v: Vec<c64> = match el.field() {
        Field::Real => f64::read_2d(ds, rows, cols)
            .map_err(err)?
            .iter()
            .map(|&x| c64::new(x, 0.0))
            .collect(),
        Field::Complex => c64::read_2d(ds, rows, cols)
            .map_err(err)?
            .iter()
            .copied()
            .collect(),
    };
    Ok(v)
}

/// The warning of an ambiguous square set read as columns.
pub fn ambiguity_warning(file: &Path, s: &Sector) -> String {
    format!(
        "{}: {}: square [{n}, {n}] eigenvector set without a layout attribute: ambiguous, assumed columns [dim, n] (the NumPy/h5py convention); for data written by a column-major program (Julia, Fortran, MATLAB) pass --layout rows or set the attribute layout = \"rows\"",
        file.display(),
        s.eigenvectors_path.as_deref().unwrap_or("eigenvectors"),
        n = s.n_states
    )
}
