//! Reading eigenbasis files: sector discovery, spectra, eigenvector blocks,
//! operators, states; validation with one-line errors.
//!
//! # File layout
//!
//! Files are HDF5 and are opened read-only; nothing is ever written into them.
//!
//! A **sector** is any group (the root group included) holding a dataset named
//! `energies`. Sectors are found by a depth-first walk over all groups, member
//! names sorted, each group searched once (remembered by its address, so link cycles
//! end; one warning lists the links skipped), so the order is stable (`/`, `/L10`, `/L10/even`, `/L10/odd`,
//! `/L12`, ...). A sector's name is its group path without the leading `/`
//! (`even`, `L12/odd`), or `/` for the root group. Inside a sector group:
//!
//! | member | shape, element type | meaning |
//! |---|---|---|
//! | `energies` | `[n]`, float32 or float64 | eigenvalues `E_j`; ascending, or in any order (then they are sorted, the permutation is kept and a warning is printed) |
//! | `eigenvectors` | `[dim, n]`, real or complex | column `j` is the eigenvector of `energies[j]`; with attribute `layout = "rows"` the shape is `[n, dim]` and row `j` is the eigenvector; `n < dim` (a partial eigenbasis) is allowed, `n > dim` is an error; a square set without attribute is decided by a stored Hamiltonian's residuals or assumed to be columns, with a warning ([`LayoutSource`]) |
//! | `observables/<name>` | `[dim]` | operator diagonal in the computational basis, `A = diag(a)` |
//! | `observables/<name>` | `[dim, dim]` | dense operator in the computational basis (must be Hermitian) |
//! | `observables/<name>/` | group `{data, indices, indptr}`, attribute `shape = [dim, dim]` | sparse operator in the SciPy CSR convention: row `i` holds `data[indptr[i]..indptr[i+1]]` in columns `indices[...]`; duplicate entries add up |
//! | `observables/<name>` | `[n, n]`, attribute `basis = "energy"` | matrix elements `⟨E_j|A|E_k⟩` already in the eigenbasis, rows and columns in the order of `energies` in the file |
//! | `hamiltonian` | `[dim]`, `[dim, dim]` or CSR group | optional; used to check residuals `‖H v_j − E_j v_j‖` |
//! | `states/<name>` | `[dim]`, real or complex | optional initial states for quenches |
//! | `embedding/` | CSR group `{data, indices, indptr}`, attribute `shape = [full_dim, dim]`, real | optional; columns are the sector basis vectors in the full computational basis (orthonormal), so that a full-space state `ψ` has the sector component `Pᵀψ` (quenches from product states) |
//! | attribute `size` | any integer type, or a float with an integral value | number of sites (scaling tables) |
//! | attribute `label` | string | legend label |
//!
//! Real data are float32 or float64 (float32 is promoted to float64 on reading).
//! Complex data are an HDF5 compound of two float32 or two float64 with the field names
//! `{r, i}` (the convention of h5py) or another pair of `h5::COMPLEX_NAMES`
//! (`{real, imag}` of MATLAB v7.3, `{re, im}`, ...). Integers, strings and other types are rejected with an
//! error saying what was found. NaN and Inf are rejected everywhere. Dense, CSR
//! and energy-basis operators must be Hermitian:
//! `max |A_ij − conj(A_ji)| ≤ 10⁻¹⁰ · max |A_ij|`.
//!
//! Files that follow another layout can be read by giving dataset paths
//! ([`Overrides`], the `--energies-path`, `--eigenvectors-path`, `--layout`,
//! `--observable-path NAME=PATH` and `--hamiltonian-path` options). Absolute paths
//! (`/results/evals`) are used as given; relative paths are taken inside each
//! sector group. A given energies path defines a single sector: the group
//! holding that dataset.
//!
//! # Reading
//!
//! Eigenvectors are never read whole: a [`VectorReader`] reads the columns of a
//! range of states (ascending energy) by HDF5 hyperslab selection, mapping through
//! the sorting permutation when the file was not sorted and reading contiguous
//! runs of the file. Where the dataset is chunked, [`VectorReader::chunk_states`]
//! gives the chunk extent along the state axis so that callers can cut their blocks on
//! chunk boundaries (the projector's stream does).
//!
//! # Checks
//!
//! Metadata (shapes, element types, attributes) is checked when a file is opened;
//! values (NaN/Inf, Hermiticity, CSR indices) when they are read. Before any read, the
//! bytes it will hold are computed from the declared shape and checked against the
//! [`Limit`] ([`limit`]: the `--memory` budget of [`Overrides::memory`], never above the
//! machine's memory), and a dataset whose values were never written is refused. The numerical
//! checks of an eigenbasis (orthonormality, residuals) are in [`validate`]; the
//! summary printed by `eigentherm inspect` is built by [`inspect`].
//!
//! All errors are one line naming the file, the dataset and the problem.

