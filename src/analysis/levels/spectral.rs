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
//! logarithmic grid (a running time average, which tames the large point-to-point
//! fluctuations of K), with a blocking error over those samples.
//!
//! **Connected form factor.** K contains a disconnected part |⟨Z(τ)⟩|²/Σρ², Z(τ) =
//! Σⱼ ρⱼ e^(−2πi εⱼ τ), from the smooth density alone; it dominates at the shortest times.
//! For one spectrum ⟨Z⟩ is taken as the transform of the filtered unit density,
//! Z̄(τ) = √(2π) w exp(−2π² w² τ²) (w = ησ; the window's edges, where ρ ≈ e^(−6) at η = 0.5,
//! are neglected), and K_c = K − Z̄²/Σρ². Averages over realizations, which estimate ⟨Z⟩
//! by the sample mean, are in [`super::thouless`].
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
    /// Standard error of `k`: blocking over the bin's time samples
    /// ([`super::mean_with_stderr`]), which are correlated over times shorter than
    /// about 1/(2π η σ).
    pub k_stderr: f64,
    /// Connected form factor averaged over the bin: K minus the disconnected part
    /// |Z̄(τ)|²/Σρ², Z̄ the transform of the filtered smooth density (module documentation).
    pub k_connected: f64,
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
    /// (the end of the ramp, which marks the Heisenberg time: ≈ 0.73 for the GOE, 0.8 for
    /// the GUE, very early for Poisson). Not the Thouless time: see `thouless`.
    pub plateau_onset: Option<f64>,
    /// The criterion of `plateau_onset`, in words.
    pub onset_criterion: String,
    /// How the disconnected part of `k_connected` is estimated, in words.
    pub disconnected: String,
    /// Thouless time from the connected K against the random-matrix curve of the sector's
    /// class ([`super::thouless::thouless_time`]); set once the class is known.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub thouless: Option<super::thouless::ThoulessTime>,
    /// K over a logarithmic time grid.
    pub table: Vec<SffPoint>,
}

/// The Gaussian filter of one unfolded spectrum: centred levels dⱼ = εⱼ − ε̄, weights
/// ρⱼ = exp(−dⱼ²/(2w²)) with w = η σ, and the sums Σρ, Σρ².
pub(super) struct Filtered {
    /// Centred levels dⱼ: K does not depend on a global shift, and centring keeps the
    /// phases small and the sums accurate.
    pub d: Vec<f64>,
    /// Weights ρⱼ.
    pub rho: Vec<f64>,
    /// Σρ.
    pub s1: f64,
    /// Σρ².
    pub s2: f64,
    /// Width w = η σ in unfolded units (0: no filter).
    pub width: f64,
}

impl Filtered {
    /// Filters `unfolded` with width η σ around the mean.
    pub fn new(unfolded: &[f64], eta: f64) -> Filtered {
        let n = unfolded.len().max(1) as f64;
        let mean = unfolded.iter().sum::<f64>() / n;
        let var = unfolded.iter().map(|e| (e - mean).powi(2)).sum::<f64>() / n;
        let width = eta * var.sqrt();
        let d: Vec<f64> = unfolded.iter().map(|e| e - mean).collect();
        let rho: Vec<f64> = d
            .iter()
            .map(|x| {
                if width > 0.0 {
                    (-x * x / (2.0 * width * width)).exp()
                } else {
                    1.0
                }
            })
            .collect();
        let s1 = rho.iter().sum();
        let s2 = rho.iter().map(|r| r * r).sum();
        Filtered {
            d,
            rho,
            s1,
            s2,
            width,
        }
    }

    /// Transform of the filtered smooth (unit) density, ∫ ρ(x) e^(−2πi x τ) dx =
    /// √(2π) w exp(−2π² w² τ²): the disconnected part Z̄(τ) of one spectrum (the
    /// window's edges, where ρ ≈ e^(−6) for η = 0.5, are ignored).
    pub fn smooth_transform(&self, tau: f64) -> f64 {
        use std::f64::consts::PI;
        (2.0 * PI).sqrt() * self.width * (-2.0 * PI * PI * (self.width * tau).powi(2)).exp()
    }

    /// Z(τ) = Σⱼ ρⱼ e^(−2πi dⱼ τ) at every sample time of `grid`, bin after bin.
    pub fn sums(&self, grid: &TimeGrid) -> Vec<c64> {
        (0..grid.bins())
            .into_par_iter()
            .flat_map_iter(|k| {
                let (t0, delta) = grid.start(k);
                filtered_sums(&self.d, &self.rho, t0, delta, grid.samples)
            })
            .collect()
    }
}

/// Logarithmic time bins from τ_min to τ_max, each sampled at `samples` equally spaced
/// times a + (j + ½)(b − a)/samples.
pub(super) struct TimeGrid {
    /// Bin edges.
    pub edges: Vec<f64>,
    /// Sample times per bin.
    pub samples: usize,
}

impl TimeGrid {
    /// `points_per_decade` bins per decade (at least one bin).
    pub fn new((tau_min, tau_max): (f64, f64), points_per_decade: usize, samples: usize) -> Self {
        let decades = (tau_max / tau_min).log10();
        let nbins = ((decades * points_per_decade as f64).round() as usize).max(1);
        let edges = (0..=nbins)
            .map(|k| tau_min * 10f64.powf(decades * k as f64 / nbins as f64))
            .collect();
        TimeGrid {
            edges,
            samples: samples.max(1),
        }
    }

    /// Number of bins.
    pub fn bins(&self) -> usize {
        self.edges.len() - 1
    }

