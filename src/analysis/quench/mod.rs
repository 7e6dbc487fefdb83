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
//!   `σ² ≤ ((λ_max − λ_min)/2)² / D_eff` with `λ` the eigenvalues of `A_KK`
//!   ([`BoundCheck`]);
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
//! the report gives this bound with `‖A_KK‖` in place of `‖A‖`.

pub mod basis;
pub mod outcome;
pub mod state;

use crate::analysis::thermo;
use crate::data::{c64, Matrix};
use crate::error::{Error, Result};
use faer::linalg::matmul::matmul;
use faer::{Accum, Mat, Par};
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
/// Largest number of kept states whose `A_KK` eigenvalues are computed exactly for the bound;
/// above it the norm is bounded by the largest absolute row sum.
pub const BOUND_EIGEN_MAX: usize = 4096;
/// Default time grid, `lin:0:100:501` (times in units of ħ over the energy unit of the file).
pub const DEFAULT_TIMES: &str = "lin:0:100:501";

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
    /// Memory budget and block size of the projector that forms `A_KK`
    /// ([`basis::kept_matrix`]); not part of the results.
    #[serde(skip)]
    pub project: crate::project::Budget,
    /// An interval `[lo, hi]` known to hold the spectrum of the operator (e.g. its Gershgorin
    /// interval, [`operator_range`]); by Cauchy interlacing it also holds the spectrum of
    /// `A_KK`, and it tightens the bound when `|K|` is too large for exact eigenvalues.
    #[serde(skip)]
    pub operator_range: Option<(f64, f64)>,
}

impl Default for QuenchOptions {
    fn default() -> Self {
        QuenchOptions {
            shell_half_width: None,
            envelope: None,
            degeneracy_tol: None,
            drop_weight: DEFAULT_DROP_WEIGHT,
            project: crate::project::Budget::default(),
            operator_range: None,
        }
    }
}

/// A grid of times, linear or logarithmic.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum TimeGrid {
    /// `n` points `t0 + k (t1 − t0)/(n − 1)`.
    Lin {
        /// First time.
        t0: f64,
        /// Last time.
        t1: f64,
        /// Number of points.
        n: usize,
    },
    /// `n` points `t0 (t1/t0)^{k/(n−1)}` (requires `0 < t0 < t1`).
    Log {
        /// First time.
        t0: f64,
        /// Last time.
        t1: f64,
        /// Number of points.
        n: usize,
    },
}

impl TimeGrid {
    /// Parses `lin:T0:T1:N` or `log:T0:T1:N` (`T0 < T1`, `N ≥ 2`; for `log`, `T0 > 0`).
    pub fn parse(s: &str) -> Result<TimeGrid> {
        let bad = |why: &str| {
            Error::usage(format!(
                "times '{s}': {why} (expected lin:T0:T1:N or log:T0:T1:N, e.g. {DEFAULT_TIMES} or log:0.01:1000:200)"
            ))
        };
        let parts: Vec<&str> = s.split(':').map(str::trim).collect();
        if parts.len() != 4 {
            return Err(bad("four fields separated by ':' needed"));
        }
        let t0: f64 = parts[1].parse().map_err(|_| bad("T0 is not a number"))?;
        let t1: f64 = parts[2].parse().map_err(|_| bad("T1 is not a number"))?;
        let n: usize = parts[3]
            .parse()
            .map_err(|_| bad("N is not a whole number"))?;
        if !(t0.is_finite() && t1.is_finite() && t0 < t1) {
            return Err(bad("need finite T0 < T1"));
        }
        if n < 2 {
            return Err(bad("need N >= 2"));
        }
        match parts[0] {
            "lin" => Ok(TimeGrid::Lin { t0, t1, n }),
            "log" if t0 > 0.0 => Ok(TimeGrid::Log { t0, t1, n }),
            "log" => Err(bad("a logarithmic grid needs T0 > 0")),
            _ => Err(bad("the kind must be 'lin' or 'log'")),
        }
    }

    /// The grid points.
    pub fn points(&self) -> Vec<f64> {
        match *self {
            TimeGrid::Lin { t0, t1, n } => (0..n)
                .map(|k| t0 + (t1 - t0) * k as f64 / (n - 1) as f64)
                .collect(),
            TimeGrid::Log { t0, t1, n } => {
                let r = (t1 / t0).ln();
                (0..n)
                    .map(|k| t0 * (r * k as f64 / (n - 1) as f64).exp())
                    .collect()
            }
        }
    }
}

/// The states kept for the trace: the largest weights until the kept sum reaches
/// `(1 − drop) · Σ pₙ`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct KeptStates {
    /// Indices of the kept states, ascending (positions in the ascending spectrum).
    pub indices: Vec<usize>,
    /// Kept fraction of the norm `Σ_{n∈K} pₙ / Σ pₙ`.
    pub weight_fraction: f64,
}

/// Chooses the kept states: sorts the weights `pₙ` in decreasing order and keeps the
/// shortest prefix whose sum is at least `(1 − drop) Σ pₙ` (at least one state when any
/// weight is positive; states of zero weight are never kept).
pub fn kept_states(weights: &[f64], drop: f64) -> KeptStates {
    let total: f64 = weights.iter().sum();
    if total <= 0.0 || weights.is_empty() {
        return KeptStates {
            indices: Vec::new(),
            weight_fraction: 0.0,
        };
    }
    let mut order: Vec<usize> = (0..weights.len()).collect();
    order.sort_by(|&a, &b| weights[b].total_cmp(&weights[a]));
    let target = (1.0 - drop.clamp(0.0, 1.0)) * total;
    let mut sum = 0.0;
    let mut indices = Vec::new();
    for &i in &order {
        if sum >= target || weights[i] <= 0.0 {
            break;
        }
        sum += weights[i];
        indices.push(i);
    }
    indices.sort_unstable();
    KeptStates {
        indices,
        weight_fraction: sum / total,
    }
}

/// An off-diagonal envelope: mean `|Aₙₘ|²` in bins of `ω = |Eₙ − Eₘ|`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Envelope {
    /// Bin edges, ascending (`mean_sq.len() + 1` of them).
    pub edges: Vec<f64>,
    /// Mean of `|Aₙₘ|²` in each bin (0 for empty bins).
    pub mean_sq: Vec<f64>,
    /// Number of pairs in each bin.
    pub counts: Vec<usize>,
}

