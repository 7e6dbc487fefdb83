//! The matrix elements `A_W[i, j] = ⟨lo + i|A|lo + j⟩` of one observable in a window of
//! one sector, for callers that run their own analyses (the Python module's `project`).
//! The window's `W × W` matrix is formed by [`project::project_window`] (block pairs
//! streamed under the budget) and refused, before anything is allocated, when it does not
//! fit the `--memory` budget.

use super::operators::load_sector;
use super::Inputs;
use crate::data::{Matrix, Operator};
use crate::error::{Context, Error, Result};
use crate::project::{self, Budget};
use crate::window::WindowSpec;
use std::ops::Range;

/// One observable's window matrix in one sector of one file.
#[derive(Debug, Clone)]
pub struct MatrixRequest {
    /// The file (exactly one).
    pub inputs: Inputs,
    /// The sector: required when the file holds more than one.
    pub sector: Option<String>,
    /// The observable's name.
    pub observable: String,
    /// The window.
    pub window: WindowSpec,
    /// Memory and parallelism of the pass.
    pub budget: Budget,
}

/// The window matrix and where it comes from.
#[derive(Debug, Clone)]
pub struct WindowMatrix {
    /// The file.
    pub file: String,
    /// The sector's name.
    pub sector: String,
    /// State indices (ascending energy order) of the window's rows and columns.
    pub range: Range<usize>,
    /// The energies of the window's states.
    pub energies: Vec<f64>,
    /// `A_W` (Hermitian: the lower blocks are the adjoints of the upper ones).
    pub matrix: Matrix,
}

/// Reads the sector, checks its eigenvectors (as every analysis does) and projects the
/// observable onto the window.
pub fn window_matrix(req: &MatrixRequest) -> Result<WindowMatrix> {
    let [path] = req.inputs.files.as_slice() else {
        return Err(Error::usage(format!(
            "give exactly one file (got {})",
            req.inputs.files.len()
        )));
    };
    let files = Inputs {
        files: vec![path.clone()],
        overrides: req.inputs.overrides.clone(),
    }
    .open()?;
    let f = &files[0];
    let selected = f.select(req.sector.as_deref())?;
    let [s] = selected.as_slice() else {
        return Err(Error::file(
            f.path(),
            format!(
                "{} sectors ({}): give the sector",
                selected.len(),
                selected
                    .iter()
                    .map(|s| s.name.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        ));
    };
    let spectrum = f.spectrum(s)?;
    let names = [req.observable.clone()];
    let (ops, src) = load_sector(f, s, &names, &spectrum, req.budget.bytes)?;
    if s.dim.is_some() {
        crate::input::validate::require_orthonormal(f, s, src.as_ref())?;
    }
    let range = req.window.indices(&spectrum.energies);
    let refs: Vec<&Operator> = ops.iter().map(|(_, o)| o).collect();
    let matrix = project::project_window(src.as_ref(), &refs, range.clone(), &req.budget)
        .at(f.path(), &s.group)?
        .pop()
        .ok_or_else(|| Error::other("internal: no matrix projected"))?;
    Ok(WindowMatrix {
        file: f.path().display().to_string(),
        sector: s.name.clone(),
        energies: spectrum.energies[range.clone()].to_vec(),
        range,
        matrix,
    })
}
