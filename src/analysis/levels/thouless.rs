//! The realization-averaged connected spectral form factor, and the Thouless time.
//!
//! **Average over realizations.** Each realization r = 1 … n is unfolded and filtered on
//! its own ([`super::spectral`]: centred unfolded levels dⱼ, Gaussian weights ρⱼ of width
//! w = ησ), giving Z_r(τ) = Σⱼ ρⱼ e^(−2πi dⱼ τ) and N_r = Σⱼ ρⱼ². With N̄ = (1/n) Σ_r N_r
//! (Šuntajs, Bonča, Prosen, Vidmar, PRE 102, 062144 (2020), from memory),
//!
//! K(τ) = (1/n) Σ_r |Z_r(τ)|² / N̄,
//! K_c(τ) = [n/(n − 1)] (1/n) Σ_r |Z_r(τ) − Z̄(τ)|² / N̄,   Z̄ = (1/n) Σ_r Z_r,
//!
//! the connected form factor: the disconnected part |⟨Z⟩|² estimated by the sample mean,
//! the factor n/(n − 1) removing the bias of that estimate. Both are averaged over the
//! time samples of each logarithmic bin (a running time average). The error band is the
//! standard error over realizations of the per-realization bin averages,
//! s_r/√n, realizations being independent (for K_c the per-realization terms share Z̄, so
//! this error is approximate, to order 1/n). One realization falls back to the
//! single-spectrum estimate of [`super::spectral::form_factor`].
//!
//! **Thouless time** ([`thouless_time`]). With ΔK(τ) = |log₁₀(K_c(τ)/K_RMT(τ))|, K_RMT
//! the GOE or GUE form factor of the sector's class, the Thouless time τ_Th is the
//! earliest table time from which ΔK < ε at every table time up to the Heisenberg time
//! τ = 1 (ε = 0.08 by default; the definition and tolerance follow Šuntajs et al. (2020),
//! from memory). In energy units t_Th = τ_Th t_H with t_H = 2π/Δ̄, and the dimensionless
//! conductance-like ratio is g = log₁₀(t_H/t_Th) = −log₁₀ τ_Th. A bin with K_c ≤ 0 counts
//! as a deviation. When ΔK < ε already in the first bin, τ_Th is at most τ_min
//! (`resolved` false); when the bin at τ = 1 deviates, there is no Thouless time.
//! Finite-size caveat: τ_Th depends on the unfolding (a polynomial or kernel unfolding
//! removes density fluctuations on long scales, i.e. short times) and on η.

use super::spectral::{Filtered, FormFactor, SffPoint, TimeGrid};
use super::surmise::Ensemble;
use super::LevelOptions;
use crate::data::c64;
use serde::Serialize;

/// Default tolerance ε of the Thouless-time criterion.
pub const THOULESS_TOLERANCE: f64 = 0.08;

/// The Thouless time of one connected form factor (module documentation).
#[derive(Debug, Clone, Serialize)]
pub struct ThoulessTime {
    /// The random-matrix curve compared with.
    pub reference: Ensemble,
    /// Tolerance ε on |log₁₀(K_c/K_RMT)|.
    pub tolerance: f64,
    /// The criterion, in words.
    pub criterion: String,
    /// τ_Th in Heisenberg times; `None` when the bin at τ = 1 still deviates.
    pub tau: Option<f64>,
    /// t_Th = τ_Th t_H in the units of the input energies (ħ = 1).
    pub time: Option<f64>,
    /// Heisenberg time t_H = 2π/Δ̄ in energy units.
    pub heisenberg_time: f64,
    /// g = log₁₀(t_H/t_Th).
    pub g: Option<f64>,
    /// False when ΔK < ε already in the first table bin (τ_Th ≤ τ_min: not resolved).
    pub resolved: bool,
}

