//! Unfolding: mapping levels Eᵢ to εᵢ = N̄(Eᵢ), where N̄ is a smooth approximation of the
//! staircase (cumulative level count) N(E) = Σⱼ θ(E − Eⱼ), so that the unfolded levels have
//! unit mean spacing and only the fluctuations around the local density remain. Two methods,
//! chosen by [`UnfoldMethod`]:
//!
//! **Polynomial fit** (`poly:D`, the default with D = 5). Least-squares fit of
//! N(Eᵢ) = i + ½ (levels counted from the start of the window, the staircase taken at
//! mid-step) by a polynomial of degree d in the scaled energy x = (E − E_c)/h ∈ [−1, 1]
//! (E_c the centre and h the half-width of the window), written in Chebyshev polynomials
//! T₀ … T_d so that the least-squares problem stays well conditioned; solved by a QR
//! factorisation (faer). The degree is lowered to at most n/10 and below the number of
//! distinct levels. A polynomial can decrease between levels; such pairs are counted.
//!
//! **Gaussian kernel** (`kernel:K` or `kernel-energy:SIGMA`). The density of states is
//! broadened by a Gaussian of width σⱼ around every level, and its integral is the smooth
//! staircase (Gaussian broadening of the level density; e.g. Bruus & Anglès d'Auriac,
//! PRB 55, 9142 (1997), from memory):
//!
//! N̄(E) = Σⱼ Φ((E − Eⱼ)/σⱼ),   Φ(x) = ½ erfc(−x/√2) the standard normal CDF,
//!
//! the sum running over every level of the spectrum, inside the window and outside it, so
//! that the density is right up to the window's edges. The width is either a fixed energy
//! σⱼ = σ (`kernel-energy:SIGMA`) or a multiple of the local mean spacing (`kernel:K`),
//! σⱼ = K·Δⱼ with Δⱼ = (E_{hi} − E_{lo})/(hi − lo) over the 2M spacings around j
//! (lo = j − M, hi = j + M, shifted inwards at the ends of the spectrum), M = max(⌈2K⌉, 8)
//! ([`kernel_neighbours`]); where those 2M + 1 levels are all equal, Δⱼ falls back to the
//! mean spacing of the window. N̄ is increasing by construction, so no unfolded spacing is
//! negative. Terms with |E − Eⱼ| > 8σⱼ are 0 or 1 to within Φ(−8) ≈ 6·10⁻¹⁶ and are counted
//! without evaluating Φ, so the cost is O(n log n + n·m), m ≈ 16K the levels within 8σ of a
//! level. Like any smoothing, N̄ is biased within a few σ of the two ends of the whole
//! spectrum, where the broadened density spills past the last level (down to half the true
//! density at the end itself); windows that stay away from the ends (the default
//! 0.25:0.75) do not see this. The values are shifted by the number of levels below the
//! window, so that both methods count from the start of the window.
//!
//! *Choice of the width.* N̄ follows the staircase on scales longer than about K levels, so it
//! absorbs the fluctuations of N on those scales: the unfolded statistics of a spectrum are
//! those of a spectrum high-pass filtered at ~K levels. Rigid (GOE, GUE) spectra hardly
//! fluctuate on long scales and unfold the same for any K ≳ 4; uncorrelated (Poisson) levels
//! fluctuate as √L over L levels and are made to look more rigid by a narrow kernel. Measured
//! on the 10⁴ spacings of the window 0.25:0.75 of 2·10⁴ Poisson levels (drawn uniformly or
//! with an exponential density: the same numbers; the KS noise is ≈ 0.009): KS distance to
//! e^(−s) 0.021 (K = 8), 0.016 (16), 0.011 (32), 0.010 (64), against 0.007 for the
//! polynomial, and Σ²(8) = 4.2, 6.0, 7.0, 7.4 against 8; the window of 2000 levels of a GOE
//! spectrum of 4000 gives a KS distance to the surmise of 0.016–0.017 for every K from 4 to
//! 64. The default K = 32 keeps P(s) within the noise for both, Σ²(L) within 10 % for
//! L ≤ 4 (Σ²(8) of Poisson levels comes out 13 % low), and still follows densities that vary
//! over thousands of levels, as many-body densities of states do.

