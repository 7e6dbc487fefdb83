//! The results of one sector: level statistics and, per observable, the diagonal and
//! off-diagonal figures with resampled errors of the fluctuation figures; and the
//! documents of the `diagonal` and `offdiagonal` commands.
//!
//! **Bootstrap.** The consecutive differences `Δₙ = Aₙ₊₁,ₙ₊₁ − Aₙₙ` in the window are
//! resampled in moving blocks (length `⌈N^{1/3}⌉`, at least 2, because neighbouring
//! differences share a state; [`default_block_length`]), [`RESAMPLES`] times with the
//! fixed seed [`DEFAULT_SEED`]; `diff_mean_abs = ⟨|Δ|⟩` and `fluct_variance = ½⟨Δ²⟩` are
//! recomputed on each resample and their standard deviation is the quoted error.
//!
//! **Vanishing figures.** Every `|Aₙₙ|` in the window at rounding level against the typical
//! low-frequency off-diagonal element (`max |Aₙₙ| ≤ 10⁻¹⁰ √⟨|Aₙₘ|²⟩`, or against 1 when
//! there is none) means a symmetry forbids a non-zero `⟨A⟩`: the fluctuation figures then
//! carry no evidence. Low-frequency `⟨|Aₙₘ|²⟩ ≤ 10⁻²⁰ max Aₙₙ²` means a selection rule:
//! the diagonal/off-diagonal ratio is undefined.

use crate::analysis::diagonal::DiagonalResult;
use crate::analysis::levels::LevelReport;
use crate::analysis::offdiagonal::OffdiagonalResult;
use crate::analysis::scaling::{block_bootstrap, default_block_length, DEFAULT_SEED, RESAMPLES};
use crate::data::{ClassInfo, Field};
use crate::project::{PredictionStates, StageTiming};
use serde::Serialize;

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
    /// The operator's support (attribute `observable_support`), when the file gives it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub support: Option<String>,
}

impl ObservableAnalysis {
    /// The observable's results from its diagonal and off-diagonal figures: the bootstrap
    /// errors of the fluctuation figures over `window_values` (`Aₙₙ` of the window's states,
    /// ascending energy) and the vanishing tests (module docs). `points` are `(Eₙ, Aₙₙ)` of
    /// every state whose `Aₙₙ` is known; `notes` carries remarks made so far.
    pub fn new(
        name: &str,
        diagonal: DiagonalResult,
        offdiagonal: Option<OffdiagonalResult>,
        window_values: &[f64],
        points: Vec<(f64, f64)>,
        mut notes: Vec<String>,
    ) -> Self {
        let diffs: Vec<f64> = window_values.windows(2).map(|w| w[1] - w[0]).collect();
        let block = default_block_length(diffs.len());
        let (_, e_abs) = block_bootstrap(&diffs, mean_abs, block, RESAMPLES, DEFAULT_SEED);
        let (_, e_var) = block_bootstrap(&diffs, half_mean_square, block, RESAMPLES, DEFAULT_SEED);
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
            notes.push(
                "the low-frequency off-diagonal elements vanish (a selection rule: an unresolved symmetry \
                 or a conserved quantity); the diagonal/off-diagonal ratio is undefined"
                    .to_string(),
            );
        }
        if vanishes {
            notes.push(
                "every diagonal element vanishes: a symmetry of the sector forbids a non-zero ⟨A⟩ \
                 (fluctuation figures are zero and carry no evidence)"
                    .to_string(),
            );
        }
        ObservableAnalysis {
            name: name.to_string(),
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
            points,
            notes,
            support: None,
        }
    }
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
    /// Attribute `realization` (disorder realizations), when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub realization: Option<usize>,
    /// Attribute `disorder` (disorder strength), when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub disorder: Option<f64>,
    /// Attribute `label` as stored (empty when absent): realizations are grouped by it.
    #[serde(skip)]
    pub label_attribute: String,
    /// Hilbert-space dimension (eigenvector length; the number of states when not stored).
    pub dimension: usize,
    /// Number of stored states.
    pub n_states: usize,
    /// Element type of the eigenvectors.
    pub field: Field,
    /// Symmetry class and how it was decided (`symmetry_class`, `class_source`).
    #[serde(flatten)]
    pub class: ClassInfo,
    /// Level statistics.
    pub levels: LevelReport,
    /// One entry per observable.
    pub observables: Vec<ObservableAnalysis>,
}

