//! Options shared by the analysis subcommands: input files, dataset path
//! overrides, sector and window selection, output format.

use crate::error::Result;
use crate::window::{Window, WindowSpec};
use std::path::PathBuf;

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
    /// Path of the Hamiltonian dataset or CSR group.
    #[arg(long, value_name = "PATH")]
    pub hamiltonian_path: Option<String>,
}

/// Sector, window and output options of the analysis subcommands.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct SelectArgs {
    /// Analyse only this sector (group path, e.g. `even` or `/L12/odd`); default: every sector.
    #[arg(long, value_name = "NAME")]
    pub sector: Option<String>,
    /// Window of states by index fraction, LO:HI (states floor(LO·n) ..= ceil(HI·n) − 1).
    #[arg(long, value_name = "LO:HI")]
    pub window: Option<String>,
    /// Window of states by energy density ε = (E − E_min)/(E_max − E_min), LO:HI (replaces --window).
    #[arg(long, value_name = "LO:HI")]
    pub energy_window: Option<String>,
    /// Print JSON to stdout instead of text.
    #[arg(long)]
    pub json: bool,
}

impl SelectArgs {
    /// The window to use, with `default` when none was given.
    pub fn window_spec(&self, default: Window) -> Result<WindowSpec> {
        if let Some(e) = &self.energy_window {
            if self.window.is_some() {
                return Err(crate::Error::usage(
                    "give --window or --energy-window, not both",
                ));
            }
            return Ok(WindowSpec::EnergyDensity(Window::parse(e)?));
        }
        match &self.window {
            Some(w) => Ok(WindowSpec::Fraction(Window::parse(w)?)),
            None => Ok(WindowSpec::Fraction(default)),
        }
    }
}

/// Input files of an analysis subcommand.
#[derive(Debug, Clone, clap::Args)]
pub struct InputArgs {
    /// HDF5 files holding eigenbases (see the README for the layout).
    #[arg(required = true, value_name = "FILE")]
    pub files: Vec<PathBuf>,
    /// Dataset path overrides.
    #[command(flatten)]
    pub paths: PathArgs,
}

impl PathArgs {
    /// The dataset path overrides for [`crate::input::EigenFile::open`]
    /// (`--observable-path` values are split at the first `=` into NAME and PATH).
    pub fn overrides(&self) -> Result<crate::input::Overrides> {
        let layout = match &self.layout {
            Some(l) => Some(crate::input::Layout::parse(l)?),
            None => None,
        };
        let observables = self
            .observable_paths
            .iter()
            .map(|s| match s.split_once('=') {
                Some((n, p)) if !n.is_empty() && !p.is_empty() => {
                    Ok((n.to_string(), p.to_string()))
                }
                _ => Err(crate::Error::usage(format!(
                    "--observable-path '{s}' is not NAME=PATH"
                ))),
            })
            .collect::<Result<Vec<_>>>()?;
        Ok(crate::input::Overrides {
            energies: self.energies_path.clone(),
            eigenvectors: self.eigenvectors_path.clone(),
            layout,
            observables,
            hamiltonian: self.hamiltonian_path.clone(),
        })
    }
}

impl InputArgs {
    /// Opens every input file (read-only) with the path overrides; the first bad
    /// file ends with its error.
    pub fn open(&self) -> Result<Vec<crate::input::EigenFile>> {
        let ov = self.paths.overrides()?;
        self.files
            .iter()
            .map(|f| crate::input::EigenFile::open(f, &ov))
            .collect()
    }
}

/// Observables and projector memory of the matrix-element subcommands.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct ObservableArgs {
    /// Observable to analyse (repeatable); default: every observable of the sector.
    #[arg(long = "observable", value_name = "NAME")]
    pub observables: Vec<String>,
    /// Working-memory budget of the projector, e.g. 6G or 512M (default: half the machine's memory).
    #[arg(long, value_name = "SIZE")]
    pub memory: Option<String>,
}

/// Results of one sector of a matrix-element subcommand (`diagonal`, `offdiagonal`).
#[derive(Debug, Clone, serde::Serialize)]
pub struct SectorReport<T> {
    /// The file.
    pub file: String,
    /// Sector name.
    pub name: String,
    /// Number of stored states.
    pub n_states: usize,
    /// Hilbert-space dimension, when eigenvectors are stored.
    pub dim: Option<usize>,
    /// States whose `Aₙₙ` fed the thermal predictions (`all` or `window`; `diagonal` only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub prediction_states: Option<crate::project::PredictionStates>,
    /// Seconds per stage.
    pub timing: crate::commands::diagonal::Timing,
    /// One result per observable.
    pub observables: Vec<T>,
}

/// JSON document of a matrix-element subcommand.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Report<T> {
    /// Projector memory budget in bytes.
    pub memory_budget: usize,
    /// All sectors of all files.
    pub sectors: Vec<SectorReport<T>>,
}
