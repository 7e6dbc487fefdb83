//! The combination of the sector results of one state: the weighted trace and equilibrium
//! values of an operator that is block diagonal in the sectors ([`combine`]), and the
//! whole-state figures for tables and size scaling ([`overall`]).

use super::dynamics::{
    trace_statistics, Microcanonical, QuenchReport, TracePoint, TraceStatistics,
};
use super::{QuenchOptions, DEFAULT_SHELL_FRACTION};
use crate::analysis::thermo;
use crate::error::{Error, Result};
use serde::Serialize;

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
    /// Microcanonical value at `E`, with its shell (the same object as in the sector and
    /// combined results).
    pub microcanonical: Option<Microcanonical>,
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
            c.microcanonical,
            c.canonical,
            c.trace.clone(),
        ),
        (None, [(_, r)]) => (
            r.energy,
            r.beta,
            r.diagonal_ensemble,
            r.microcanonical,
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
