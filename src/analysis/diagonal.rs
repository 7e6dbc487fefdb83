//! Diagonal matrix elements `Aₙₙ = ⟨n|A|n⟩` against the energy: the smooth part
//! `A(E)`, the eigenstate-to-eigenstate fluctuations, and the thermal predictions.
//!
//! ETH (Srednicki 1999) writes `Aₙₙ = A(Eₙ) + e^{−S(Eₙ)/2} f(Eₙ) Rₙₙ` with a smooth
//! `A(E)` equal to the thermal value. For a window `W` of consecutive states:
//!
//! - `mean = ⟨Aₙₙ⟩_W`;
//! - `diff_mean_abs`, `diff_max_abs`: mean and max of `|Aₙ₊₁,ₙ₊₁ − Aₙₙ|` over
//!   consecutive states in the window;
//! - `fluct_variance = ½ ⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩_W`: the variance of the fluctuating part
//!   (the smooth part cancels to first order in the level spacing), with the standard
//!   error `½ std((Δₙ)²)/√(W−1)` (consecutive differences treated as independent);
//! - the smooth `A(E)` is a **binned mean**: the window's energy range is cut into
//!   `clamp(⌊√W⌋, 1, 30)` bins of equal width; each bin reports the mean energy, the mean
//!   `Aₙₙ`, the count and the standard error `std/√count` (sample std, `count ≥ 2`);
//! - residuals `Aₙₙ − A(Eₙ)` (with `A(Eₙ)` the mean of `n`'s bin): rms reported;
//! - `residual_variance`, `residual_lag1`: the variance and lag-1 autocorrelation of the
//!   residuals about a local smooth fit, with a jackknife error
//!   ([`crate::analysis::residual`]); unlike `fluct_variance` it is not biased by
//!   correlated neighbours, and the diagonal/off-diagonal ratio and the scaling fits use it;
//! - predictions at each bin's mean energy `Ē`: microcanonical (mean of `Aₙₙ` over ALL
//!   states in the shell `|Eₙ − Ē| ≤ δ`, `δ` = [`thermo::default_dos_width`]) and canonical
//!   `⟨A⟩_{β(Ē)}` with `β(Ē)` solving `⟨H⟩_β = Ē` over all states; the max and rms of
//!   `A(Ē) − prediction` over bins with `count ≥ 2`. With a partial eigenbasis
//!   (`n < dim`) the canonical sums miss states and the prediction is unreliable; the
//!   result says so.
//! - with a [`thermo::Predictor`] ([`analyze_with`]), `β(Ē)`, both predictions and the
//!   shell half-width come from it instead (the kernel polynomial method on the stored
//!   Hamiltonian, or a stored `spectrum`; [`crate::analysis::kpm`]), with their errors;
//!   `predictions.thermo_source` names the source (`full` for the stored states).

use crate::analysis::thermo::{self, Predictor, ThermoSource};
use crate::error::{Error, Result};
use serde::Serialize;
use std::ops::Range;

/// Largest number of bins of the smooth `A(E)`.
pub const MAX_BINS: usize = 30;

/// One energy bin of the smooth `A(E)`.
#[derive(Debug, Clone, Serialize)]
pub struct SmoothBin {
    /// Mean energy of the states in the bin.
    pub energy: f64,
    /// Lower edge of the bin.
    pub energy_lo: f64,
    /// Upper edge of the bin.
    pub energy_hi: f64,
    /// Mean of `Aₙₙ` in the bin.
    pub mean: f64,
    /// Standard error of the mean (`None` for a single state).
    pub stderr: Option<f64>,
    /// Number of states in the bin.
    pub count: usize,
    /// Microcanonical prediction at `energy` (shell over all states).
    pub microcanonical: Option<f64>,
    /// Inverse temperature `β(energy)` (None at the spectrum's edges).
    pub beta: Option<f64>,
    /// Canonical prediction `⟨A⟩_β` at `β(energy)`.
    pub canonical: Option<f64>,
    /// Error of `beta` (KPM: jackknife over the random vectors).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub beta_stderr: Option<f64>,
    /// Error of `canonical` at fixed β (KPM).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub canonical_stderr: Option<f64>,
    /// Error of `microcanonical` (KPM).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub microcanonical_stderr: Option<f64>,
}