fn mean_abs(x: &[f64]) -> f64 {
    x.iter().map(|v| v.abs()).sum::<f64>() / x.len().max(1) as f64
}

fn half_mean_square(x: &[f64]) -> f64 {
    0.5 * x.iter().map(|v| v * v).sum::<f64>() / x.len().max(1) as f64
}

/// Wall-clock seconds per stage of one sector's analysis.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct Timing {
    /// Reading the spectrum and the observables.
    pub load_seconds: f64,
    /// Waiting for eigenvector blocks (reading not hidden behind the products).
    pub read_seconds: f64,
    /// Time the eigenvector reader thread was busy (overlapped with the products).
    pub read_busy_seconds: f64,
    /// Matrix products of the projection.
    pub project_seconds: f64,
    /// Reductions and statistics of the analysis.
    pub analyze_seconds: f64,
    /// Whole sector, from opening to the last figure.
    pub total_seconds: f64,
    /// Eigenvector columns per block.
    pub block_states: usize,
    /// Number of blocks.
    pub blocks: usize,
}

impl Timing {
    /// Adds the projector's stage times.
    pub fn add_projector(&mut self, t: &StageTiming) {
        self.read_seconds += t.read_wait_seconds;
        self.read_busy_seconds += t.read_seconds;
        self.project_seconds += t.project_seconds;
        self.analyze_seconds += t.sink_seconds;
        self.block_states = t.block_states;
        self.blocks = t.blocks;
    }
}

/// Results of one sector of a matrix-element command (`diagonal`, `offdiagonal`).
#[derive(Debug, Clone, Serialize)]
pub struct SectorElements<T> {
    /// The file.
    pub file: String,
    /// Sector name.
    pub name: String,
    /// Sector name, the key every command uses (`name` holds the same, kept for the
    /// contract's `levels`/`diagonal` keys).
    pub sector: String,
    /// Number of stored states.
    pub n_states: usize,
    /// Hilbert-space dimension, when eigenvectors are stored.
    pub dim: Option<usize>,
    /// Symmetry class and how it was decided (`symmetry_class`, `class_source`).
    #[serde(flatten)]
    pub class: ClassInfo,
    /// States whose `Aₙₙ` fed the thermal predictions (`all` or `window`; `diagonal` only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub prediction_states: Option<PredictionStates>,
    /// Seconds per stage.
    pub timing: Timing,
    /// Attribute `realization`, when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub realization: Option<usize>,
    /// Attribute `disorder`, when present.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub disorder: Option<f64>,
    /// Attribute `size` (for grouping realizations; not in JSON).
    #[serde(skip)]
    pub size: Option<usize>,
    /// Attribute `label` as stored (for grouping realizations; not in JSON).
    #[serde(skip)]
    pub label_attribute: String,
    /// One result per observable.
    pub observables: Vec<T>,
}

/// JSON document of a matrix-element command.
#[derive(Debug, Clone, Serialize)]
pub struct ElementsOutput<T> {
    /// Projector memory budget in bytes.
    pub memory_budget: usize,
    /// All sectors of all files.
    pub sectors: Vec<SectorElements<T>>,
    /// Realization averages per observable of the sectors with a `realization` attribute
    /// ([`crate::analysis::ensemble::figures`]).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub ensembles: Vec<crate::analysis::ensemble::figures::FigureEnsemble>,
}

impl<T: crate::analysis::ensemble::figures::Figures> ElementsOutput<T> {
    /// The realization averages of the sectors' results.
    pub fn average_realizations(&mut self) {
        use crate::analysis::ensemble::figures::{figure_ensembles, MemberKey};
        let items: Vec<(MemberKey, &T)> = self
            .sectors
            .iter()
            .filter(|s| s.realization.is_some())
            .flat_map(|s| {
                s.observables.iter().map(move |o| {
                    let key = MemberKey {
                        name: format!("{}:{}", s.file, s.name),
                        size: s.size,
                        disorder: s.disorder,
                        label: s.label_attribute.clone(),
                    };
                    (key, o)
                })
            })
            .collect();
        self.ensembles = figure_ensembles(&items);
    }
}
