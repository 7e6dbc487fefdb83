//! Reference eigenbases of models of known character, and the writer of our layout.
//!
//! API CONTRACT: other stages rely on [`SectorData`] and [`write_file`].
//!
//! - [`basis`]: the computational basis of a spin-1/2 chain (bit `i` of a basis index is
//!   site `i + 1`, bit 1 = spin up = σᶻ eigenvalue +1), the reflection `i → L+1−i`, and the
//!   reduced bases of its two parity sectors with their embedding matrices `P`;
//! - [`chain`]: Hamiltonians, standard observables and initial states of spin chains, built
//!   sparse and diagonalised sector by sector ([`build_chain`]);
//! - [`rmt`] and [`random`]: random-matrix ensembles (GOE, GUE, Poisson) as one sector each;
//! - [`writer`]: [`write_file`], the HDF5 writer of the layout described in DESIGN.md.

pub mod basis;
pub mod chain;
pub mod random;
pub mod rmt;
pub mod writer;

pub use chain::build_chain;
pub use random::{build_random, RandomEnsemble, RandomSpec};
pub use writer::write_file;

use crate::data::{Csr, Matrix, Observable, Operator, Vector};

/// A numeric or text attribute value (written with its own HDF5 type).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub enum AttrValue {
    /// 64-bit integer attribute.
    Int(i64),
    /// 64-bit float attribute.
    Float(f64),
    /// Variable-length UTF-8 string attribute.
    Text(String),
}

/// Everything written into one sector group of our layout.
///
/// Build it with `SectorData { group, energies, ..Default::default() }` so that fields
/// added later do not break callers.
#[derive(Debug, Clone, Default)]
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
    /// Further typed attributes of the sector group (`full_dim`, couplings, ...).
    pub typed_attributes: Vec<(String, AttrValue)>,
    /// Embedding `P` of the sector into the full computational basis, shape `[full_dim, dim]`:
    /// its columns are the sector basis vectors, so a full-space state ψ has sector
    /// component `c = Pᵀψ` and a sector vector `c` is the full-space state `P c`.
    /// Written as the CSR group `embedding`.
    pub embedding: Option<Csr<f64>>,
    /// The computational-basis configuration of each row of the eigenvectors (bit `i − 1`
    /// is site `i`), when every row is one configuration: written as the `[dim]` uint64
    /// dataset `basis` with attribute `local_dim = 2`.
    pub basis: Option<Vec<u64>>,
    /// Attributes `note` on datasets of the sector, as (path relative to the sector group,
    /// e.g. `observables/sz_site`, note text).
    pub notes: Vec<(String, String)>,
    /// Attributes `observable_support` on observables (path relative to the sector group,
    /// support in words, e.g. `centre site` or `two centre sites`): `scaling` never fits
    /// operators of different supports together.
    pub supports: Vec<(String, String)>,
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
    /// Total magnetisation S^z = (n_↑ − n_↓)/2 of the one U(1) sector to build (models
    /// that conserve it: XXZ, free spins); `None`: the whole space.
    #[serde(default)]
    pub sz: Option<f64>,
    /// Random longitudinal fields (XXZ only); `None`: a clean chain.
    #[serde(default)]
    pub disorder: Option<Disorder>,
}

/// Random fields `Σᵢ hᵢ σᶻᵢ`, hᵢ independent and uniform in `[−W, W]`, drawn from a
/// generator seeded with `seed` (site 1 first). They break the reflection and the spin
/// flip; the total S^z stays conserved.
///
/// In spin-operator units (`S = σ/2`) the XXZ chain `J Σ (σˣσˣ + σʸσʸ + Δ σᶻσᶻ) + Σ hᵢσᶻᵢ`
/// equals `4J [Σ (SˣSˣ + SʸSʸ + Δ SᶻSᶻ) + Σ (hᵢ / 2J) Sᶻᵢ]`: a strength `W` here is the
/// strength `W / 2J` of the convention `J Σ S·S + Σ hᵢ Sᶻᵢ` common in the many-body
/// localisation literature.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Disorder {
    /// Half-width W of the field distribution.
    pub strength: f64,
    /// Seed of this realization's fields.
    pub seed: u64,
    /// Index of the realization (written as the attribute `realization`).
    pub realization: usize,
}
