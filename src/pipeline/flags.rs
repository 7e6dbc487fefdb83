//! Options as the command line spells them — strings and numbers as typed, `None` for a
//! flag not given — and their one resolution into the pipeline's requests
//! ([`LevelsRequest`], [`ElementsRequest`], [`QuenchRequest`], [`ScalingRequest`],
//! [`StudyRequest`]). The command line (`src/cli/`) and the Python module
//! (`python/`) both fill these structs, so that every value is checked and defaulted in one
//! place and a bad value gives the same one-line error from both (`--window 0.9:0.1: ...`).
//! Messages name the command-line flag.

use super::class::ClassChoice;
use super::elements::ElementsRequest;
use super::entanglement::EntanglementRequest;
use super::levels::LevelsRequest;
use super::quench::QuenchRequest;
use super::scaling::ScalingRequest;
use super::sector::SectorSettings;
use super::study::StudyRequest;
use super::thermal::{ThermoChoice, ThermoRequest};
use super::{Inputs, Layout, Overrides};
use crate::analysis::gauge::{Cutoff, GaugeOptions, Partners};
use crate::analysis::levels::{LevelOptions, UnfoldMethod};
use crate::analysis::offdiagonal::OffdiagonalOptions;
use crate::analysis::quench::{self, state::StateSpec, QuenchOptions, TimeGrid};
use crate::data::SymmetryClass;
use crate::error::{Error, Result};
use crate::project::{Budget, PredictionStates};
use crate::window::{Window, WindowSpec};
use std::path::PathBuf;

/// Input files, dataset path overrides and the memory budget (`--memory`).
#[derive(Debug, Clone, Default)]
pub struct InputFlags {
    /// HDF5 files holding eigenbases.
    pub files: Vec<PathBuf>,
    /// `--energies-path`.
    pub energies_path: Option<String>,
    /// `--eigenvectors-path`.
    pub eigenvectors_path: Option<String>,
    /// `--layout columns|rows`.
    pub layout: Option<String>,
    /// `--observable-path NAME=PATH` (repeatable).
    pub observable_paths: Vec<String>,
    /// `--state-path NAME=PATH` (repeatable).
    pub state_paths: Vec<String>,
    /// `--attribute [FILE:]NAME=VALUE` (repeatable).
    pub attributes: Vec<String>,
    /// `--hamiltonian-path`.
    pub hamiltonian_path: Option<String>,
    /// `--memory SIZE` (default: half the machine's memory).
    pub memory: Option<String>,
    /// `--ensemble-by ATTR|none` (default: the attribute `disorder`).
    pub ensemble_by: Option<String>,
}

/// `NAME=PATH` values of `flag`, split at the first `=` (neither part empty; a state or
/// observable name has no `/`).
fn named_paths(flag: &str, values: &[String]) -> Result<Vec<(String, String)>> {
    values
        .iter()
        .map(|s| match s.split_once('=') {
            Some((n, p)) if !n.is_empty() && !p.is_empty() && !n.contains('/') => {
                Ok((n.to_string(), p.to_string()))
            }
            _ => Err(Error::usage(format!(
                "{flag} '{}' is not NAME=PATH",
                crate::error::escape(s)
            ))),
        })
        .collect()
}

impl InputFlags {
    /// The dataset path overrides (`--observable-path` and `--state-path` values are split
    /// at the first `=` into NAME and PATH); reads are limited by the default budget.
    pub fn overrides(&self) -> Result<Overrides> {
        let layout = self.layout.as_deref().map(Layout::parse).transpose()?;
        Ok(Overrides {
            observables: named_paths("--observable-path", &self.observable_paths)?,
            states: named_paths("--state-path", &self.state_paths)?,
            attributes: self
                .attributes
                .iter()
                .map(|a| crate::input::AttributeOverride::parse(a))
                .collect::<Result<_>>()?,
            energies: self.energies_path.clone(),
            eigenvectors: self.eigenvectors_path.clone(),
            layout,
            hamiltonian: self.hamiltonian_path.clone(),
            memory: None,
            ensemble_by: match &self.ensemble_by {
                Some(s) => crate::input::EnsembleBy::parse(s)?,
                None => crate::input::EnsembleBy::default(),
            },
        })
    }