mod discover;
mod h5;
pub mod inspect;
mod layout;
pub mod limit;
pub mod matlab;
mod operators;
pub mod validate;
mod vectors;

pub use h5::Element;
pub use layout::LayoutSource;
pub use limit::Limit;
pub use vectors::VectorReader;

use crate::data::{Field, Operator, OperatorForm, Spectrum, Vector};
use crate::error::{escape, Error, Result};
use serde::Serialize;
use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// Eigenvector storage layout.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Layout {
    /// `[dim, n]`: column j is the eigenvector of `energies[j]` (the default).
    Columns,
    /// `[n, dim]`: row j is the eigenvector (attribute `layout = "rows"`).
    Rows,
}

impl Layout {
    /// Parses `columns` or `rows`.
    pub fn parse(s: &str) -> Result<Layout> {
        match s {
            "columns" => Ok(Layout::Columns),
            "rows" => Ok(Layout::Rows),
            other => Err(Error::usage(format!(
                "layout '{other}' is neither 'columns' nor 'rows'"
            ))),
        }
    }
}

impl std::fmt::Display for Layout {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Layout::Columns => "columns [dim, n]",
            Layout::Rows => "rows [n, dim]",
        })
    }
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
    /// Element type as stored (of `data` for a CSR group).
    pub element: Element,
    /// Shape (`[dim]`, `[dim, dim]`, `[n, n]`, or the `shape` attribute of a CSR group).
    pub shape: Vec<usize>,
    /// Attribute `observable_support` (which sites or degrees of freedom the operator acts
    /// on, e.g. `sites 5` or `sites 4,5`): operators with different supports are never
    /// fitted together.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub support: Option<String>,
    /// Stored column-major (a MATLAB v7.3 file: the dataset holds `Aᵀ`; a CSR group is a
    /// MATLAB sparse group `{data, ir, jc}` in compressed columns), see [`matlab`].
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub column_major: bool,
}

/// What the file says about one initial state, without reading it.
#[derive(Debug, Clone, Serialize)]
pub struct StateInfo {
    /// Name under `states/`.
    pub name: String,
    /// Real or complex.
    pub field: Field,
    /// Element type as stored.
    pub element: Element,
    /// Full HDF5 path.
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
    /// How the layout was determined (a square set without attribute is ambiguous).
    pub layout_source: LayoutSource,
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
    /// Attribute `model` (the model family, written by `eigentherm generate`), when present;
    /// `scaling` groups sectors by it.
    pub model: Option<String>,
    /// Attribute `symmetry_class` (`orthogonal` or `unitary`), when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub symmetry_class: Option<String>,
    /// Attribute `realization` (index of a disorder realization), when present: sectors
    /// that differ only by it form an ensemble.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub realization: Option<usize>,
    /// Attribute `disorder` (disorder strength), when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub disorder: Option<f64>,
    /// The stored `basis` configurations (shape and element type, in words), when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub basis: Option<String>,
    /// Full HDF5 path of the energies.
    pub energies_path: String,
    /// Element type of the energies as stored.
    pub energies_element: Element,
    /// Full HDF5 path of the eigenvectors, when stored.
    pub eigenvectors_path: Option<String>,
    /// Element type of the eigenvectors as stored.
    pub element: Option<Element>,
    /// Chunk shape of the eigenvector dataset (`None`: contiguous storage).
    pub chunk: Option<Vec<usize>>,
    /// Filters (compression) of the eigenvector dataset.
    pub filters: Vec<String>,
    /// The stored Hamiltonian (form, type, path), when present.
    pub hamiltonian: Option<ObservableInfo>,
    /// The initial states (type and path).
    pub state_info: Vec<StateInfo>,
    /// Members reached through external links: `"PATH -> OTHER_FILE:/path"` (their data
    /// are read, read-only, from that file).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub external: Vec<String>,
}