use crate::error::{Error, Result};
use faer::linalg::solvers::SolveLstsq;
use faer::Mat;
use serde::Serialize;

/// Default polynomial degree of `poly` (5).
pub const DEFAULT_DEGREE: usize = 5;
/// Default kernel width of `kernel`, in local mean spacings (32; see the module documentation).
pub const DEFAULT_KERNEL_SPACINGS: f64 = 32.0;
/// Kernel terms farther than this many widths from a level are exactly 0 or 1 (Φ(−8) ≈ 6·10⁻¹⁶).
const KERNEL_CUTOFF: f64 = 8.0;

/// How to unfold a spectrum (see the module documentation). Written and read on the
/// command line as `poly:D`, `kernel:K` or `kernel-energy:SIGMA` ([`std::fmt::Display`],
/// [`std::str::FromStr`]); in JSON as an object tagged by `method`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "method", rename_all = "kebab-case")]
pub enum UnfoldMethod {
    /// Least-squares Chebyshev polynomial of degree `degree` fitted to the staircase.
    Polynomial {
        /// Requested degree (lowered to at most n/10 and below the number of distinct levels).
        degree: usize,
    },
    /// Gaussian kernel with σⱼ = `spacings` · Δⱼ, Δⱼ the local mean spacing around level j.
    Kernel {
        /// K, the width in local mean spacings.
        spacings: f64,
    },
    /// Gaussian kernel with the same width σ for every level, in energy units.
    KernelEnergy {
        /// σ, in the units of the energies.
        sigma: f64,
    },
}

impl Default for UnfoldMethod {
    fn default() -> Self {
        UnfoldMethod::Polynomial {
            degree: DEFAULT_DEGREE,
        }
    }
}

impl std::fmt::Display for UnfoldMethod {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            UnfoldMethod::Polynomial { degree } => write!(f, "poly:{degree}"),
            UnfoldMethod::Kernel { spacings } => write!(f, "kernel:{spacings}"),
            UnfoldMethod::KernelEnergy { sigma } => write!(f, "kernel-energy:{sigma}"),
        }
    }
}

impl std::str::FromStr for UnfoldMethod {
    type Err = String;

    /// Parses `poly[:D]` (D a non-negative integer, default 5), `kernel[:K]` (K > 0 local
    /// mean spacings, default 32) or `kernel-energy:SIGMA` (SIGMA > 0, energy units).
    fn from_str(s: &str) -> std::result::Result<Self, String> {
        let (name, value) = match s.split_once(':') {
            Some((a, b)) => (a.trim(), Some(b.trim())),
            None => (s.trim(), None),
        };
        let positive = |v: &str, what: &str| -> std::result::Result<f64, String> {
            match v.parse::<f64>() {
                Ok(x) if x.is_finite() && x > 0.0 => Ok(x),
                _ => Err(format!("{what} '{v}' must be a positive number")),
            }
        };
        match (name, value) {
            ("poly", None) => Ok(UnfoldMethod::default()),
            ("poly", Some(v)) => v
                .parse::<usize>()
                .map(|degree| UnfoldMethod::Polynomial { degree })
                .map_err(|_| format!("polynomial degree '{v}' must be a non-negative integer")),
            ("kernel", None) => Ok(UnfoldMethod::Kernel {
                spacings: DEFAULT_KERNEL_SPACINGS,
            }),
            ("kernel", Some(v)) => Ok(UnfoldMethod::Kernel {
                spacings: positive(v, "kernel width (in mean spacings)")?,
            }),
            ("kernel-energy", Some(v)) => Ok(UnfoldMethod::KernelEnergy {
                sigma: positive(v, "kernel width (in energy units)")?,
            }),
            ("kernel-energy", None) => {
                Err("kernel-energy needs a width: kernel-energy:SIGMA".to_string())
            }
            _ => Err(format!(
                "unknown unfolding '{s}': expected poly:D, kernel:K or kernel-energy:SIGMA"
            )),
        }
    }
}

