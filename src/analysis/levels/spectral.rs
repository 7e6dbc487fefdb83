//! Long-range spectral correlations of unfolded levels εᵢ (unit mean spacing).
//!
//! **Spectral form factor** with a Gaussian filter ρ(ε) = exp(−(ε − ε̄)²/(2(ησ)²)),
//! ε̄ and σ the mean and standard deviation of the unfolded levels, which suppresses
//! the edges of the window (common practice, e.g. Šuntajs, Bonča, Prosen, Vidmar,
//! PRE 102, 062144 (2020), from memory):
//!
//! K(τ) = |Σⱼ ρ(εⱼ) e^(−2πi εⱼ τ)|² / Σⱼ ρ(εⱼ)²,
//!
//! with τ in units of the Heisenberg time (τ = 1 ↔ t_H = 2π/Δ̄, Δ̄ the mean level
//! spacing, ħ = 1). The normalisation makes the plateau K → 1 at long times for
//! non-degenerate levels (the phases of the cross terms average out). The table
//! reports K averaged over `samples` equally spaced times inside each bin of a
//! logarithmic grid, which tames the large point-to-point fluctuations of K.
//!
//! **Number variance** Σ²(L) = ⟨n²⟩ − ⟨n⟩², n the number of unfolded levels in an
//! interval of length L, the average running over interval centres evenly spread
//! over the window.

use super::surmise::Ensemble;
use crate::data::c64;
use faer::Mat;
use rayon::prelude::*;
use serde::Serialize;

/// One row of the spectral-form-factor table.
#[derive(Debug, Clone, Serialize)]
pub struct SffPoint {
    /// Geometric centre of the time bin, in units of the Heisenberg time.
    pub tau: f64,
    /// K averaged over the bin.
    pub k: f64,
    /// Reference K for uncorrelated levels (1).
    pub poisson: f64,
    /// Reference K of the GOE at `tau`.
    pub goe: f64,
    /// Reference K of the GUE at `tau`.
    pub gue: f64,
}

/// Spectral form factor of the unfolded window.
#[derive(Debug, Clone, Serialize)]
pub struct FormFactor {
    /// Filter, in words.
    pub filter: String,
    /// Filter width η in units of the standard deviation of the unfolded levels.
    pub eta: f64,
    /// Effective number of levels under the filter, (Σρ)²/Σρ².
    pub effective_levels: f64,
    /// Heisenberg time 2π/Δ̄ in the units of the input energies (ħ = 1); τ = 1 in the table.
    pub heisenberg_time: f64,
    /// Plateau: mean of K over times τ ∈ [2, τ_max] (→ 1 for non-degenerate levels).
    pub plateau: f64,
    /// First table time from which the binned K stays at or above 0.8 × plateau
    /// (the end of the ramp; ≈ 0.73 for the GOE, 0.8 for the GUE, very early for Poisson).
    pub plateau_onset: Option<f64>,
    /// The criterion of `plateau_onset`, in words.
    pub onset_criterion: String,
    /// K over a logarithmic time grid.
    pub table: Vec<SffPoint>,
}

/// Gaussian filter weights ρ(εⱼ) with width η·σ around the mean.
fn filter_weights(unfolded: &[f64], eta: f64) -> Vec<f64> {
    let n = unfolded.len() as f64;
    let mean = unfolded.iter().sum::<f64>() / n;
    let var = unfolded.iter().map(|e| (e - mean).powi(2)).sum::<f64>() / n;
    let w = eta * var.sqrt();
    unfolded
        .iter()
        .map(|e| {
            if w > 0.0 {
                (-(e - mean).powi(2) / (2.0 * w * w)).exp()
            } else {
                1.0
            }
        })
        .collect()
}

/// K(τ) = |Σⱼ ρⱼ e^(−2πi εⱼ τ)|² / Σⱼ ρⱼ² at each τ of `taus` (Gaussian filter of width η·σ).
pub fn form_factor_at(unfolded: &[f64], eta: f64, taus: &[f64]) -> Vec<f64> {
    let rho = filter_weights(unfolded, eta);
    let norm: f64 = rho.iter().map(|r| r * r).sum();
    let w = phases(unfolded);
    taus.par_iter()
        .map(|&tau| {
            let (mut re, mut im) = (0.0, 0.0);
            for (&wj, &r) in w.iter().zip(&rho) {
                let (s, c) = sin_cos_turns(wj * tau);
                re += r * c;
                im -= r * s;
            }
            (re * re + im * im) / norm
        })
        .collect()
}

/// Centred levels εⱼ − ε̄: K does not depend on a global shift, and centring keeps the
/// phases small and the sums accurate.
fn phases(unfolded: &[f64]) -> Vec<f64> {
    let mean = unfolded.iter().sum::<f64>() / unfolded.len().max(1) as f64;
    unfolded.iter().map(|e| e - mean).collect()
}