/// How to read files: dataset path overrides for files that follow another layout, and the
/// memory limit of every read (from the command line).
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
    /// Extra stored states as (name, path); a relative path is taken inside each sector.
    pub states: Vec<(String, String)>,
    /// Sector attributes given on the command line (`--attribute [FILE:]NAME=VALUE`): they
    /// replace the file's value in every sector of the files they name (every file when
    /// `file` is `None`).
    pub attributes: Vec<AttributeOverride>,
    /// Path of the Hamiltonian.
    pub hamiltonian: Option<String>,
    /// Memory budget in bytes (`--memory`): no read sized by a file header may hold more
    /// (see [`limit`]); `None`: the default budget, half of the machine's memory.
    pub memory: Option<usize>,
    /// Which sector attribute holds the ensemble parameter (`--ensemble-by`).
    pub ensemble_by: EnsembleBy,
}

/// One `--attribute [FILE:]NAME=VALUE`.
#[derive(Debug, Clone, PartialEq)]
pub struct AttributeOverride {
    /// The file it applies to (as given on the command line), or every file.
    pub file: Option<PathBuf>,
    /// The attribute: one of [`AttributeOverride::NAMES`].
    pub name: String,
    /// The value as typed (checked when parsed).
    pub value: String,
}

impl AttributeOverride {
    /// The sector attributes that can be given on the command line.
    pub const NAMES: [&'static str; 6] = [
        "size",
        "model",
        "label",
        "symmetry_class",
        "disorder",
        "realization",
    ];

    /// Parses `[FILE:]NAME=VALUE`, checking the name and the value's type (size and
    /// realization: non-negative integers; disorder: a finite number; symmetry_class:
    /// orthogonal or unitary).
    pub fn parse(s: &str) -> Result<AttributeOverride> {
        let bad = |why: String| Error::usage(format!("--attribute '{}': {why}", escape(s)));
        let (lhs, value) = s
            .split_once('=')
            .ok_or_else(|| bad("expected [FILE:]NAME=VALUE".into()))?;
        let (file, name) = match lhs.rsplit_once(':') {
            Some((f, n)) if !f.is_empty() => (Some(PathBuf::from(f)), n),
            _ => (None, lhs),
        };
        if !Self::NAMES.contains(&name) {
            return Err(bad(format!(
                "unknown attribute '{}' (known: {})",
                escape(name),
                Self::NAMES.join(", ")
            )));
        }
        let ok = match name {
            "size" | "realization" => value.parse::<usize>().is_ok(),
            "disorder" => value.parse::<f64>().is_ok_and(f64::is_finite),
            "symmetry_class" => matches!(value, "orthogonal" | "unitary"),
            _ => !value.is_empty(),
        };
        if !ok {
            return Err(bad(format!("'{}' is not a valid {name}", escape(value))));
        }
        Ok(AttributeOverride {
            file,
            name: name.to_string(),
            value: value.to_string(),
        })
    }

    /// Whether it applies to `path`.
    pub fn applies_to(&self, path: &Path) -> bool {
        self.file.as_deref().is_none_or(|f| f == path)
    }
}

/// How realizations are grouped into ensembles (`--ensemble-by`).
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum EnsembleBy {
    /// The numeric sector attribute with this name is the ensemble parameter (reported as
    /// `disorder`); sectors with a `realization` attribute are averaged.
    Attribute(String),
    /// No ensembles: every realization is analysed on its own.
    Off,
}

