//! The norm of the adiabatic gauge potential (AGP) and the fidelity susceptibility of
//! each eigenstate of a window, for a perturbation `V` (any stored observable).
//!
//! For `H(λ) = H + λV` with eigenstates `|n⟩`, energies `Eₙ` and `ωₙₘ = Eₙ − Eₘ`:
//!
//! ```text
//! χₙ(μ) = Σ_{m≠n} ω²ₙₘ |Vₙₘ|² / (ω²ₙₘ + μ²)²      (regularised AGP norm)
//! Fₙ    = Σ_{m: |ωₙₘ|>τ} |Vₙₘ|² / ω²ₙₘ            (fidelity susceptibility, μ → 0)
//! ```
//!
//! (Pandey, Claeys, Campbell, Polkovnikov, Sels, PRX 10, 041017 (2020); LeBlond, Sels,
//! Polkovnikov, Rigol, PRB 104, L201117 (2021)). The sum over `m` runs over the *partner*
//! states: every stored state by default (the full AGP norm when the eigenbasis is
//! complete), or only the window ([`Partners`]).
//!
//! **Cutoff.** The default is `μ = L·ω̄` with `ω̄` the mean level spacing of the window,
//! `(E_last − E_first)/(W − 1)`, and `L` the number of sites (sector attribute `size`); when
//! the size is not known, `L = log₂ D` (the number of spin-½ sites of a Hilbert space of
//! dimension `D`, D the sector dimension, else the number of states). The published choice is
//! `μ ∝ L/D` (Pandey et al. 2020), which this is up to the bandwidth. [`Cutoff`] sets it as an
//! absolute energy or as a multiple of `ω̄`.
//!
//! **Degenerate pairs.** `Fₙ` leaves out pairs with `|ωₙₘ| ≤ τ = 10⁻¹⁰ ω̄` (counted in
//! `degenerate_pairs`); in `χₙ` such pairs contribute `ω² → 0` and need no exclusion.
//!
//! **Typical value.** `χ_typ = exp⟨ln χₙ⟩` (geometric mean over the window) and the median,
//! as the papers use; the error of each is a moving-block bootstrap over the window's
//! eigenstates in energy order (block `⌈W^{1/3}⌉`, at least 2, [`RESAMPLES`] resamples, fixed
//! seed), since neighbouring states share partners. The same for `F`. A histogram of
//! `log₁₀ χₙ` (equal-width bins) gives the distribution.
//!
//! **Chaotic scale.** Under ETH with a smooth `|f(ω)|²` near `ω = 0`,
//! `χₙ(μ) ≈ ρ(Eₙ)⟨|Vₙₘ|²⟩ ∫dω ω²/(ω²+μ²)² = π ρ ⟨|Vₙₘ|²⟩ / (2μ)` for `ω̄ ≪ μ`: with
//! `μ = L ω̄` this grows as `D/L`; near integrability it grows faster (Pandey et al. 2020).
//!
//! The analysis streams: a [`GaugeAccumulator`] takes the projector's blocks (`I ≤ J`, every
//! unordered pair once) as they arrive; it keeps two numbers per window state and nothing of
//! size `W²`.

use crate::analysis::scaling::{block_bootstrap, default_block_length, DEFAULT_SEED, RESAMPLES};
use crate::data::Matrix;
use crate::error::{Error, Result};
use crate::project::BlockPair;
use serde::Serialize;
use std::ops::Range;

/// Relative tolerance `τ/ω̄` below which a pair counts as degenerate in `Fₙ`.
pub const DEGENERATE_TOLERANCE: f64 = 1e-10;
/// Number of bins of the `log₁₀ χ` histogram.
pub const HISTOGRAM_BINS: usize = 24;

/// The cutoff `μ`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Cutoff {
    /// `μ` in energy units.
    Absolute(f64),
    /// `μ` as a multiple of the window's mean level spacing.
    Spacings(f64),
}