/// (sin 2πx, cos 2πx), reducing x modulo 1 first so that the sine and cosine always get
/// a small argument (exact periodicity; large arguments are much slower to reduce).
fn sin_cos_turns(x: f64) -> (f64, f64) {
    (2.0 * std::f64::consts::PI * (x - x.round())).sin_cos()
}

/// K at the `samples` equally spaced times τ₀ + kδ (k = 0 … samples − 1).
///
/// With k = a·m + b (m ≈ √samples), Σⱼ ρⱼ e^(−2πi dⱼ τₖ) = Σⱼ Aₐⱼ Bⱼᵦ where
/// Aₐⱼ = ρⱼ e^(−2πi dⱼ (τ₀ + a m δ)) and Bⱼᵦ = e^(−2πi dⱼ b δ), dⱼ = εⱼ − ε̄: a matrix product (faer),
/// whose factors are built by repeated multiplication: two sines and cosines per level
/// instead of `samples`.
fn form_factor_run(
    w: &[f64],
    rho: &[f64],
    norm: f64,
    tau0: f64,
    delta: f64,
    samples: usize,
) -> Vec<f64> {
    let n = w.len();
    let m = ((samples as f64).sqrt().ceil() as usize).max(1);
    let rows = samples.div_ceil(m);
    // first row of A and the one-step factors e^(−2πi dⱼ δ); the other entries follow by
    // repeated multiplication (at most √samples steps, so rounding stays at 1e−15 level)
    let mut a = Mat::<c64>::zeros(rows, n);
    let mut b = Mat::<c64>::zeros(n, m);
    for j in 0..n {
        let (s, c) = sin_cos_turns(w[j] * tau0);
        a[(0, j)] = c64::new(rho[j] * c, -rho[j] * s);
        let (s, c) = sin_cos_turns(w[j] * delta);
        let u = c64::new(c, -s);
        b[(j, 0)] = c64::new(1.0, 0.0);
        for col in 1..m {
            b[(j, col)] = b[(j, col - 1)] * u;
        }
        let um = b[(j, m - 1)] * u;
        for r in 1..rows {
            a[(r, j)] = a[(r - 1, j)] * um;
        }
    }
    let p = a * b;
    (0..samples)
        .map(|k| p[(k / m, k % m)].norm_sqr() / norm)
        .collect()
}

/// Spectral form factor table on `points_per_decade` logarithmic bins from `tau_min` to
/// `tau_max`, each averaged over `samples` equally spaced times; `mean_spacing` (energy
/// units) gives the Heisenberg time 2π/Δ̄.
pub fn form_factor(
    unfolded: &[f64],
    eta: f64,
    mean_spacing: f64,
    (tau_min, tau_max): (f64, f64),
    points_per_decade: usize,
    samples: usize,
) -> FormFactor {
    let rho = filter_weights(unfolded, eta);
    let s1: f64 = rho.iter().sum();
    let s2: f64 = rho.iter().map(|r| r * r).sum();
    let decades = (tau_max / tau_min).log10();
    let nbins = ((decades * points_per_decade as f64).round() as usize).max(1);
    let samples = samples.max(1);
    let edges: Vec<f64> = (0..=nbins)
        .map(|k| tau_min * 10f64.powf(decades * k as f64 / nbins as f64))
        .collect();
    let w = phases(unfolded);
    let runs: Vec<Vec<f64>> = (0..nbins)
        .into_par_iter()
        .map(|k| {
            let (a, b) = (edges[k], edges[k + 1]);
            let delta = (b - a) / samples as f64;
            form_factor_run(&w, &rho, s2, a + 0.5 * delta, delta, samples)
        })
        .collect();
    let taus: Vec<f64> = (0..nbins)
        .flat_map(|k| {
            let (a, b) = (edges[k], edges[k + 1]);
            (0..samples).map(move |j| a + (b - a) * (j as f64 + 0.5) / samples as f64)
        })
        .collect();
    let ks: Vec<f64> = runs.concat();
    let table: Vec<SffPoint> = (0..nbins)
        .map(|k| {
            let tau = (edges[k] * edges[k + 1]).sqrt();
            let chunk = &ks[k * samples..(k + 1) * samples];
            SffPoint {
                tau,
                k: chunk.iter().sum::<f64>() / samples as f64,
                poisson: Ensemble::Poisson.form_factor(tau),
                goe: Ensemble::Goe.form_factor(tau),
                gue: Ensemble::Gue.form_factor(tau),
            }
        })
        .collect();
    let late: Vec<f64> = taus
        .iter()
        .zip(&ks)
        .filter(|(t, _)| **t >= 2.0)
        .map(|(_, k)| *k)
        .collect();
    let plateau = if late.is_empty() {
        f64::NAN
    } else {
        late.iter().sum::<f64>() / late.len() as f64
    };
    let mut plateau_onset = None;
    if plateau.is_finite() {
        for p in table.iter().rev() {
            if p.k >= 0.8 * plateau {
                plateau_onset = Some(p.tau);
            } else {
                break;
            }
        }
    }
    FormFactor {
        filter: format!(
            "Gaussian exp(-(e - mean)^2 / (2 (eta sigma)^2)) over the unfolded levels, eta = {eta}"
        ),
        eta,
        effective_levels: if s2 > 0.0 { s1 * s1 / s2 } else { 0.0 },
        heisenberg_time: 2.0 * std::f64::consts::PI / mean_spacing,
        plateau,
        plateau_onset,
        onset_criterion: "first table time from which the binned K stays >= 0.8 x plateau"
            .to_string(),
        table,
    }
}