impl Envelope {
    /// Builds the envelope from all pairs `n < m` of the kept states `K` (unweighted),
    /// with `bins` linear bins on `[0, ω_max]`, `ω_max` the largest kept gap.
    /// `a_kk` is `A` over `K` and `e_k` the kept energies.
    pub fn from_pairs(e_k: &[f64], a_kk: &Matrix, bins: usize) -> Envelope {
        let k = e_k.len();
        let bins = bins.max(1);
        let (lo, hi) = e_k
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &e| {
                (a.min(e), b.max(e))
            });
        let wmax = if k >= 2 && hi > lo { hi - lo } else { 1.0 };
        let edges: Vec<f64> = (0..=bins).map(|b| wmax * b as f64 / bins as f64).collect();
        let mut sum = vec![0.0; bins];
        let mut counts = vec![0usize; bins];
        for m in 0..k {
            for n in 0..m {
                let w = (e_k[m] - e_k[n]).abs();
                let b = ((w / wmax * bins as f64) as usize).min(bins - 1);
                sum[b] += abs2(a_kk, n, m);
                counts[b] += 1;
            }
        }
        let mean_sq = sum
            .iter()
            .zip(&counts)
            .map(|(s, &c)| if c > 0 { s / c as f64 } else { 0.0 })
            .collect();
        Envelope {
            edges,
            mean_sq,
            counts,
        }
    }

    /// `F(ω)`: the mean of the bin holding `ω` (the nearest end bin outside the range; the
    /// nearest non-empty bin when the bin is empty; 0 when all are empty).
    pub fn at(&self, omega: f64) -> f64 {
        let nb = self.mean_sq.len();
        if nb == 0 || self.edges.len() != nb + 1 {
            return 0.0;
        }
        let b = self.edges[1..].partition_point(|&e| e < omega).min(nb - 1);
        if self.counts.get(b).copied().unwrap_or(0) > 0 {
            return self.mean_sq[b];
        }
        // nearest non-empty bin
        for d in 1..nb {
            for c in [b.checked_sub(d), Some(b + d)].into_iter().flatten() {
                if c < nb && self.counts.get(c).copied().unwrap_or(0) > 0 {
                    return self.mean_sq[c];
                }
            }
        }
        0.0
    }
}

/// `|A_nm|²` of a real or complex matrix.
fn abs2(a: &Matrix, n: usize, m: usize) -> f64 {
    match a {
        Matrix::Real(x) => x[(n, m)] * x[(n, m)],
        Matrix::Complex(x) => x[(n, m)].norm_sqr(),
    }
}

/// One point of the time trace.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TracePoint {
    /// Time.
    pub t: f64,
    /// `⟨A(t)⟩` over the kept states.
    pub value: f64,
}

/// Microcanonical value at the state's energy.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Microcanonical {
    /// Mean of `Aₙₙ` over the shell `|Eₙ − E| ≤ half_width`.
    pub value: f64,
    /// Shell half-width `ΔE/2`.
    pub half_width: f64,
    /// Number of states in the shell.
    pub states: usize,
}

/// The check of `σ² ≤ ‖A − c‖² / D_eff`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BoundCheck {
    /// How `‖A_KK‖` was obtained: `"eigenvalues"` (exact, `|K| ≤ 4096`), or for larger `|K|`
    /// an upper bound: `"operator_range"` (the operator's Gershgorin interval, which holds the
    /// spectrum of `A_KK` by Cauchy interlacing) or `"row_sum"` (largest absolute row sum),
    /// whichever is tighter.
    pub method: String,
    /// `‖A_KK‖` (largest |eigenvalue|, or the row-sum bound).
    pub norm: f64,
    /// `(λ_max − λ_min)/2` of `A_KK` (`= min_c ‖A_KK − c‖`; equals `norm` for the row-sum method).
    pub half_spread: f64,
    /// `‖A_KK‖² / D_eff`.
    pub bound_norm: f64,
    /// `((λ_max − λ_min)/2)² / D_eff`, the bound checked.
    pub bound: f64,
    /// `σ² ≤ bound` (with a relative slack of 10⁻¹⁰ for rounding).
    pub satisfied: bool,
}

/// Time mean and variance of the computed trace over the second half of the time range.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TraceStatistics {
    /// Start of the averaging interval, `(t_first + t_last)/2`.
    pub from: f64,
    /// End of the averaging interval, `t_last`.
    pub to: f64,
    /// Number of grid points in the interval.
    pub points: usize,
    /// Time mean `(1/τ)∫⟨A(t)⟩dt` (trapezoidal rule).
    pub mean: f64,
    /// Time variance about that mean, `(1/τ)∫(⟨A(t)⟩ − mean)²dt`.
    pub variance: f64,
    /// Time mean square deviation from `A_DE`, `(1/τ)∫(⟨A(t)⟩ − A_DE)²dt`.
    pub variance_about_diagonal: f64,
}

/// One point of the figure "σ² against D_eff".
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FluctuationPoint {
    /// Effective dimension `D_eff`.
    pub d_eff: f64,
    /// Infinite-time variance `σ²`.
    pub sigma2: f64,
    /// ETH estimate `σ²_ETH`.
    pub sigma2_eth: f64,
    /// The bound `((λ_max − λ_min)/2)² / D_eff`.
    pub bound: f64,
}

