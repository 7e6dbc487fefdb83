//! `diagonal` and `offdiagonal` on every selected file, sector and observable, through one
//! per-sector loop ([`each_sector`]): open the sector, read its spectrum and operators
//! (held whole only within the budget), choose the window, then hand the sector to the
//! command's own pass over the eigenvectors.
//!
//! **Prediction policy (`diagonal`).** The microcanonical and canonical predictions need
//! `Aₙₙ` of every state. For diagonal, CSR and energy-basis observables that costs `O(nnz)`
//! per state and is always done. For a dense observable it costs `2·dim²` flops per state,
//! i.e. `n/W` times the window's own projection. `None` (auto) projects all states unless
//! the dense all-state projection would exceed [`project::AUTO_ALL_STATES_MAX_FLOPS`]; then
//! only the window is projected, the microcanonical shell is cut to the window and the
//! canonical prediction is omitted (the result's `predictions.note` says so).
//!
//! **Off-diagonal pass.** The window's matrix elements of all requested observables are
//! streamed in one pass over the eigenvectors (block pairs under the budget) into one
//! accumulator each; no `W × W` matrix is kept.

use super::class::{sector_class, ClassChoice};
use super::operators::load_sector;
use super::Inputs;
use crate::analysis::diagonal::{self, DiagonalResult};
use crate::analysis::offdiagonal::{Accumulator, OffdiagonalOptions, OffdiagonalResult};
use crate::analysis::sector::{ElementsOutput, SectorElements, Timing};
use crate::analysis::thermo::ThermoSource;
use crate::data::{ClassInfo, ColumnSource, Matrix, Operator, Spectrum};
use crate::error::{Context, Result};
use crate::input::{EigenFile, Sector};
use crate::project::{self, Budget, PredictionStates};
use crate::window::WindowSpec;
use std::ops::Range;
use std::time::Instant;

/// What to analyze: the files, the sector, the window, the observables and the budget.
#[derive(Debug, Clone)]
pub struct ElementsRequest {
    /// Input files.
    pub inputs: Inputs,
    /// Only this sector (default: every sector).
    pub sector: Option<String>,
    /// The analysis window.
    pub window: WindowSpec,
    /// Observables (every observable of the sector when empty).
    pub observables: Vec<String>,
    /// Memory and parallelism of the passes.
    pub budget: Budget,
    /// How the symmetry class is chosen.
    pub class: ClassChoice,
    /// Where the thermal predictions come from (`--thermo`, [`super::thermal`]).
    pub thermo: super::thermal::ThermoRequest,
}

/// One open sector, handed by [`each_sector`] to a command's pass.
pub struct SectorWork<'a> {
    /// The file.
    pub file: &'a EigenFile,
    /// The sector.
    pub sector: &'a Sector,
    /// Its ascending spectrum.
    pub spectrum: Spectrum,
    /// The named operators.
    pub ops: Vec<(String, Operator)>,
    /// Their column source (eigenvector reader, or none for energy-basis operators).
    pub src: Box<dyn ColumnSource>,
    /// The window's state indices.
    pub range: Range<usize>,
    /// The window's label.
    pub label: String,
    /// Seconds per stage, filled by the pass.
    pub timing: Timing,
    /// States whose `Aₙₙ` fed the predictions (`diagonal` only).
    pub prediction_states: Option<PredictionStates>,
    /// The sector's symmetry class.
    pub class: ClassInfo,
}

impl SectorWork<'_> {
    /// One pass over the block pairs `A_IJ` of the states `rows` for every operator at once
    /// ([`project::for_each_block_timed`] under `budget`), each operator's block handed to
    /// `add` with the operator's index; the projector's stage times go into `timing`.
    pub fn block_pass(
        &mut self,
        rows: Range<usize>,
        budget: &Budget,
        mut add: impl FnMut(usize, &project::BlockPair, &Matrix) -> Result<()>,
    ) -> Result<()> {
        let mut st = project::StageTiming::default();
        let refs = self.refs();
        project::for_each_block_timed(self.src.as_ref(), &refs, rows, budget, &mut st, |blk| {
            for (k, m) in blk.elements.iter().enumerate() {
                add(k, blk, m)?;
            }
            Ok(())
        })
        .at(self.file.path(), self.group())?;
        self.timing.add_projector(&st);
        Ok(())
    }

    /// The operators, in order.
    pub fn refs(&self) -> Vec<&Operator> {
        self.ops.iter().map(|(_, o)| o).collect()
    }

    /// The sector's group path (for error context).
    pub fn group(&self) -> &str {
        &self.sector.group
    }
}

