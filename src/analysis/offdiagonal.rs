//! Off-diagonal matrix elements `Aₙₘ` (n < m) in a window of states: the low-frequency
//! variance, Gaussianity, the diagonal/off-diagonal ratio and the `|f(Ē, ω)|²` envelope.
//!
//! ETH (Srednicki 1999) writes `Aₙₘ = e^{−S(Ē)/2} f(Ē, ω) Rₙₘ` for `n ≠ m`, with
//! `Ē = (Eₙ + Eₘ)/2`, `ω = Eₘ − Eₙ` and `Rₙₘ` random with zero mean and unit variance.
//! Computed over the pairs `n < m` of the window:
//!
//! - `pairs`, `low_omega_variance = ⟨|Aₙₘ|²⟩` over pairs with `|ω| < omega_max`;
//! - `gaussian_ratio Γ = ⟨|Aₙₘ|²⟩ / ⟨|Aₙₘ|⟩²` over the same pairs: `π/2` for real Gaussian
//!   elements (orthogonal class), `4/π` for circular complex Gaussian ones (unitary class);
//! - `gaussian_ratio_rescaled`: Γ of the rescaled elements `e^{S(Ē)/2}|Aₙₘ|` (estimates of
//!   `|f(Ē, ω)|`): the density of states changes across the window, and a mixture of
//!   Gaussians of different widths has Γ above the Gaussian value; rescaling removes that
//!   part of the mixture. The verdict's Gaussianity criterion uses it;
//! - `excess_kurtosis = ⟨|Aₙₘ|⁴⟩/⟨|Aₙₘ|²⟩² − 3` (orthogonal) or `− 2` (unitary): 0 for
//!   Gaussian elements of the class; like Γ it depends on `|Aₙₘ|` only, so a phase per
//!   eigenvector (or complex storage of real data) leaves it unchanged;
//! - `diag_offdiag_ratio = residual_variance / low_omega_variance`, with the residual
//!   variance of the window's `Aₙₙ` about a local smooth fit ([`crate::analysis::residual`]):
//!   2 in the orthogonal and 1 in the unitary class (Mehta 2004; D'Alessio et al. 2016);
//!   `fluct_variance = ½⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩` is reported beside it;
//! - every standard error of these figures and of the envelope bins is a delete-a-group
//!   jackknife over the window's eigenstates ([`crate::analysis::residual`]: a pair is left
//!   out with either of its states; the ratio leaves the same states out of both parts);
//! - the reference values come from the symmetry class ([`OffdiagonalOptions::class`]),
//!   never from the element type of the data;
//! - `envelope`: mean `|Aₙₘ|²` in bins of `ω` over ALL window pairs, in linear and in
//!   logarithmic bins, with `|f(Ē, ω)|² = e^{S(Ē)} |Aₙₘ|²` averaged beside it
//!   (`S = ln ρ`, the Gaussian-smoothed density of states of [`thermo`]);
//! - the random-matrix (plateau) scale: on the logarithmic bins with at least
//!   [`PLATEAU_MIN_COUNT`] pairs, the reference is the lowest such bin; the scale is the upper
//!   edge of the last bin of the unbroken run, starting there, whose mean agrees with the
//!   reference within 2σ (σ² the sum of both squared standard errors).
//!
//! **Default `omega_max`** = 10 mean level spacings of the window,
//! `10·(E_last − E_first)/(W − 1)`: the random-matrix regime of ETH extends below the
//! Thouless energy, which in small systems spans at least tens of level spacings, so ten
//! spacings sits well inside it while leaving about `10·W` pairs for the statistics.
//!
//! The analysis streams: an [`Accumulator`] takes projector blocks as they arrive and is
//! finished into an [`OffdiagonalResult`]; nothing of size `W²` is kept.

use crate::analysis::diagonal::fluctuations;
use crate::analysis::residual::{self, group_of, PairTable};
use crate::analysis::scaling::{eth_ratio, gaussian_gamma};
use crate::analysis::thermo::{self, EntropyTable};
use crate::data::{ClassInfo, Field, Matrix, SymmetryClass};
use crate::error::{Error, Result};
use crate::project::BlockPair;
use serde::Serialize;
use std::ops::Range;