impl Default for EnsembleBy {
    fn default() -> Self {
        EnsembleBy::Attribute("disorder".to_string())
    }
}

impl EnsembleBy {
    /// `none`, or an attribute name.
    pub fn parse(s: &str) -> crate::error::Result<Self> {
        match s {
            "none" => Ok(EnsembleBy::Off),
            "" => Err(crate::error::Error::usage(
                "--ensemble-by: expected an attribute name or 'none'",
            )),
            a => Ok(EnsembleBy::Attribute(a.to_string())),
        }
    }
}

/// An eigenbasis file opened read-only.
#[derive(Debug)]
pub struct EigenFile {
    path: PathBuf,
    sectors: Vec<Sector>,
    h5: hdf5::File,
    /// The most bytes one read may hold.
    limit: Limit,
    /// Warnings already printed (one per sector and kind).
    warned: Mutex<HashSet<String>>,
    /// Layouts of square sets decided by the residuals of a stored Hamiltonian, by sector.
    decided: Mutex<HashMap<String, Option<Layout>>>,
}

/// Names joined by `", "`, each with its control characters escaped.
fn names<'a>(it: impl Iterator<Item = &'a str>) -> String {
    it.map(escape).collect::<Vec<_>>().join(", ")
}

/// Opens `path` read-only with HDF5's own error printing silenced.
fn open_h5(path: &Path) -> Result<hdf5::File> {
    hdf5::silence_errors(true);
    match std::fs::metadata(path) {
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            return Err(Error::file(path, "file not found"))
        }
        Err(e) => return Err(Error::file(path, format!("cannot read: {e}"))),
        Ok(m) if m.is_dir() => return Err(Error::file(path, "is a directory, not an HDF5 file")),
        Ok(m) if !m.is_file() => {
            return Err(Error::file(
                path,
                format!(
                    "is a {}, not a regular file: HDF5 files are read by seeking, so pipes and devices are refused",
                    crate::error::file_kind(&m)
                ),
            ))
        }
        Ok(_) => {}
    }
    if let Err(e) = std::fs::File::open(path) {
        return Err(Error::file(path, format!("cannot read: {e}")));
    }
    hdf5::File::open(path).map_err(|e| {
        if has_hdf5_signature(path) {
            Error::file(
                path,
                format!(
                    "the HDF5 library cannot open this HDF5 file ({e}); if another program holds \
                     it open for writing, wait for it to finish (or set HDF5_USE_FILE_LOCKING=FALSE)"
                ),
            )
        } else {
            Error::file(path, "not an HDF5 file (the HDF5 library cannot open it)")
        }
    })
}

/// True when the HDF5 format signature `\x89HDF\r\n\x1a\n` stands at offset 0, 512, 1024,
/// 2048, ... (the places the format allows, after a user block).
fn has_hdf5_signature(path: &Path) -> bool {
    use std::io::{Read, Seek, SeekFrom};
    const SIG: [u8; 8] = [0x89, b'H', b'D', b'F', b'\r', b'\n', 0x1a, b'\n'];
    let Ok(mut f) = std::fs::File::open(path) else {
        return false;
    };
    let len = f.metadata().map(|m| m.len()).unwrap_or(0);
    let mut offset = 0u64;
    while offset + 8 <= len {
        let mut buf = [0u8; 8];
        if f.seek(SeekFrom::Start(offset)).is_err() || f.read_exact(&mut buf).is_err() {
            return false;
        }
        if buf == SIG {
            return true;
        }
        offset = if offset == 0 { 512 } else { offset * 2 };
    }
    false
}