/// What was done to unfold a spectrum. Keys that do not apply to the method used are null.
#[derive(Debug, Clone, Serialize)]
pub struct Unfolding {
    /// Method, in words.
    pub method: String,
    /// The method and parameters as an option value (`poly:5`, `kernel:32`,
    /// `kernel-energy:0.1`) that reproduces this unfolding.
    pub spec: String,
    /// Polynomial degree actually used (polynomial fit only).
    pub degree: Option<usize>,
    /// K of σⱼ = K·Δⱼ (kernel with a width in local mean spacings only).
    pub kernel_width_spacings: Option<f64>,
    /// σ (kernel with a fixed energy width only).
    pub kernel_width_energy: Option<f64>,
    /// M, the local mean spacing Δⱼ being taken over the 2M spacings around level j
    /// (`kernel:K` only).
    pub kernel_neighbours: Option<usize>,
    /// Smallest and largest σⱼ, in energy units, among the levels whose kernel reaches the
    /// window (kernel only).
    pub kernel_sigma_range: Option<[f64; 2]>,
    /// Levels outside the window whose kernel reaches into it (kernel only).
    pub context_levels: Option<usize>,
    /// Levels of the window closer than 2σ to the lowest or highest level of the whole
    /// spectrum (σ that of the end level), where N̄ is biased (kernel only; see the module
    /// documentation).
    pub kernel_end_levels: Option<usize>,
    /// Number of levels unfolded (the window).
    pub levels: usize,
    /// (ε_last − ε_first)/(levels − 1): the mean unfolded spacing before the analysis
    /// rescales it to 1; close to 1 when N̄ follows the staircase.
    pub mean_unfolded_spacing: f64,
    /// Root-mean-square residual √(mean (N(Eᵢ) − N̄(Eᵢ))²), N(Eᵢ) = i + ½ counted from the
    /// start of the window, in units of levels.
    pub rms_residual: f64,
    /// Number of consecutive pairs whose unfolded spacing came out negative
    /// (the fitted N̄ is not monotonic there; a lower degree is advisable). Always 0 for the
    /// kernel.
    pub negative_spacings: usize,
}

/// Unfolds the window `range` of the ascending, finite spectrum `all` with `method`
/// (see the module documentation): returns εᵢ = N̄(Eᵢ) for the levels of the window and a
/// description. The polynomial fit sees only the window; the kernel sums over all levels.
pub fn unfold(
    all: &[f64],
    range: std::ops::Range<usize>,
    method: UnfoldMethod,
) -> Result<(Vec<f64>, Unfolding)> {
    match method {
        UnfoldMethod::Polynomial { degree } => polynomial(&all[range], degree),
        UnfoldMethod::Kernel { .. } | UnfoldMethod::KernelEnergy { .. } => {
            kernel(all, range, method)
        }
    }
}

/// Checks that the window `e` has at least 3 levels and a positive span.
fn check_window(e: &[f64]) -> Result<()> {
    let n = e.len();
    if n < 3 {
        return Err(Error::other(format!(
            "cannot unfold {n} levels: at least 3 are needed"
        )));
    }
    let span = e[n - 1] - e[0];
    if !(span > 0.0 && span.is_finite()) {
        return Err(Error::other(format!(
            "cannot unfold: all {n} levels of the window are equal"
        )));
    }
    Ok(())
}

/// Root-mean-square of N̄(Eᵢ) − (i + ½) and the mean unfolded spacing of `unfolded`.
fn residuals(unfolded: &[f64]) -> (f64, f64) {
    let n = unfolded.len();
    let sq: f64 = unfolded
        .iter()
        .enumerate()
        .map(|(i, p)| (p - (i as f64 + 0.5)).powi(2))
        .sum();
    (
        (sq / n as f64).sqrt(),
        (unfolded[n - 1] - unfolded[0]) / (n - 1) as f64,
    )
}