/// How far the smooth `A(E)` lies from a prediction over the window's bins.
#[derive(Debug, Clone, Serialize)]
pub struct Deviation {
    /// Largest `|A(Ē) − prediction|` over bins with at least two states.
    pub max_abs: f64,
    /// Root-mean-square of `A(Ē) − prediction` over the same bins.
    pub rms: f64,
    /// Number of bins compared.
    pub bins: usize,
}

/// Thermal predictions compared with the smooth `A(E)`.
#[derive(Debug, Clone, Serialize)]
pub struct Predictions {
    /// Half-width `δ` of the microcanonical shell `|Eₙ − E| ≤ δ`.
    pub microcanonical_half_width: f64,
    /// Deviation of `A(E)` from the microcanonical prediction.
    pub microcanonical: Option<Deviation>,
    /// Deviation of `A(E)` from the canonical prediction.
    pub canonical: Option<Deviation>,
    /// True when the eigenbasis is partial (`n < dim`): canonical sums then miss states.
    pub partial_basis: bool,
    /// A plain-language caveat, when there is one.
    pub note: Option<String>,
    /// Where `β(E)` and the predictions come from: `full` (the stored states), `kpm`
    /// (kernel polynomial method on the stored Hamiltonian) or `stored` (the `spectrum`
    /// dataset for `β(E)`, the KPM for the averages).
    pub thermo_source: ThermoSource,
    /// The source in words (moments, random vectors, seed, bounds), for `kpm`/`stored`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub thermo: Option<String>,
}

/// Diagonal ETH figures of one observable in one sector (JSON keys of DESIGN.md).
#[derive(Debug, Clone, Serialize)]
pub struct DiagonalResult {
    /// Observable name.
    pub name: String,
    /// The window as given (`"0.4:0.6"`).
    pub window: String,
    /// Index range of the window in the ascending spectrum.
    pub window_states: [usize; 2],
    /// Number of states in the window.
    pub states: usize,
    /// Mean of `Aₙₙ` in the window.
    pub mean: f64,
    /// Mean of `|Aₙ₊₁,ₙ₊₁ − Aₙₙ|` in the window.
    pub diff_mean_abs: f64,
    /// Max of `|Aₙ₊₁,ₙ₊₁ − Aₙₙ|` in the window.
    pub diff_max_abs: f64,
    /// `½ ⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩` in the window.
    pub fluct_variance: f64,
    /// Standard error of `fluct_variance`.
    pub fluct_variance_stderr: f64,
    /// Root-mean-square residual `Aₙₙ − A(Eₙ)` about the binned mean.
    pub residual_rms: f64,
    /// Variance of `Aₙₙ − A(Eₙ)` about a local smooth fit ([`crate::analysis::residual`]).
    pub residual_variance: f64,
    /// Its delete-a-group jackknife standard error.
    pub residual_variance_stderr: f64,
    /// Lag-1 autocorrelation of the residuals.
    pub residual_lag1: f64,
    /// The local fit and the jackknife, in words.
    pub residual_rule: String,
    /// How the smooth part was formed.
    pub smooth_rule: String,
    /// Binned smooth `A(E)` with the predictions at each bin.
    pub smooth: Vec<SmoothBin>,
    /// Thermal predictions and their deviations.
    pub predictions: Predictions,
    /// `(Eₙ, Aₙₙ)` of every projected state, when asked for (`--per-state`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub per_state: Option<PerState>,
}

/// The diagonal elements of the projected states, in ascending energy.
#[derive(Debug, Clone, Serialize)]
pub struct PerState {
    /// Index (in ascending energy) of the first state.
    pub first_state: usize,
    /// Eₙ.
    pub energies: Vec<f64>,
    /// Aₙₙ.
    pub values: Vec<f64>,
}

/// Eigenstate-to-eigenstate fluctuation figures of consecutive values `a` (one window):
/// `(diff_mean_abs, diff_max_abs, fluct_variance, fluct_variance_stderr)`, with
/// `Δₙ = aₙ₊₁ − aₙ`, `fluct_variance = ½⟨Δ²⟩`, stderr `½ std(Δ²)/√(#Δ)`.
pub fn fluctuations(a: &[f64]) -> (f64, f64, f64, f64) {
    let d: Vec<f64> = a.windows(2).map(|w| w[1] - w[0]).collect();
    if d.is_empty() {
        return (0.0, 0.0, 0.0, 0.0);
    }
    let m = d.len() as f64;
    let mean_abs = d.iter().map(|x| x.abs()).sum::<f64>() / m;
    let max_abs = d.iter().fold(0.0f64, |acc, x| acc.max(x.abs()));
    let sq: Vec<f64> = d.iter().map(|x| x * x).collect();
    let msq = sq.iter().sum::<f64>() / m;
    let var_sq = if d.len() > 1 {
        sq.iter().map(|x| (x - msq).powi(2)).sum::<f64>() / (m - 1.0)
    } else {
        0.0
    };
    (mean_abs, max_abs, 0.5 * msq, 0.5 * (var_sq / m).sqrt())
}