/// One row of the number-variance table.
#[derive(Debug, Clone, Serialize)]
pub struct NumberVariancePoint {
    /// Interval length L (in mean spacings).
    pub l: f64,
    /// Measured Σ²(L); `None` when the window is shorter than 2L.
    pub sigma2: Option<f64>,
    /// Poisson reference, L.
    pub poisson: f64,
    /// GOE large-L asymptote (2/π²)(ln(2πL) + γ + 1 − π²/8).
    pub goe_asymptote: f64,
    /// GUE large-L asymptote (1/π²)(ln(2πL) + γ + 1).
    pub gue_asymptote: f64,
}

/// Σ²(L) of the ascending unfolded levels for each L of `lengths`, averaging over
/// `positions` interval centres evenly spread over [ε_min + L/2, ε_max − L/2].
pub fn number_variance(
    unfolded: &[f64],
    lengths: &[f64],
    positions: usize,
) -> Vec<NumberVariancePoint> {
    let n = unfolded.len();
    let (lo, hi) = if n > 0 {
        (unfolded[0], unfolded[n - 1])
    } else {
        (0.0, 0.0)
    };
    lengths
        .iter()
        .map(|&l| {
            let span = hi - lo - l;
            let sigma2 = if n >= 2 && l > 0.0 && span >= l && positions >= 2 {
                let (mut m1, mut m2) = (0.0, 0.0);
                for p in 0..positions {
                    let x = lo + 0.5 * l + span * p as f64 / (positions - 1) as f64;
                    let a = unfolded.partition_point(|&e| e < x - 0.5 * l);
                    let b = unfolded.partition_point(|&e| e < x + 0.5 * l);
                    let c = (b - a) as f64;
                    m1 += c;
                    m2 += c * c;
                }
                let m1 = m1 / positions as f64;
                Some(m2 / positions as f64 - m1 * m1)
            } else {
                None
            };
            NumberVariancePoint {
                l,
                sigma2,
                poisson: Ensemble::Poisson.number_variance(l),
                goe_asymptote: Ensemble::Goe.number_variance(l),
                gue_asymptote: Ensemble::Gue.number_variance(l),
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn picket_fence_has_zero_number_variance() {
        // common practice, no source: equidistant levels fluctuate by at most one level,
        // and for integer L every interval holds exactly L of them.
        let e: Vec<f64> = (0..400).map(|i| i as f64 + 0.25).collect();
        let nv = number_variance(&e, &[1.0, 4.0], 997);
        for p in nv {
            assert!(p.sigma2.unwrap() < 1e-12, "{p:?}");
        }
    }

    #[test]
    fn rotated_and_direct_form_factors_agree() {
        // exact identity e^(−iw(τ+δ)) = e^(−iwτ) e^(−iwδ) (no source needed)
        let e: Vec<f64> = (0..200)
            .map(|i| i as f64 + 0.3 * ((i * 7) % 5) as f64)
            .collect();
        let f = form_factor(&e, 0.5, 1.0, (1.0, 10.0), 1, 16);
        let taus: Vec<f64> = (0..16)
            .map(|j| 1.0 + 9.0 * (j as f64 + 0.5) / 16.0)
            .collect();
        let direct = form_factor_at(&e, 0.5, &taus);
        let mean = direct.iter().sum::<f64>() / 16.0;
        let last = f.table.last().unwrap();
        assert!((last.k - mean).abs() < 1e-9 * mean, "{} vs {mean}", last.k);
    }

    #[test]
    fn form_factor_at_zero_time_is_the_effective_level_count() {
        // definition: K(0) = (Σρ)²/Σρ² (common practice, no source)
        let e: Vec<f64> = (0..300).map(|i| i as f64 * 1.1).collect();
        let k0 = form_factor_at(&e, 0.5, &[0.0])[0];
        let f = form_factor(&e, 0.5, 1.0, (1e-2, 1.0), 5, 4);
        assert!((k0 - f.effective_levels).abs() < 1e-9 * k0);
    }
}
