//! One sector's quench dynamics from plain data: energies, diagonal elements,
//! coefficients, the kept states and the operator over them (`A_KK`).
//!
//! With the normalised weights `pₙ = |cₙ|²/Σ|c|²` ([`analyze`]): energy, width, `β(E)`,
//! `D_eff`, the diagonal-ensemble, microcanonical and canonical values, the sums over the
//! pairs of kept states ([`super::envelope`]), the bound ([`super::bound`]), and the time
//! trace ([`time_trace`]): with `b(t) = (cₘ e^{−i(Eₘ−E)t})_{m∈K}`,
//! `⟨A(t)⟩ = b(t)ᴴ A_KK b(t)` for a batch of times at once. `A_KK` is Hermitian and stored by
//! its upper column panels `P_J = A_KK[0..j₁, J]` (diagonal block whole), so
//!
//! ```text
//! ⟨A(t)⟩ = Σ_J [ 2 Re Σ_{a < j₀} b_a* (P_J b_J)_a + Re Σ_{a ∈ J} b_a* (P_J b_J)_a ]
//! ```
//!
//! one product `P_J · B_J` per panel and batch of times (the columns of `B` are `b(t)`): about
//! `K²·T` multiply-adds per trace (real `A_KK`: `B` as its real and imaginary parts, two real
//! columns per time), half those of the full product `A_KK · B`. The batch of times is
//! chosen from the scratch memory given ([`Work`]); the products use the parallelism given.

use super::bound::{bound_check, BoundCheck};
use super::envelope::{linear_edges, pair_sums, Envelope, Pairs};
use super::{QuenchOptions, DEFAULT_DEGENERACY_REL, DEFAULT_ENVELOPE_BINS, DEFAULT_SHELL_FRACTION};
use crate::analysis::thermo;
use crate::data::{c64, HermitianPanels, PanelRef};
use crate::error::{Error, Result};
use faer::linalg::matmul::matmul;
use faer::{Accum, Mat, MatMut, MatRef, Par};
use rayon::prelude::*;
use serde::Serialize;

/// Largest scratch of the time trace: the batch of `b(t)` columns and one block of
/// products (16 MiB). Wider batches save no work, only product overhead: a batch of a few
/// hundred `b(t)` columns (306 times of a 3432-state real sector) runs the products near
/// faer's full rate.
pub const TRACE_BATCH_BYTES: usize = 16 << 20;

/// Rows of `A_KK` multiplied at once in the time trace.
const TRACE_ROWS: usize = 512;

/// Parallelism and scratch memory of one sector's analysis.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Work {
    /// Parallelism of the products and of the sweep over the pairs.
    pub par: Par,
    /// Bytes the time trace may use for its batches (at most [`TRACE_BATCH_BYTES`] are
    /// used; at least one time per batch).
    pub scratch_bytes: usize,
}

/// The plain data of one sector for [`analyze`].
#[derive(Debug, Clone, Copy)]
pub struct SectorData<'a> {
    /// Ascending eigenvalues of all `n` states.
    pub energies: &'a [f64],
    /// `Aₙₙ` for all states.
    pub diag_all: &'a [f64],
    /// `cₙ = ⟨n|ψ⟩` for all states (normalised inside).
    pub coeffs: &'a [c64],
    /// The kept states (strictly ascending indices, e.g. from [`kept_states`]).
    pub kept: &'a [usize],
    /// `Aₙₘ` for `n, m ∈ K`, in the order of `kept`.
    pub a_kk: &'a HermitianPanels,
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