/// Mean level spacings in the default `omega_max`.
pub const DEFAULT_OMEGA_SPACINGS: f64 = 10.0;
/// Number of linear ω bins of the envelope.
pub const LINEAR_BINS: usize = 40;
/// Number of logarithmic ω bins of the envelope.
pub const LOG_BINS: usize = 30;
/// Fewest pairs in a logarithmic bin for it to count in the plateau search.
pub const PLATEAU_MIN_COUNT: usize = 10;

/// One ω bin of the envelope.
#[derive(Debug, Clone, Serialize)]
pub struct EnvelopeBin {
    /// Lower edge.
    pub omega_lo: f64,
    /// Upper edge.
    pub omega_hi: f64,
    /// Mean ω of the pairs in the bin.
    pub omega: f64,
    /// Mean `|Aₙₘ|²`.
    pub mean_sq: f64,
    /// Standard error of `mean_sq` (jackknife over states; the independent-pair error when
    /// the window has too few states for groups).
    pub mean_sq_stderr: f64,
    /// Mean `e^{S(Ē)} |Aₙₘ|²`, the estimate of `|f(Ē, ω)|²`.
    pub f_sq: f64,
    /// Standard error of `f_sq`.
    pub f_sq_stderr: f64,
    /// Number of pairs.
    pub count: usize,
}

/// The random-matrix scale read off the logarithmic envelope.
#[derive(Debug, Clone, Serialize)]
pub struct Plateau {
    /// Largest ω below which the envelope is flat within 2σ of its lowest bin.
    pub omega: f64,
    /// Mean `|Aₙₘ|²` of the reference (lowest counted) bin.
    pub value: f64,
    /// The rule used.
    pub rule: String,
}

/// Off-diagonal ETH figures of one observable in one sector (JSON keys of DESIGN.md).
#[derive(Debug, Clone, Serialize)]
pub struct OffdiagonalResult {
    /// Observable name.
    pub name: String,
    /// The window as given.
    pub window: String,
    /// Index range of the window.
    pub window_states: [usize; 2],
    /// Number of states in the window.
    pub states: usize,
    /// Element type of the matrix elements (`real` / `complex`).
    pub field: Field,
    /// The symmetry class of the references (`orthogonal` / `unitary`).
    pub symmetry_class: SymmetryClass,
    /// How the class was decided.
    pub class_source: String,
    /// Mean level spacing in the window.
    pub mean_level_spacing: f64,
    /// Frequency cut of the low-ω statistics.
    pub omega_max: f64,
    /// How omega_max was chosen.
    pub omega_max_rule: String,
    /// Pairs `n < m` in the window with `|Eₘ − Eₙ| < omega_max`.
    pub pairs: usize,
    /// Mean `|Aₙₘ|²` over those pairs.
    pub low_omega_variance: f64,
    /// Its standard error.
    pub low_omega_variance_stderr: f64,
    /// `Γ = ⟨|Aₙₘ|²⟩ / ⟨|Aₙₘ|⟩²` over those pairs.
    pub gaussian_ratio: f64,
    /// Standard error of Γ (jackknife over states).
    pub gaussian_ratio_stderr: f64,
    /// Γ of Gaussian elements: π/2 (orthogonal) or 4/π (unitary).
    pub gaussian_ratio_expected: f64,
    /// Γ of the rescaled elements `e^{S(Ē)/2}|Aₙₘ|` at low ω.
    pub gaussian_ratio_rescaled: f64,
    /// Its jackknife standard error.
    pub gaussian_ratio_rescaled_stderr: f64,
    /// Excess kurtosis of `|Aₙₘ|` at low ω relative to the Gaussian elements of the class.
    pub excess_kurtosis: f64,
    /// `½⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩` in the window.
    pub fluct_variance: f64,
    /// Variance of the window's `Aₙₙ` about a local smooth fit.
    pub residual_variance: f64,
    /// Its jackknife standard error.
    pub residual_variance_stderr: f64,
    /// `residual_variance / low_omega_variance`.
    pub diag_offdiag_ratio: f64,
    /// Its jackknife standard error (the same states left out of both parts).
    pub diag_offdiag_ratio_stderr: f64,
    /// 2 (orthogonal) or 1 (unitary).
    pub diag_offdiag_ratio_expected: f64,
    /// Groups of consecutive states of the jackknife.
    pub jackknife_groups: usize,
    /// States per jackknife group (the block length).
    pub jackknife_block_states: usize,
    /// Envelope over all window pairs, linear ω bins.
    pub envelope: Vec<EnvelopeBin>,
    /// Envelope over all window pairs, logarithmic ω bins.
    pub envelope_log: Vec<EnvelopeBin>,
    /// Pairs below the lowest logarithmic bin edge (degenerate or nearly so).
    pub envelope_log_below: usize,
    /// Random-matrix scale, when one can be read off.
    pub plateau: Option<Plateau>,
    /// Gaussian width σ of the density of states used for `e^{S}`.
    pub dos_width: f64,
    /// Source of `S(E)` in the rescaling `e^S`: `full` (the stored states), `kpm` or
    /// `stored` ([`crate::analysis::thermo::ThermoSource`]).
    pub thermo_source: thermo::ThermoSource,
}