/// Everything the quench analysis reports for one state, one observable, one sector.
#[derive(Debug, Clone, Serialize)]
pub struct QuenchReport {
    /// Number of states of the spectrum.
    pub states: usize,
    /// `Σ|cₙ|²` of the coefficients given (1 for a normalised state and a complete basis);
    /// all figures below use the normalised weights `pₙ = |cₙ|²/norm`.
    pub norm: f64,
    /// Energy `E = Σ pₙ Eₙ`.
    pub energy: f64,
    /// Energy width `δE = (Σ pₙ Eₙ² − E²)^{1/2}`.
    pub energy_width: f64,
    /// Energy density `(E − E_min)/(E_max − E_min)`.
    pub energy_density: f64,
    /// `β(E)`, `None` at the very edges of the spectrum.
    pub beta: Option<f64>,
    /// Effective dimension `D_eff = 1/Σ pₙ²`.
    pub d_eff: f64,
    /// The dropped fraction of the norm that chose the kept states.
    pub drop_weight: f64,
    /// Number of kept states `|K|`.
    pub kept: usize,
    /// Kept fraction of the norm `Σ_{n∈K} pₙ`.
    pub weight_kept: f64,
    /// Bound on the trace error from the dropped states, `‖A_KK‖ (2√δ + δ)`, `δ = 1 − weight_kept`.
    pub trace_error_bound: f64,
    /// Diagonal-ensemble value `A_DE = Σ pₙ Aₙₙ` (all states).
    pub diagonal_ensemble: f64,
    /// Microcanonical value at `E` (`None` when the shell is empty).
    pub microcanonical: Option<Microcanonical>,
    /// Canonical value at `β(E)` over the diagonal elements of all states.
    pub canonical: Option<f64>,
    /// `A_DE − A_micro`.
    pub diff_diagonal_microcanonical: Option<f64>,
    /// `A_DE − A_can`.
    pub diff_diagonal_canonical: Option<f64>,
    /// `A_micro − A_can`.
    pub diff_microcanonical_canonical: Option<f64>,
    /// Degeneracy tolerance used.
    pub degeneracy_tol: f64,
    /// Kept pairs `n < m` with `|Eₙ − Eₘ| ≤ tol`.
    pub degenerate_pairs: usize,
    /// `Σ_{n≠m, degenerate} cₙ* cₘ Aₙₘ` (real part; normalised weights): the time-independent
    /// coherent part that adds to `A_DE` in the long-time mean.
    pub degenerate_coherence: f64,
    /// Infinite-time variance `σ² = Σ_{n≠m, Eₙ≠Eₘ} pₙ pₘ |Aₙₘ|²` over the kept states.
    pub sigma2: f64,
    /// ETH estimate `σ²_ETH = Σ_{n≠m, Eₙ≠Eₘ} pₙ pₘ F(|Eₙ−Eₘ|)` with the envelope `F`.
    pub sigma2_eth: f64,
    /// `σ²_ETH / σ²` (`None` when σ² = 0).
    pub sigma2_eth_ratio: Option<f64>,
    /// The envelope `F(ω)` used for `σ²_ETH`.
    pub envelope: Envelope,
    /// The bound check.
    pub bound: BoundCheck,
    /// The time trace `⟨A(t)⟩`.
    pub trace: Vec<TracePoint>,
    /// Time statistics of the trace over the second half of the range (`None` with fewer than 2 points there).
    pub trace_statistics: Option<TraceStatistics>,
    /// Plain data for the figure "σ² against D_eff".
    pub fluctuations: FluctuationPoint,
}

/// Runs the quench analysis on plain data.
///
/// - `energies`: ascending eigenvalues of all `n` states;
/// - `diag_all`: `Aₙₙ` for all states;
/// - `coeffs`: `cₙ = ⟨n|ψ⟩` for all states (normalised inside);
/// - `a_kk`: `Aₙₘ` for `n, m ∈ K`, in the order of `kept`;
/// - `kept`: the kept states (strictly ascending indices, e.g. from [`kept_states`]);
/// - `times`: the time grid (finite, ascending).
pub fn analyze(
    energies: &[f64],
    diag_all: &[f64],
    coeffs: &[c64],
    a_kk: &Matrix,
    kept: &[usize],
    times: &[f64],
    opts: &QuenchOptions,
) -> Result<QuenchReport> {
    let n = energies.len();
    if n == 0 {
        return Err(Error::other("quench: empty spectrum"));
    }
    if diag_all.len() != n || coeffs.len() != n {
        return Err(Error::other(format!(
            "quench: {n} energies but {} diagonal elements and {} coefficients",
            diag_all.len(),
            coeffs.len()
        )));
    }
    if a_kk.nrows() != kept.len() || a_kk.ncols() != kept.len() {
        return Err(Error::other(format!(
            "quench: {} kept states but the projected operator is {}×{}",
            kept.len(),
            a_kk.nrows(),
            a_kk.ncols()
        )));
    }
    if kept.windows(2).any(|w| w[0] >= w[1]) || kept.last().is_some_and(|&k| k >= n) {
        return Err(Error::other(
            "quench: kept states must be strictly ascending indices into the spectrum",
        ));
    }
    if energies.iter().chain(diag_all).any(|x| !x.is_finite())
        || coeffs
            .iter()
            .any(|c| !(c.re.is_finite() && c.im.is_finite()))
    {
        return Err(Error::other(
            "quench: energies, diagonal elements or coefficients contain NaN or infinity",
        ));
    }
    if times.iter().any(|t| !t.is_finite()) || times.windows(2).any(|w| w[0] > w[1]) {
        return Err(Error::other("quench: times must be finite and ascending"));
    }
    let norm: f64 = coeffs.iter().map(|c| c.norm_sqr()).sum();
    if norm <= 0.0 {
        return Err(Error::other(
            "quench: the state has no weight on the stored eigenstates",
        ));
    }
    let p: Vec<f64> = coeffs.iter().map(|c| c.norm_sqr() / norm).collect();
    let scale = 1.0 / norm.sqrt();

    // Energy, width, β, D_eff.
    let energy: f64 = p.iter().zip(energies).map(|(p, e)| p * e).sum();
    let e2: f64 = p.iter().zip(energies).map(|(p, e)| p * e * e).sum();
    let energy_width = (e2 - energy * energy).max(0.0).sqrt();
    let (emin, emax) = energies
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &e| {
            (a.min(e), b.max(e))
        });
    let span = emax - emin;
    let energy_density = if span > 0.0 {
        (energy - emin) / span
    } else {
        0.5
    };
    let beta = thermo::beta_of_energy(energies, energy);
    let d_eff = 1.0 / p.iter().map(|x| x * x).sum::<f64>();

    // Equilibrium values.
    let diagonal_ensemble: f64 = p.iter().zip(diag_all).map(|(p, a)| p * a).sum();
    let half_width = opts
        .shell_half_width
        .unwrap_or(DEFAULT_SHELL_FRACTION * span);
    let microcanonical = thermo::microcanonical_average(energies, diag_all, energy, half_width)
        .map(|(value, states)| Microcanonical {
            value,
            half_width,
            states,
        });
    let canonical = beta.map(|b| thermo::canonical_average(energies, diag_all, b));
    let micro_v = microcanonical.map(|m| m.value);

    // Kept states.
    let e_k: Vec<f64> = kept.iter().map(|&k| energies[k]).collect();
    let p_k: Vec<f64> = kept.iter().map(|&k| p[k]).collect();
    let c_k: Vec<c64> = kept.iter().map(|&k| coeffs[k] * scale).collect();
    let weight_kept: f64 = p_k.iter().sum();
    let tol = opts
        .degeneracy_tol
        .unwrap_or(DEFAULT_DEGENERACY_REL * span.max(f64::MIN_POSITIVE));

    let envelope = match &opts.envelope {
        Some(e) => e.clone(),
        None => Envelope::from_pairs(&e_k, a_kk, DEFAULT_ENVELOPE_BINS),
    };

    // σ², σ²_ETH, degenerate coherences.
    let k = kept.len();
    let (mut sigma2, mut sigma2_eth, mut coherence, mut degenerate_pairs) = (0.0, 0.0, 0.0, 0);
    for m in 0..k {
        for nn in 0..m {
            let w = (e_k[m] - e_k[nn]).abs();
            if w <= tol {
                degenerate_pairs += 1;
                // c_n* c_m A_nm + c_m* c_n A_mn = 2 Re(c_n* c_m A_nm)
                coherence += 2.0 * (c_k[nn].conj() * c_k[m] * a_kk.get_c(nn, m)).re;
            } else {
                let pp = 2.0 * p_k[nn] * p_k[m];
                sigma2 += pp * abs2(a_kk, nn, m);
                sigma2_eth += pp * envelope.at(w);
            }
        }
    }

    let bound = bound_check(a_kk, d_eff, sigma2, opts.operator_range)?;
    let dropped = (1.0 - weight_kept).max(0.0);
    let trace_error_bound = bound.norm * (2.0 * dropped.sqrt() + dropped);

    let values = time_trace(&e_k, &c_k, a_kk, energy, times);
    let trace: Vec<TracePoint> = times
        .iter()
        .zip(&values)
        .map(|(&t, &value)| TracePoint { t, value })
        .collect();
    let trace_statistics = trace_statistics(times, &values, diagonal_ensemble);

    Ok(QuenchReport {
        states: n,
        norm,
        energy,
        energy_width,
        energy_density,
        beta,
        d_eff,
        drop_weight: opts.drop_weight,
        kept: k,
        weight_kept,
        trace_error_bound,
        diagonal_ensemble,
        microcanonical,
        canonical,
        diff_diagonal_microcanonical: micro_v.map(|m| diagonal_ensemble - m),
        diff_diagonal_canonical: canonical.map(|c| diagonal_ensemble - c),
        diff_microcanonical_canonical: micro_v.zip(canonical).map(|(m, c)| m - c),
        degeneracy_tol: tol,
        degenerate_pairs,
        degenerate_coherence: coherence,
        sigma2,
        sigma2_eth,
        sigma2_eth_ratio: (sigma2 > 0.0).then(|| sigma2_eth / sigma2),
        envelope,
        fluctuations: FluctuationPoint {
            d_eff,
            sigma2,
            sigma2_eth,
            bound: bound.bound,
        },
        bound,
        trace,
        trace_statistics,
    })
}