/// The shapes and values [`analyze`] needs: matching lengths, ascending kept states,
/// finite numbers, ascending finite times.
fn check_data(data: &SectorData<'_>, times: &[f64]) -> Result<()> {
    let SectorData {
        energies,
        diag_all,
        coeffs,
        kept,
        a_kk,
    } = *data;
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
    if a_kk.dim() != kept.len() {
        return Err(Error::other(format!(
            "quench: {} kept states but the projected operator is {}×{}",
            kept.len(),
            a_kk.dim(),
            a_kk.dim()
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
    Ok(())
}

/// Runs the quench analysis on the plain data of one sector, on the time grid `times`
/// (finite, ascending), with the parallelism and scratch memory `work`.
pub fn analyze(
    data: &SectorData<'_>,
    times: &[f64],
    opts: &QuenchOptions,
    work: Work,
) -> Result<QuenchReport> {
    let SectorData {
        energies,
        diag_all,
        coeffs,
        kept,
        a_kk,
    } = *data;
    let n = energies.len();
    check_data(data, times)?;
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

    // σ², σ²_ETH, degenerate coherences, the envelope and the Gershgorin radii: one sweep.
    let k = kept.len();
    let (wmax, edges) = match &opts.envelope {
        Some(e) => (None, e.edges.clone()),
        None => {
            let (wmax, edges) = linear_edges(&e_k, DEFAULT_ENVELOPE_BINS);
            (Some(wmax), edges)
        }
    };
    let sums = pair_sums(
        a_kk,
        &Pairs {
            e_k: &e_k,
            p_k: &p_k,
            c_k: &c_k,
            tol,
            lookup: &edges,
            build: wmax,
            radii: k > super::BOUND_EIGEN_MAX,
        },
        work.par,
    );
    let envelope = match &opts.envelope {
        Some(e) => e.clone(),
        None => sums.envelope(edges),
    };
    let (sigma2, coherence, degenerate_pairs) =
        (sums.sigma2, sums.coherence, sums.degenerate_pairs);
    let sigma2_eth = sums.sigma2_eth(&envelope);
    let gershgorin =
        (k > super::BOUND_EIGEN_MAX).then_some((sums.diagonal.as_slice(), sums.radii.as_slice()));
    let bound = bound_check(a_kk, gershgorin, d_eff, sigma2, opts.operator_range)?;
    let dropped = (1.0 - weight_kept).max(0.0);
    let trace_error_bound = bound.norm * (2.0 * dropped.sqrt() + dropped);

    let values = time_trace(&e_k, &c_k, a_kk, energy, times, work)?;
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

/// `⟨A(t)⟩ = b(t)ᴴ A_KK b(t)` with `b_m(t) = c_m e^{−i(E_m − e_ref)t}`, for all times, from
/// the upper panels of `A_KK` (see the module doc), in batches of times sized by
/// `work.scratch_bytes` (at most [`TRACE_BATCH_BYTES`]).
pub fn time_trace(
    e_k: &[f64],
    c_k: &[c64],
    a_kk: &HermitianPanels,
    e_ref: f64,
    times: &[f64],
    work: Work,
) -> Result<Vec<f64>> {
    let k = e_k.len();
    if c_k.len() != k || a_kk.dim() != k {
        return Err(Error::other(format!(
            "quench: {k} kept energies, {} coefficients and a {}×{} kept-state matrix",
            c_k.len(),
            a_kk.dim(),
            a_kk.dim()
        )));
    }
    let mut out = Vec::with_capacity(times.len());
    if k == 0 {
        out.resize(times.len(), 0.0);
        return Ok(out);
    }
    let rows = TRACE_ROWS.min(k);
    // bytes per time: two real (or one complex) columns of B and of the products
    let per_time = 16 * (k + rows);
    let scratch = work.scratch_bytes.min(TRACE_BATCH_BYTES);
    let batch = (scratch / per_time).clamp(1, times.len().max(1));
    let phases = Phases::new(&e_k[..k], &c_k[..k], e_ref, times);
    match a_kk.field() {
        crate::data::Field::Real => {
            // B as real columns (Re b(t), Im b(t)) side by side for each time
            let mut b = Mat::<f64>::zeros(k, 2 * batch);
            let mut m = Mat::<f64>::zeros(rows, 2 * batch);
            for ts in times.chunks(batch) {
                let nt = ts.len();
                fill_pairs(b.as_mut().subcols_mut(0, 2 * nt), work.par, &phases, ts);
                let mut acc = vec![0.0; nt];
                for_each_product(a_kk, b.as_ref().subcols(0, 2 * nt), m.as_mut(), work.par, {
                    |rows: std::ops::Range<usize>, prod: MatRef<'_, f64>, f: f64| {
                        for (j, acc) in acc.iter_mut().enumerate() {
                            let (re, im) = (2 * j, 2 * j + 1);
                            let mut s = 0.0;
                            for (r, a) in rows.clone().enumerate() {
                                s += b[(a, re)] * prod[(r, re)] + b[(a, im)] * prod[(r, im)];
                            }
                            *acc += f * s;
                        }
                    }
                });
                out.extend(acc);
            }
        }
        crate::data::Field::Complex => {
            let mut b = Mat::<c64>::zeros(k, batch);
            let mut m = Mat::<c64>::zeros(rows, batch);
            for ts in times.chunks(batch) {
                let nt = ts.len();
                fill_columns(b.as_mut().subcols_mut(0, nt), work.par, &phases, ts);
                let mut acc = vec![0.0; nt];
                for_each_product(a_kk, b.as_ref().subcols(0, nt), m.as_mut(), work.par, {
                    |rows: std::ops::Range<usize>, prod: MatRef<'_, c64>, f: f64| {
                        for (j, acc) in acc.iter_mut().enumerate() {
                            let mut s = 0.0;
                            for (r, a) in rows.clone().enumerate() {
                                s += (b[(a, j)].conj() * prod[(r, j)]).re;
                            }
                            *acc += f * s;
                        }
                    }
                });
                out.extend(acc);
            }
        }
    }
    Ok(out)
}

/// Scalar types of the trace products.
trait TraceElem: faer::traits::ComplexField + Copy + Send + Sync + 'static {
    fn one() -> Self;
    /// The storage of panel `p` and the columns after it, `width` in all
    /// ([`HermitianPanels::storage_view`]), when the element type matches.
    fn view(a: &HermitianPanels, p: usize, width: usize) -> Option<MatRef<'_, Self>>;
}

impl TraceElem for f64 {
    fn one() -> Self {
        1.0
    }
    fn view(a: &HermitianPanels, p: usize, width: usize) -> Option<MatRef<'_, f64>> {
        match a.storage_view(p, width) {
            PanelRef::Real(m) => Some(m),
            PanelRef::Complex(_) => None,
        }
    }
}

impl TraceElem for c64 {
    fn one() -> Self {
        c64::new(1.0, 0.0)
    }
    fn view(a: &HermitianPanels, p: usize, width: usize) -> Option<MatRef<'_, c64>> {
        match a.storage_view(p, width) {
            PanelRef::Complex(m) => Some(m),
            PanelRef::Real(_) => None,
        }
    }
}