impl Cutoff {
    /// Parses `VALUE` (absolute energy) or `VALUE*spacing` (a multiple of the mean level
    /// spacing of the window); VALUE must be positive and finite.
    pub fn parse(s: &str) -> Result<Cutoff> {
        let t = s.trim();
        let (num, spacings) = match t.strip_suffix("*spacing") {
            Some(n) => (n, true),
            None => (t, false),
        };
        let v: f64 = num.trim().parse().map_err(|_| {
            Error::usage(format!(
                "--cutoff '{s}': expected a positive energy (0.01) or a multiple of the mean level spacing (12*spacing)"
            ))
        })?;
        if !(v.is_finite() && v > 0.0) {
            return Err(Error::usage(format!(
                "--cutoff '{s}': the cutoff must be positive and finite"
            )));
        }
        Ok(if spacings {
            Cutoff::Spacings(v)
        } else {
            Cutoff::Absolute(v)
        })
    }
}

/// Which states `m` the sums run over.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Partners {
    /// Every stored state (the full norm for a complete eigenbasis).
    All,
    /// Only the states of the window.
    Window,
}

/// Options of the gauge analysis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GaugeOptions {
    /// The cutoff; `None`: `L` mean level spacings (module docs).
    pub cutoff: Option<Cutoff>,
    /// The partner states.
    pub partners: Partners,
}

impl Default for GaugeOptions {
    fn default() -> Self {
        GaugeOptions {
            cutoff: None,
            partners: Partners::All,
        }
    }
}

/// A typical value with its bootstrap errors.
#[derive(Debug, Clone, Serialize)]
pub struct Typical {
    /// `exp⟨ln x⟩` over the window.
    pub geometric_mean: f64,
    /// Its block-bootstrap standard error.
    pub geometric_mean_stderr: f64,
    /// Median over the window.
    pub median: f64,
    /// Its block-bootstrap standard error.
    pub median_stderr: f64,
    /// Arithmetic mean over the window.
    pub mean: f64,
    /// `⟨ln x⟩` and its standard deviation over the window (the width of the distribution).
    pub mean_log: f64,
    /// Standard deviation of `ln x` over the window.
    pub std_log: f64,
    /// Number of states with `x > 0` (the logarithms use only those).
    pub positive: usize,
}

/// One bin of the `log₁₀ χ` histogram.
#[derive(Debug, Clone, Serialize)]
pub struct LogBin {
    /// Lower edge of `log₁₀ χ`.
    pub lo: f64,
    /// Upper edge.
    pub hi: f64,
    /// States in the bin.
    pub count: usize,
    /// Probability density of `log₁₀ χ` (count / (states · width)).
    pub density: f64,
}

/// `χₙ` and `Fₙ` of one window state.
#[derive(Debug, Clone, Serialize)]
pub struct GaugeState {
    /// Index in the ascending spectrum.
    pub index: usize,
    /// Energy.
    pub energy: f64,
    /// `χₙ(μ)`.
    pub chi: f64,
    /// `Fₙ`.
    pub fidelity: f64,
}

/// The gauge-potential figures of one perturbation in one sector.
#[derive(Debug, Clone, Serialize)]
pub struct GaugeResult {
    /// The perturbation (observable name).
    pub name: String,
    /// The window as given.
    pub window: String,
    /// Index range of the window.
    pub window_states: [usize; 2],
    /// Number of states in the window.
    pub states: usize,
    /// The partner states of the sums.
    pub partners: Partners,
    /// Index range of the partner states.
    pub partner_states: [usize; 2],
    /// Mean level spacing of the window.
    pub mean_level_spacing: f64,
    /// The cutoff μ (energy units).
    pub cutoff: f64,
    /// `μ / mean_level_spacing`.
    pub cutoff_spacings: f64,
    /// How μ was chosen.
    pub cutoff_rule: String,
    /// Pairs left out of `Fₙ` as degenerate (`|ω| ≤ degenerate_tolerance`), each counted
    /// once per window state it touches.
    pub degenerate_pairs: usize,
    /// The degeneracy tolerance τ (energy units).
    pub degenerate_tolerance: f64,
    /// Typical `χ`.
    pub chi: Typical,
    /// Typical `F`.
    pub fidelity: Typical,
    /// Block length of the bootstrap (states).
    pub bootstrap_block_states: usize,
    /// Resamples of the bootstrap.
    pub bootstrap_resamples: usize,
    /// Histogram of `log₁₀ χₙ`.
    pub log_chi_histogram: Vec<LogBin>,
    /// `χₙ`, `Fₙ` of every window state.
    pub per_state: Vec<GaugeState>,
}