/// Settings of the off-diagonal analysis.
#[derive(Debug, Clone, Default, Serialize)]
pub struct OffdiagonalOptions {
    /// Frequency cut; default `DEFAULT_OMEGA_SPACINGS` mean level spacings.
    pub omega_max: Option<f64>,
    /// The symmetry class of the references; `None`: from the element type of the
    /// projected elements (for library callers that know nothing better).
    pub class: Option<ClassInfo>,
}

impl OffdiagonalOptions {
    /// The options with a frequency cut, which must be positive and finite when given.
    pub fn new(omega_max: Option<f64>) -> Result<Self> {
        match omega_max {
            Some(w) if !(w.is_finite() && w > 0.0) => Err(Error::usage(format!(
                "--omega-max {w}: expected a positive number"
            ))),
            _ => Ok(OffdiagonalOptions {
                omega_max,
                class: None,
            }),
        }
    }
}

#[derive(Debug, Clone)]
struct Bin {
    sw: f64,
    s2: f64,
    s4: f64,
    sf: f64,
    sff: f64,
    c: usize,
    /// (count, Σ|A|², Σ e^S|A|²) by the groups of the pair's states.
    jack: PairTable<3>,
}

impl Bin {
    fn new(groups: usize) -> Self {
        Bin {
            sw: 0.0,
            s2: 0.0,
            s4: 0.0,
            sf: 0.0,
            sff: 0.0,
            c: 0,
            jack: PairTable::new(groups),
        }
    }

    fn add(&mut self, w: f64, a2: f64, f2: f64, (ga, gb): (usize, usize)) {
        self.sw += w;
        self.s2 += a2;
        self.s4 += a2 * a2;
        self.sf += f2;
        self.sff += f2 * f2;
        self.c += 1;
        self.jack.add(ga, gb, [1.0, a2, f2]);
    }
}

fn mean_err(s: f64, ss: f64, c: usize) -> (f64, f64) {
    if c == 0 {
        return (f64::NAN, f64::NAN);
    }
    let cf = c as f64;
    let m = s / cf;
    let e = if c > 1 {
        ((ss - cf * m * m).max(0.0) / (cf - 1.0) / cf).sqrt()
    } else {
        f64::NAN
    };
    (m, e)
}

/// Streaming accumulator of the off-diagonal figures of one observable.
#[derive(Debug, Clone)]
pub struct Accumulator {
    name: String,
    window: Range<usize>,
    window_label: String,
    energies: Vec<f64>,
    omega_max: f64,
    omega_rule: String,
    spacing: f64,
    entropy: EntropyTable,
    thermo_source: thermo::ThermoSource,
    field: Option<Field>,
    class: Option<ClassInfo>,
    diag: Vec<f64>,
    groups: usize,
    // low-ω moments (count, Σ|A|, Σ|A|², Σ|A|⁴, Σ|f|, Σf²) by the groups of the pair's
    // states, with f² = e^S(Ē)|A|²
    low: PairTable<6>,
    lin: Vec<Bin>,
    lin_width: f64,
    log: Vec<Bin>,
    log_lo: f64,
    log_step: f64,
    log_below: usize,
}