    /// The budget of the passes over the eigenvectors (`--memory`).
    pub fn budget(&self) -> Result<Budget> {
        Budget::from_arg(self.memory.as_deref())
    }

    /// The files and their overrides, every read limited by the `--memory` budget.
    pub fn inputs(&self) -> Result<Inputs> {
        let mut overrides = self.overrides()?;
        overrides.memory = Some(self.budget()?.bytes);
        Ok(Inputs {
            files: self.files.clone(),
            overrides,
        })
    }
}

/// The window: `--window LO:HI` (index fraction) or `--energy-window LO:HI` (energy
/// density), `default` when neither is given.
pub fn window(
    window: Option<&str>,
    energy_window: Option<&str>,
    default: Window,
) -> Result<WindowSpec> {
    match (window, energy_window) {
        (Some(_), Some(_)) => Err(Error::usage("give --window or --energy-window, not both")),
        (_, Some(e)) => Ok(WindowSpec::EnergyDensity(Window::parse(e)?)),
        (Some(w), None) => Ok(WindowSpec::Fraction(Window::parse(w)?)),
        (None, None) => Ok(WindowSpec::Fraction(default)),
    }
}

/// `--class orthogonal|unitary|auto` (default auto).
pub fn class(class: Option<&str>) -> Result<ClassChoice> {
    let Some(c) = class else {
        return Ok(ClassChoice::Auto);
    };
    if c.eq_ignore_ascii_case("auto") {
        return Ok(ClassChoice::Auto);
    }
    SymmetryClass::parse(c)
        .map(ClassChoice::Given)
        .ok_or_else(|| Error::usage(format!("--class {c}: expected orthogonal, unitary or auto")))
}

/// `--threads N`: sets the size of the global thread pool (once, before any parallel work;
/// `None` leaves every core).
pub fn set_threads(threads: Option<usize>) -> Result<()> {
    let Some(n) = threads else { return Ok(()) };
    if n == 0 {
        return Err(Error::usage("--threads 0: expected at least one thread"));
    }
    rayon::ThreadPoolBuilder::new()
        .num_threads(n)
        .build_global()
        .map_err(|e| Error::usage(format!("--threads {n}: {e}")))
}

/// `--progress auto|always|never`; without the flag the environment variable
/// [`crate::progress::PROGRESS_ENV`], else `auto`. Sets the mode of this process.
pub fn set_progress(flag: Option<&str>) -> Result<()> {
    use crate::progress::{Mode, PROGRESS_ENV};
    let env = std::env::var(PROGRESS_ENV).ok();
    let (given, source) = match (flag, env.as_deref()) {
        (Some(f), _) => (f.to_string(), "--progress".to_string()),
        (None, Some(e)) if !e.trim().is_empty() => (e.trim().to_string(), PROGRESS_ENV.to_string()),
        _ => {
            crate::progress::set_mode(Mode::Auto);
            return Ok(());
        }
    };
    let mode = match given.to_ascii_lowercase().as_str() {
        "auto" => Mode::Auto,
        "always" => Mode::Always,
        "never" => Mode::Never,
        _ => {
            return Err(Error::usage(format!(
                "{source} {}: expected auto, always or never",
                crate::error::escape(&given)
            )))
        }
    };
    crate::progress::set_mode(mode);
    Ok(())
}

/// `--figure-format svg,pdf,png` (default: all three; see
/// [`crate::report::study::FigureFormats`]).
pub fn figure_formats(s: Option<&str>) -> Result<crate::report::study::FigureFormats> {
    match s {
        None => Ok(Default::default()),
        Some(s) => crate::report::study::FigureFormats::parse(s),
    }
}

/// The observables, at least one (`--observable NAME`).
pub fn required_observables(observables: &[String]) -> Result<Vec<String>> {
    if observables.is_empty() {
        return Err(Error::usage("give at least one --observable NAME"));
    }
    Ok(observables.to_vec())
}

