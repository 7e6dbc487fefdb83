//! The whole per-sector pipeline shared by `scaling` and `study`: level statistics,
//! diagonal and off-diagonal figures of each observable, and bootstrap errors of the
//! eigenstate-to-eigenstate fluctuation figures.
//!
//! Bootstrap: the consecutive differences `Δₙ = Aₙ₊₁,ₙ₊₁ − Aₙₙ` in the window are
//! resampled in moving blocks (length `⌈N^{1/3}⌉`, at least 2, because neighbouring
//! differences share a state), [`RESAMPLES`] times with the fixed seed
//! [`crate::analysis::scaling::DEFAULT_SEED`]; `diff_mean_abs = ⟨|Δ|⟩` and
//! `fluct_variance = ½⟨Δ²⟩` are recomputed on each resample and their standard deviation
//! is the quoted error. The off-diagonal figures carry the analytic standard errors of
//! their accumulators (independent pairs).

use crate::analysis::diagonal::{self, DiagonalResult};
use crate::analysis::levels::{self, LevelOptions, LevelReport};
use crate::analysis::offdiagonal::{Accumulator, OffdiagonalOptions, OffdiagonalResult};
use crate::analysis::scaling::{block_bootstrap, default_block_length, DEFAULT_SEED};
use crate::data::{Field, Operator, Spectrum};
use crate::error::{Error, Result};
use crate::input::{EigenFile, Sector};
use crate::project::{self, Budget};
use crate::window::WindowSpec;
use serde::Serialize;

/// Bootstrap resamples of the fluctuation figures.
pub const RESAMPLES: usize = 200;

/// Settings of the per-sector pipeline.
#[derive(Debug, Clone)]
pub struct SectorSettings {
    /// Window of the level statistics.
    pub levels_window: WindowSpec,
    /// Window of the matrix-element analyses.
    pub window: WindowSpec,
    /// Off-diagonal options (omega_max).
    pub offdiagonal: OffdiagonalOptions,
    /// Projector memory budget.
    pub project: Budget,
}

/// Bootstrap errors of the diagonal fluctuation figures.
#[derive(Debug, Clone, Serialize)]
pub struct BootstrapErrors {
    /// Standard error of `diff_mean_abs`.
    pub diff_mean_abs: f64,
    /// Standard error of `fluct_variance`.
    pub fluct_variance: f64,
    /// Block length used.
    pub block_length: usize,
    /// Number of resamples.
    pub resamples: usize,
    /// Seed of the generator.
    pub seed: u64,
}

/// Results of one observable in one sector.
#[derive(Debug, Clone, Serialize)]
pub struct ObservableAnalysis {
    /// Observable name.
    pub name: String,
    /// Diagonal figures and thermal predictions.
    pub diagonal: DiagonalResult,
    /// Off-diagonal figures and envelope; `None` when too few pairs (the reason is in `notes`).
    pub offdiagonal: Option<OffdiagonalResult>,
    /// Bootstrap errors of the fluctuation figures.
    pub bootstrap: BootstrapErrors,
    /// True when every diagonal element vanishes (|Aₙₙ| < 1e-12 max|A|): typically a symmetry forbids it.
    pub diagonal_vanishes: bool,
    /// True when the low-ω off-diagonal elements vanish (|Aₙₘ|² at rounding level against Aₙₙ²).
    pub low_omega_vanishes: bool,
    /// `(Eₙ, Aₙₙ)` of every state (for figures; not serialised).
    #[serde(skip)]
    pub points: Vec<(f64, f64)>,
    /// Remarks (e.g. why the off-diagonal analysis was skipped).
    pub notes: Vec<String>,
}

/// Results of one sector.
#[derive(Debug, Clone, Serialize)]
pub struct SectorAnalysis {
    /// The file.
    pub file: String,
    /// Sector name.
    pub sector: String,
    /// Attribute `label`, or `file [sector]`.
    pub label: String,
    /// Attribute `model`, when present.
    pub model: Option<String>,
    /// Attribute `size` (sites), when present.
    pub size: Option<usize>,
    /// Hilbert-space dimension (eigenvector length; the number of states when not stored).
    pub dimension: usize,
    /// Number of stored states.
    pub n_states: usize,
    /// Element type of the eigenvectors.
    pub field: Field,
    /// Level statistics.
    pub levels: LevelReport,
    /// One entry per observable.
    pub observables: Vec<ObservableAnalysis>,
}