impl EigenFile {
    /// Opens `path` read-only and discovers its sectors.
    pub fn open(path: &Path, overrides: &Overrides) -> Result<EigenFile> {
        crate::supervisor::note_reading(path);
        let watchdog = crate::supervisor::open_watchdog(path);
        let h5 = open_h5(path)?;
        let sectors = discover::discover(path, &h5, overrides)?;
        drop(watchdog);
        Ok(EigenFile {
            path: path.to_path_buf(),
            sectors,
            h5,
            limit: Limit::new(overrides.memory),
            warned: Mutex::new(HashSet::new()),
            decided: Mutex::new(HashMap::new()),
        })
    }
    /// The file's path.
    pub fn path(&self) -> &Path {
        &self.path
    }
    /// The memory limit of every read from this file.
    pub fn limit(&self) -> &Limit {
        &self.limit
    }
    /// All sectors, in a stable order (depth-first, names sorted).
    pub fn sectors(&self) -> &[Sector] {
        &self.sectors
    }
    /// The sector named `name`, or all sectors when `None`; an unknown name is an error listing the known ones.
    ///
    /// A leading `/` is ignored (`/even` = `even`); `/` or an empty name is the root group.
    pub fn select(&self, name: Option<&str>) -> Result<Vec<&Sector>> {
        let Some(name) = name else {
            return Ok(self.sectors.iter().collect());
        };
        let want = discover::sector_name(name.trim_end_matches('/'));
        match self.sectors.iter().find(|s| s.name == want) {
            Some(s) => Ok(vec![s]),
            None => Err(Error::file(
                &self.path,
                format!(
                    "no sector named '{}'; sectors: {}",
                    escape(name),
                    names(self.sectors.iter().map(|s| s.name.as_str()))
                ),
            )),
        }
    }
    /// The ascending spectrum of a sector (warns on stderr when the file was not sorted).
    pub fn spectrum(&self, sector: &Sector) -> Result<Spectrum> {
        let s = self.spectrum_quiet(sector)?;
        if !s.was_sorted() {
            self.warn_once(&format!("sorted:{}", sector.name), || {
                format!(
                    "{}: {}: energies are not in ascending order; sorted them (eigenvectors and energy-basis observables follow the same permutation)",
                    self.path.display(),
                    sector.energies_path
                )
            });
        }
        Ok(s)
    }
    /// Prints the warning `msg()` unless one was printed under `key` already.
    fn warn_once(&self, key: &str, msg: impl FnOnce() -> String) {
        let first = self
            .warned
            .lock()
            .map(|mut w| w.insert(key.to_string()))
            .unwrap_or(true);
        if first {
            crate::progress::warn(&msg());
        }
    }
    /// The ascending spectrum of a sector, without the warning about sorting.
    pub fn spectrum_quiet(&self, sector: &Sector) -> Result<Spectrum> {
        let p = &sector.energies_path;
        let ds = self
            .h5
            .dataset(p)
            .map_err(|e| h5::h5err(&self.path, p, "cannot open dataset", e))?;
        // the values, the sorted copy and the permutation: 24 bytes per state
        let shape = ds.shape();
        let need = 24.0 * limit::elements(&shape);
        let what = sector.energies_element.to_string();
        self.limit
            .check(&self.path, p, &shape, &what, need, "to read and sort")?;
        h5::require_written(&self.path, p, &ds)?;
        let raw = h5::read_real(&self.path, p, &ds)?;
        Ok(Spectrum::from_unsorted(raw))
    }
    /// The optional `spectrum` dataset of a sector: every eigenvalue of the sector (no
    /// vectors), for the thermodynamics of a partial eigenbasis; ascending. `Ok(None)` when
    /// it is absent. It must be one-dimensional, finite and hold at least the sector's
    /// `energies` count.
    pub fn stored_spectrum(&self, sector: &Sector) -> Result<Option<Vec<f64>>> {
        let p = discover::join(&sector.group, "spectrum");
        if discover::kind(&self.path, &self.h5, &p)?.is_none() {
            return Ok(None);
        }
        let ds = self
            .h5
            .dataset(&p)
            .map_err(|e| h5::h5err(&self.path, &p, "cannot open dataset", e))?;
        let shape = ds.shape();
        if shape.len() != 1 {
            return Err(Error::dataset(
                &self.path,
                p,
                format!(
                    "has shape {shape:?}; a one-dimensional dataset of eigenvalues is expected"
                ),
            ));
        }
        let need = 16.0 * limit::elements(&shape);
        self.limit
            .check(&self.path, &p, &shape, "float", need, "to read and sort")?;
        h5::require_written(&self.path, &p, &ds)?;
        let mut v = h5::read_real(&self.path, &p, &ds)?;
        if let Some(k) = v.iter().position(|x| !x.is_finite()) {
            return Err(Error::dataset(
                &self.path,
                p,
                format!("eigenvalue {k} is not finite"),
            ));
        }
        if v.len() < sector.n_states {
            return Err(Error::dataset(
                &self.path,
                p,
                format!(
                    "holds {} eigenvalues, fewer than the {} stored energies",
                    v.len(),
                    sector.n_states
                ),
            ));
        }
        v.sort_by(f64::total_cmp);
        Ok(Some(v))
    }
    /// A reader of eigenvector columns in ascending-energy order, reading hyperslabs on demand.
    pub fn vectors(&self, sector: &Sector, spectrum: &Spectrum) -> Result<VectorReader> {
        let (layout, source) = self.layout(sector)?;
        if source == LayoutSource::Assumed && sector.dim.is_some() {
            self.warn_once(&format!("layout:{}", sector.name), || {
                layout::ambiguity_warning(&self.path, sector)
            });
        }
        VectorReader::new(&self.path, &self.h5, sector, spectrum, layout, &self.limit)
    }
    /// The eigenvector layout of a sector and how it was determined: as discovered, except
    /// that a square set without attribute is decided by the residuals of the stored
    /// Hamiltonian, if any (read once, on first need; see [`LayoutSource`]).
    pub fn layout(&self, sector: &Sector) -> Result<(Layout, LayoutSource)> {
        let undecided = sector.layout_source == LayoutSource::Assumed
            && sector.dim.is_some()
            && sector.hamiltonian.is_some();
        if !undecided {
            return Ok((sector.layout, sector.layout_source));
        }
        let known = self
            .decided
            .lock()
            .ok()
            .and_then(|d| d.get(&sector.name).copied());
        let chosen = match known {
            Some(c) => c,
            None => {
                let c = layout::by_residual(self, sector)?;
                if let Ok(mut d) = self.decided.lock() {
                    d.insert(sector.name.clone(), c);
                }
                c
            }
        };
        Ok(match chosen {
            Some(l) => (l, LayoutSource::Residual),
            None => (sector.layout, LayoutSource::Assumed),
        })
    }
    /// An observable by name (energy-basis operators come back in ascending-energy order);
    /// an unknown name is an error listing the known ones.
    pub fn observable(&self, sector: &Sector, name: &str) -> Result<Operator> {
        let Some(info) = sector.observables.iter().find(|o| o.name == name) else {
            let where_ = discover::join(&sector.group, "observables");
            let name = escape(name);
            return Err(Error::dataset(
                &self.path,
                where_,
                if sector.observables.is_empty() {
                    format!("no observable named '{name}': the sector has no observables")
                } else {
                    format!(
                        "no observable named '{name}'; observables: {}",
                        names(sector.observables.iter().map(|o| o.name.as_str()))
                    )
                },
            ));
        };
        let order = if info.form == OperatorForm::EnergyBasis {
            Some(self.spectrum_quiet(sector)?.order)
        } else {
            None
        };
        operators::read_operator(&self.path, &self.h5, info, order.as_deref(), &self.limit)
    }
    /// The stored Hamiltonian, if any.
    pub fn hamiltonian(&self, sector: &Sector) -> Result<Option<Operator>> {
        match &sector.hamiltonian {
            Some(info) => {
                operators::read_operator(&self.path, &self.h5, info, None, &self.limit).map(Some)
            }
            None => Ok(None),
        }
    }
    /// The sector's embedding into the full computational basis: the CSR dataset group
    /// `embedding` of shape `[full_dim, dim]` whose columns are the sector basis vectors
    /// (files written by `generate`), so that a full-space state ψ has the sector component
    /// `c = Pᵀψ`. `Ok(None)` when the sector has no embedding.
    ///
    /// Checked on reading: shape `[full_dim, dim]` against the sector's dimension, the
    /// optional attribute `full_dim`, the CSR structure, real finite values, and
    /// orthonormal columns (`PᵀP = 1`); any problem is a one-line error naming the group.
    pub fn embedding(&self, sector: &Sector) -> Result<Option<crate::data::Csr<f64>>> {
        if !self.has_embedding(sector)? {
            return Ok(None);
        }
        let path = discover::join(&sector.group, "embedding");
        operators::read_embedding(&self.path, &self.h5, &path, sector.dim, &self.limit).map(Some)
    }
    /// Whether the sector stores an `embedding` (nothing is read).
    pub fn has_embedding(&self, sector: &Sector) -> Result<bool> {
        let path = discover::join(&sector.group, "embedding");
        Ok(discover::kind(&self.path, &self.h5, &path)?.is_some())
    }
    /// An initial state by name (`states/<name>`).
    pub fn state(&self, sector: &Sector, name: &str) -> Result<Vector> {
        let Some(info) = sector.state_info.iter().find(|s| s.name == name) else {
            let where_ = discover::join(&sector.group, "states");
            let name = escape(name);
            return Err(Error::dataset(
                &self.path,
                where_,
                if sector.states.is_empty() {
                    format!("no state named '{name}': the sector has no states")
                } else {
                    format!(
                        "no state named '{name}'; states: {}",
                        names(sector.states.iter().map(String::as_str))
                    )
                },
            ));
        };
        operators::read_vector(&self.path, &self.h5, &info.path, info.element, &self.limit)
    }
}