    /// Geometric centre of bin k.
    pub fn centre(&self, k: usize) -> f64 {
        (self.edges[k] * self.edges[k + 1]).sqrt()
    }

    /// First sample time and sample step of bin k.
    pub fn start(&self, k: usize) -> (f64, f64) {
        let (a, b) = (self.edges[k], self.edges[k + 1]);
        let delta = (b - a) / self.samples as f64;
        (a + 0.5 * delta, delta)
    }

    /// Sample time j of bin k.
    pub fn time(&self, k: usize, j: usize) -> f64 {
        let (t0, delta) = self.start(k);
        t0 + j as f64 * delta
    }
}

/// K(τ) = |Σⱼ ρⱼ e^(−2πi εⱼ τ)|² / Σⱼ ρⱼ² at each τ of `taus` (Gaussian filter of width η·σ),
/// summed directly (the reference for the faster binned tables).
pub fn form_factor_at(unfolded: &[f64], eta: f64, taus: &[f64]) -> Vec<f64> {
    let f = Filtered::new(unfolded, eta);
    taus.par_iter()
        .map(|&tau| {
            let (mut re, mut im) = (0.0, 0.0);
            for (&dj, &r) in f.d.iter().zip(&f.rho) {
                let (s, c) = sin_cos_turns(dj * tau);
                re += r * c;
                im -= r * s;
            }
            (re * re + im * im) / f.s2
        })
        .collect()
}

/// (sin 2πx, cos 2πx), reducing x modulo 1 first so that the sine and cosine always get
/// a small argument (exact periodicity; large arguments are much slower to reduce).
fn sin_cos_turns(x: f64) -> (f64, f64) {
    (2.0 * std::f64::consts::PI * (x - x.round())).sin_cos()
}

/// Z at the `samples` equally spaced times τ₀ + kδ (k = 0 … samples − 1).
///
/// With k = a·m + b (m ≈ √samples), Σⱼ ρⱼ e^(−2πi dⱼ τₖ) = Σⱼ Aₐⱼ Bⱼᵦ where
/// Aₐⱼ = ρⱼ e^(−2πi dⱼ (τ₀ + a m δ)) and Bⱼᵦ = e^(−2πi dⱼ b δ): a matrix product (faer),
/// whose factors are built by repeated multiplication: two sines and cosines per level
/// instead of `samples`.
fn filtered_sums(d: &[f64], rho: &[f64], tau0: f64, delta: f64, samples: usize) -> Vec<c64> {
    let n = d.len();
    let m = ((samples as f64).sqrt().ceil() as usize).max(1);
    let rows = samples.div_ceil(m);
    // first row of A and the one-step factors e^(−2πi dⱼ δ); the other entries follow by
    // repeated multiplication (at most √samples steps, so rounding stays at 1e−15 level)
    let mut a = Mat::<c64>::zeros(rows, n);
    let mut b = Mat::<c64>::zeros(n, m);
    for j in 0..n {
        let (s, c) = sin_cos_turns(d[j] * tau0);
        a[(0, j)] = c64::new(rho[j] * c, -rho[j] * s);
        let (s, c) = sin_cos_turns(d[j] * delta);
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
    (0..samples).map(|k| p[(k / m, k % m)]).collect()
}

/// Spectral form factor table on `points_per_decade` logarithmic bins from `tau_min` to
/// `tau_max`, each averaged over `samples` equally spaced times; `mean_spacing` (energy
/// units) gives the Heisenberg time 2π/Δ̄.
pub fn form_factor(
    unfolded: &[f64],
    eta: f64,
    mean_spacing: f64,
    range: (f64, f64),
    points_per_decade: usize,
    samples: usize,
) -> FormFactor {
    let f = Filtered::new(unfolded, eta);
    let grid = TimeGrid::new(range, points_per_decade, samples);
    let samples = grid.samples;
    let z = f.sums(&grid);
    let ks: Vec<f64> = z.iter().map(|z| z.norm_sqr() / f.s2).collect();
    let table: Vec<SffPoint> = (0..grid.bins())
        .map(|k| {
            let tau = grid.centre(k);
            let chunk = &ks[k * samples..(k + 1) * samples];
            let (mean, _, se) = super::mean_with_stderr(chunk);
            let disconnected = (0..samples)
                .map(|j| f.smooth_transform(grid.time(k, j)).powi(2) / f.s2)
                .sum::<f64>()
                / samples as f64;
            SffPoint {
                tau,
                k: mean,
                k_stderr: se,
                k_connected: mean - disconnected,
                poisson: Ensemble::Poisson.form_factor(tau),
                goe: Ensemble::Goe.form_factor(tau),
                gue: Ensemble::Gue.form_factor(tau),
            }
        })
        .collect();
    let late: Vec<f64> = (0..grid.bins())
        .flat_map(|k| (0..samples).map(move |j| (k, j)))
        .filter(|&(k, j)| grid.time(k, j) >= 2.0)
        .map(|(k, j)| ks[k * samples + j])
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
        effective_levels: if f.s2 > 0.0 { f.s1 * f.s1 / f.s2 } else { 0.0 },
        heisenberg_time: 2.0 * std::f64::consts::PI / mean_spacing,
        plateau,
        plateau_onset,
        onset_criterion: "first table time from which the binned K stays >= 0.8 x plateau"
            .to_string(),
        disconnected: "one spectrum: |Z|^2 of the filtered smooth density, 2 pi w^2 exp(-4 pi^2 w^2 tau^2) with w = eta sigma, over sum rho^2".to_string(),
        thouless: None,
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