/// `⟨A(t)⟩ = b(t)ᴴ A_KK b(t)` with `b_m(t) = c_m e^{−i(E_m − e_ref)t}`, for all times at once:
/// `B` holds `b(t)` as columns (in batches of bounded size), `M = A_KK B`, and
/// `⟨A(t_j)⟩ = Re Σ_k B_kj* M_kj`.
pub fn time_trace(e_k: &[f64], c_k: &[c64], a_kk: &Matrix, e_ref: f64, times: &[f64]) -> Vec<f64> {
    let k = e_k.len();
    if k == 0 {
        return vec![0.0; times.len()];
    }
    // At most ~4·10⁶ complex entries of B per batch.
    let batch = (4_000_000 / k).clamp(1, times.len().max(1));
    let mut out = Vec::with_capacity(times.len());
    for ts in times.chunks(batch) {
        let b = Mat::<c64>::from_fn(k, ts.len(), |i, j| {
            let phase = -(e_k[i] - e_ref) * ts[j];
            c_k[i] * c64::new(phase.cos(), phase.sin())
        });
        let prod: Mat<c64> = match a_kk {
            Matrix::Complex(a) => {
                let mut m = Mat::<c64>::zeros(k, ts.len());
                matmul(
                    m.as_mut(),
                    Accum::Replace,
                    a.as_ref(),
                    b.as_ref(),
                    c64::new(1.0, 0.0),
                    Par::rayon(0),
                );
                m
            }
            Matrix::Real(a) => {
                // Real A times complex B as two real products.
                let br = Mat::<f64>::from_fn(k, ts.len(), |i, j| b[(i, j)].re);
                let bi = Mat::<f64>::from_fn(k, ts.len(), |i, j| b[(i, j)].im);
                let mut mr = Mat::<f64>::zeros(k, ts.len());
                let mut mi = Mat::<f64>::zeros(k, ts.len());
                matmul(
                    mr.as_mut(),
                    Accum::Replace,
                    a.as_ref(),
                    br.as_ref(),
                    1.0,
                    Par::rayon(0),
                );
                matmul(
                    mi.as_mut(),
                    Accum::Replace,
                    a.as_ref(),
                    bi.as_ref(),
                    1.0,
                    Par::rayon(0),
                );
                Mat::from_fn(k, ts.len(), |i, j| c64::new(mr[(i, j)], mi[(i, j)]))
            }
        };
        for j in 0..ts.len() {
            let mut s = 0.0;
            for i in 0..k {
                s += (b[(i, j)].conj() * prod[(i, j)]).re;
            }
            out.push(s);
        }
    }
    out
}