/// The products `A_KK[R, C] · B[C, ·]` that cover the stored upper part of `a_kk` once,
/// each handed to `sink(R, product, factor)`: factor 2 for blocks above the diagonal
/// (their mirror images below are not stored), 1 for the diagonal blocks of the panels
/// (stored whole). Panels that lie side by side in one storage matrix are taken together,
/// so that the products run over as many columns as possible: for such a group of columns
/// `[g₀, g₁)`, the rows above it in blocks of at most `m.nrows()`, then its own rows in
/// blocks of whole panels of at most that many rows, each against the columns after the
/// block and, inside the block, each panel against the rows of the block above it and its
/// diagonal block. The rows of `b` follow the columns of `a_kk`.
fn for_each_product<T: TraceElem>(
    a_kk: &HermitianPanels,
    b: MatRef<'_, T>,
    mut m: MatMut<'_, T>,
    par: Par,
    mut sink: impl FnMut(std::ops::Range<usize>, MatRef<'_, T>, f64),
) {
    let step = m.nrows().max(1);
    let nt = b.ncols();
    let panels = a_kk.panels();
    let mut product =
        |rows: std::ops::Range<usize>, lhs: MatRef<'_, T>, cols: std::ops::Range<usize>, f: f64| {
            let mut r0 = rows.start;
            while r0 < rows.end {
                let r1 = (r0 + step).min(rows.end);
                let mut dst = m.as_mut().submatrix_mut(0, 0, r1 - r0, nt);
                matmul(
                    dst.as_mut(),
                    Accum::Replace,
                    lhs.subrows(r0 - rows.start, r1 - r0),
                    b.subrows(cols.start, cols.len()),
                    T::one(),
                    par,
                );
                sink(r0..r1, dst.as_ref(), f);
                r0 = r1;
            }
        };
    let mut p = 0;
    while p < panels.len() {
        // the group: panels p..q side by side in one storage matrix
        let mut q = p + 1;
        while q < panels.len()
            && panels[q].storage == panels[p].storage
            && panels[q].offset == panels[q - 1].offset + panels[q - 1].cols.len()
        {
            q += 1;
        }
        let (g0, g1) = (panels[p].cols.start, panels[q - 1].cols.end);
        let Some(view) = T::view(a_kk, p, g1 - g0) else {
            p = q;
            continue;
        };
        // rows above the group
        if g0 > 0 {
            product(0..g0, view.subrows(0, g0), g0..g1, 2.0);
        }
        // rows of the group, in blocks of whole panels of about `step` rows: against the
        // columns after the block, then inside the block panel by panel
        let mut a = p;
        while a < q {
            let r0 = panels[a].cols.start;
            let mut e = a + 1;
            while e < q && panels[e].cols.end - r0 <= step {
                e += 1;
            }
            let r1 = panels[e - 1].cols.end;
            if r1 < g1 {
                let lhs = view.submatrix(r0, r1 - g0, r1 - r0, g1 - r1);
                product(r0..r1, lhs, r1..g1, 2.0);
            }
            for panel in &panels[a..e] {
                let (j0, j1) = (panel.cols.start, panel.cols.end);
                if j0 > r0 {
                    let lhs = view.submatrix(r0, j0 - g0, j0 - r0, j1 - j0);
                    product(r0..j0, lhs, j0..j1, 2.0);
                }
                product(
                    j0..j1,
                    view.submatrix(j0, j0 - g0, j1 - j0, j1 - j0),
                    j0..j1,
                    1.0,
                );
            }
            a = e;
        }
        p = q;
    }
}

