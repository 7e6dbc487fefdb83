//! The whole per-sector pipeline shared by `scaling` and `study`: level statistics, then
//! per observable the diagonal and off-diagonal figures from the fewest passes over the
//! eigenvectors, and the bootstrap errors of the fluctuation figures
//! ([`crate::analysis::sector`]).
//!
//! Passes: one block-pair pass over the window feeds every observable's off-diagonal
//! accumulator and also yields the window's `Aₙₙ` (its diagonal blocks), so the diagonal
//! pass then reads only the states outside the window. `Aₙₙ` of every state feeds the
//! thermal predictions; for dense operators whose all-state projection would be expensive,
//! only the window is projected ([`project::auto_prediction_states`]) and the canonical
//! prediction is left out.

use super::class::{sector_class, ClassChoice};
use super::operators::load_sector;
use crate::analysis::diagonal;
use crate::analysis::levels::{self, LevelOptions};
use crate::analysis::offdiagonal::{Accumulator, OffdiagonalOptions};
use crate::analysis::sector::{ObservableAnalysis, SectorAnalysis};
use crate::data::{Field, Operator, Spectrum};
use crate::error::{Context, Result};
use crate::input::{EigenFile, Sector};
use crate::project::{self, Budget, PredictionStates};
use crate::window::WindowSpec;
use std::ops::Range;

/// Settings of the per-sector pipeline.
#[derive(Debug, Clone)]
pub struct SectorSettings {
    /// Window of the level statistics.
    pub levels_window: WindowSpec,
    /// Window of the matrix-element analyses.
    pub window: WindowSpec,
    /// Off-diagonal options (omega_max).
    pub offdiagonal: OffdiagonalOptions,
    /// Memory and parallelism of the passes.
    pub budget: Budget,
    /// How the symmetry class is chosen.
    pub class: ClassChoice,
    /// Where the thermal predictions come from (`--thermo`, [`super::thermal`]).
    pub thermo: super::thermal::ThermoRequest,
}