/// Streams block pairs into `χₙ` and `Fₙ` of the window states (module docs).
#[derive(Debug, Clone)]
pub struct GaugeAccumulator {
    name: String,
    label: String,
    energies: Vec<f64>,
    window: Range<usize>,
    partners: Range<usize>,
    partner_kind: Partners,
    spacing: f64,
    mu: f64,
    rule: String,
    tol: f64,
    chi: Vec<f64>,
    fid: Vec<f64>,
    degenerate: usize,
}

impl GaugeAccumulator {
    /// An empty accumulator for the window `window` of the ascending `energies`, with the
    /// partner states `partners` (must contain the window). `sites` is the sector's number
    /// of sites, `dim` its dimension (for the default cutoff).
    pub fn new(
        name: &str,
        energies: &[f64],
        window: Range<usize>,
        label: &str,
        opts: &GaugeOptions,
        sites: Option<usize>,
        dim: usize,
    ) -> Result<Self> {
        let w = window.len();
        if w < 2 || window.end > energies.len() {
            return Err(Error::other(format!(
                "perturbation '{name}': the window {label} holds {w} states; the gauge potential needs at least 2"
            )));
        }
        let spacing = (energies[window.end - 1] - energies[window.start]) / (w - 1) as f64;
        if spacing.is_nan() || spacing <= 0.0 {
            return Err(Error::other(format!(
                "perturbation '{name}': every level of the window {label} is degenerate; no level spacing to set the cutoff"
            )));
        }
        let (mu, rule) = cutoff_of(opts.cutoff, spacing, sites, dim);
        let partners = match opts.partners {
            Partners::All => 0..energies.len(),
            Partners::Window => window.clone(),
        };
        Ok(GaugeAccumulator {
            name: name.to_string(),
            label: label.to_string(),
            energies: energies.to_vec(),
            window,
            partners,
            partner_kind: opts.partners,
            spacing,
            mu,
            rule,
            tol: DEGENERATE_TOLERANCE * spacing,
            chi: vec![0.0; w],
            fid: vec![0.0; w],
            degenerate: 0,
        })
    }

    /// The state range the projector must stream (the partner states).
    pub fn partner_range(&self) -> Range<usize> {
        self.partners.clone()
    }

    /// The cutoff μ.
    pub fn cutoff(&self) -> f64 {
        self.mu
    }

    /// Adds the pair `(n, m)`, `n ≠ m`, with `|Vₙₘ|² = v2` to whichever of the two lies in
    /// the window.
    fn add_pair(&mut self, n: usize, m: usize, v2: f64) {
        let om = self.energies[n] - self.energies[m];
        let o2 = om * om;
        let chi = o2 * v2 / (o2 + self.mu * self.mu).powi(2);
        let degenerate = om.abs() <= self.tol;
        let f = if degenerate { 0.0 } else { v2 / o2 };
        for k in [n, m] {
            if self.window.contains(&k) {
                let i = k - self.window.start;
                self.chi[i] += chi;
                self.fid[i] += f;
                if degenerate {
                    self.degenerate += 1;
                }
            }
        }
    }