/// Times per run of the phase recurrence: `b(t)` is computed exactly at the first time of
/// every run and by `b(t + δt) = b(t)·e^{−i(E − e_ref)δt}` at the others.
const ANCHOR: usize = 32;

/// The columns `b(t) = (c_m e^{−i(E_m − e_ref)t})_m` of the trace. On an equally spaced grid
/// (`t_j = t₀ + j·δt` to 10⁻¹³ of the largest time) runs of [`ANCHOR`] times use the
/// recurrence with the factors `e^{−i(E_m − e_ref)δt}`, computed once (relative error a few
/// 10⁻¹⁵ after a run); otherwise every entry is computed exactly.
struct Phases<'a> {
    e_k: &'a [f64],
    c_k: &'a [c64],
    e_ref: f64,
    steps: Option<Vec<c64>>,
}

impl<'a> Phases<'a> {
    fn new(e_k: &'a [f64], c_k: &'a [c64], e_ref: f64, times: &[f64]) -> Self {
        let n = times.len();
        let steps = (n >= 2)
            .then(|| {
                let dt = (times[n - 1] - times[0]) / (n - 1) as f64;
                let scale = times[0]
                    .abs()
                    .max(times[n - 1].abs())
                    .max(f64::MIN_POSITIVE);
                let uniform = times
                    .iter()
                    .enumerate()
                    .all(|(j, &t)| (t - (times[0] + j as f64 * dt)).abs() <= 1e-13 * scale);
                uniform.then(|| {
                    e_k.iter()
                        .map(|&e| {
                            let (s, c) = (-(e - e_ref) * dt).sin_cos();
                            c64::new(c, s)
                        })
                        .collect()
                })
            })
            .flatten();
        Phases {
            e_k,
            c_k,
            e_ref,
            steps,
        }
    }

    fn exact(&self, i: usize, t: f64) -> c64 {
        let (s, c) = (-(self.e_k[i] - self.e_ref) * t).sin_cos();
        self.c_k[i] * c64::new(c, s)
    }

    /// `put(i, j, b_i(ts[j]))` for every state `i` and the times `ts` (one run: exact at
    /// `ts[0]`).
    fn run(&self, ts: &[f64], mut put: impl FnMut(usize, usize, c64)) {
        for i in 0..self.e_k.len() {
            let mut z = self.exact(i, ts[0]);
            put(i, 0, z);
            for (j, &t) in ts.iter().enumerate().skip(1) {
                z = match &self.steps {
                    Some(steps) => z * steps[i],
                    None => self.exact(i, t),
                };
                put(i, j, z);
            }
        }
    }
}