impl Accumulator {
    /// Uses `S(E)` of another source (`predictor`: KPM or a stored spectrum) for the
    /// rescaling `e^{S(Ē)}`, tabulated over the window with resolution `sigma`.
    pub fn with_entropy(mut self, predictor: &dyn thermo::Predictor, sigma: f64) -> Accumulator {
        let (lo, hi) = (self.entropy.lo, self.entropy.hi);
        self.entropy = EntropyTable::from_fn(|e| predictor.entropy(e), lo, hi, sigma, 257);
        self.thermo_source = predictor.source();
        self
    }

    /// New accumulator for the window `window` of the ascending spectrum `energies`
    /// (all available states: the density of states uses them all).
    pub fn new(
        name: &str,
        energies: &[f64],
        window: Range<usize>,
        window_label: &str,
        opts: &OffdiagonalOptions,
    ) -> Result<Accumulator> {
        let n = energies.len();
        if window.end > n || window.len() < 2 {
            return Err(Error::other(format!(
                "observable '{name}': the window {window_label} holds {} state(s); at least 2 are needed",
                window.len().min(n)
            )));
        }
        let ew = &energies[window.clone()];
        let span = ew[ew.len() - 1] - ew[0];
        let spacing = span / (ew.len() - 1) as f64;
        let (omega_max, omega_rule) = match OffdiagonalOptions::new(opts.omega_max)?.omega_max {
            Some(w) => (w, "given (--omega-max)".to_string()),
            None => (
                DEFAULT_OMEGA_SPACINGS * spacing,
                format!(
                    "default: {DEFAULT_OMEGA_SPACINGS} mean level spacings of the window ({spacing:.4e})"
                ),
            ),
        };
        let sigma = thermo::default_dos_width(energies).max(f64::MIN_POSITIVE);
        let entropy = EntropyTable::new(energies, ew[0], ew[ew.len() - 1], sigma, 257);
        let omega_top = span.max(f64::MIN_POSITIVE);
        let log_lo = (0.1 * spacing).max(omega_top * 1e-9);
        let groups = residual::groups(window.len());
        let log_step = if omega_top > log_lo {
            (omega_top / log_lo).ln() / LOG_BINS as f64
        } else {
            1.0
        };
        Ok(Accumulator {
            name: name.to_string(),
            window,
            window_label: window_label.to_string(),
            energies: energies.to_vec(),
            omega_max,
            omega_rule,
            spacing,
            entropy,
            thermo_source: thermo::ThermoSource::Full,
            field: None,
            class: opts.class.clone(),
            diag: Vec::new(),
            groups,
            low: PairTable::new(groups),
            lin: vec![Bin::new(groups); LINEAR_BINS],
            lin_width: omega_top / LINEAR_BINS as f64,
            log: vec![Bin::new(groups); LOG_BINS],
            log_lo,
            log_step,
            log_below: 0,
        })
    }

    /// The frequency cut in use.
    pub fn omega_max(&self) -> f64 {
        self.omega_max
    }

    fn add_pair(&mut self, n: usize, m: usize, a2: f64) {
        let (en, em) = (self.energies[n], self.energies[m]);
        let w = (em - en).abs();
        let (w0, len) = (self.window.start, self.window.len());
        let gs = (
            group_of(n - w0, len, self.groups),
            group_of(m - w0, len, self.groups),
        );
        let f2 = self.entropy.at(0.5 * (en + em)).exp() * a2;
        if w < self.omega_max {
            self.low
                .add(gs.0, gs.1, [1.0, a2.sqrt(), a2, a2 * a2, f2.sqrt(), f2]);
        }
        let k = if self.lin_width > 0.0 {
            ((w / self.lin_width) as usize).min(LINEAR_BINS - 1)
        } else {
            0
        };
        self.lin[k].add(w, a2, f2, gs);
        if w < self.log_lo {
            self.log_below += 1;
        } else {
            let k = (((w / self.log_lo).ln() / self.log_step) as usize).min(LOG_BINS - 1);
            self.log[k].add(w, a2, f2, gs);
        }
    }