/// `--predictions all|window|auto` (default auto): `None` for `auto`.
pub fn predictions(s: Option<&str>) -> Result<Option<PredictionStates>> {
    match s.map(str::to_ascii_lowercase).as_deref() {
        None | Some("auto") => Ok(None),
        Some("all") => Ok(Some(PredictionStates::All)),
        Some("window") => Ok(Some(PredictionStates::Window)),
        Some(_) => Err(Error::usage(format!(
            "--predictions '{}': expected all, window or auto",
            s.unwrap_or_default()
        ))),
    }
}

/// `--omega-max W` (default: 10 mean level spacings of the window).
pub fn offdiagonal(omega_max: Option<f64>) -> Result<OffdiagonalOptions> {
    OffdiagonalOptions::new(omega_max)
}

/// Flags of `levels`.
#[derive(Debug, Clone, Default)]
pub struct LevelsFlags {
    /// Files, path overrides, memory.
    pub input: InputFlags,
    /// `--sector`.
    pub sector: Option<String>,
    /// `--window` (default 0.25:0.75).
    pub window: Option<String>,
    /// `--energy-window`.
    pub energy_window: Option<String>,
    /// `--class`.
    pub class: Option<String>,
    /// `--unfold METHOD`.
    pub unfold: Option<String>,
    /// `--unfold-degree D`.
    pub unfold_degree: Option<usize>,
    /// `--bins N` (default 20).
    pub bins: Option<usize>,
    /// `--sff-eta ETA` (default 0.5).
    pub sff_eta: Option<f64>,
    /// `--thouless-tolerance EPS` (default 0.08).
    pub thouless_tolerance: Option<f64>,
    /// `--degeneracy-tol TOL` (default 1e-10).
    pub degeneracy_tol: Option<f64>,
    /// `--min-levels N` (default 100).
    pub min_levels: Option<usize>,
}

impl LevelsFlags {
    /// The analysis options.
    pub fn options(&self) -> Result<LevelOptions> {
        let d = LevelOptions::default();
        let sff_eta = self.sff_eta.unwrap_or(d.sff_eta);
        if !(sff_eta.is_finite() && sff_eta > 0.0) {
            return Err(Error::usage(format!(
                "--sff-eta {sff_eta}: expected a positive number"
            )));
        }
        let sff_tolerance = self.thouless_tolerance.unwrap_or(d.sff_tolerance);
        if !(sff_tolerance.is_finite() && sff_tolerance > 0.0) {
            return Err(Error::usage(format!(
                "--thouless-tolerance {sff_tolerance}: expected a positive number"
            )));
        }
        let degeneracy_tol = self.degeneracy_tol.unwrap_or(d.degeneracy_tol);
        if !(degeneracy_tol.is_finite() && degeneracy_tol >= 0.0) {
            return Err(Error::usage(format!(
                "--degeneracy-tol {degeneracy_tol}: expected a non-negative number"
            )));
        }
        let bins = self.bins.unwrap_or(d.ratio_bins);
        if bins == 0 {
            return Err(Error::usage("--bins must be at least 1"));
        }
        let unfold = match (&self.unfold, self.unfold_degree) {
            (Some(_), Some(_)) => {
                return Err(Error::usage(
                    "--unfold and --unfold-degree both given: use one (--unfold-degree D is --unfold poly:D)",
                ))
            }
            (Some(m), None) => m
                .parse::<UnfoldMethod>()
                .map_err(|e| Error::usage(format!("--unfold {m}: {e}")))?,
            (None, Some(degree)) => UnfoldMethod::Polynomial { degree },
            (None, None) => UnfoldMethod::default(),
        };
        Ok(LevelOptions {
            unfold,
            ratio_bins: bins,
            sff_eta,
            sff_tolerance,
            degeneracy_tol,
            min_levels: self.min_levels.unwrap_or(d.min_levels),
            ..d
        })
    }