    /// Adds one block pair of the partner range (`elements` of the perturbation).
    pub fn add_block(&mut self, blk: &BlockPair, elements: &Matrix) -> Result<()> {
        let (r, c) = (blk.rows.clone(), blk.cols.clone());
        if r.start < self.partners.start
            || c.end > self.partners.end
            || elements.nrows() != r.len()
            || elements.ncols() != c.len()
        {
            return Err(Error::other(format!(
                "perturbation '{}': block {}..{} × {}..{} does not fit the partner states {}..{}",
                self.name, r.start, r.end, c.start, c.end, self.partners.start, self.partners.end
            )));
        }
        let diag_block = blk.is_diagonal();
        let touches = |a: &Range<usize>| a.start < self.window.end && self.window.start < a.end;
        if !touches(&r) && !touches(&c) {
            return Ok(());
        }
        for (j, m) in c.clone().enumerate() {
            for (i, n) in r.clone().enumerate() {
                if diag_block && n >= m {
                    continue;
                }
                self.add_pair(n, m, elements.get_c(i, j).norm_sqr());
            }
        }
        Ok(())
    }

    /// Finishes into the result.
    pub fn finish(self) -> Result<GaugeResult> {
        let w = self.window.len();
        let block = default_block_length(w);
        let chi = typical(&self.chi, block);
        let fidelity = typical(&self.fid, block);
        if chi.positive == 0 {
            return Err(Error::other(format!(
                "perturbation '{}': every χₙ in the window {} vanishes (V has no off-diagonal elements between the states: a selection rule or V commutes with H)",
                self.name, self.label
            )));
        }
        let per_state = (0..w)
            .map(|i| GaugeState {
                index: self.window.start + i,
                energy: self.energies[self.window.start + i],
                chi: self.chi[i],
                fidelity: self.fid[i],
            })
            .collect();
        Ok(GaugeResult {
            name: self.name,
            window: self.label,
            window_states: [self.window.start, self.window.end - 1],
            states: w,
            partners: self.partner_kind,
            partner_states: [self.partners.start, self.partners.end - 1],
            mean_level_spacing: self.spacing,
            cutoff: self.mu,
            cutoff_spacings: self.mu / self.spacing,
            cutoff_rule: self.rule,
            degenerate_pairs: self.degenerate,
            degenerate_tolerance: self.tol,
            chi,
            fidelity,
            bootstrap_block_states: block,
            bootstrap_resamples: RESAMPLES,
            log_chi_histogram: log_histogram(&self.chi, HISTOGRAM_BINS),
            per_state,
        })
    }
}

/// The cutoff and its rule in words (module docs).
fn cutoff_of(c: Option<Cutoff>, spacing: f64, sites: Option<usize>, dim: usize) -> (f64, String) {
    match c {
        Some(Cutoff::Absolute(mu)) => (mu, format!("given: mu = {mu:e}")),
        Some(Cutoff::Spacings(k)) => (
            k * spacing,
            format!("given: mu = {k} mean level spacings of the window"),
        ),
        None => match sites {
            Some(l) if l > 0 => (
                l as f64 * spacing,
                format!("default: mu = L mean level spacings of the window, L = {l} sites (attribute size)"),
            ),
            _ => {
                let l = (dim.max(2) as f64).log2();
                (
                    l * spacing,
                    format!(
                        "default: mu = log2(D) = {l:.3} mean level spacings of the window (no size attribute; D = {dim})"
                    ),
                )
            }
        },
    }
}

/// Geometric mean, median and their block-bootstrap errors of positive values.
pub fn typical(x: &[f64], block: usize) -> Typical {
    let logs: Vec<f64> = x.iter().filter(|v| **v > 0.0).map(|v| v.ln()).collect();
    let n = logs.len();
    let mean_log = logs.iter().sum::<f64>() / n.max(1) as f64;
    let var = logs.iter().map(|l| (l - mean_log).powi(2)).sum::<f64>() / (n.max(2) - 1) as f64;
    let gm = |s: &[f64]| (s.iter().sum::<f64>() / s.len() as f64).exp();
    let (geo, geo_err) = block_bootstrap(&logs, gm, block, RESAMPLES, DEFAULT_SEED);
    let med = |s: &[f64]| median(s).exp();
    let (median_v, median_err) = block_bootstrap(&logs, med, block, RESAMPLES, DEFAULT_SEED);
    Typical {
        geometric_mean: if n > 0 { geo } else { f64::NAN },
        geometric_mean_stderr: geo_err,
        median: if n > 0 { median_v } else { f64::NAN },
        median_stderr: median_err,
        mean: x.iter().sum::<f64>() / x.len().max(1) as f64,
        mean_log,
        std_log: var.sqrt(),
        positive: n,
    }
}