/// τ_Th of a table of (τ, K_c) points against `reference` (module documentation).
pub fn thouless_time(
    points: &[(f64, f64)],
    reference: Ensemble,
    tolerance: f64,
    heisenberg_time: f64,
) -> ThoulessTime {
    let deviates = |&(tau, k): &(f64, f64)| {
        let r = reference.form_factor(tau);
        !(k > 0.0 && r > 0.0 && (k / r).log10().abs() < tolerance)
    };
    // table times up to (and including the bin containing) the Heisenberg time
    let upto: Vec<(f64, f64)> = points.iter().copied().filter(|p| p.0 <= 1.0).collect();
    let tau = match upto.iter().rposition(deviates) {
        None => upto.first().map(|p| p.0),
        Some(i) if i + 1 < upto.len() => Some(upto[i + 1].0),
        Some(_) => None,
    };
    let resolved = tau.is_some() && upto.first().is_some_and(deviates);
    ThoulessTime {
        reference,
        tolerance,
        criterion: format!(
            "earliest table time from which |log10(K_connected / K_{reference})| < {tolerance} at every table time up to tau = 1"
        ),
        tau,
        time: tau.map(|t| t * heisenberg_time),
        heisenberg_time,
        g: tau.map(|t| -t.log10()),
        resolved,
    }
}

/// One row of the averaged form-factor table.
#[derive(Debug, Clone, Serialize)]
pub struct AveragedPoint {
    /// Geometric centre of the time bin, in Heisenberg times.
    pub tau: f64,
    /// Realization-averaged K.
    pub k: f64,
    /// Standard error of `k` over realizations.
    pub k_stderr: f64,
    /// Realization-averaged connected K_c.
    pub k_connected: f64,
    /// Standard error of `k_connected` over realizations (approximate, module documentation).
    pub k_connected_stderr: f64,
    /// Poisson reference (1).
    pub poisson: f64,
    /// GOE reference.
    pub goe: f64,
    /// GUE reference.
    pub gue: f64,
}

/// The realization-averaged (connected) form factor of an ensemble.
#[derive(Debug, Clone, Serialize)]
pub struct AveragedFormFactor {
    /// Filter, in words.
    pub filter: String,
    /// Filter width η (units of the standard deviation of each realization's unfolded levels).
    pub eta: f64,
    /// Number of realizations averaged.
    pub realizations: usize,
    /// Mean effective number of levels under the filter.
    pub effective_levels: f64,
    /// Mean Heisenberg time 2π/Δ̄ over the realizations, energy units.
    pub heisenberg_time: f64,
    /// How the disconnected part is estimated and the band computed, in words.
    pub averaging: String,
    /// Thouless time from `k_connected`.
    pub thouless: ThoulessTime,
    /// The table.
    pub table: Vec<AveragedPoint>,
}

/// Mean and standard error s/√n over realizations ([`crate::analysis::ensemble::sample_stats`]).
fn mean_se(x: &[f64]) -> (f64, f64) {
    let (mean, _, se) = crate::analysis::ensemble::sample_stats(x);
    (mean, se)
}

/// The table of one spectrum in the averaged form (its errors from the time samples).
fn single(f: &FormFactor) -> Vec<AveragedPoint> {
    f.table
        .iter()
        .map(|p: &SffPoint| AveragedPoint {
            tau: p.tau,
            k: p.k,
            k_stderr: p.k_stderr,
            k_connected: p.k_connected,
            k_connected_stderr: p.k_stderr,
            poisson: p.poisson,
            goe: p.goe,
            gue: p.gue,
        })
        .collect()
}

/// The averaged table of n ≥ 2 realizations (module documentation).
fn averaged(filters: &[Filtered], grid: &TimeGrid) -> Vec<AveragedPoint> {
    let n = filters.len();
    let nf = n as f64;
    let norm = filters.iter().map(|f| f.s2).sum::<f64>() / nf;
    let z: Vec<Vec<c64>> = filters.iter().map(|f| f.sums(grid)).collect();
    let samples = grid.samples;
    let times = grid.bins() * samples;
    let zbar: Vec<c64> = (0..times)
        .map(|t| z.iter().map(|zr| zr[t]).sum::<c64>() / nf)
        .collect();
    (0..grid.bins())
        .map(|k| {
            let span = k * samples..(k + 1) * samples;
            let per_r: Vec<f64> = z
                .iter()
                .map(|zr| zr[span.clone()].iter().map(|z| z.norm_sqr()).sum::<f64>())
                .map(|s| s / (samples as f64 * norm))
                .collect();
            let per_rc: Vec<f64> = z
                .iter()
                .map(|zr| {
                    span.clone()
                        .map(|t| (zr[t] - zbar[t]).norm_sqr())
                        .sum::<f64>()
                })
                .map(|s| s * nf / (nf - 1.0) / (samples as f64 * norm))
                .collect();
            let (k_mean, k_se) = mean_se(&per_r);
            let (kc, kc_se) = mean_se(&per_rc);
            let tau = grid.centre(k);
            AveragedPoint {
                tau,
                k: k_mean,
                k_stderr: k_se,
                k_connected: kc,
                k_connected_stderr: kc_se,
                poisson: Ensemble::Poisson.form_factor(tau),
                goe: Ensemble::Goe.form_factor(tau),
                gue: Ensemble::Gue.form_factor(tau),
            }
        })
        .collect()
}