/// Runs `pass` on every selected file and sector; the results of each sector go into one
/// [`SectorElements`].
pub fn each_sector<T: crate::analysis::ensemble::figures::Figures>(
    req: &ElementsRequest,
    mut pass: impl FnMut(&mut SectorWork<'_>) -> Result<Vec<T>>,
) -> Result<ElementsOutput<T>> {
    let files = req.inputs.open()?;
    let mut sectors = Vec::new();
    for f in &files {
        for s in f.select(req.sector.as_deref())? {
            crate::progress::check_interrupt()?;
            let t0 = Instant::now();
            let spectrum = f.spectrum(s)?;
            let (ops, src) = load_sector(f, s, &req.observables, &spectrum, req.budget.bytes)?;
            if s.dim.is_some() {
                crate::input::validate::require_orthonormal(f, s, src.as_ref())?;
            }
            let range = req.window.indices(&spectrum.energies);
            let refs: Vec<&Operator> = ops.iter().map(|(_, o)| o).collect();
            let class = sector_class(f, s, Some(src.as_ref()), &refs, req.class)?;
            let mut work = SectorWork {
                file: f,
                sector: s,
                spectrum,
                ops,
                src,
                range,
                label: req.window.label(),
                timing: Timing {
                    load_seconds: t0.elapsed().as_secs_f64(),
                    ..Timing::default()
                },
                prediction_states: None,
                class,
            };
            let observables = pass(&mut work)?;
            work.timing.total_seconds = t0.elapsed().as_secs_f64();
            sectors.push(SectorElements {
                file: f.path().display().to_string(),
                sector: s.name.clone(),
                name: s.name.clone(),
                n_states: work.spectrum.len(),
                dim: s.dim,
                class: work.class,
                prediction_states: work.prediction_states,
                timing: work.timing,
                realization: s.realization,
                disorder: s.disorder,
                size: s.size,
                label_attribute: s.label.clone().unwrap_or_default(),
                observables,
            });
        }
    }
    let mut out = ElementsOutput {
        memory_budget: req.budget.bytes,
        sectors,
        ensembles: Vec::new(),
    };
    out.average_realizations();
    Ok(out)
}

/// `eigentherm diagonal`: `Aₙₙ` of the states the predictions use (streamed under the
/// budget), then the window's figures; `policy` forces the prediction states (`None`: auto).
pub fn diagonal(
    req: &ElementsRequest,
    policy: Option<PredictionStates>,
    per_state: bool,
) -> Result<ElementsOutput<DiagonalResult>> {
    each_sector(req, |w| {
        let refs = w.refs();
        let n = w.spectrum.len();
        let t_th = Instant::now();
        let th = super::thermal::sector_thermo(w.file, w.sector, &refs, &req.thermo, &req.budget)?;
        let th_seconds = t_th.elapsed().as_secs_f64();
        // predictions from another source need only the window's A_nn
        let external = th.source != ThermoSource::Full;
        let which = policy.unwrap_or_else(|| {
            if external {
                PredictionStates::Window
            } else {
                project::auto_prediction_states(&refs, w.sector.dim.unwrap_or(0), n)
            }
        });
        let states = match which {
            PredictionStates::All => 0..n,
            PredictionStates::Window => w.range.clone(),
        };
        let first = states.start;
        let mut st = project::StageTiming::default();
        let diags =
            project::project_diagonal_timed(w.src.as_ref(), &refs, states, &req.budget, &mut st)
                .at(w.file.path(), w.group())?;
        w.timing.add_projector(&st);
        let t_an = Instant::now();
        let mut observables = Vec::new();
        for (k, ((name, _), d)) in w.ops.iter().zip(&diags).enumerate() {
            let e = &w.spectrum.energies;
            let offset = match which {
                PredictionStates::All => 0,
                PredictionStates::Window => w.range.start,
            };
            let mut r = match (th.predictor(k), which) {
                (Some(p), _) => diagonal::analyze_with(
                    name,
                    e,
                    d,
                    offset,
                    w.range.clone(),
                    &w.label,
                    w.sector.dim,
                    &p,
                ),
                (None, PredictionStates::All) => {
                    diagonal::analyze(name, e, d, w.range.clone(), &w.label, w.sector.dim)
                }
                (None, PredictionStates::Window) => {
                    diagonal::analyze_window(name, e, d, w.range.clone(), &w.label, w.sector.dim)
                }
            }
            .at(w.file.path(), w.group())?;
            if per_state {
                r.per_state = Some(diagonal::PerState {
                    first_state: first,
                    energies: e[first..first + d.len()].to_vec(),
                    values: d.clone(),
                });
            }
            observables.push(r);
        }
        w.timing.analyze_seconds += t_an.elapsed().as_secs_f64() + th_seconds;
        w.prediction_states = Some(which);
        Ok(observables)
    })
}

/// `eigentherm offdiagonal`: the window's block pairs of all observables in one pass, into
/// one accumulator each.
pub fn offdiagonal(
    req: &ElementsRequest,
    opts: &OffdiagonalOptions,
) -> Result<ElementsOutput<OffdiagonalResult>> {
    each_sector(req, |w| {
        let (path, group) = (w.file.path().to_path_buf(), w.group().to_string());
        let opts = OffdiagonalOptions {
            class: Some(w.class.clone()),
            ..opts.clone()
        };
        let opts = &opts;
        let refs = w.refs();
        let t_th = Instant::now();
        let th = super::thermal::sector_thermo(w.file, w.sector, &refs, &req.thermo, &req.budget)?;
        let th_seconds = t_th.elapsed().as_secs_f64();
        let mut accs = w
            .ops
            .iter()
            .enumerate()
            .map(|(k, (name, _))| {
                let acc =
                    Accumulator::new(name, &w.spectrum.energies, w.range.clone(), &w.label, opts)?;
                Ok(match th.predictor(k) {
                    Some(p) => {
                        let sigma = th.resolution();
                        acc.with_entropy(&p, sigma)
                    }
                    None => acc,
                })
            })
            .collect::<Result<Vec<_>>>()
            .at(&path, &group)?;
        let rows = w.range.clone();
        w.block_pass(rows, &req.budget, |k, blk, m| accs[k].add_block(blk, m))?;
        let t_an = Instant::now();
        let observables = accs
            .into_iter()
            .map(Accumulator::finish)
            .collect::<Result<Vec<_>>>()
            .at(&path, &group)?;
        w.timing.analyze_seconds += t_an.elapsed().as_secs_f64() + th_seconds;
        Ok(observables)
    })
}
