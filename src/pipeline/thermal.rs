//! The thermal source of a sector (`--thermo full|kpm|stored|auto`): where `S(E)`, `β(E)`
//! and the canonical and microcanonical predictions come from.
//!
//! - `full`: the stored states (their energies and `Aₙₙ`), as before;
//! - `kpm`: the kernel polynomial method on the stored `hamiltonian`
//!   ([`crate::project::chebyshev`], [`crate::analysis::kpm`]);
//! - `stored`: `S(E)` and `β(E)` from the stored `spectrum` dataset (every eigenvalue), the
//!   averages of the observables from the KPM when a Hamiltonian is stored;
//! - `auto` (default): for a partial eigenbasis (`n < dim`) `stored` when a `spectrum` is
//!   stored, else `kpm` when a Hamiltonian is stored, else `full`; `full` for a complete
//!   basis or observables stored in the energy basis.

use crate::analysis::kpm::{KpmPredictor, KpmThermo};
use crate::analysis::thermo::ThermoSource;
use crate::data::{Operator, OperatorForm};
use crate::error::{Context, Error, Result};
use crate::input::{EigenFile, Sector};
use crate::project::chebyshev::{self, TraceMode};
use crate::project::{Budget, PredictionStates};

/// The `--thermo` choice.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ThermoChoice {
    /// Partial bases: `stored`, else `kpm`, else `full`; complete bases: `full`.
    Auto,
    /// A fixed source.
    Fixed(ThermoSource),
}

impl ThermoChoice {
    /// Parses `auto`, `full`, `kpm` or `stored` (`--thermo`).
    pub fn parse(s: &str) -> Result<ThermoChoice> {
        Ok(match s.to_ascii_lowercase().as_str() {
            "auto" => ThermoChoice::Auto,
            "full" => ThermoChoice::Fixed(ThermoSource::Full),
            "kpm" => ThermoChoice::Fixed(ThermoSource::Kpm),
            "stored" => ThermoChoice::Fixed(ThermoSource::Stored),
            t => {
                return Err(Error::usage(format!(
                    "--thermo '{t}': expected auto, full, kpm or stored"
                )))
            }
        })
    }
}

/// The thermal source asked for, with the KPM settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ThermoRequest {
    /// Which source.
    pub choice: ThermoChoice,
    /// Number N of Chebyshev moments.
    pub moments: usize,
    /// Number R of random vectors (0: the exact trace over all unit vectors).
    pub vectors: usize,
    /// Seed of the random vectors.
    pub seed: u64,
}

impl Default for ThermoRequest {
    /// `auto`, 512 moments, 32 random vectors, seed 1.
    fn default() -> Self {
        ThermoRequest {
            choice: ThermoChoice::Auto,
            moments: 512,
            vectors: 32,
            seed: 1,
        }
    }
}

impl ThermoRequest {
    /// A request with at least 16 moments.
    pub fn new(choice: ThermoChoice, moments: usize, vectors: usize, seed: u64) -> Result<Self> {
        if moments < 16 {
            return Err(Error::usage(format!(
                "--kpm-moments {moments}: at least 16 moments are needed"
            )));
        }
        Ok(ThermoRequest {
            choice,
            moments,
            vectors,
            seed,
        })
    }
}

/// The resolved source of one sector.
#[derive(Debug, Clone)]
pub struct SectorThermo {
    /// The source.
    pub source: ThermoSource,
    /// KPM moments of the Hamiltonian and the observables, when computed.
    pub kpm: Option<KpmThermo>,
    /// The stored spectrum, when used.
    pub spectrum: Option<Vec<f64>>,
}

impl SectorThermo {
    /// The states whose `Aₙₙ` the predictions need: `auto` for the source `full`, the
    /// window's only for the others.
    pub fn prediction_states(&self, auto: PredictionStates) -> PredictionStates {
        match self.source {
            ThermoSource::Full => auto,
            _ => PredictionStates::Window,
        }
    }

    /// Energy resolution of the source's density of states: the Jackson kernel's `πa/N`
    /// (KPM), or the Gaussian width of a stored spectrum's.
    pub fn resolution(&self) -> f64 {
        match (&self.spectrum, &self.kpm) {
            (Some(s), _) => crate::analysis::thermo::default_dos_width(s),
            (None, Some(k)) => k.info().resolution,
            (None, None) => 0.0,
        }
    }

    /// Predictions of observable `k`; `None` for the source `full`.
    pub fn predictor(&self, k: usize) -> Option<KpmPredictor<'_>> {
        (self.source != ThermoSource::Full).then_some(KpmPredictor {
            kpm: self.kpm.as_ref(),
            k,
            spectrum: self.spectrum.as_deref(),
        })
    }
}

/// Resolves `req` for one sector and computes what the source needs (`ops`: the
/// observables, in order).
pub fn sector_thermo(
    file: &EigenFile,
    sector: &Sector,
    ops: &[&Operator],
    req: &ThermoRequest,
    budget: &Budget,
) -> Result<SectorThermo> {
    let partial = sector.dim.is_some_and(|d| sector.n_states < d);
    let energy_basis = ops.iter().any(|o| o.form() == OperatorForm::EnergyBasis);
    let spectrum = file.stored_spectrum(sector)?;
    let source = match req.choice {
        ThermoChoice::Fixed(s) => s,
        ThermoChoice::Auto if !partial || energy_basis => ThermoSource::Full,
        ThermoChoice::Auto if spectrum.is_some() => ThermoSource::Stored,
        ThermoChoice::Auto if sector.has_hamiltonian => ThermoSource::Kpm,
        ThermoChoice::Auto => ThermoSource::Full,
    };
    let missing = |what: &str| {
        Error::dataset(
            file.path(),
            sector.group.clone(),
            format!("--thermo {source}: the sector stores no {what}"),
        )
    };
    let spectrum = match source {
        ThermoSource::Full => {
            return Ok(SectorThermo {
                source,
                kpm: None,
                spectrum: None,
            })
        }
        ThermoSource::Stored => Some(spectrum.ok_or_else(|| missing("`spectrum` dataset"))?),
        ThermoSource::Kpm => None,
    };
    let h = file.hamiltonian(sector)?;
    let kpm = match (h, source) {
        (None, ThermoSource::Kpm) => return Err(missing("`hamiltonian`")),
        (None, _) => None,
        (Some(h), _) => {
            let mode = match req.vectors {
                0 => TraceMode::Exact,
                r => TraceMode::Stochastic {
                    vectors: r,
                    seed: req.seed,
                },
            };
            let m = chebyshev::moments(&h, ops, req.moments, mode, budget)
                .at(file.path(), &sector.group)?;
            Some(KpmThermo::new(&m))
        }
    };
    Ok(SectorThermo {
        source,
        kpm,
        spectrum,
    })
}