/// The connected form factor averaged over realizations, each given as its unfolded
/// window levels (unit mean spacing) and its mean spacing in energy units, with the
/// Thouless time against `reference` (module documentation). `None` for no realization.
pub fn averaged_form_factor(
    realizations: &[(&[f64], f64)],
    opts: &LevelOptions,
    reference: Ensemble,
) -> Option<AveragedFormFactor> {
    let n = realizations.len();
    if n == 0 {
        return None;
    }
    let eta = opts.sff_eta;
    let grid = TimeGrid::new(opts.sff_range, opts.sff_points_per_decade, opts.sff_samples);
    let filters: Vec<Filtered> = realizations
        .iter()
        .map(|(e, _)| Filtered::new(e, eta))
        .collect();
    let heisenberg_time = realizations
        .iter()
        .map(|(_, s)| 2.0 * std::f64::consts::PI / s)
        .sum::<f64>()
        / n as f64;
    let effective_levels = filters
        .iter()
        .map(|f| if f.s2 > 0.0 { f.s1 * f.s1 / f.s2 } else { 0.0 })
        .sum::<f64>()
        / n as f64;
    let (table, averaging) = if n == 1 {
        let f = super::spectral::form_factor(
            realizations[0].0,
            eta,
            realizations[0].1,
            opts.sff_range,
            opts.sff_points_per_decade,
            opts.sff_samples,
        );
        (
            single(&f),
            format!(
                "one realization: {}; errors by blocking over each bin's time samples",
                f.disconnected
            ),
        )
    } else {
        (
            averaged(&filters, &grid),
            format!(
                "{n} realizations: disconnected part from the sample mean of Z, K_c = n/(n-1) x mean |Z_r - mean Z|^2 / mean sum rho^2; each bin a running average over {} times; errors s/sqrt(n) over realizations",
                grid.samples
            ),
        )
    };
    let points: Vec<(f64, f64)> = table.iter().map(|p| (p.tau, p.k_connected)).collect();
    let thouless = thouless_time(&points, reference, opts.sff_tolerance, heisenberg_time);
    Some(AveragedFormFactor {
        filter: format!(
            "Gaussian exp(-(e - mean)^2 / (2 (eta sigma)^2)) over each realization's unfolded levels, eta = {eta}"
        ),
        eta,
        realizations: n,
        effective_levels,
        heisenberg_time,
        averaging,
        thouless,
        table,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thouless_time_is_the_start_of_the_last_agreeing_run() {
        // definition of the module documentation (common practice, no source)
        let g = Ensemble::Goe;
        let taus = [0.01, 0.03, 0.1, 0.3, 1.0, 3.0];
        // deviating at 0.01 and 0.03 (factor 2 above GOE), agreeing from 0.1 on
        let pts: Vec<(f64, f64)> = taus
            .iter()
            .map(|&t| (t, g.form_factor(t) * if t < 0.05 { 2.0 } else { 1.1 }))
            .collect();
        let th = thouless_time(&pts, g, 0.08, 10.0);
        assert_eq!(th.tau, Some(0.1));
        assert!(th.resolved);
        assert!((th.g.unwrap() - 1.0).abs() < 1e-12);
        assert!((th.time.unwrap() - 1.0).abs() < 1e-12);
        // a factor 10^0.08 = 1.202 is just outside the tolerance, 1.19 just inside
        let at = |f: f64| {
            let p: Vec<(f64, f64)> = taus.iter().map(|&t| (t, g.form_factor(t) * f)).collect();
            thouless_time(&p, g, 0.08, 1.0)
        };
        assert_eq!(at(1.203).tau, None);
        let inside = at(1.19);
        assert_eq!(inside.tau, Some(0.01));
        assert!(!inside.resolved);
        // a negative connected K deviates
        let mut p = pts.clone();
        p[3].1 = -0.1;
        assert_eq!(thouless_time(&p, g, 0.08, 1.0).tau, Some(1.0));
    }
}