    /// The request of [`super::levels::levels`].
    pub fn request(&self) -> Result<LevelsRequest> {
        let opts = self.options()?;
        let window = window(
            self.window.as_deref(),
            self.energy_window.as_deref(),
            Window::LEVELS,
        )?;
        Ok(LevelsRequest {
            inputs: self.input.inputs()?,
            sector: self.sector.clone(),
            window,
            opts,
            class: class(self.class.as_deref())?,
        })
    }
}

/// Flags of `diagonal` and `offdiagonal`.
#[derive(Debug, Clone, Default)]
pub struct ElementsFlags {
    /// Files, path overrides, memory.
    pub input: InputFlags,
    /// `--sector`.
    pub sector: Option<String>,
    /// `--window` (default 0.4:0.6).
    pub window: Option<String>,
    /// `--energy-window`.
    pub energy_window: Option<String>,
    /// `--observable` (empty: every observable of the sector).
    pub observables: Vec<String>,
    /// `--class`.
    pub class: Option<String>,
    /// `--thermo` and the KPM parameters.
    pub thermo: ThermoFlags,
}

/// The thermal source (`--thermo`, `--kpm-moments`, `--kpm-vectors`, `--kpm-seed`).
#[derive(Debug, Clone, Default)]
pub struct ThermoFlags {
    /// `--thermo auto|full|kpm|stored` (default auto).
    pub thermo: Option<String>,
    /// `--kpm-moments N` (default 512).
    pub kpm_moments: Option<usize>,
    /// `--kpm-vectors R` (default 32; 0: exact trace).
    pub kpm_vectors: Option<usize>,
    /// `--kpm-seed S` (default 1).
    pub kpm_seed: Option<u64>,
}

impl ThermoFlags {
    /// The request of [`super::thermal`].
    pub fn request(&self) -> Result<ThermoRequest> {
        let d = ThermoRequest::default();
        let choice = match &self.thermo {
            Some(t) => ThermoChoice::parse(t)?,
            None => d.choice,
        };
        ThermoRequest::new(
            choice,
            self.kpm_moments.unwrap_or(d.moments),
            self.kpm_vectors.unwrap_or(d.vectors),
            self.kpm_seed.unwrap_or(d.seed),
        )
    }
}

impl ElementsFlags {
    /// The request of [`super::elements`].
    pub fn request(&self) -> Result<ElementsRequest> {
        Ok(ElementsRequest {
            inputs: self.input.inputs()?,
            sector: self.sector.clone(),
            window: window(
                self.window.as_deref(),
                self.energy_window.as_deref(),
                Window::MATRIX_ELEMENTS,
            )?,
            observables: self.observables.clone(),
            budget: self.input.budget()?,
            class: class(self.class.as_deref())?,
            thermo: self.thermo.request()?,
        })
    }
}

/// Flags of `gauge`.
#[derive(Debug, Clone, Default)]
pub struct GaugeFlags {
    /// Files, path overrides, memory.
    pub input: InputFlags,
    /// `--sector`.
    pub sector: Option<String>,
    /// `--window` (default 0.4:0.6).
    pub window: Option<String>,
    /// `--energy-window`.
    pub energy_window: Option<String>,
    /// `--perturbation NAME` (repeatable, at least one).
    pub perturbations: Vec<String>,
    /// `--cutoff MU|K*spacing` (default: L mean level spacings).
    pub cutoff: Option<String>,
    /// `--partners all|window` (default all).
    pub partners: Option<String>,
}

impl GaugeFlags {
    /// The request of [`super::gauge`] and the analysis options.
    pub fn request(&self) -> Result<(ElementsRequest, GaugeOptions)> {
        if self.perturbations.is_empty() {
            return Err(Error::usage("give at least one --perturbation NAME"));
        }
        let partners = match self
            .partners
            .as_deref()
            .map(str::to_ascii_lowercase)
            .as_deref()
        {
            None | Some("all") => Partners::All,
            Some("window") => Partners::Window,
            Some(_) => {
                return Err(Error::usage(format!(
                    "--partners '{}': expected all or window",
                    crate::error::escape(self.partners.as_deref().unwrap_or_default())
                )))
            }
        };
        let cutoff = self.cutoff.as_deref().map(Cutoff::parse).transpose()?;
        let req = ElementsRequest {
            inputs: self.input.inputs()?,
            sector: self.sector.clone(),
            window: window(
                self.window.as_deref(),
                self.energy_window.as_deref(),
                Window::MATRIX_ELEMENTS,
            )?,
            observables: self.perturbations.clone(),
            budget: self.input.budget()?,
            class: ClassChoice::Auto,
            thermo: Default::default(),
        };
        Ok((req, GaugeOptions { cutoff, partners }))
    }
}

