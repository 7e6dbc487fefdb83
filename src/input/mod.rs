//! Reading eigenbasis files: sector discovery, spectra, eigenvector blocks,
//! operators, states; validation with one-line errors.
//!
//! API CONTRACT (bodies to be implemented): other stages rely on these signatures.

use crate::data::{ColumnSource, Field, Matrix, Operator, OperatorForm, Spectrum, Vector};
use crate::error::{Error, Result};
use serde::Serialize;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// Eigenvector storage layout.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Layout {
    /// `[dim, n]`: column j is the eigenvector of `energies[j]` (the default).
    Columns,
    /// `[n, dim]`: row j is the eigenvector (attribute `layout = "rows"`).
    Rows,
}

/// What the file says about one observable, without reading it.
#[derive(Debug, Clone, Serialize)]
pub struct ObservableInfo {
    /// Name under `observables/`.
    pub name: String,
    /// Storage form.
    pub form: OperatorForm,
    /// Element type.
    pub field: Field,
    /// Full HDF5 path of the dataset or CSR group.
    pub path: String,
}

/// One sector: an HDF5 group holding `energies`.
#[derive(Debug, Clone, Serialize)]
pub struct Sector {
    /// Name used on the command line and in outputs: the group path without the
    /// leading `/` (`"even"`, `"L12/odd"`), or `"/"` for the root group.
    pub name: String,
    /// Full HDF5 path of the group (`"/"`, `"/even"`).
    pub group: String,
    /// Number of eigenvalues.
    pub n_states: usize,
    /// Hilbert-space dimension (length of an eigenvector), when eigenvectors are stored.
    pub dim: Option<usize>,
    /// Element type of the eigenvectors, when stored.
    pub field: Option<Field>,
    /// Eigenvector layout.
    pub layout: Layout,
    /// Observables found under `observables/`.
    pub observables: Vec<ObservableInfo>,
    /// Names of the initial states under `states/`.
    pub states: Vec<String>,
    /// True when a `hamiltonian` is stored.
    pub has_hamiltonian: bool,
    /// Attribute `size` (number of sites), when present.
    pub size: Option<usize>,
    /// Attribute `label`, when present.
    pub label: Option<String>,
}

/// Dataset path overrides for files that follow another layout (from the command line).
#[derive(Debug, Clone, Default)]
pub struct Overrides {
    /// Path of the energies dataset: when given, this defines the single sector.
    pub energies: Option<String>,
    /// Path of the eigenvectors dataset.
    pub eigenvectors: Option<String>,
    /// Layout of the eigenvectors when the file has no `layout` attribute.
    pub layout: Option<Layout>,
    /// Extra observables as (name, path).
    pub observables: Vec<(String, String)>,
    /// Path of the Hamiltonian.
    pub hamiltonian: Option<String>,
}

/// An eigenbasis file opened read-only.
#[derive(Debug)]
pub struct EigenFile {
    path: PathBuf,
    sectors: Vec<Sector>,
}

impl EigenFile {
    /// Opens `path` read-only and discovers its sectors.
    pub fn open(path: &Path, _overrides: &Overrides) -> Result<EigenFile> {
        Err(Error::file(path, "reader not implemented yet"))
    }
    /// The file's path.
    pub fn path(&self) -> &Path {
        &self.path
    }
    /// All sectors, in a stable order (depth-first, names sorted).
    pub fn sectors(&self) -> &[Sector] {
        &self.sectors
    }
    /// The sector named `name`, or all sectors when `None`; an unknown name is an error listing the known ones.
    pub fn select(&self, _name: Option<&str>) -> Result<Vec<&Sector>> {
        Err(Error::file(&self.path, "reader not implemented yet"))
    }
    /// The ascending spectrum of a sector (warns on stderr when the file was not sorted).
    pub fn spectrum(&self, _sector: &Sector) -> Result<Spectrum> {
        Err(Error::file(&self.path, "reader not implemented yet"))
    }
    /// A reader of eigenvector columns in ascending-energy order, reading hyperslabs on demand.
    pub fn vectors(&self, _sector: &Sector, _spectrum: &Spectrum) -> Result<VectorReader> {
        Err(Error::file(&self.path, "reader not implemented yet"))
    }
    /// An observable by name (energy-basis operators come back in ascending-energy order);
    /// an unknown name is an error listing the known ones.
    pub fn observable(&self, _sector: &Sector, _name: &str) -> Result<Operator> {
        Err(Error::file(&self.path, "reader not implemented yet"))
    }
    /// The stored Hamiltonian, if any.
    pub fn hamiltonian(&self, _sector: &Sector) -> Result<Option<Operator>> {
        Err(Error::file(&self.path, "reader not implemented yet"))
    }
    /// The sector's embedding into the full computational basis: the CSR dataset group
    /// `embedding` of shape `[full_dim, dim]` whose columns are the sector basis vectors
    /// (files written by `generate`), so that a full-space state ψ has the sector component
    /// `c = Pᵀψ`. `Ok(None)` when the sector has no embedding.
    pub fn embedding(&self, _sector: &Sector) -> Result<Option<crate::data::Csr<f64>>> {
        Ok(None)
    }
    /// An initial state by name (`states/<name>`).
    pub fn state(&self, _sector: &Sector, _name: &str) -> Result<Vector> {
        Err(Error::file(&self.path, "reader not implemented yet"))
    }
}

/// Reads eigenvector columns of one sector from the file, by HDF5 hyperslab.
#[derive(Debug)]
pub struct VectorReader {
    dim: usize,
    n: usize,
    field: Field,
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
    fn read(&self, _range: Range<usize>) -> Result<Matrix> {
        Err(Error::other("reader not implemented yet"))
    }
}
