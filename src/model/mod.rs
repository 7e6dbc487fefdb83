//! Reference eigenbases of models of known character, and the writer of our layout.
//!
//! API CONTRACT: other stages rely on [`SectorData`] and [`write_file`].

pub mod rmt;

use crate::data::{Matrix, Observable, Operator, Vector};
use crate::error::{Error, Result};
use std::path::Path;

/// Everything written into one sector group of our layout.
#[derive(Debug, Clone)]
pub struct SectorData {
    /// Group path inside the file: `""` or `"/"` for the root, `"even"`, `"L12/odd"`, ...
    pub group: String,
    /// Eigenvalues, ascending.
    pub energies: Vec<f64>,
    /// Eigenvectors as columns, `[dim, n]` (written in the `columns` layout unless asked otherwise).
    pub eigenvectors: Option<Matrix>,
    /// Observables in the sector's computational basis (or energy basis).
    pub observables: Vec<Observable>,
    /// The Hamiltonian in the sector's computational basis.
    pub hamiltonian: Option<Operator>,
    /// Named initial states.
    pub states: Vec<(String, Vector)>,
    /// Number of sites (attribute `size`).
    pub size: Option<usize>,
    /// Legend label (attribute `label`).
    pub label: Option<String>,
    /// Further string attributes (model name, parameters, ...).
    pub attributes: Vec<(String, String)>,
}

/// Writes `sectors` to a new HDF5 file at `path` (temporary name, then rename).
pub fn write_file(path: &Path, _sectors: &[SectorData]) -> Result<()> {
    Err(Error::file(path, "writer not implemented yet"))
}

/// Spin-1/2 chain Hamiltonians (σ are Pauli matrices, sites 1..=L).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "model", rename_all = "kebab-case")]
pub enum ChainModel {
    /// `H = J Σ σᶻᵢσᶻᵢ₊₁ + g Σ σˣᵢ + h Σ σᶻᵢ` (non-integrable for g, h ≠ 0; defaults J = 1, g = 0.9045, h = 0.8090).
    MixedFieldIsing { j: f64, g: f64, h: f64 },
    /// `H = J Σ σᶻᵢσᶻᵢ₊₁ + g Σ σˣᵢ` (integrable: free fermions).
    TransverseFieldIsing { j: f64, g: f64 },
    /// `H = J Σ (σˣᵢσˣᵢ₊₁ + σʸᵢσʸᵢ₊₁ + Δ σᶻᵢσᶻᵢ₊₁) + J₂ Σ (σˣᵢσˣᵢ₊₂ + σʸᵢσʸᵢ₊₂ + Δ σᶻᵢσᶻᵢ₊₂)`.
    Xxz { j: f64, delta: f64, j2: f64 },
    /// `H = h Σ σᶻᵢ` (free spins in a field).
    FreeSpins { h: f64 },
}

/// Boundary conditions of a chain.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Boundary {
    /// Open chain: bonds (i, i+1) for i < L.
    Open,
    /// Periodic chain: bond (L, 1) as well.
    Periodic,
}

/// What to do with the reflection symmetry i → L+1−i of the chain.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Reflection {
    /// Keep the full space as one sector (spectra of both parities superposed).
    Ignore,
    /// Resolve it: two sectors `even` and `odd`, each with its own reduced basis.
    Resolve,
    /// Break it with an extra field `field · σᶻ₁` on the first site; one sector.
    Break { field: f64 },
}

/// A chain to build and diagonalise.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ChainSpec {
    /// The Hamiltonian.
    pub model: ChainModel,
    /// Number of sites L.
    pub sites: usize,
    /// Boundary conditions.
    pub boundary: Boundary,
    /// Treatment of the reflection symmetry.
    pub reflection: Reflection,
    /// Site (1-based) of the local observables σᶻ, σˣ and of the bond term (bond site, site+1); default: centre.
    pub site: Option<usize>,
}

/// Builds the chain's Hamiltonian in each sector, diagonalises it, and returns the
/// sectors with energies, eigenvectors, Hamiltonian and the standard observables.
pub fn build_chain(spec: &ChainSpec) -> Result<Vec<SectorData>> {
    Err(Error::other(format!(
        "chain builder not implemented yet ({} sites)",
        spec.sites
    )))
}