/// Time mean and variance of a trace over `[ (t₀+t_last)/2, t_last ]` with trapezoidal weights.
fn trace_statistics(times: &[f64], values: &[f64], a_de: f64) -> Option<TraceStatistics> {
    let (&t0, &t1) = (times.first()?, times.last()?);
    let from = 0.5 * (t0 + t1);
    let start = times.partition_point(|&t| t < from);
    let ts = &times[start..];
    let vs = &values[start..];
    if ts.len() < 2 || ts[ts.len() - 1] <= ts[0] {
        return None;
    }
    let integrate = |f: &dyn Fn(f64) -> f64| {
        ts.windows(2)
            .zip(vs.windows(2))
            .map(|(t, v)| 0.5 * (t[1] - t[0]) * (f(v[0]) + f(v[1])))
            .sum::<f64>()
    };
    let tau = ts[ts.len() - 1] - ts[0];
    let mean = integrate(&|v| v) / tau;
    let variance = integrate(&|v| (v - mean) * (v - mean)) / tau;
    let variance_about_diagonal = integrate(&|v| (v - a_de) * (v - a_de)) / tau;
    Some(TraceStatistics {
        from: ts[0],
        to: ts[ts.len() - 1],
        points: ts.len(),
        mean,
        variance,
        variance_about_diagonal,
    })
}

/// Gershgorin interval of a Hermitian operator in its stored basis:
/// `[minᵢ(aᵢᵢ − Rᵢ), maxᵢ(aᵢᵢ + Rᵢ)]` with `Rᵢ = Σ_{j≠i} |aᵢⱼ|` (exact for a diagonal
/// operator). It holds every eigenvalue of the operator (Gershgorin circle theorem; Horn &
/// Johnson, *Matrix Analysis*), hence of any compression `V_Kᴴ A V_K` (Cauchy interlacing).
pub fn operator_range(op: &crate::data::Operator) -> Option<(f64, f64)> {
    use crate::data::{OpData, Operator};
    fn gersh(n: usize, row: impl Fn(usize) -> (f64, f64)) -> Option<(f64, f64)> {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for i in 0..n {
            let (d, r) = row(i);
            lo = lo.min(d - r);
            hi = hi.max(d + r);
        }
        (n > 0).then_some((lo, hi))
    }
    fn csr_row<T: Copy>(
        c: &crate::data::Csr<T>,
        i: usize,
        re: impl Fn(T) -> f64,
        abs: impl Fn(T) -> f64,
    ) -> (f64, f64) {
        let (mut d, mut r) = (0.0, 0.0);
        for k in c.indptr[i]..c.indptr[i + 1] {
            if c.indices[k] == i {
                d += re(c.data[k]);
            } else {
                r += abs(c.data[k]);
            }
        }
        (d, r)
    }
    match op {
        Operator::Real(OpData::Diagonal(v)) => gersh(v.len(), |i| (v[i], 0.0)),
        Operator::Complex(OpData::Diagonal(v)) => gersh(v.len(), |i| (v[i].re, 0.0)),
        Operator::Real(OpData::Csr(c)) => gersh(c.nrows, |i| csr_row(c, i, |x| x, f64::abs)),
        Operator::Complex(OpData::Csr(c)) => {
            gersh(c.nrows, |i| csr_row(c, i, |x| x.re, |x| x.norm()))
        }
        Operator::Real(OpData::Dense(m)) | Operator::Real(OpData::EnergyBasis(m)) => {
            gersh(m.nrows(), |i| {
                (
                    m[(i, i)],
                    (0..m.ncols())
                        .filter(|&j| j != i)
                        .map(|j| m[(i, j)].abs())
                        .sum(),
                )
            })
        }
        Operator::Complex(OpData::Dense(m)) | Operator::Complex(OpData::EnergyBasis(m)) => {
            gersh(m.nrows(), |i| {
                (
                    m[(i, i)].re,
                    (0..m.ncols())
                        .filter(|&j| j != i)
                        .map(|j| m[(i, j)].norm())
                        .sum(),
                )
            })
        }
    }
}

/// The bound check `σ² ≤ ((λ_max − λ_min)/2)² / D_eff` over `A_KK`; above
/// [`BOUND_EIGEN_MAX`] kept states the spread is bounded by the tighter of `A_KK`'s largest
/// absolute row sum and the operator's known range `range` (Cauchy interlacing).
fn bound_check(
    a_kk: &Matrix,
    d_eff: f64,
    sigma2: f64,
    range: Option<(f64, f64)>,
) -> Result<BoundCheck> {
    let k = a_kk.nrows();
    let (method, norm, half_spread) = if k == 0 {
        ("eigenvalues", 0.0, 0.0)
    } else if k <= BOUND_EIGEN_MAX {
        let ev = match a_kk {
            Matrix::Real(a) => crate::linalg::eigvalsh_real(a.as_ref())?,
            Matrix::Complex(a) => crate::linalg::eigvalsh_complex(a.as_ref())?,
        };
        let lo = ev.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = ev.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        ("eigenvalues", lo.abs().max(hi.abs()), 0.5 * (hi - lo))
    } else {
        let mut r = 0.0f64;
        for i in 0..k {
            let s: f64 = (0..k).map(|j| a_kk.get_c(i, j).norm()).sum();
            r = r.max(s);
        }
        match range {
            Some((lo, hi)) if 0.5 * (hi - lo) < r => (
                "operator_range",
                lo.abs().max(hi.abs()).min(r),
                0.5 * (hi - lo),
            ),
            _ => ("row_sum", r, r),
        }
    };
    let bound_norm = norm * norm / d_eff;
    let bound = half_spread * half_spread / d_eff;
    Ok(BoundCheck {
        method: method.to_string(),
        norm,
        half_spread,
        bound_norm,
        bound,
        satisfied: sigma2 <= bound * (1.0 + 1e-10) + 1e-300,
    })
}

/// A sector's quench result with the diagonal elements of all its states (kept for
/// [`combine`]).
#[derive(Debug, Clone, Serialize)]
pub struct SectorQuench {
    /// The analysis.
    pub report: QuenchReport,
    /// `Aₙₙ` for all states of the sector.
    #[serde(skip)]
    pub diag_all: Vec<f64>,
}

