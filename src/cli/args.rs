//! Flag groups shared by the subcommands. Each flag is defined here once; its value is
//! handed as typed to [`crate::pipeline::flags`], which checks it and resolves it into the
//! library's option structs (the Python module resolves through the same functions).

use crate::analysis::offdiagonal::OffdiagonalOptions;
use crate::analysis::quench;
use crate::error::Result;
use crate::pipeline::flags::{self, DynamicsFlags, InputFlags};
use crate::pipeline::Inputs;
use std::path::PathBuf;

/// Input files and dataset path overrides.
#[derive(Debug, Clone, clap::Args)]
pub struct InputArgs {
    /// HDF5 files holding eigenbases (see the README for the layout).
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// Dataset path overrides.
    #[command(flatten)]
    pub paths: PathArgs,
}

impl InputArgs {
    /// The flags as typed, with `--memory`.
    pub fn flags(&self, memory: &MemoryArg) -> InputFlags {
        let p = &self.paths;
        InputFlags {
            files: self.files.clone(),
            energies_path: p.energies_path.clone(),
            eigenvectors_path: p.eigenvectors_path.clone(),
            layout: p.layout.clone(),
            observable_paths: p.observable_paths.clone(),
            state_paths: p.state_paths.clone(),
            attributes: p.attributes.clone(),
            hamiltonian_path: p.hamiltonian_path.clone(),
            memory: memory.memory.clone(),
            ensemble_by: Some(p.ensemble_by.clone()),
        }
    }

    /// The files and their overrides, every read limited by the `--memory` budget.
    pub fn resolve_within(&self, memory: &MemoryArg) -> Result<Inputs> {
        self.flags(memory).inputs()
    }
}

/// Dataset path overrides for files that follow another layout.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct PathArgs {
    /// Path of the energies dataset inside the file (overrides sector discovery).
    #[arg(long, value_name = "PATH")]
    pub energies_path: Option<String>,
    /// Path of the eigenvectors dataset inside the file.
    #[arg(long, value_name = "PATH")]
    pub eigenvectors_path: Option<String>,
    /// Eigenvector layout when the file does not say: `columns` ([dim, n]) or `rows` ([n, dim]).
    #[arg(long, value_name = "columns|rows")]
    pub layout: Option<String>,
    /// Extra observable at a custom path, as NAME=PATH (repeatable).
    #[arg(long = "observable-path", value_name = "NAME=PATH")]
    pub observable_paths: Vec<String>,
    /// Extra stored state at a custom path, as NAME=PATH (repeatable; `--state stored:NAME`
    /// uses it); a relative PATH is taken inside each sector.
    #[arg(long = "state-path", value_name = "NAME=PATH")]
    pub state_paths: Vec<String>,
    /// Sector attribute for files that lack it (or to replace it), as [FILE:]NAME=VALUE
    /// (repeatable): size, model, label, symmetry_class, disorder, realization; without
    /// FILE: every file.
    #[arg(long = "attribute", value_name = "[FILE:]NAME=VALUE")]
    pub attributes: Vec<String>,
    /// Path of the Hamiltonian dataset or CSR group.
    #[arg(long, value_name = "PATH")]
    pub hamiltonian_path: Option<String>,
    /// Sector attribute that holds the ensemble parameter of realizations (reported as
    /// `disorder`); `none`: analyse every realization on its own.
    #[arg(long, value_name = "ATTR|none", default_value = "disorder")]
    pub ensemble_by: String,
}

/// Sector selection.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct SectorArg {
    /// Analyze only this sector (group path, e.g. `even` or `/L12/odd`); default: every sector.
    #[arg(long, value_name = "NAME")]
    pub sector: Option<String>,
}

/// Output format.
#[derive(Debug, Clone, Copy, Default, clap::Args)]
pub struct JsonArg {
    /// Print JSON to stdout instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Window of states.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct WindowArgs {
    /// Window of states by index fraction, LO:HI (states floor(LO·n) ..= ceil(HI·n) − 1).
    #[arg(long, value_name = "LO:HI")]
    pub window: Option<String>,
    /// Window of states by energy density ε = (E − E_min)/(E_max − E_min), LO:HI (replaces --window).
    #[arg(long, value_name = "LO:HI")]
    pub energy_window: Option<String>,
}

