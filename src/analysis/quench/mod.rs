//! Quench dynamics from the energy eigenbasis.
//!
//! An initial state `|ψ⟩ = Σₙ cₙ |n⟩` evolves as `|ψ(t)⟩ = Σₙ cₙ e^{−iEₙt} |n⟩` (ħ = 1), so that
//! an observable `A` with matrix elements `Aₙₘ = ⟨n|A|m⟩` follows
//!
//! ```text
//! ⟨A(t)⟩ = Σₙₘ cₙ* cₘ Aₙₘ e^{i(Eₙ−Eₘ)t}.
//! ```
//!
//! With the weights `pₙ = |cₙ|²` (normalised to `Σ pₙ = 1`) this module computes
//!
//! - the energy `E = Σ pₙ Eₙ` and width `δE = (Σ pₙ Eₙ² − E²)^{1/2}`, the inverse temperature
//!   `β(E)` solving `⟨H⟩_β = E` ([`thermo::beta_of_energy`]);
//! - the effective dimension `D_eff = 1 / Σ pₙ²` (inverse participation ratio in the eigenbasis);
//! - the diagonal-ensemble value `A_DE = Σ pₙ Aₙₙ` (the infinite-time average of `⟨A(t)⟩`
//!   when the spectrum is non-degenerate), the microcanonical value at `E` (mean of `Aₙₙ`
//!   over the shell `|Eₙ − E| ≤ ΔE/2`, [`thermo::microcanonical_average`]) and the canonical
//!   value at `β(E)` ([`thermo::canonical_average`] over the diagonal elements of all states);
//! - the time trace `⟨A(t)⟩` on a grid ([`TimeGrid`]) over the kept states `K` (those that carry
//!   the weight, see [`kept_states`]): with `b(t) = (cₘ e^{−i(Eₘ−E)t})_{m∈K}`,
//!   `⟨A(t)⟩ = b(t)ᴴ A_KK b(t)`; the times are batched as the columns of a matrix `B`
//!   (`|K| × T`) and one product `A_KK · B` gives all of them (the shift by `E` is a global
//!   phase that cancels; it keeps the phases small);
//! - the infinite-time variance of the trace about `A_DE` (for non-degenerate gaps)
//!   `σ² = Σ_{n≠m, Eₙ≠Eₘ} pₙ pₘ |Aₙₘ|²`, over the kept states;
//! - its ETH estimate `σ²_ETH = Σ_{n≠m} pₙ pₘ F(|Eₙ − Eₘ|)`, where `F(ω)` is the off-diagonal
//!   envelope, the mean of `|Aₙₘ|²` over pairs in the ω bin ([`Envelope`]): ETH writes
//!   `|Aₙₘ|² ≈ e^{−S(Ē)} |f(Ē, ω)|²` with a smooth `f`, so replacing each `|Aₙₘ|²` by the bin mean
//!   tests whether the weights and the fluctuating elements are uncorrelated (Srednicki 1999;
//!   D'Alessio, Kafri, Polkovnikov, Rigol, Adv. Phys. 65, 239 (2016));
//! - the bound `σ² ≤ ‖A − c‖² / D_eff` for every constant `c` (Short, New J. Phys. 13, 053009
//!   (2011) with gap degeneracy 1; Reimann, PRL 101, 190403 (2008), from memory). We check it
//!   with the projected operator `A_KK`: with `ω = Σ_{n∈K} pₙ|n⟩⟨n|`,
//!   `Σ_{n,m∈K} pₙpₘ|Aₙₘ|² = Tr(A ω A ω) ≤ ‖Aω‖_F² ≤ ‖A_KK‖² Tr ω² ≤ ‖A_KK‖²/D_eff`, and the
//!   off-diagonal part is unchanged by `A → A − c`, so the tightest form is
//!   `σ² ≤ ((λ_max − λ_min)/2)² / D_eff` with `λ` the eigenvalues of `A_KK`, or any interval
//!   known to hold them ([`BoundCheck`]: exact eigenvalues up to [`BOUND_EIGEN_MAX`] kept
//!   states, Gershgorin and the operator's range above);
//! - the time mean and variance of the computed trace over the second half of the time range
//!   (trapezoidal weights, so that logarithmic grids average correctly), to compare with
//!   `A_DE` and `σ²`.
//!
//! Degenerate energies (`|Eₙ − Eₘ| ≤ tol`, `n ≠ m`) give time-independent terms
//! `cₙ* cₘ Aₙₘ`: they are excluded from `σ²` and reported apart as
//! [`QuenchReport::degenerate_coherence`] (the long-time mean of the trace is then
//! `A_DE + degenerate_coherence`). Degenerate *gaps* (`Eₙ − Eₘ = Eₖ − Eₗ`) make the true
//! temporal variance differ from `σ²`; `σ²` is the standard non-degenerate-gap expression.
//!
//! Dropping states: the trace and `σ²` use the kept states only. With a dropped fraction
//! `δ` of the norm, `|⟨A(t)⟩ − ⟨A(t)⟩_K| ≤ ‖A‖ (2√δ + δ)` (Cauchy–Schwarz on the cross terms);
//! the report gives this bound with `‖A_KK‖` (or its upper bound) in place of `‖A‖`.
//!
//! Everything here works on plain data: energies, diagonal elements, coefficients, the kept
//! states and `A_KK` stored by its upper column panels ([`crate::data::HermitianPanels`]);
//! the passes over the eigenvectors that produce them are [`crate::project::kept`].
//!
//! **Files.** [`grid`]: time grids; [`dynamics`]: one sector ([`analyze`], [`time_trace`],
//! the kept states, the trace statistics); [`envelope`]: the sums over the pairs of kept
//! states and the envelope; [`bound`]: the bound check; [`combine`]: the sectors of one
//! state together; [`state`]: initial states.