/// The whole pipeline for one sector: `cₙ = vₙᴴψ` and `Aₙₙ` in one streamed pass
/// ([`basis::coefficients_and_diagonal`]), the kept states ([`kept_states`] with
/// `opts.drop_weight`), `A_KK` ([`basis::kept_matrix`], the projector under `opts.project`),
/// then [`analyze`].
/// `energies` are the ascending energies of the `src.n_states()` eigenvectors and `psi` is the
/// state in the sector's computational basis.
pub fn quench_sector(
    src: &dyn crate::data::ColumnSource,
    energies: &[f64],
    op: &crate::data::Operator,
    psi: &[c64],
    times: &[f64],
    opts: &QuenchOptions,
) -> Result<SectorQuench> {
    let (mut prepared, mut diags) = prepare_sector(src, energies, &[op], psi, opts)?;
    let diag_all = diags
        .pop()
        .ok_or_else(|| Error::other("internal: no diagonal elements"))?;
    prepared.quench(src, energies, op, diag_all, times, opts)
}

/// The part of a sector quench that depends on the state but not on the observable: the
/// coefficients `cₙ = vₙᴴψ`, the kept states, and (once gathered) their eigenvectors `V_K`.
/// Made by [`prepare_sector`]; [`PreparedSector::quench`] then runs one observable.
#[derive(Debug, Clone)]
pub struct PreparedSector {
    /// `cₙ = ⟨n|ψ⟩` for all states.
    pub coeffs: Vec<c64>,
    /// The kept states ([`kept_states`] of `|cₙ|²` with `opts.drop_weight`).
    pub kept: KeptStates,
    basis: basis::KeptBasis,
}

/// The pipeline of [`quench_sector`] for several observables of one sector and one state,
/// first part: `cₙ = vₙᴴψ` and `Aₙₙ` of every operator of `ops` in one streamed pass over the
/// eigenvectors ([`basis::coefficients_and_diagonals`]) and the kept states. Returns the
/// prepared sector and the diagonals `Aₙₙ` (all states) in the order of `ops`; each diagonal
/// then goes to [`PreparedSector::quench`] with its operator. The results are those of
/// [`quench_sector`] run on each operator in turn.
pub fn prepare_sector(
    src: &dyn crate::data::ColumnSource,
    energies: &[f64],
    ops: &[&crate::data::Operator],
    psi: &[c64],
    opts: &QuenchOptions,
) -> Result<(PreparedSector, Vec<Vec<f64>>)> {
    if energies.len() != src.n_states() {
        return Err(Error::other(format!(
            "quench: {} energies but {} eigenvectors",
            energies.len(),
            src.n_states()
        )));
    }
    let (coeffs, diags) = basis::coefficients_and_diagonals(src, psi, ops)?;
    let weights: Vec<f64> = coeffs.iter().map(|c| c.norm_sqr()).collect();
    let kept = kept_states(&weights, opts.drop_weight);
    let basis = basis::KeptBasis::new(kept.indices.clone());
    Ok((
        PreparedSector {
            coeffs,
            kept,
            basis,
        },
        diags,
    ))
}

impl PreparedSector {
    /// Second part of [`prepare_sector`], for one operator `op` with its diagonal elements
    /// `diag_all` (`Aₙₙ` of all states): `A_KK` ([`basis::KeptBasis::matrix`], the projector
    /// under `opts.project`; `V_K` is gathered at most once per prepared sector), then
    /// [`analyze`]. `src` and `energies` must be those given to [`prepare_sector`].
    pub fn quench(
        &mut self,
        src: &dyn crate::data::ColumnSource,
        energies: &[f64],
        op: &crate::data::Operator,
        diag_all: Vec<f64>,
        times: &[f64],
        opts: &QuenchOptions,
    ) -> Result<SectorQuench> {
        let (a_kk, _) = self.basis.matrix(src, op, &opts.project)?;
        let mut opts = opts.clone();
        if opts.operator_range.is_none() {
            opts.operator_range = operator_range(op);
        }
        let report = analyze(
            energies,
            &diag_all,
            &self.coeffs,
            &a_kk,
            &self.kept.indices,
            times,
            &opts,
        )?;
        Ok(SectorQuench { report, diag_all })
    }
}

/// The combination of per-sector results for an operator that is block diagonal in the
/// sectors (`A = Σ_s P_s A P_s`; the operators stored per sector are of that form): with
/// sector weights `w_s`, `⟨A(t)⟩ = Σ_s w_s ⟨A(t)⟩_s`, `E = Σ_s w_s E_s`, `A_DE = Σ_s w_s A_DE,s`,
/// and the canonical and microcanonical values from the union of the sector spectra.
#[derive(Debug, Clone, Serialize)]
pub struct Combined {
    /// Total weight `Σ_s w_s` (1 for a normalised state when the sectors cover the space).
    pub weight: f64,
    /// Energy `Σ_s w_s E_s / Σ_s w_s`.
    pub energy: f64,
    /// `β(E)` from the union of the spectra.
    pub beta: Option<f64>,
    /// `Σ_s w_s A_DE,s / Σ_s w_s`.
    pub diagonal_ensemble: f64,
    /// Microcanonical value at `E` over the union of the spectra.
    pub microcanonical: Option<Microcanonical>,
    /// Canonical value at `β(E)` over the union of the spectra.
    pub canonical: Option<f64>,
    /// `Σ_s w_s ⟨A(t)⟩_s / Σ_s w_s`.
    pub trace: Vec<TracePoint>,
}

/// One sector's part in a [`Combined`] result.
#[derive(Debug, Clone, Copy)]
pub struct SectorPart<'a> {
    /// Weight `w_s = ‖P_sᵀψ‖²` of the state in the sector.
    pub weight: f64,
    /// The sector's ascending energies.
    pub energies: &'a [f64],
    /// The sector's diagonal elements.
    pub diag_all: &'a [f64],
    /// The sector's report (computed with the normalised sector component).
    pub report: &'a QuenchReport,
}