/// Diagonal analysis of one observable.
///
/// `energies` (ascending) and `diag` (`Aₙₙ`) cover ALL available states of the sector
/// (the predictions need them); `window` selects the states analyzed; `dim` is the
/// Hilbert-space dimension when known (a partial basis has `energies.len() < dim`).
pub fn analyze(
    name: &str,
    energies: &[f64],
    diag: &[f64],
    window: Range<usize>,
    window_label: &str,
    dim: Option<usize>,
) -> Result<DiagonalResult> {
    let n = energies.len();
    if diag.len() != n {
        return Err(Error::other(format!(
            "observable '{name}': {} diagonal elements for {n} energies",
            diag.len()
        )));
    }
    analyze_impl(name, energies, diag, 0, window, window_label, dim, None)
}

/// Diagonal analysis with the thermal predictions of `predictor` (module docs):
/// `diag[k]` is `A_nn` of state `offset + k` and must cover the window.
#[allow(clippy::too_many_arguments)]
pub fn analyze_with(
    name: &str,
    energies: &[f64],
    diag: &[f64],
    offset: usize,
    window: Range<usize>,
    window_label: &str,
    dim: Option<usize>,
    predictor: &dyn Predictor,
) -> Result<DiagonalResult> {
    if offset + diag.len() > energies.len() {
        return Err(Error::other(format!(
            "observable '{name}': {} diagonal elements from state {offset} for {} energies",
            diag.len(),
            energies.len()
        )));
    }
    analyze_impl(
        name,
        energies,
        diag,
        offset,
        window,
        window_label,
        dim,
        Some(predictor),
    )
}

/// Diagonal analysis of one observable from the window's `Aₙₙ` only.
///
/// Same figures as [`analyze`], with `diag_window[k] = A_{w₀+k, w₀+k}` for the states
/// `window = w₀..w₁` of the ascending `energies` (all states). The predictions are
/// restricted to what the window supports: the microcanonical shell `|Eₙ − Ē| ≤ δ`
/// averages over the window's states only (shells that reach past the window's edges
/// are cut), and the canonical prediction — a Boltzmann sum over every state — is not
/// computed (`None`); `predictions.note` says so.
pub fn analyze_window(
    name: &str,
    energies: &[f64],
    diag_window: &[f64],
    window: Range<usize>,
    window_label: &str,
    dim: Option<usize>,
) -> Result<DiagonalResult> {
    if diag_window.len() != window.len() || window.end > energies.len() {
        return Err(Error::other(format!(
            "observable '{name}': {} diagonal elements for the window {}..{} of {} states",
            diag_window.len(),
            window.start,
            window.end,
            energies.len()
        )));
    }
    let start = window.start;
    analyze_impl(
        name,
        energies,
        diag_window,
        start,
        window,
        window_label,
        dim,
        None,
    )
}

/// The caveat of the predictions: a partial eigenbasis, or predictions from the window only.
fn prediction_note(
    partial: bool,
    all_states: bool,
    n: usize,
    dim: Option<usize>,
    covered: usize,
) -> Option<String> {
    let mut notes = Vec::new();
    if partial {
        notes.push(format!(
            "partial eigenbasis ({n} of {} states): the canonical prediction sums over the available states only and is unreliable",
            dim.unwrap_or(n)
        ));
    }
    if !all_states {
        notes.push(format!(
            "predictions from the window's {covered} states only: the microcanonical shell is cut at the window's edges and the canonical prediction (a sum over all {n} states) is not computed"
        ));
    }
    (!notes.is_empty()).then(|| notes.join("; "))
}