impl EigenFile {
    /// The sector's `basis` configurations (one unsigned integer per eigenvector row: site
    /// i of a spin-½ chain is bit i − 1), checked: shape `[dim]` against the eigenvectors,
    /// integer type, attribute `local_dim` 2 when present, values below `2^sites` when the
    /// sector's `size` is known, and no configuration twice. `Ok(None)` when absent.
    pub fn basis(&self, sector: &Sector) -> Result<Option<Vec<usize>>> {
        let path = discover::join(&sector.group, "basis");
        if discover::kind(&self.path, &self.h5, &path)?.is_none() {
            return Ok(None);
        }
        let ds = self
            .h5
            .dataset(&path)
            .map_err(|e| Error::dataset(&self.path, &path, format!("not a dataset ({e})")))?;
        let shape = ds.shape();
        let dim = sector.dim.unwrap_or(0);
        if shape != [dim] {
            return Err(Error::dataset(
                &self.path,
                &path,
                format!(
                    "shape {} does not match the eigenvectors' dimension {dim} (expected [{dim}])",
                    h5::format_shape(&shape)
                ),
            ));
        }
        if let Ok(a) = ds.attr("local_dim") {
            let ld = a.read_scalar::<i64>().map_err(|e| {
                Error::dataset(
                    &self.path,
                    &path,
                    format!("attribute local_dim unreadable ({e})"),
                )
            })?;
            if ld != 2 {
                return Err(Error::dataset(
                    &self.path,
                    &path,
                    format!("attribute local_dim = {ld}: only spin-½ (local_dim 2) configurations are supported"),
                ));
            }
        }
        self.limit.check(
            &self.path,
            &path,
            &shape,
            "integers",
            8.0 * dim as f64,
            "to read them",
        )?;
        let conf = h5::read_indices(&self.path, &path, &ds)?;
        if let Some(l) = sector.size.filter(|&l| l < 64) {
            if let Some((i, c)) = conf.iter().enumerate().find(|(_, &c)| (c as u64) >> l != 0) {
                return Err(Error::dataset(
                    &self.path,
                    &path,
                    format!("configuration {c} at position {i} has bits beyond the {l} sites (attribute size)"),
                ));
            }
        }
        let mut sorted = conf.clone();
        sorted.sort_unstable();
        if let Some(w) = sorted.windows(2).find(|w| w[0] == w[1]) {
            return Err(Error::dataset(
                &self.path,
                &path,
                format!("configuration {} appears twice", w[0]),
            ));
        }
        Ok(Some(conf))
    }
}