/// Combines per-sector results (see [`Combined`]). All reports must share the time grid.
pub fn combine(parts: &[SectorPart<'_>], opts: &QuenchOptions) -> Result<Combined> {
    let weight: f64 = parts.iter().map(|p| p.weight).sum();
    if parts.is_empty() || weight <= 0.0 {
        return Err(Error::other(
            "quench: the state has no weight in any sector",
        ));
    }
    let nt = parts[0].report.trace.len();
    if parts.iter().any(|p| p.report.trace.len() != nt) {
        return Err(Error::other(
            "quench: sectors were run on different time grids",
        ));
    }
    let energy = parts
        .iter()
        .map(|p| p.weight * p.report.energy)
        .sum::<f64>()
        / weight;
    let diagonal_ensemble = parts
        .iter()
        .map(|p| p.weight * p.report.diagonal_ensemble)
        .sum::<f64>()
        / weight;
    let trace = (0..nt)
        .map(|j| TracePoint {
            t: parts[0].report.trace[j].t,
            value: parts
                .iter()
                .map(|p| p.weight * p.report.trace[j].value)
                .sum::<f64>()
                / weight,
        })
        .collect();
    let energies: Vec<f64> = parts
        .iter()
        .flat_map(|p| p.energies.iter().copied())
        .collect();
    let diag: Vec<f64> = parts
        .iter()
        .flat_map(|p| p.diag_all.iter().copied())
        .collect();
    let (emin, emax) = energies
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &e| {
            (a.min(e), b.max(e))
        });
    let half_width = opts
        .shell_half_width
        .unwrap_or(DEFAULT_SHELL_FRACTION * (emax - emin));
    let beta = thermo::beta_of_energy(&energies, energy);
    Ok(Combined {
        weight,
        energy,
        beta,
        diagonal_ensemble,
        microcanonical: thermo::microcanonical_average(&energies, &diag, energy, half_width).map(
            |(value, states)| Microcanonical {
                value,
                half_width,
                states,
            },
        ),
        canonical: beta.map(|b| thermo::canonical_average(&energies, &diag, b)),
        trace,
    })
}

/// Whole-state figures of a quench whose state may be spread over several sectors, for
/// tables and size scaling. With the normalised sector weights `w̃_s = w_s / Σ_s w_s` and
/// an observable that is block diagonal in the sectors (so that `Aₙₘ = 0` between sectors):
///
/// - `D_eff = 1 / Σ_s w̃_s² / D_eff,s` (the participation of `pₙ = w̃_s pₙ^(s)`);
/// - `σ² = Σ_s w̃_s² σ²_s` and `σ²_ETH = Σ_s w̃_s² σ²_ETH,s` (pairs in different sectors do
///   not contribute);
/// - `bound = max_s h_s² / D_eff` with `h_s = (λ_max − λ_min)/2` of the sector's `A_KK`,
///   since `σ² ≤ Σ_s w̃_s² h_s²/D_eff,s ≤ max_s h_s² Σ_s w̃_s²/D_eff,s`;
/// - energy, `β`, the diagonal-ensemble, microcanonical and canonical values, and the trace
///   of the [`Combined`] result (of the single sector when there is one), and the time
///   statistics of that trace over the second half of the time range.
#[derive(Debug, Clone, Serialize)]
pub struct Overall {
    /// Energy `E`.
    pub energy: f64,
    /// `β(E)`.
    pub beta: Option<f64>,
    /// Effective dimension of the whole state.
    pub d_eff: f64,
    /// Diagonal-ensemble value.
    pub diagonal_ensemble: f64,
    /// Microcanonical value at `E`.
    pub microcanonical: Option<f64>,
    /// Canonical value at `β(E)`.
    pub canonical: Option<f64>,
    /// Infinite-time variance `σ²`.
    pub sigma2: f64,
    /// ETH estimate `σ²_ETH`.
    pub sigma2_eth: f64,
    /// The bound `max_s h_s² / D_eff` on `σ²`.
    pub bound: f64,
    /// Time statistics of the whole trace over the second half of the time range.
    pub trace_statistics: Option<TraceStatistics>,
    /// The whole trace `⟨A(t)⟩`.
    #[serde(skip)]
    pub trace: Vec<TracePoint>,
}