/// Flags of `entanglement`.
#[derive(Debug, Clone, Default)]
pub struct EntanglementFlags {
    /// Files, path overrides, memory.
    pub input: InputFlags,
    /// `--sector`.
    pub sector: Option<String>,
    /// `--window` (default 0.4:0.6).
    pub window: Option<String>,
    /// `--energy-window`.
    pub energy_window: Option<String>,
    /// `--cut L_A` (default L/2).
    pub cut: Option<usize>,
}

impl EntanglementFlags {
    /// The request of [`super::entanglement`].
    pub fn request(&self) -> Result<EntanglementRequest> {
        Ok(EntanglementRequest {
            inputs: self.input.inputs()?,
            sector: self.sector.clone(),
            window: window(
                self.window.as_deref(),
                self.energy_window.as_deref(),
                Window::MATRIX_ELEMENTS,
            )?,
            cut: self.cut,
            budget: self.input.budget()?,
        })
    }
}

/// Initial states and time grid of quenches (`--state`, `--times`, `--drop-weight`).
#[derive(Debug, Clone, Default)]
pub struct DynamicsFlags {
    /// `--state SPEC` (repeatable).
    pub states: Vec<String>,
    /// `--times GRID` (default [`quench::DEFAULT_TIMES`]).
    pub times: Option<String>,
    /// `--drop-weight EPS` (default [`quench::DEFAULT_DROP_WEIGHT`]).
    pub drop_weight: Option<f64>,
}

/// The resolved [`DynamicsFlags`].
#[derive(Debug, Clone)]
pub struct Dynamics {
    /// The states: SPEC as given, parsed.
    pub states: Vec<(String, StateSpec)>,
    /// The time grid.
    pub grid: TimeGrid,
    /// The time grid as given.
    pub times: String,
    /// The dropped fraction of the norm.
    pub drop_weight: f64,
}

impl DynamicsFlags {
    /// The parsed states, grid and drop weight.
    pub fn resolve(&self) -> Result<Dynamics> {
        let drop_weight = self.drop_weight.unwrap_or(quench::DEFAULT_DROP_WEIGHT);
        if !(drop_weight.is_finite() && (0.0..1.0).contains(&drop_weight)) {
            return Err(Error::usage(format!(
                "--drop-weight {drop_weight}: expected 0 <= EPS < 1"
            )));
        }
        let times = self
            .times
            .clone()
            .unwrap_or_else(|| quench::DEFAULT_TIMES.to_string());
        Ok(Dynamics {
            states: self
                .states
                .iter()
                .map(|s| Ok((s.clone(), StateSpec::parse(s)?)))
                .collect::<Result<Vec<_>>>()?,
            grid: TimeGrid::parse(&times)?,
            times,
            drop_weight,
        })
    }
}

/// Flags of `quench`.
#[derive(Debug, Clone, Default)]
pub struct QuenchFlags {
    /// Files, path overrides, memory.
    pub input: InputFlags,
    /// `--sector`.
    pub sector: Option<String>,
    /// `--observable` (at least one).
    pub observables: Vec<String>,
    /// States and times (at least one state).
    pub dynamics: DynamicsFlags,
    /// `--shell-width DE` (default: 5 % of the spectral width).
    pub shell_width: Option<f64>,
    /// `--min-window-weight W` (default [`quench::DEFAULT_MIN_WINDOW_WEIGHT`]).
    pub min_window_weight: Option<f64>,
    /// `--renormalise`.
    pub renormalise: bool,
}

