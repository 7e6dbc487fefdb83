//! The summary of a file printed by `eigentherm inspect` (and reused by `study`):
//! sectors with their datasets, element types, layout, chunking, observables,
//! states and attributes; the spectrum's range; optionally the numerical checks
//! of [`super::validate`] (orthonormality on a sample, residuals `‖Hv − Ev‖`)
//! and a full read of every observable, state and Hamiltonian (finite values,
//! Hermiticity, CSR structure).

use super::validate::{self, OrthoCheck, ResidualCheck};
use super::{EigenFile, Sector};
use crate::data::ColumnSource;
use crate::error::Result;
use serde::Serialize;

/// Summary of one file.
#[derive(Debug, Clone, Serialize)]
pub struct FileSummary {
    /// The file's path.
    pub file: String,
    /// One entry per selected sector.
    pub sectors: Vec<SectorSummary>,
}

/// Summary of one sector.
#[derive(Debug, Clone, Serialize)]
pub struct SectorSummary {
    /// Sector name (JSON `sector`, the key every command uses; `name` holds the same).
    #[serde(rename = "sector")]
    pub sector_name: String,
    /// What discovery found (names, shapes, types, paths).
    #[serde(flatten)]
    pub sector: Sector,
    /// Lowest energy.
    pub energy_min: f64,
    /// Highest energy.
    pub energy_max: f64,
    /// True when the energies were stored in ascending order.
    pub sorted: bool,
    /// Results of `--verify`, when asked.
    pub verify: Option<Verification>,
}

/// Results of the numerical checks of one sector.
#[derive(Debug, Clone, Serialize)]
pub struct Verification {
    /// Orthonormality on a sample (when eigenvectors are stored).
    pub orthonormality: Option<OrthoCheck>,
    /// Largest residual on a sample (when eigenvectors and a Hamiltonian are stored).
    pub residual: Option<ResidualCheck>,
    /// Number of observables, states and Hamiltonians read in full and found valid
    /// (finite, Hermitian, CSR structure sound); a bad one ends the inspection with its error.
    pub operators_checked: usize,
}

impl Verification {
    /// True when every check that ran passed.
    pub fn pass(&self) -> bool {
        self.orthonormality.as_ref().is_none_or(|c| c.pass)
            && self.residual.as_ref().is_none_or(|c| c.pass)
    }
}

/// Builds the summary of the sectors `sector` (all when `None`) of `file`, running
/// the checks when `verify` is set (with [`validate::SAMPLE`] sampled states).
pub fn inspect(file: &EigenFile, sector: Option<&str>, verify: bool) -> Result<FileSummary> {
    let mut sectors = Vec::new();
    for s in file.select(sector)? {
        let spec = file.spectrum_quiet(s)?;
        let verification = if verify {
            let mut v = Verification {
                orthonormality: None,
                residual: None,
                operators_checked: 0,
            };
            for o in &s.observables {
                file.observable(s, &o.name)?;
                v.operators_checked += 1;
            }
            for st in &s.states {
                file.state(s, st)?;
                v.operators_checked += 1;
            }
            if s.eigenvectors_path.is_some() {
                let reader = file.vectors(s, &spec)?;
                let k = validate::sample_within(file.limit(), reader.dim());
                v.orthonormality = Some(validate::check_basis(
                    &reader,
                    k,
                    validate::ortho_tolerance(s),
                    file.limit(),
                )?);
                if let Some(h) = file.hamiltonian(s)? {
                    v.operators_checked += 1;
                    v.residual = Some(validate::residuals(
                        &reader,
                        &spec,
                        &h,
                        k,
                        validate::residual_tolerance(s),
                    )?);
                }
            }
            Some(v)
        } else {
            None
        };
        let mut sector = s.clone();
        (sector.layout, sector.layout_source) = file.layout(s)?;
        sectors.push(SectorSummary {
            sector_name: sector.name.clone(),
            sector,
            energy_min: spec.energies.first().copied().unwrap_or(f64::NAN),
            energy_max: spec.energies.last().copied().unwrap_or(f64::NAN),
            sorted: spec.was_sorted(),
            verify: verification,
        });
    }
    Ok(FileSummary {
        file: file.path().display().to_string(),
        sectors,
    })
}