/// The [`Overall`] figures from the sector reports `(w_s, report_s)` and, for several
/// sectors, their [`combine`]d result.
pub fn overall(parts: &[(f64, &QuenchReport)], combined: Option<&Combined>) -> Result<Overall> {
    let total: f64 = parts.iter().map(|p| p.0).sum();
    if parts.is_empty() || total <= 0.0 || !total.is_finite() {
        return Err(Error::other(
            "quench: the state has no weight in any sector",
        ));
    }
    let w = |x: f64| x / total;
    let inv_d: f64 = parts.iter().map(|(x, r)| w(*x).powi(2) / r.d_eff).sum();
    let d_eff = 1.0 / inv_d;
    let sigma2 = parts.iter().map(|(x, r)| w(*x).powi(2) * r.sigma2).sum();
    let sigma2_eth = parts
        .iter()
        .map(|(x, r)| w(*x).powi(2) * r.sigma2_eth)
        .sum();
    let h2 = parts
        .iter()
        .map(|(_, r)| r.bound.half_spread.powi(2))
        .fold(0.0, f64::max);
    let (energy, beta, de, micro, can, trace) = match (combined, parts) {
        (Some(c), _) => (
            c.energy,
            c.beta,
            c.diagonal_ensemble,
            c.microcanonical.map(|m| m.value),
            c.canonical,
            c.trace.clone(),
        ),
        (None, [(_, r)]) => (
            r.energy,
            r.beta,
            r.diagonal_ensemble,
            r.microcanonical.map(|m| m.value),
            r.canonical,
            r.trace.clone(),
        ),
        (None, _) => {
            return Err(Error::other(
                "internal: several sectors need their combined result",
            ))
        }
    };
    let times: Vec<f64> = trace.iter().map(|p| p.t).collect();
    let values: Vec<f64> = trace.iter().map(|p| p.value).collect();
    Ok(Overall {
        energy,
        beta,
        d_eff,
        diagonal_ensemble: de,
        microcanonical: micro,
        canonical: can,
        sigma2,
        sigma2_eth,
        bound: h2 / d_eff,
        trace_statistics: trace_statistics(&times, &values, de),
        trace,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn time_grids() {
        // definition of the grids (common practice, no source)
        let g = TimeGrid::parse("lin:0:10:11").unwrap();
        assert_eq!(g.points()[3], 3.0);
        let g = TimeGrid::parse("log:0.01:100:5").unwrap();
        let p = g.points();
        assert!((p[2] - 1.0).abs() < 1e-12 && (p[4] - 100.0).abs() < 1e-9);
        for s in [
            "lin:1:0:5",
            "log:0:1:5",
            "lin:0:1:1",
            "cos:0:1:5",
            "lin:0:1",
            "lin:a:1:3",
        ] {
            assert!(TimeGrid::parse(s).is_err(), "{s}");
        }
        assert!(TimeGrid::parse(DEFAULT_TIMES).is_ok());
    }

    #[test]
    fn kept_states_reach_the_norm() {
        // largest weights first until (1 − drop) of the norm (our stated rule; no source)
        let w = [0.05, 0.5, 0.0, 0.3, 0.15];
        let k = kept_states(&w, 0.1);
        assert_eq!(k.indices, vec![1, 3, 4]);
        assert!((k.weight_fraction - 0.95).abs() < 1e-15);
        let all = kept_states(&w, 0.0);
        assert_eq!(all.indices, vec![0, 1, 3, 4]); // zero weight never kept
        assert!(kept_states(&[0.0, 0.0], 1e-6).indices.is_empty());
    }

    /// Random complex Hermitian matrix and state for the brute-force checks.
    fn random_problem(k: usize, seed: u64) -> (Vec<f64>, Vec<c64>, Mat<c64>) {
        use rand::Rng;
        let mut rng = crate::model::rmt::rng(seed);
        let mut e: Vec<f64> = (0..k).map(|_| rng.random::<f64>() * 4.0 - 2.0).collect();
        e.sort_by(f64::total_cmp);
        let c: Vec<c64> = (0..k)
            .map(|_| c64::new(rng.random::<f64>() - 0.5, rng.random::<f64>() - 0.5))
            .collect();
        let a = crate::model::rmt::gue(k, &mut rng);
        (e, c, a)
    }

    #[test]
    fn trace_equals_double_sum() {
        // ⟨A(t)⟩ = Σₙₘ cₙ* cₘ Aₙₘ e^{i(Eₙ−Eₘ)t}: the batched product against the plain
        // double sum (exact identity, linear algebra)
        let (e, c, a) = random_problem(17, 3);
        let times = [0.0, 0.3, 1.7, 12.5];
        let m = Matrix::Complex(a.clone());
        let got = time_trace(&e, &c, &m, 0.4, &times);
        for (j, &t) in times.iter().enumerate() {
            let mut s = c64::new(0.0, 0.0);
            for n in 0..17 {
                for mm in 0..17 {
                    let ph = (e[n] - e[mm]) * t;
                    s += c[n].conj() * c[mm] * a[(n, mm)] * c64::new(ph.cos(), ph.sin());
                }
            }
            assert!(
                (got[j] - s.re).abs() < 1e-12,
                "t {t}: {} vs {}",
                got[j],
                s.re
            );
            assert!(s.im.abs() < 1e-12);
        }
        // real operator path agrees with the complex path
        let ar = Mat::<f64>::from_fn(17, 17, |i, j| a[(i, j)].re);
        let r1 = time_trace(&e, &c, &Matrix::Real(ar.clone()), 0.0, &times);
        let r2 = time_trace(
            &e,
            &c,
            &Matrix::Complex(Mat::from_fn(17, 17, |i, j| c64::new(ar[(i, j)], 0.0))),
            0.0,
            &times,
        );
        for (x, y) in r1.iter().zip(&r2) {
            assert!((x - y).abs() < 1e-12);
        }
    }

    #[test]
    fn sigma2_and_bound_on_random_problem() {
        // σ² = Σ_{n≠m} pₙpₘ|Aₙₘ|² (definition) and σ² ≤ ‖A−c‖²/D_eff (Short 2011, from memory;
        // proof in the module doc)
        let (e, c, a) = random_problem(40, 7);
        let kept: Vec<usize> = (0..40).collect();
        let diag: Vec<f64> = (0..40).map(|i| a[(i, i)].re).collect();
        let r = analyze(
            &e,
            &diag,
            &c,
            &Matrix::Complex(a.clone()),
            &kept,
            &[0.0, 1.0],
            &QuenchOptions::default(),
        )
        .unwrap();
        let norm: f64 = c.iter().map(|x| x.norm_sqr()).sum();
        let p: Vec<f64> = c.iter().map(|x| x.norm_sqr() / norm).collect();
        let mut s2 = 0.0;
        for n in 0..40 {
            for m in 0..40 {
                if n != m {
                    s2 += p[n] * p[m] * a[(n, m)].norm_sqr();
                }
            }
        }
        assert!((r.sigma2 - s2).abs() < 1e-14 * s2.max(1.0));
        assert!(r.bound.satisfied && r.sigma2 <= r.bound.bound);
        assert!(r.bound.bound <= r.bound.bound_norm * (1.0 + 1e-12));
        // at t = 0 the trace is ⟨ψ|A|ψ⟩ / ⟨ψ|ψ⟩ (definition)
        let mut s = c64::new(0.0, 0.0);
        for n in 0..40 {
            for m in 0..40 {
                s += c[n].conj() * c[m] * a[(n, m)];
            }
        }
        assert!((r.trace[0].value - s.re / norm).abs() < 1e-12);
        assert!((r.norm - norm).abs() < 1e-14);
    }

    #[test]
    fn envelope_lookup() {
        // bin lookup with the nearest non-empty bin (our stated rule; no source)
        let env = Envelope {
            edges: vec![0.0, 1.0, 2.0, 3.0],
            mean_sq: vec![1.0, 0.0, 3.0],
            counts: vec![4, 0, 2],
        };
        assert_eq!(env.at(0.5), 1.0);
        assert_eq!(env.at(2.5), 3.0);
        assert_eq!(env.at(7.0), 3.0);
        assert_eq!(env.at(1.5), 1.0);
    }

    #[test]
    fn bad_input_is_an_error() {
        // clear errors instead of panics (common practice, no source)
        let m = Matrix::Real(Mat::zeros(1, 1));
        let c = [c64::new(1.0, 0.0)];
        assert!(analyze(
            &[0.0],
            &[0.0, 1.0],
            &c,
            &m,
            &[0],
            &[0.0],
            &Default::default()
        )
        .is_err());
        assert!(analyze(&[0.0], &[0.0], &c, &m, &[1], &[0.0], &Default::default()).is_err());
        let z = [c64::new(0.0, 0.0)];
        assert!(analyze(&[0.0], &[0.0], &z, &m, &[0], &[0.0], &Default::default()).is_err());
    }
}