/// Predicted values at a bin's energy with their errors:
/// `(microcanonical, β, canonical, (σ_β, σ_canonical, σ_microcanonical))`, from `ext` or
/// from the stored states `e_cov`/`diag` (the canonical one only when they are all states).
type BinPredictions = (
    Option<f64>,
    Option<f64>,
    Option<f64>,
    (Option<f64>, Option<f64>, Option<f64>),
);

fn bin_predictions(
    ext: Option<&dyn Predictor>,
    energies: &[f64],
    e_cov: &[f64],
    diag: &[f64],
    all_states: bool,
    energy: f64,
    half_width: f64,
) -> BinPredictions {
    match ext {
        Some(p) => {
            let mc = p.microcanonical(energy, half_width);
            let beta = p.beta(energy);
            let can = beta.and_then(|b| p.canonical(b.0));
            let errors = (
                beta.and_then(|b| b.1),
                can.and_then(|c| c.1),
                mc.and_then(|m| m.1),
            );
            (mc.map(|m| m.0), beta.map(|b| b.0), can.map(|c| c.0), errors)
        }
        None => {
            let mc = thermo::microcanonical_average(e_cov, diag, energy, half_width).map(|x| x.0);
            let beta = thermo::beta_of_energy(energies, energy);
            let canonical = if all_states {
                beta.map(|b| thermo::canonical_average(energies, diag, b))
            } else {
                None
            };
            (mc, beta, canonical, (None, None, None))
        }
    }
}

/// Common body: `diag[k]` is `A_nn` of state `offset + k`; the predictions use every
/// state `diag` covers (all of them when `offset = 0` and `diag.len() = n`), or `ext`.
#[allow(clippy::too_many_arguments)]
fn analyze_impl(
    name: &str,
    energies: &[f64],
    diag: &[f64],
    offset: usize,
    window: Range<usize>,
    window_label: &str,
    dim: Option<usize>,
    ext: Option<&dyn Predictor>,
) -> Result<DiagonalResult> {
    let n = energies.len();
    let covered = offset..offset + diag.len();
    let all_states = covered == (0..n);
    if window.end > n || window.len() < 2 {
        return Err(Error::other(format!(
            "observable '{name}': the window {window_label} holds {} state(s) of {n}; at least 2 are needed",
            window.len().min(n)
        )));
    }
    if covered.end > n || window.start < covered.start || window.end > covered.end {
        return Err(Error::other(format!(
            "observable '{name}': diagonal elements of states {}..{} do not cover the window {}..{}",
            covered.start, covered.end, window.start, window.end
        )));
    }
    if let Some(k) = diag.iter().position(|x| !x.is_finite()) {
        let k = k + offset;
        return Err(Error::other(format!(
            "observable '{name}': diagonal element {k} is not finite"
        )));
    }
    let e_w = &energies[window.clone()];
    let a_w = &diag[window.start - offset..window.end - offset];
    let e_cov = &energies[covered.clone()];
    let w = a_w.len();
    let mean = a_w.iter().sum::<f64>() / w as f64;
    let (diff_mean_abs, diff_max_abs, fluct_variance, fluct_variance_stderr) = fluctuations(a_w);
    let rf = crate::analysis::residual::residual_fit(e_w, a_w);

    // binned smooth part
    let nb = ((w as f64).sqrt().floor() as usize).clamp(1, MAX_BINS);
    let (elo, ehi) = (e_w[0], e_w[w - 1]);
    let width = (ehi - elo) / nb as f64;
    let bin_of = |e: f64| -> usize {
        if width <= 0.0 {
            0
        } else {
            (((e - elo) / width).floor() as usize).min(nb - 1)
        }
    };
    let mut sums = vec![(0.0f64, 0.0f64, 0.0f64, 0usize); nb]; // Σe, Σa, Σa², count
    for (&e, &a) in e_w.iter().zip(a_w) {
        let b = &mut sums[bin_of(e)];
        b.0 += e;
        b.1 += a;
        b.2 += a * a;
        b.3 += 1;
    }
    let half_width = match ext {
        Some(p) => p.half_width(),
        None => thermo::default_dos_width(energies),
    };
    let mut smooth = Vec::new();
    for (k, &(se, sa, saa, c)) in sums.iter().enumerate() {
        if c == 0 {
            continue;
        }
        let cf = c as f64;
        let m = sa / cf;
        let stderr = (c >= 2).then(|| ((saa - cf * m * m).max(0.0) / (cf - 1.0) / cf).sqrt());
        let energy = se / cf;
        let (microcanonical, beta, canonical, errors) =
            bin_predictions(ext, energies, e_cov, diag, all_states, energy, half_width);
        smooth.push(SmoothBin {
            energy,
            energy_lo: elo + k as f64 * width,
            energy_hi: elo + (k + 1) as f64 * width,
            mean: m,
            stderr,
            count: c,
            microcanonical,
            beta,
            canonical,
            beta_stderr: errors.0,
            canonical_stderr: errors.1,
            microcanonical_stderr: errors.2,
        });
    }
    let smooth_of = |e: f64| -> f64 {
        let (_, sa, _, c) = sums[bin_of(e)];
        sa / c.max(1) as f64
    };
    let residual_rms = (e_w
        .iter()
        .zip(a_w)
        .map(|(&e, &a)| (a - smooth_of(e)).powi(2))
        .sum::<f64>()
        / w as f64)
        .sqrt();
    let deviation = |pick: fn(&SmoothBin) -> Option<f64>| -> Option<Deviation> {
        let d: Vec<f64> = smooth
            .iter()
            .filter(|b| b.count >= 2)
            .filter_map(|b| pick(b).map(|p| b.mean - p))
            .collect();
        (!d.is_empty()).then(|| Deviation {
            max_abs: d.iter().fold(0.0f64, |acc, x| acc.max(x.abs())),
            rms: (d.iter().map(|x| x * x).sum::<f64>() / d.len() as f64).sqrt(),
            bins: d.len(),
        })
    };
    let partial = dim.is_some_and(|d| n < d);
    let note = match ext {
        Some(_) => None,
        None => prediction_note(partial, all_states, n, dim, diag.len()),
    };
    Ok(DiagonalResult {
        name: name.to_string(),
        window: window_label.to_string(),
        window_states: [window.start, window.end],
        states: w,
        mean,
        diff_mean_abs,
        diff_max_abs,
        fluct_variance,
        fluct_variance_stderr,
        residual_rms,
        residual_variance: rf.residual_variance,
        residual_variance_stderr: rf.residual_variance_stderr,
        residual_lag1: rf.residual_lag1,
        residual_rule: rf.rule,
        smooth_rule: format!(
            "binned mean: {nb} equal-width energy bins over the window (clamp(floor(sqrt(W)), 1, {MAX_BINS})), error = standard error per bin"
        ),
        per_state: None,
        predictions: Predictions {
            microcanonical_half_width: half_width,
            microcanonical: deviation(|b| b.microcanonical),
            canonical: deviation(|b| b.canonical),
            partial_basis: partial,
            note,
            thermo_source: ext.map_or(ThermoSource::Full, |p| p.source()),
            thermo: ext.map(|p| p.describe()),
        },
        smooth,
    })
}