pub mod bound;
pub mod combine;
pub mod dynamics;
pub mod envelope;
pub mod grid;
pub mod outcome;
pub mod state;

pub use bound::{operator_range, BoundCheck, BOUND_EIGEN_MAX};
pub use combine::{combine, overall, Combined, Overall, SectorPart};
pub use dynamics::{
    analyze, kept_states, time_trace, FluctuationPoint, KeptStates, Microcanonical, QuenchReport,
    SectorData, SectorQuench, TracePoint, TraceStatistics, Work, TRACE_BATCH_BYTES,
};
pub use envelope::Envelope;
pub use grid::{TimeGrid, DEFAULT_TIMES};

use serde::Serialize;

/// Default dropped fraction of the norm: the kept states carry at least `1 − 10⁻¹⁰` of it.
pub const DEFAULT_DROP_WEIGHT: f64 = 1e-10;
/// Default microcanonical shell half-width, as a fraction of the spectral width
/// `E_max − E_min` (the shell is 5 % of the spectrum wide).
pub const DEFAULT_SHELL_FRACTION: f64 = 0.025;
/// Default number of linear ω bins of the envelope built from the kept pairs.
pub const DEFAULT_ENVELOPE_BINS: usize = 50;
/// Default degeneracy tolerance, relative to the spectral width.
pub const DEFAULT_DEGENERACY_REL: f64 = 1e-10;

/// Options of the quench analysis.
#[derive(Debug, Clone, Serialize)]
pub struct QuenchOptions {
    /// Microcanonical shell half-width `ΔE/2`; `None`: [`DEFAULT_SHELL_FRACTION`] of the spectral width.
    pub shell_half_width: Option<f64>,
    /// Envelope to use for `σ²_ETH`; `None`: built from the kept pairs with
    /// [`DEFAULT_ENVELOPE_BINS`] linear bins (see [`Envelope::from_pairs`]).
    pub envelope: Option<Envelope>,
    /// Energies closer than this are degenerate; `None`: [`DEFAULT_DEGENERACY_REL`] × spectral width.
    pub degeneracy_tol: Option<f64>,
    /// The dropped fraction of the norm used to choose the kept states (reported only).
    pub drop_weight: f64,
    /// An interval `[lo, hi]` known to hold the spectrum of the operator (e.g. its Gershgorin
    /// interval, [`operator_range`]); by Cauchy interlacing it also holds the spectrum of
    /// `A_KK`, and it tightens the bound when `|K|` is too large for exact eigenvalues.
    #[serde(skip)]
    pub operator_range: Option<(f64, f64)>,
    /// Smallest fraction of a sector component's weight on the stored eigenstates (a
    /// partial eigenbasis) for which its normalised projection is analyzed; below it the
    /// diagonal-ensemble prediction is refused unless `renormalise`
    /// ([`DEFAULT_MIN_WINDOW_WEIGHT`], `--min-window-weight`).
    pub min_window_weight: f64,
    /// Analyze the normalised projection whatever its weight (`--renormalise`).
    pub renormalise: bool,
}

/// Default of [`QuenchOptions::min_window_weight`]: at least half of the state on the
/// stored eigenstates (common practice, no source: below it the projection is mostly
/// another state).
pub const DEFAULT_MIN_WINDOW_WEIGHT: f64 = 0.5;

impl Default for QuenchOptions {
    fn default() -> Self {
        QuenchOptions {
            shell_half_width: None,
            envelope: None,
            degeneracy_tol: None,
            drop_weight: DEFAULT_DROP_WEIGHT,
            operator_range: None,
            min_window_weight: DEFAULT_MIN_WINDOW_WEIGHT,
            renormalise: false,
        }
    }
}