/// Fills the columns `2j, 2j + 1` of `b` with the real and imaginary parts of `b(ts[j])`,
/// parallel over runs of times unless `par` is sequential.
fn fill_pairs(b: MatMut<'_, f64>, par: Par, phases: &Phases<'_>, ts: &[f64]) {
    let fill = |(r, mut cols): (usize, MatMut<'_, f64>)| {
        let ts = &ts[r * ANCHOR..(r * ANCHOR + cols.ncols() / 2)];
        phases.run(ts, |i, j, z| {
            cols[(i, 2 * j)] = z.re;
            cols[(i, 2 * j + 1)] = z.im;
        });
    };
    match par {
        Par::Seq => {
            let mut b = b;
            let n = b.ncols();
            for r in 0..n.div_ceil(2 * ANCHOR) {
                let c0 = 2 * ANCHOR * r;
                fill((r, b.as_mut().subcols_mut(c0, (2 * ANCHOR).min(n - c0))));
            }
        }
        _ => b.par_col_chunks_mut(2 * ANCHOR).enumerate().for_each(fill),
    }
}

/// Fills column `j` of `b` with `b(ts[j])`, parallel over runs of times unless `par` is
/// sequential.
fn fill_columns(b: MatMut<'_, c64>, par: Par, phases: &Phases<'_>, ts: &[f64]) {
    let fill = |(r, mut cols): (usize, MatMut<'_, c64>)| {
        let ts = &ts[r * ANCHOR..(r * ANCHOR + cols.ncols())];
        phases.run(ts, |i, j, z| cols[(i, j)] = z);
    };
    match par {
        Par::Seq => {
            let mut b = b;
            let n = b.ncols();
            for r in 0..n.div_ceil(ANCHOR) {
                let c0 = ANCHOR * r;
                fill((r, b.as_mut().subcols_mut(c0, ANCHOR.min(n - c0))));
            }
        }
        _ => b.par_col_chunks_mut(ANCHOR).enumerate().for_each(fill),
    }
}