/// Standard normal CDF Φ(x) = ½ erfc(−x/√2).
fn normal_cdf(x: f64) -> f64 {
    0.5 * statrs::function::erf::erfc(-x * std::f64::consts::FRAC_1_SQRT_2)
}

/// M, the half-width in levels of the running window of the local mean spacing for a
/// kernel of K spacings: max(⌈2K⌉, 8).
pub fn kernel_neighbours(spacings: f64) -> usize {
    ((2.0 * spacings).ceil() as usize).max(8)
}

/// Local mean spacings Δⱼ = (E_hi − E_lo)/(hi − lo) over the 2M spacings around each level
/// j of the ascending `all` (lo = j − M, hi = j + M, shifted inwards at the ends; the whole
/// spectrum if it has fewer than 2M + 1 levels). A zero Δⱼ is replaced by `fallback`.
fn local_spacings(all: &[f64], m: usize, fallback: f64) -> Vec<f64> {
    let len = all.len();
    let width = (2 * m).min(len - 1);
    (0..len)
        .map(|j| {
            let lo = j.saturating_sub(m).min(len - 1 - width);
            let d = (all[lo + width] - all[lo]) / width as f64;
            if d > 0.0 {
                d
            } else {
                fallback
            }
        })
        .collect()
}

/// Gaussian-kernel unfolding of the window `range` of the ascending spectrum `all`
/// (see the module documentation): εᵢ = Σⱼ Φ((Eᵢ − Eⱼ)/σⱼ) − a, j over all levels,
/// a = `range.start`. `method` must be [`UnfoldMethod::Kernel`] or
/// [`UnfoldMethod::KernelEnergy`].
pub fn kernel(
    all: &[f64],
    range: std::ops::Range<usize>,
    method: UnfoldMethod,
) -> Result<(Vec<f64>, Unfolding)> {
    let e = &all[range.clone()];
    check_window(e)?;
    let n = e.len();
    let window_spacing = (e[n - 1] - e[0]) / (n - 1) as f64;
    let (sigma, neighbours) = match method {
        UnfoldMethod::Kernel { spacings } if spacings.is_finite() && spacings > 0.0 => {
            let m = kernel_neighbours(spacings);
            let d = local_spacings(all, m, window_spacing);
            (d.into_iter().map(|d| spacings * d).collect(), Some(m))
        }
        UnfoldMethod::KernelEnergy { sigma } if sigma.is_finite() && sigma > 0.0 => {
            (vec![sigma; all.len()], None)
        }
        _ => {
            return Err(Error::other(format!(
                "kernel unfolding needs a positive finite width, not {method}"
            )))
        }
    };
    // every level j adds 1 to the window levels above Eⱼ + 8σⱼ (through the running sum
    // `steps`) and Φ((Eᵢ − Eⱼ)/σⱼ) to those within 8σⱼ of it
    let mut unfolded = vec![0.0; n];
    let mut steps = vec![0usize; n + 1];
    let (mut sig_lo, mut sig_hi) = (f64::INFINITY, 0.0f64);
    let mut context = 0;
    for (j, (&ej, &sj)) in all.iter().zip(&sigma).enumerate() {
        let reach = KERNEL_CUTOFF * sj;
        let a = e.partition_point(|&x| x < ej - reach);
        let b = e.partition_point(|&x| x <= ej + reach);
        steps[b] += 1;
        if a < b {
            sig_lo = sig_lo.min(sj);
            sig_hi = sig_hi.max(sj);
            if !range.contains(&j) {
                context += 1;
            }
            for (u, &ei) in unfolded[a..b].iter_mut().zip(&e[a..b]) {
                *u += normal_cdf((ei - ej) / sj);
            }
        }
    }
    let mut below = 0usize;
    for (u, &s) in unfolded.iter_mut().zip(&steps) {
        below += s;
        *u += below as f64 - range.start as f64;
    }
    if unfolded.iter().any(|v| !v.is_finite()) {
        return Err(Error::other(
            "unfolding failed: the kernel staircase is not finite (check the energies)",
        ));
    }
    let negative_spacings = unfolded.windows(2).filter(|w| w[1] < w[0]).count();
    let (rms_residual, mean_unfolded_spacing) = residuals(&unfolded);
    let (first, last) = (all[0], all[all.len() - 1]);
    let (s_first, s_last) = (sigma[0], sigma[all.len() - 1]);
    let end_levels = e
        .iter()
        .filter(|&&x| x - first < 2.0 * s_first || last - x < 2.0 * s_last)
        .count();
    let (method_words, width_spacings, width_energy) = match method {
        UnfoldMethod::Kernel { spacings } => (
            format!(
                "Gaussian-kernel staircase N(E) = sum_j Phi((E - E_j)/sigma_j) over all {} levels, sigma_j = {spacings} local mean spacings (running mean over {} spacings)",
                all.len(),
                (2 * neighbours.unwrap_or(0)).min(all.len() - 1)
            ),
            Some(spacings),
            None,
        ),
        _ => (
            format!(
                "Gaussian-kernel staircase N(E) = sum_j Phi((E - E_j)/sigma) over all {} levels, fixed sigma = {:e} ({:.3} mean spacings of the window)",
                all.len(),
                sigma[0],
                sigma[0] / window_spacing
            ),
            None,
            Some(sigma[0]),
        ),
    };
    Ok((
        unfolded,
        Unfolding {
            method: method_words,
            spec: method.to_string(),
            degree: None,
            kernel_width_spacings: width_spacings,
            kernel_width_energy: width_energy,
            kernel_neighbours: neighbours,
            kernel_sigma_range: Some([sig_lo, sig_hi]),
            context_levels: Some(context),
            kernel_end_levels: Some(end_levels),
            levels: n,
            mean_unfolded_spacing,
            rms_residual,
            negative_spacings,
        },
    ))
}