/// Observables to analyze.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct ObservableArgs {
    /// Observable to analyze (repeatable; `diagonal`/`offdiagonal` default to every
    /// observable of the sector, the other commands need at least one).
    #[arg(long = "observable", value_name = "NAME")]
    pub observables: Vec<String>,
}

impl ObservableArgs {
    /// The observables, at least one.
    pub fn required(&self) -> Result<Vec<String>> {
        flags::required_observables(&self.observables)
    }
}

/// Working-memory budget of every pass over the eigenvectors.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct MemoryArg {
    /// Working-memory budget of the passes over the eigenvectors and of any one read from a file, e.g. 6G or 512M (default: half the machine's memory).
    #[arg(long, value_name = "SIZE")]
    pub memory: Option<String>,
}

/// Source of the thermal predictions (pipeline::thermal).
#[derive(Debug, Clone, clap::Args)]
pub struct ThermoArgs {
    /// S(E), beta(E) and predictions from: full (stored states), kpm (kernel polynomial method on the stored hamiltonian), stored (the `spectrum` dataset), auto (partial bases: stored, else kpm, else full).
    #[arg(long, value_name = "auto|full|kpm|stored", default_value = "auto")]
    pub thermo: String,
    /// Chebyshev moments N of the kernel polynomial method.
    #[arg(long, value_name = "N", default_value_t = 512)]
    pub kpm_moments: usize,
    /// Random vectors R of the stochastic trace (0: exact trace over all basis vectors).
    #[arg(long, value_name = "R", default_value_t = 32)]
    pub kpm_vectors: usize,
    /// Seed of the random vectors.
    #[arg(long, value_name = "S", default_value_t = 1)]
    pub kpm_seed: u64,
}

impl ThermoArgs {
    /// The flags as typed.
    pub fn flags(&self) -> flags::ThermoFlags {
        flags::ThermoFlags {
            thermo: Some(self.thermo.clone()),
            kpm_moments: Some(self.kpm_moments),
            kpm_vectors: Some(self.kpm_vectors),
            kpm_seed: Some(self.kpm_seed),
        }
    }
}

/// Frequency cut of the low-ω statistics.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct OmegaArg {
    /// Frequency cut of the low-ω statistics (default: 10 mean level spacings of the window).
    #[arg(long, value_name = "W")]
    pub omega_max: Option<f64>,
}

impl OmegaArg {
    /// The off-diagonal options.
    pub fn resolve(&self) -> Result<OffdiagonalOptions> {
        flags::offdiagonal(self.omega_max)
    }
}

/// Initial states and time grid of quenches.
#[derive(Debug, Clone, clap::Args)]
pub struct DynamicsArgs {
    /// Initial state (repeatable): stored:NAME | index:K | product:LETTERS (u d + - r l per site, site 1 first) | product:x+ (also x-, y+, y-, z+, z-).
    #[arg(long = "state", value_name = "SPEC")]
    pub states: Vec<String>,
    /// Time grid: lin:T0:T1:N or log:T0:T1:N (times in units of ħ/energy unit).
    #[arg(long, value_name = "GRID", default_value = quench::DEFAULT_TIMES)]
    pub times: String,
    /// Fraction of the norm that may be dropped: the trace keeps the largest weights |cₙ|² until 1 − EPS of the norm.
    #[arg(long, value_name = "EPS", default_value_t = quench::DEFAULT_DROP_WEIGHT)]
    pub drop_weight: f64,
}

impl Default for DynamicsArgs {
    fn default() -> Self {
        DynamicsArgs {
            states: Vec::new(),
            times: quench::DEFAULT_TIMES.to_string(),
            drop_weight: quench::DEFAULT_DROP_WEIGHT,
        }
    }
}

impl DynamicsArgs {
    /// The flags as typed.
    pub fn flags(&self) -> DynamicsFlags {
        DynamicsFlags {
            states: self.states.clone(),
            times: Some(self.times.clone()),
            drop_weight: Some(self.drop_weight),
        }
    }
}

/// Symmetry class of the references.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct ClassArg {
    /// Symmetry class of the reference ensembles: orthogonal (GOE), unitary (GUE), or auto
    /// (the sector attribute symmetry_class, else decided from the data, never from the
    /// storage type alone).
    #[arg(
        long = "class",
        value_name = "orthogonal|unitary|auto",
        default_value = "auto"
    )]
    pub class: String,
}