/// Binned mean of `(E, A)` points over `bins` equal-width energy bins, with standard
/// errors, and the canonical prediction at each bin's mean energy:
/// `(Ē, ⟨A⟩_bin, stderr, ⟨A⟩_β(Ē))`. Bins with fewer than two points are dropped.
pub fn binned_curves(points: &[(f64, f64)], bins: usize) -> Vec<(f64, f64, f64, Option<f64>)> {
    let (lo, hi) = points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.0), b.max(p.0))
        });
    if hi <= lo || bins == 0 {
        return Vec::new();
    }
    let energies: Vec<f64> = points.iter().map(|p| p.0).collect();
    let values: Vec<f64> = points.iter().map(|p| p.1).collect();
    let width = (hi - lo) / bins as f64;
    let mut acc = vec![(0.0, 0.0, 0.0, 0usize); bins];
    for &(e, a) in points {
        let k = (((e - lo) / width) as usize).min(bins - 1);
        acc[k].0 += e;
        acc[k].1 += a;
        acc[k].2 += a * a;
        acc[k].3 += 1;
    }
    acc.into_iter()
        .filter(|b| b.3 >= 2)
        .map(|(se, sa, saa, n)| {
            let n_f = n as f64;
            let (e, mean) = (se / n_f, sa / n_f);
            let var = ((saa / n_f - mean * mean) * n_f / (n_f - 1.0)).max(0.0);
            let can = thermo::beta_of_energy(&energies, e)
                .map(|b| thermo::canonical_average(&energies, &values, b));
            (e, mean, (var / n_f).sqrt(), can)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fluctuation_figures_of_a_known_sequence() {
        // definitions of DESIGN.md on a hand-checked sequence (common practice, no source)
        let (m, x, v, _) = fluctuations(&[0.0, 1.0, -1.0, -1.0]);
        assert!((m - 1.0).abs() < 1e-15); // |1| + |−2| + |0| over 3
        assert_eq!(x, 2.0);
        assert!((v - 0.5 * 5.0 / 3.0).abs() < 1e-15);
    }

    #[test]
    fn window_only_analysis_keeps_the_window_figures() {
        // same window figures from the window's A_nn alone; canonical omitted, the
        // microcanonical shell cut to the window (definitions of this module; no source)
        let n = 200;
        let e: Vec<f64> = (0..n)
            .map(|i| -1.0 + 2.0 * i as f64 / (n - 1) as f64)
            .collect();
        let a: Vec<f64> = e
            .iter()
            .enumerate()
            .map(|(i, &x)| 0.3 * x + if i % 2 == 0 { 0.01 } else { -0.01 })
            .collect();
        let w = 80..120;
        let full = analyze("x", &e, &a, w.clone(), "0.4:0.6", Some(n)).unwrap();
        let part = analyze_window("x", &e, &a[w.clone()], w.clone(), "0.4:0.6", Some(n)).unwrap();
        assert_eq!(full.mean, part.mean);
        assert_eq!(full.fluct_variance, part.fluct_variance);
        assert_eq!(full.diff_max_abs, part.diff_max_abs);
        assert_eq!(full.smooth.len(), part.smooth.len());
        assert!(full.smooth.iter().any(|b| b.canonical.is_some()));
        assert!(part.smooth.iter().all(|b| b.canonical.is_none()));
        assert!(part.predictions.canonical.is_none());
        assert!(part
            .predictions
            .note
            .as_deref()
            .is_some_and(|t| t.contains("window")));
        assert!(full.predictions.note.is_none());
        // wrong length is an error, not a panic
        assert!(analyze_window("x", &e, &a[..10], w, "0.4:0.6", Some(n)).is_err());
    }

    #[test]
    fn canonical_prediction_of_the_energy_is_exact() {
        // A = c·H: ⟨A⟩_β(E) = c·⟨H⟩_β(E) = c·E by the definition of β(E), and the bin mean
        // of c·Eₙ is c·Ē (definitions; no source needed)
        let e: Vec<f64> = (0..300).map(|i| (i as f64 * 0.61).sin() * 4.0).collect();
        let mut e = e;
        e.sort_by(f64::total_cmp);
        let a: Vec<f64> = e.iter().map(|x| 0.1 * x).collect();
        let r = analyze("h", &e, &a, 60..240, "0.2:0.8", Some(300)).unwrap();
        let c = r.predictions.canonical.unwrap();
        assert!(c.bins >= 10 && c.max_abs < 1e-9, "{c:?}");
        assert!(!r.predictions.partial_basis && r.predictions.note.is_none());
        // a partial eigenbasis (n < dim) is flagged (DESIGN.md; common practice, no source)
        let p = analyze("h", &e, &a, 60..240, "0.2:0.8", Some(1000)).unwrap();
        assert!(p.predictions.partial_basis);
        assert!(p.predictions.note.unwrap().contains("unreliable"));
    }

    #[test]
    fn smooth_linear_observable_has_no_residual() {
        // Aₙₙ = 2Eₙ + 1 is its own smooth part (common practice, no source)
        let e: Vec<f64> = (0..100).map(|i| i as f64 * 0.1).collect();
        let a: Vec<f64> = e.iter().map(|x| 2.0 * x + 1.0).collect();
        let r = analyze("lin", &e, &a, 0..100, "0:1", Some(100)).unwrap();
        assert_eq!(r.smooth.len(), 10);
        // 10 states per bin, A spaced by 0.2: residual rms = 0.2·√((10² − 1)/12)
        // (variance of a discrete uniform distribution, elementary)
        let expect = 0.2 * (99.0f64 / 12.0).sqrt();
        assert!(
            (r.residual_rms - expect).abs() < 1e-12,
            "{}",
            r.residual_rms
        );
        assert!((r.mean - (2.0 * 4.95 + 1.0)).abs() < 1e-12);
        assert!(analyze("x", &e, &a[..5], 0..100, "0:1", None).is_err());
    }
}