/// Time mean and variance of a trace over `[ (t₀+t_last)/2, t_last ]` with trapezoidal weights.
pub(crate) fn trace_statistics(
    times: &[f64],
    values: &[f64],
    a_de: f64,
) -> Option<TraceStatistics> {
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

/// A sector's quench result with the diagonal elements of all its states (kept for
/// [`super::combine`]).
#[derive(Debug, Clone, Serialize)]
pub struct SectorQuench {
    /// The analysis.
    pub report: QuenchReport,
    /// `Aₙₙ` for all states of the sector.
    #[serde(skip)]
    pub diag_all: Vec<f64>,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Matrix;

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

    /// Two threads and the largest batches.
    fn wide() -> Work {
        Work {
            par: Par::rayon(2),
            scratch_bytes: TRACE_BATCH_BYTES,
        }
    }

    /// Small scratch and one thread: several batches of times, several row blocks.
    const TIGHT: Work = Work {
        par: Par::Seq,
        scratch_bytes: 16 * (17 + 17) * 3,
    };

    #[test]
    fn trace_equals_double_sum() {
        // ⟨A(t)⟩ = Σₙₘ cₙ* cₘ Aₙₘ e^{i(Eₙ−Eₘ)t}: the panel products against the plain
        // double sum (exact identity, linear algebra), whatever the panels and batches
        let (e, c, a) = random_problem(17, 3);
        let times = [0.0, 0.3, 1.7, 12.5];
        for (width, work) in [(17, wide()), (4, TIGHT), (1, TIGHT)] {
            let m = HermitianPanels::from_full(&Matrix::Complex(a.clone()), width);
            let got = time_trace(&e, &c, &m, 0.4, &times, work).unwrap();
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
        }
        // real operator path agrees with the complex path
        let ar = Mat::<f64>::from_fn(17, 17, |i, j| a[(i, j)].re);
        let real = HermitianPanels::from_full(&Matrix::Real(ar.clone()), 5);
        let cplx = HermitianPanels::from_full(
            &Matrix::Complex(Mat::from_fn(17, 17, |i, j| c64::new(ar[(i, j)], 0.0))),
            6,
        );
        let r1 = time_trace(&e, &c, &real, 0.0, &times, TIGHT).unwrap();
        let r2 = time_trace(&e, &c, &cplx, 0.0, &times, wide()).unwrap();
        for (x, y) in r1.iter().zip(&r2) {
            assert!((x - y).abs() < 1e-12);
        }
    }

    #[test]
    fn trace_on_shared_storage_and_uniform_grids() {
        // the same double sum (exact identity) with panels side by side in one storage
        // matrix (grouped products, several row blocks: k above the row block of the
        // products) on an equally spaced grid (phase recurrence) and an uneven one
        let k = TRACE_ROWS + 88;
        let (e, c, a) = random_problem(k, 12);
        let ar = Mat::<f64>::from_fn(k, k, |i, j| a[(i, j)].re);
        let w = 100;
        let panels: Vec<crate::data::Panel> = (0..k.div_ceil(w))
            .map(|p| crate::data::Panel {
                cols: p * w..((p + 1) * w).min(k),
                storage: 0,
                offset: p * w,
            })
            .collect();
        let shared = HermitianPanels::new(
            k,
            crate::data::Field::Real,
            vec![Matrix::Real(ar.clone())],
            panels,
        )
        .unwrap();
        let uniform: Vec<f64> = (0..70).map(|j| 0.25 * j as f64).collect();
        let uneven = [0.0, 0.7, 3.1, 3.2, 11.0];
        for times in [&uniform[..], &uneven[..]] {
            let got = time_trace(&e, &c, &shared, 0.3, times, wide()).unwrap();
            for (j, &t) in times.iter().enumerate() {
                let mut s = c64::new(0.0, 0.0);
                for n in 0..k {
                    let mut row = c64::new(0.0, 0.0);
                    for m in 0..k {
                        let ph = (e[n] - e[m]) * t;
                        row += c[m] * ar[(n, m)] * c64::new(ph.cos(), ph.sin());
                    }
                    s += c[n].conj() * row;
                }
                assert!((got[j] - s.re).abs() < 1e-10 * (1.0 + s.re.abs()), "t {t}");
            }
        }
    }

    fn run(
        e: &[f64],
        diag: &[f64],
        c: &[c64],
        a: &Matrix,
        kept: &[usize],
        times: &[f64],
    ) -> Result<QuenchReport> {
        let a_kk = HermitianPanels::from_full(a, 8);
        analyze(
            &SectorData {
                energies: e,
                diag_all: diag,
                coeffs: c,
                kept,
                a_kk: &a_kk,
            },
            times,
            &QuenchOptions::default(),
            wide(),
        )
    }

    #[test]
    fn sigma2_and_bound_on_random_problem() {
        // σ² = Σ_{n≠m} pₙpₘ|Aₙₘ|² (definition) and σ² ≤ ‖A−c‖²/D_eff (Short 2011, from memory;
        // proof in the module doc of bound)
        let (e, c, a) = random_problem(40, 7);
        let kept: Vec<usize> = (0..40).collect();
        let diag: Vec<f64> = (0..40).map(|i| a[(i, i)].re).collect();
        let r = run(
            &e,
            &diag,
            &c,
            &Matrix::Complex(a.clone()),
            &kept,
            &[0.0, 1.0],
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
        // σ²_ETH = Σ_{n≠m} pₙpₘ F(|Eₙ − Eₘ|) with the envelope reported (definition)
        let mut eth = 0.0;
        for n in 0..40 {
            for m in 0..40 {
                if n != m {
                    eth += p[n] * p[m] * r.envelope.at((e[n] - e[m]).abs());
                }
            }
        }
        assert!((r.sigma2_eth - eth).abs() < 1e-13 * eth);
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
    fn bad_input_is_an_error() {
        // clear errors instead of panics (common practice, no source)
        let m = Matrix::Real(Mat::zeros(1, 1));
        let c = [c64::new(1.0, 0.0)];
        assert!(run(&[0.0], &[0.0, 1.0], &c, &m, &[0], &[0.0]).is_err());
        assert!(run(&[0.0], &[0.0], &c, &m, &[1], &[0.0]).is_err());
        let z = [c64::new(0.0, 0.0)];
        assert!(run(&[0.0], &[0.0], &z, &m, &[0], &[0.0]).is_err());
        assert!(run(&[0.0], &[0.0], &c, &m, &[0], &[1.0, 0.0]).is_err());
    }
}