    /// Adds one projector block (`elements` of this observable for the state ranges of `blk`).
    pub fn add_block(&mut self, blk: &BlockPair, elements: &Matrix) -> Result<()> {
        let (r, c) = (blk.rows.clone(), blk.cols.clone());
        if r.start < self.window.start
            || c.end > self.window.end
            || elements.nrows() != r.len()
            || elements.ncols() != c.len()
        {
            return Err(Error::other(format!(
                "observable '{}': block {}..{} × {}..{} does not fit the window {}..{}",
                self.name, r.start, r.end, c.start, c.end, self.window.start, self.window.end
            )));
        }
        self.field = Some(elements.field());
        let diag_block = blk.is_diagonal();
        for (j, m) in c.clone().enumerate() {
            for (i, n) in r.clone().enumerate() {
                if diag_block && n >= m {
                    if n == m {
                        self.diag.push(elements.get_c(i, j).re);
                    }
                    continue;
                }
                let z = elements.get_c(i, j);
                self.add_pair(n, m, z.norm_sqr());
            }
        }
        Ok(())
    }

    /// Finishes into the result.
    pub fn finish(self) -> Result<OffdiagonalResult> {
        let field = self.field.unwrap_or(Field::Real);
        let class = self
            .class
            .clone()
            .unwrap_or_else(|| ClassInfo::of_field(field));
        let low = self.low.total();
        if low[0] == 0.0 {
            return Err(Error::other(format!(
                "observable '{}': no pair of states in the window {} lies closer than omega_max = {:.4e}; raise --omega-max",
                self.name, self.window_label, self.omega_max
            )));
        }
        // diagonal elements arrive block by block in ascending order of the diagonal blocks
        let (_, _, fluct_variance, _) = fluctuations(&self.diag);
        let rf = residual::residual_fit(&self.energies[self.window.clone()], &self.diag);
        let m2_of = |s: &[f64; 6]| s[2] / s[0];
        let gamma_of = |s: &[f64; 6]| (s[2] / s[0]) / (s[1] / s[0]).powi(2);
        let gamma_f_of = |s: &[f64; 6]| (s[5] / s[0]) / (s[4] / s[0]).powi(2);
        let kurt0 = match class.symmetry_class {
            SymmetryClass::Orthogonal => 3.0,
            SymmetryClass::Unitary => 2.0,
        };
        let m2 = m2_of(&low);
        let gamma = gamma_of(&low);
        let gamma_f = gamma_f_of(&low);
        let kurt = (low[3] / low[0]) / (m2 * m2) - kurt0;
        let ratio = rf.residual_variance / m2;
        let g = self.groups;
        let (low_var_err, gamma_err, gamma_f_err, ratio_err) = if g >= 2 {
            let ratio_k: Vec<f64> = (0..g)
                .map(|k| rf.variance_without(k) / m2_of(&self.low.without(k)))
                .collect();
            (
                self.low.stderr(m2_of),
                self.low.stderr(gamma_of),
                self.low.stderr(gamma_f_of),
                residual::jackknife_stderr(&ratio_k),
            )
        } else {
            (f64::NAN, f64::NAN, f64::NAN, f64::NAN)
        };
        let bins = |v: &[Bin], edge: &dyn Fn(usize) -> f64| -> Vec<EnvelopeBin> {
            v.iter()
                .enumerate()
                .filter(|(_, b)| b.c > 0)
                .map(|(k, b)| {
                    let (mean_sq, naive_sq) = mean_err(b.s2, b.s4, b.c);
                    let (f_sq, naive_f) = mean_err(b.sf, b.sff, b.c);
                    let jack = |i: usize| b.jack.stderr(|s| s[i] / s[0]);
                    let pick = |j: f64, naive: f64| if j.is_finite() { j } else { naive };
                    EnvelopeBin {
                        omega_lo: edge(k),
                        omega_hi: edge(k + 1),
                        omega: b.sw / b.c as f64,
                        mean_sq,
                        mean_sq_stderr: pick(jack(1), naive_sq),
                        f_sq,
                        f_sq_stderr: pick(jack(2), naive_f),
                        count: b.c,
                    }
                })
                .collect()
        };
        let lw = self.lin_width;
        let envelope = bins(&self.lin, &|k| k as f64 * lw);
        let (llo, lstep) = (self.log_lo, self.log_step);
        let envelope_log = bins(&self.log, &|k| llo * (lstep * k as f64).exp());
        let plateau = plateau(&envelope_log);
        let sc = class.symmetry_class;
        Ok(OffdiagonalResult {
            name: self.name,
            window: self.window_label,
            window_states: [self.window.start, self.window.end],
            states: self.window.len(),
            field,
            symmetry_class: sc,
            class_source: class.class_source,
            mean_level_spacing: self.spacing,
            omega_max: self.omega_max,
            omega_max_rule: self.omega_rule,
            pairs: low[0] as usize,
            low_omega_variance: m2,
            low_omega_variance_stderr: low_var_err,
            gaussian_ratio: gamma,
            gaussian_ratio_stderr: gamma_err,
            gaussian_ratio_expected: gaussian_gamma(sc),
            gaussian_ratio_rescaled: gamma_f,
            gaussian_ratio_rescaled_stderr: gamma_f_err,
            excess_kurtosis: kurt,
            fluct_variance,
            residual_variance: rf.residual_variance,
            residual_variance_stderr: rf.residual_variance_stderr,
            diag_offdiag_ratio: ratio,
            diag_offdiag_ratio_stderr: ratio_err,
            diag_offdiag_ratio_expected: eth_ratio(sc),
            jackknife_groups: g,
            jackknife_block_states: rf.jackknife_block_states,
            envelope,
            envelope_log,
            envelope_log_below: self.log_below,
            plateau,
            dos_width: self.entropy.sigma,
            thermo_source: self.thermo_source,
        })
    }
}