/// The median (mean of the two middle values for an even count).
pub fn median(s: &[f64]) -> f64 {
    let mut v = s.to_vec();
    v.sort_by(f64::total_cmp);
    let n = v.len();
    match n {
        0 => f64::NAN,
        _ if n % 2 == 1 => v[n / 2],
        _ => 0.5 * (v[n / 2 - 1] + v[n / 2]),
    }
}

/// Histogram of `log₁₀ x` over the positive values, `bins` equal-width bins spanning them.
pub fn log_histogram(x: &[f64], bins: usize) -> Vec<LogBin> {
    let l: Vec<f64> = x.iter().filter(|v| **v > 0.0).map(|v| v.log10()).collect();
    if l.is_empty() || bins == 0 {
        return Vec::new();
    }
    let lo = l.iter().copied().fold(f64::INFINITY, f64::min);
    let mut hi = l.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if hi <= lo {
        hi = lo + 1.0;
    }
    let width = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    for v in &l {
        let k = (((v - lo) / width) as usize).min(bins - 1);
        counts[k] += 1;
    }
    counts
        .iter()
        .enumerate()
        .map(|(k, &c)| LogBin {
            lo: lo + k as f64 * width,
            hi: lo + (k + 1) as f64 * width,
            count: c,
            density: c as f64 / (l.len() as f64 * width),
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::Mat;

    #[test]
    fn cutoff_parses_both_forms() {
        // parsing rules of this module (common practice, no source)
        assert_eq!(Cutoff::parse("0.5").unwrap(), Cutoff::Absolute(0.5));
        assert_eq!(Cutoff::parse("12*spacing").unwrap(), Cutoff::Spacings(12.0));
        assert!(Cutoff::parse("-1").is_err());
        assert!(Cutoff::parse("abc").is_err());
    }

    #[test]
    fn two_level_system_matches_closed_form() {
        // two levels, V_01 = v: χ = ω² v²/(ω²+μ²)², F = v²/ω² (exact, linear algebra)
        let e = [0.0, 2.0];
        let opts = GaugeOptions {
            cutoff: Some(Cutoff::Absolute(0.5)),
            partners: Partners::All,
        };
        let mut acc = GaugeAccumulator::new("v", &e, 0..2, "all", &opts, None, 2).unwrap();
        let m = Matrix::Real(Mat::from_fn(2, 2, |i, j| if i == j { 0.0 } else { 0.3 }));
        acc.add_block(
            &BlockPair {
                rows: 0..2,
                cols: 0..2,
                elements: vec![m.clone()],
            },
            &m,
        )
        .unwrap();
        let r = acc.finish().unwrap();
        let want = 4.0 * 0.09 / (4.0f64 + 0.25).powi(2);
        for s in &r.per_state {
            assert!((s.chi - want).abs() < 1e-15);
            assert!((s.fidelity - 0.09 / 4.0).abs() < 1e-15);
        }
    }

    #[test]
    fn median_and_histogram() {
        // elementary statistics (common practice, no source)
        assert_eq!(median(&[3.0, 1.0, 2.0]), 2.0);
        assert_eq!(median(&[4.0, 1.0, 2.0, 3.0]), 2.5);
        let h = log_histogram(&[1.0, 10.0, 100.0, 1000.0], 3);
        assert_eq!(h.iter().map(|b| b.count).sum::<usize>(), 4);
    }
}