/// Runs the whole pipeline on one sector for the observables `names` (all when empty).
pub fn analyze_sector(
    file: &EigenFile,
    sector: &Sector,
    names: &[String],
    settings: &SectorSettings,
) -> Result<SectorAnalysis> {
    let (path, group) = (file.path(), sector.group.as_str());
    let spectrum: Spectrum = file.spectrum(sector)?;
    let mut levels = levels::analyze(
        &spectrum.energies,
        &settings.levels_window,
        &LevelOptions::default(),
    )
    .at(path, group)?;
    let (ops, src) = load_sector(file, sector, names, &spectrum, settings.budget.bytes)?;
    if sector.dim.is_some() {
        crate::input::validate::require_orthonormal(file, sector, src.as_ref())?;
    }
    let refs: Vec<&Operator> = ops.iter().map(|(_, o)| o).collect();
    let class = sector_class(file, sector, Some(src.as_ref()), &refs, settings.class)?;
    levels.judge_thouless(class.symmetry_class, LevelOptions::default().sff_tolerance);
    let off_opts = OffdiagonalOptions {
        class: Some(class.clone()),
        ..settings.offdiagonal.clone()
    };
    let n = spectrum.len();
    let range = settings.window.indices(&spectrum.energies);
    let label = settings.window.label();
    let th =
        super::thermal::sector_thermo(file, sector, &refs, &settings.thermo, &settings.budget)?;
    // predictions from another source need only the window's A_nn
    let auto = project::auto_prediction_states(&refs, sector.dim.unwrap_or(n), n);
    let policy = th.prediction_states(auto);
    let diag_range = match policy {
        PredictionStates::All => 0..n,
        PredictionStates::Window => range.clone(),
    };
    // Off-diagonal accumulators, all observables in one pass over the eigenvectors.
    let mut notes: Vec<Vec<String>> = vec![Vec::new(); ops.len()];
    let mut accs: Vec<Option<Accumulator>> = ops
        .iter()
        .zip(notes.iter_mut())
        .enumerate()
        .map(|(k, ((name, _), note))| {
            let a = Accumulator::new(name, &spectrum.energies, range.clone(), &label, &off_opts);
            a.map_err(|e| note.push(format!("off-diagonal analysis skipped: {e}")))
                .ok()
                .map(|a| match th.predictor(k) {
                    Some(p) => a.with_entropy(&p, th.resolution()),
                    None => a,
                })
        })
        .collect();
    let mut window_diag: Vec<Vec<f64>> = vec![vec![f64::NAN; range.len()]; ops.len()];
    let block_pass = accs.iter().any(Option::is_some);
    if block_pass {
        project::for_each_block(
            src.as_ref(),
            &refs,
            range.clone(),
            &settings.budget,
            |blk| {
                for (acc, m) in accs.iter_mut().zip(&blk.elements) {
                    if let Some(a) = acc {
                        a.add_block(blk, m)?;
                    }
                }
                if blk.is_diagonal() {
                    let at = blk.rows.start - range.start;
                    for (wd, m) in window_diag.iter_mut().zip(&blk.elements) {
                        for i in 0..blk.rows.len() {
                            wd[at + i] = m.get_c(i, i).re;
                        }
                    }
                }
                Ok(())
            },
        )
        .at(path, group)?;
    }
    let diagonal_pass = |r: Range<usize>| -> Result<Vec<Vec<f64>>> {
        if r.is_empty() {
            return Ok(vec![Vec::new(); refs.len()]);
        }
        project::project_diagonal(src.as_ref(), &refs, r, &settings.budget).at(path, group)
    };
    let diags: Vec<Vec<f64>> = if block_pass {
        let below = diagonal_pass(diag_range.start..range.start)?;
        let above = diagonal_pass(range.end..diag_range.end)?;
        below
            .into_iter()
            .zip(window_diag)
            .zip(above)
            .map(|((b, w), a)| [b, w, a].concat())
            .collect()
    } else {
        diagonal_pass(diag_range.clone())?
    };

    let mut observables = Vec::with_capacity(ops.len());
    for (k, (((name, _), d), (acc, mut note))) in ops
        .iter()
        .zip(&diags)
        .zip(accs.into_iter().zip(notes))
        .enumerate()
    {
        let e = &spectrum.energies;
        let (start, r) = (diag_range.start, range.clone());
        let diagonal = diagonal_result(&th, k, policy, name, e, d, start, r, &label, sector.dim)
            .at(path, group)?;
        let offdiagonal = acc.and_then(|a| {
            a.finish()
                .map_err(|e| note.push(format!("off-diagonal analysis skipped: {e}")))
                .ok()
        });
        let window_values = &d[range.start - diag_range.start..range.end - diag_range.start];
        let points = spectrum.energies[diag_range.clone()]
            .iter()
            .copied()
            .zip(d.iter().copied())
            .collect();
        let mut obs =
            ObservableAnalysis::new(name, diagonal, offdiagonal, window_values, points, note);
        obs.support = sector
            .observables
            .iter()
            .find(|o| &o.name == name)
            .and_then(|o| o.support.clone());
        observables.push(obs);
    }
    Ok(sector_result(path, sector, n, class, levels, observables))
}

/// The [`SectorAnalysis`] of `sector` (of `n` stored states) from its parts.
fn sector_result(
    path: &std::path::Path,
    sector: &Sector,
    n: usize,
    class: crate::data::ClassInfo,
    levels: crate::analysis::levels::LevelReport,
    observables: Vec<ObservableAnalysis>,
) -> SectorAnalysis {
    let file_name = path.display().to_string();
    SectorAnalysis {
        label: sector
            .label
            .clone()
            .unwrap_or_else(|| format!("{} [{}]", file_name, sector.name)),
        file: file_name,
        sector: sector.name.clone(),
        model: sector.model.clone(),
        size: sector.size,
        realization: sector.realization,
        disorder: sector.disorder,
        label_attribute: sector.label.clone().unwrap_or_default(),
        dimension: sector.dim.unwrap_or(n),
        n_states: n,
        field: sector.field.unwrap_or(Field::Real),
        class,
        levels,
        observables,
    }
}

/// The diagonal analysis of observable `k` with the sector's thermal source (`d[i]` is
/// `A_nn` of state `start + i`).
#[allow(clippy::too_many_arguments)]
fn diagonal_result(
    th: &super::thermal::SectorThermo,
    k: usize,
    policy: PredictionStates,
    name: &str,
    e: &[f64],
    d: &[f64],
    start: usize,
    range: Range<usize>,
    label: &str,
    dim: Option<usize>,
) -> Result<crate::analysis::diagonal::DiagonalResult> {
    match (th.predictor(k), policy) {
        (Some(p), _) => diagonal::analyze_with(name, e, d, start, range, label, dim, &p),
        (None, PredictionStates::All) => diagonal::analyze(name, e, d, range, label, dim),
        (None, PredictionStates::Window) => diagonal::analyze_window(name, e, d, range, label, dim),
    }
}