/// Runs the whole pipeline on one sector for the observables `names` (all when empty).
pub fn analyse_sector(
    file: &EigenFile,
    sector: &Sector,
    names: &[String],
    settings: &SectorSettings,
) -> Result<SectorAnalysis> {
    let in_sector = |e: Error| match e {
        Error::Other(m) => Error::dataset(file.path(), sector.group.clone(), m),
        other => other,
    };
    let spectrum: Spectrum = file.spectrum(sector)?;
    let levels = levels::analyze(
        &spectrum.energies,
        &settings.levels_window,
        &LevelOptions::default(),
    )
    .map_err(in_sector)?;
    let (ops, src) = crate::commands::diagonal::load_sector(
        file,
        sector,
        names,
        &spectrum,
        settings.project.bytes,
    )?;
    if sector.dim.is_some() {
        crate::input::validate::require_orthonormal(file, sector, src.as_ref())?;
    }
    let refs: Vec<&Operator> = ops.iter().map(|(_, o)| o).collect();
    let n = spectrum.len();
    let range = settings.window.indices(&spectrum.energies);
    let label = settings.window.label();
    // Aₙₙ of every state feeds the thermal predictions; for dense operators whose all-state
    // projection would be expensive, only the window is projected (see
    // `project::auto_prediction_states`) and the canonical prediction is left out.
    let policy = project::auto_prediction_states(&refs, sector.dim.unwrap_or(n), n);
    let diag_range = match policy {
        project::PredictionStates::All => 0..n,
        project::PredictionStates::Window => range.clone(),
    };
    // Off-diagonal accumulators, all observables in one pass over the eigenvectors.
    let mut accs = Vec::with_capacity(ops.len());
    let mut notes: Vec<Vec<String>> = vec![Vec::new(); ops.len()];
    for (k, (name, _)) in ops.iter().enumerate() {
        match Accumulator::new(
            name,
            &spectrum.energies,
            range.clone(),
            &label,
            &settings.offdiagonal,
        ) {
            Ok(a) => accs.push(Some(a)),
            Err(e) => {
                notes[k].push(format!("off-diagonal analysis skipped: {e}"));
                accs.push(None);
            }
        }
    }
    // The block pass over the window also yields the window's Aₙₙ (its diagonal blocks),
    // so the diagonal pass then reads only the states outside the window.
    let mut window_diag: Vec<Vec<f64>> = vec![vec![f64::NAN; range.len()]; ops.len()];
    let block_pass = accs.iter().any(Option::is_some);
    if block_pass {
        project::for_each_block(
            src.as_ref(),
            &refs,
            range.clone(),
            &settings.project,
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
        .map_err(in_sector)?;
    }
    let diagonal_pass = |r: std::ops::Range<usize>| {
        if r.is_empty() {
            return Ok(vec![Vec::new(); refs.len()]);
        }
        project::project_diagonal(src.as_ref(), &refs, r, &settings.project).map_err(in_sector)
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
    for (k, (((name, _), d), acc)) in ops.iter().zip(&diags).zip(accs).enumerate() {
        let diagonal = match policy {
            project::PredictionStates::All => diagonal::analyse(
                name,
                &spectrum.energies,
                d,
                range.clone(),
                &label,
                sector.dim,
            ),
            project::PredictionStates::Window => diagonal::analyse_window(
                name,
                &spectrum.energies,
                d,
                range.clone(),
                &label,
                sector.dim,
            ),
        }
        .map_err(in_sector)?;
        let offdiagonal = match acc.map(Accumulator::finish) {
            Some(Ok(r)) => Some(r),
            Some(Err(e)) => {
                notes[k].push(format!("off-diagonal analysis skipped: {e}"));
                None
            }
            None => None,
        };
        let window_values = &d[range.start - diag_range.start..range.end - diag_range.start];
        let diffs: Vec<f64> = window_values.windows(2).map(|w| w[1] - w[0]).collect();
        let block = default_block_length(diffs.len());
        let (_, e_abs) = block_bootstrap(&diffs, mean_abs, block, RESAMPLES, DEFAULT_SEED);
        let (_, e_var) = block_bootstrap(&diffs, half_mean_square, block, RESAMPLES, DEFAULT_SEED);
        // Vanishing by symmetry: every |Aₙₙ| is at rounding level compared with the typical
        // off-diagonal element (or with 1 when there is none).
        let diag_max = window_values.iter().fold(0.0f64, |m, x| m.max(x.abs()));
        let off_scale = offdiagonal
            .as_ref()
            .map_or(0.0, |o| o.low_omega_variance.max(0.0).sqrt());
        let reference = if off_scale > 0.0 { off_scale } else { 1.0 };
        let vanishes = diag_max <= 1e-10 * reference;
        let low_omega_vanishes = offdiagonal
            .as_ref()
            .is_some_and(|o| o.low_omega_variance <= 1e-20 * diag_max.max(1e-300).powi(2));
        if low_omega_vanishes {
            notes[k].push(
                "the low-frequency off-diagonal elements vanish (a selection rule: an unresolved symmetry \
                 or a conserved quantity); the diagonal/off-diagonal ratio is undefined"
                    .to_string(),
            );
        }
        if vanishes {
            notes[k].push(
                "every diagonal element vanishes: a symmetry of the sector forbids a non-zero ⟨A⟩ \
                 (fluctuation figures are zero and carry no evidence)"
                    .to_string(),
            );
        }
        observables.push(ObservableAnalysis {
            name: name.clone(),
            diagonal,
            offdiagonal,
            bootstrap: BootstrapErrors {
                diff_mean_abs: e_abs,
                fluct_variance: e_var,
                block_length: block,
                resamples: RESAMPLES,
                seed: DEFAULT_SEED,
            },
            diagonal_vanishes: vanishes,
            low_omega_vanishes,
            points: spectrum.energies[diag_range.clone()]
                .iter()
                .copied()
                .zip(d.iter().copied())
                .collect(),
            notes: std::mem::take(&mut notes[k]),
        });
    }
    let file_name = file.path().display().to_string();
    Ok(SectorAnalysis {
        label: sector
            .label
            .clone()
            .unwrap_or_else(|| format!("{} [{}]", file_name, sector.name)),
        file: file_name,
        sector: sector.name.clone(),
        model: sector.model.clone(),
        size: sector.size,
        dimension: sector.dim.unwrap_or(n),
        n_states: n,
        field: sector.field.unwrap_or(Field::Real),
        levels,
        observables,
    })
}

fn mean_abs(x: &[f64]) -> f64 {
    x.iter().map(|v| v.abs()).sum::<f64>() / x.len().max(1) as f64
}

fn half_mean_square(x: &[f64]) -> f64 {
    0.5 * x.iter().map(|v| v * v).sum::<f64>() / x.len().max(1) as f64
}