/// The random-matrix scale of a logarithmic envelope (rule in the module docs).
pub fn plateau(bins: &[EnvelopeBin]) -> Option<Plateau> {
    let counted: Vec<&EnvelopeBin> = bins
        .iter()
        .filter(|b| b.count >= PLATEAU_MIN_COUNT && b.mean_sq_stderr.is_finite())
        .collect();
    let first = counted.first()?;
    let mut omega = first.omega_hi;
    for b in counted.iter().skip(1) {
        let s = (b.mean_sq_stderr.powi(2) + first.mean_sq_stderr.powi(2)).sqrt();
        if (b.mean_sq - first.mean_sq).abs() <= 2.0 * s {
            omega = b.omega_hi;
        } else {
            break;
        }
    }
    Some(Plateau {
        omega,
        value: first.mean_sq,
        rule: format!(
            "upper edge of the last logarithmic bin (>= {PLATEAU_MIN_COUNT} pairs) of the unbroken run from the lowest one whose mean |A_nm|^2 agrees with the lowest bin within 2 sigma"
        ),
    })
}

/// Off-diagonal analysis of a whole window matrix `a` (`W × W`, entry `(i, j)` =
/// `⟨window.start+i|A|window.start+j⟩`), for callers that hold it in memory.
pub fn analyze_matrix(
    name: &str,
    energies: &[f64],
    window: Range<usize>,
    window_label: &str,
    a: &Matrix,
    opts: &OffdiagonalOptions,
) -> Result<OffdiagonalResult> {
    let mut acc = Accumulator::new(name, energies, window.clone(), window_label, opts)?;
    let blk = BlockPair {
        rows: window.clone(),
        cols: window,
        elements: Vec::new(),
    };
    acc.add_block(&blk, a)?;
    acc.finish()
}