/// Values T₀(x) … T_d(x) of the Chebyshev polynomials.
fn chebyshev(x: f64, d: usize, out: &mut [f64]) {
    out[0] = 1.0;
    if d >= 1 {
        out[1] = x;
    }
    for k in 2..=d {
        out[k] = 2.0 * x * out[k - 1] - out[k - 2];
    }
}

/// Unfolds the ascending levels `e` by a degree-`degree` polynomial fit of the staircase
/// (see the module documentation). Returns εᵢ = N̄(Eᵢ) and a description of the fit.
pub fn polynomial(e: &[f64], degree: usize) -> Result<(Vec<f64>, Unfolding)> {
    check_window(e)?;
    let n = e.len();
    let (lo, hi) = (e[0], e[n - 1]);
    let half = 0.5 * (hi - lo);
    let centre = 0.5 * (hi + lo);
    let distinct = 1 + e.windows(2).filter(|w| w[1] > w[0]).count();
    let d = degree.min((n / 10).max(1)).min(distinct - 1);
    let xs: Vec<f64> = e
        .iter()
        .map(|&v| ((v - centre) / half).clamp(-1.0, 1.0))
        .collect();
    let mut row = vec![0.0; d + 1];
    let mut a = Mat::<f64>::zeros(n, d + 1);
    for (i, &x) in xs.iter().enumerate() {
        chebyshev(x, d, &mut row);
        for (k, &t) in row.iter().enumerate() {
            a[(i, k)] = t;
        }
    }
    let y = Mat::<f64>::from_fn(n, 1, |i, _| i as f64 + 0.5);
    let coef = a.qr().solve_lstsq(&y);
    let mut unfolded = Vec::with_capacity(n);
    for &x in &xs {
        chebyshev(x, d, &mut row);
        unfolded.push((0..=d).map(|k| coef[(k, 0)] * row[k]).sum::<f64>());
    }
    if unfolded.iter().any(|v| !v.is_finite()) {
        return Err(Error::other(
            "unfolding failed: the staircase fit is not finite (check the energies)",
        ));
    }
    let negative_spacings = unfolded.windows(2).filter(|w| w[1] < w[0]).count();
    let (rms_residual, mean_unfolded_spacing) = residuals(&unfolded);
    Ok((
        unfolded,
        Unfolding {
            method: format!(
                "least-squares polynomial fit (degree {d}, Chebyshev basis) of the staircase N(E) over the window"
            ),
            spec: UnfoldMethod::Polynomial { degree: d }.to_string(),
            degree: Some(d),
            kernel_width_spacings: None,
            kernel_width_energy: None,
            kernel_neighbours: None,
            kernel_sigma_range: None,
            context_levels: None,
            kernel_end_levels: None,
            levels: n,
            mean_unfolded_spacing,
            rms_residual,
            negative_spacings,
        },
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unfolding_a_smooth_density_gives_unit_spacings() {
        // common practice, no source: levels Eᵢ = F⁻¹(i) of a smooth staircase F unfold to
        // (nearly) equidistant levels with unit spacing.
        let e: Vec<f64> = (0..500)
            .map(|i| {
                let x = (i as f64 + 0.5) / 500.0;
                x + 0.3 * x * x
            })
            .collect();
        let (u, info) = polynomial(&e, 6).unwrap();
        let s: Vec<f64> = u.windows(2).map(|w| w[1] - w[0]).collect();
        let mean = s.iter().sum::<f64>() / s.len() as f64;
        assert!((mean - 1.0).abs() < 1e-2, "mean {mean}");
        assert!(s.iter().all(|&x| (x - 1.0).abs() < 0.05));
        assert_eq!(info.negative_spacings, 0);
        assert!(info.rms_residual < 0.5);
    }

    #[test]
    fn equal_levels_are_an_error_not_a_panic() {
        assert!(polynomial(&[1.0; 20], 5).is_err());
        assert!(polynomial(&[1.0, 2.0], 5).is_err());
        let k = UnfoldMethod::Kernel { spacings: 8.0 };
        assert!(kernel(&[1.0; 20], 0..20, k).is_err());
        assert!(kernel(&[1.0, 2.0], 0..2, k).is_err());
        // a zero or non-finite width is refused, not divided by
        let e: Vec<f64> = (0..50).map(f64::from).collect();
        for bad in [
            UnfoldMethod::Kernel { spacings: 0.0 },
            UnfoldMethod::KernelEnergy { sigma: -1.0 },
            UnfoldMethod::KernelEnergy { sigma: f64::NAN },
        ] {
            assert!(kernel(&e, 0..50, bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn method_strings_parse_and_print_back() {
        // our own option syntax (common practice, no source)
        for (text, want) in [
            ("poly:3", UnfoldMethod::Polynomial { degree: 3 }),
            ("poly", UnfoldMethod::Polynomial { degree: 5 }),
            ("kernel:2.5", UnfoldMethod::Kernel { spacings: 2.5 }),
            ("kernel", UnfoldMethod::Kernel { spacings: 32.0 }),
            (
                "kernel-energy:0.01",
                UnfoldMethod::KernelEnergy { sigma: 0.01 },
            ),
        ] {
            let m: UnfoldMethod = text.parse().unwrap();
            assert_eq!(m, want, "{text}");
            assert_eq!(m.to_string().parse::<UnfoldMethod>().unwrap(), m);
        }
        for bad in [
            "poly:-1",
            "poly:2.5",
            "kernel:0",
            "kernel:-3",
            "kernel:nan",
            "kernel-energy",
            "kernel-energy:inf",
            "spline:3",
        ] {
            assert!(bad.parse::<UnfoldMethod>().is_err(), "{bad}");
        }
    }

    /// The kernel staircase summed over every pair, O(n²), with the same widths.
    fn kernel_naive(all: &[f64], sigma: &[f64], start: usize, end: usize) -> Vec<f64> {
        (start..end)
            .map(|i| {
                all.iter()
                    .zip(sigma)
                    .map(|(&ej, &sj)| normal_cdf((all[i] - ej) / sj))
                    .sum::<f64>()
                    - start as f64
            })
            .collect()
    }

    #[test]
    fn kernel_cutoff_matches_the_full_double_sum() {
        // exact identity: the terms skipped beyond 8σ are 0 or 1 to within Φ(−8) ≈ 6e−16
        // (Abramowitz & Stegun 26.2.12 tail bound), so the fast sum equals the O(n²) one
        use rand::Rng;
        let mut rng = crate::model::rmt::rng(3);
        let mut e: Vec<f64> = (0..600)
            .map(|_| {
                let u: f64 = rng.random();
                u * u * 50.0
            })
            .collect();
        e.sort_by(f64::total_cmp);
        let k = 4.0;
        let m = kernel_neighbours(k);
        let sigma: Vec<f64> = local_spacings(&e, m, 1.0)
            .into_iter()
            .map(|d| k * d)
            .collect();
        let (fast, info) = kernel(&e, 150..450, UnfoldMethod::Kernel { spacings: k }).unwrap();
        let slow = kernel_naive(&e, &sigma, 150, 450);
        for (a, b) in fast.iter().zip(&slow) {
            assert!((a - b).abs() < 1e-11, "{a} vs {b}");
        }
        assert_eq!(info.kernel_neighbours, Some(8));
        assert_eq!(info.degree, None);
        assert_eq!(info.spec, "kernel:4");
        assert!(info.context_levels.unwrap() > 0);
        // fixed width too
        let (fast, _) = kernel(&e, 0..600, UnfoldMethod::KernelEnergy { sigma: 0.3 }).unwrap();
        let slow = kernel_naive(&e, &[0.3; 600], 0, 600);
        for (a, b) in fast.iter().zip(&slow) {
            assert!((a - b).abs() < 1e-11, "{a} vs {b}");
        }
    }

    #[test]
    fn kernel_on_a_lattice_is_the_exact_staircase() {
        // Poisson summation: Σⱼ Φ((x − j)/σ) over all integers j equals x + ½ up to
        // terms of order e^(−2π²σ²) (≈ 1e−34 for σ = 2); far from the ends of a finite
        // lattice the sum is the same, so εᵢ = i + ½ counted from the window's start
        let e: Vec<f64> = (0..1000).map(|j| 0.25 * j as f64).collect();
        for method in [
            UnfoldMethod::KernelEnergy { sigma: 0.5 },
            UnfoldMethod::Kernel { spacings: 2.0 },
        ] {
            let (u, info) = kernel(&e, 300..700, method).unwrap();
            for (i, x) in u.iter().enumerate() {
                assert!((x - (i as f64 + 0.5)).abs() < 1e-12, "{method}: {i} {x}");
            }
            assert!(info.rms_residual < 1e-12);
            assert!((info.mean_unfolded_spacing - 1.0).abs() < 1e-12);
            assert_eq!(info.negative_spacings, 0);
            let [lo, hi] = info.kernel_sigma_range.unwrap();
            assert!((lo - 0.5).abs() < 1e-12 && (hi - 0.5).abs() < 1e-12);
        }
    }

    #[test]
    fn kernel_unfolding_a_smooth_density_gives_unit_spacings() {
        // common practice, no source: levels Eᵢ = F⁻¹(i) of a smooth staircase F unfold to
        // (nearly) equidistant levels with unit spacing, here with a density varying by a
        // factor 1.6 over the levels
        let e: Vec<f64> = (0..2000)
            .map(|i| {
                let x = (i as f64 + 0.5) / 2000.0;
                x + 0.3 * x * x
            })
            .collect();
        let (u, info) = kernel(&e, 500..1500, UnfoldMethod::Kernel { spacings: 8.0 }).unwrap();
        assert_eq!(u.len(), 1000);
        assert!(u.windows(2).all(|w| (w[1] - w[0] - 1.0).abs() < 1e-3));
        assert!((info.mean_unfolded_spacing - 1.0).abs() < 1e-3);
        assert!(info.rms_residual < 1e-2, "{}", info.rms_residual);
    }
}