impl QuenchFlags {
    /// The request of [`super::quench::quench_all`].
    pub fn request(&self) -> Result<QuenchRequest> {
        let dynamics = self.dynamics.resolve()?;
        if dynamics.states.is_empty() {
            return Err(Error::usage("give at least one --state SPEC"));
        }
        if let Some(w) = self.shell_width {
            if !(w.is_finite() && w > 0.0) {
                return Err(Error::usage(format!(
                    "--shell-width {w}: expected a positive width"
                )));
            }
        }
        Ok(QuenchRequest {
            inputs: self.input.inputs()?,
            sector: self.sector.clone(),
            observables: required_observables(&self.observables)?,
            states: dynamics.states,
            grid: dynamics.grid,
            opts: QuenchOptions {
                shell_half_width: self.shell_width.map(|w| 0.5 * w),
                drop_weight: dynamics.drop_weight,
                min_window_weight: self
                    .min_window_weight
                    .unwrap_or(quench::DEFAULT_MIN_WINDOW_WEIGHT),
                renormalise: self.renormalise,
                ..QuenchOptions::default()
            },
            budget: self.input.budget()?,
        })
    }
}

/// Flags of the per-sector pipeline (`scaling`, `study`).
#[derive(Debug, Clone, Default)]
pub struct ScalingFlags {
    /// Files, path overrides, memory.
    pub input: InputFlags,
    /// `--sector`.
    pub sector: Option<String>,
    /// `--window` of the matrix elements (default 0.4:0.6).
    pub window: Option<String>,
    /// `--energy-window`.
    pub energy_window: Option<String>,
    /// `--observable` (at least one).
    pub observables: Vec<String>,
    /// `--levels-window LO:HI` (default 0.25:0.75).
    pub levels_window: Option<String>,
    /// `--omega-max W`.
    pub omega_max: Option<f64>,
    /// `--class`.
    pub class: Option<String>,
    /// `--thermo` and the KPM parameters.
    pub thermo: ThermoFlags,
    /// `--combine-sectors`.
    pub combine_sectors: bool,
}

impl ScalingFlags {
    /// The request of [`super::scaling::scaling`].
    pub fn request(&self) -> Result<ScalingRequest> {
        let levels_window = match &self.levels_window {
            Some(w) => WindowSpec::Fraction(Window::parse(w)?),
            None => WindowSpec::Fraction(Window::LEVELS),
        };
        Ok(ScalingRequest {
            inputs: self.input.inputs()?,
            sector: self.sector.clone(),
            observables: required_observables(&self.observables)?,
            settings: SectorSettings {
                levels_window,
                window: window(
                    self.window.as_deref(),
                    self.energy_window.as_deref(),
                    Window::MATRIX_ELEMENTS,
                )?,
                offdiagonal: offdiagonal(self.omega_max)?,
                budget: self.input.budget()?,
                class: class(self.class.as_deref())?,
                thermo: self.thermo.request()?,
            },
            combine_sectors: self.combine_sectors,
        })
    }
}

/// Flags of `study` (the output folder is the caller's business: the pipeline writes no
/// files).
#[derive(Debug, Clone, Default)]
pub struct StudyFlags {
    /// The per-sector pipeline.
    pub scaling: ScalingFlags,
    /// Quench states (none: no quench section) and times.
    pub dynamics: DynamicsFlags,
}

impl StudyFlags {
    /// The request of [`super::study::study`].
    pub fn request(&self) -> Result<StudyRequest> {
        let scaling = self.scaling.request()?;
        let dynamics = self.dynamics.resolve()?;
        let quench = (!dynamics.states.is_empty()).then(|| QuenchRequest {
            inputs: scaling.inputs.clone(),
            sector: scaling.sector.clone(),
            observables: scaling.observables.clone(),
            states: dynamics.states,
            grid: dynamics.grid,
            opts: QuenchOptions {
                drop_weight: dynamics.drop_weight,
                ..QuenchOptions::default()
            },
            budget: scaling.settings.budget,
        });
        Ok(StudyRequest {
            scaling,
            quench,
            times_label: dynamics.times,
        })
    }
}
