//! Off-diagonal matrix elements `Aₙₘ` (n < m) in a window of states: the low-frequency
//! variance, Gaussianity, the diagonal/off-diagonal ratio and the `|f(Ē, ω)|²` envelope.
//!
//! ETH (Srednicki 1999) writes `Aₙₘ = e^{−S(Ē)/2} f(Ē, ω) Rₙₘ` for `n ≠ m`, with
//! `Ē = (Eₙ + Eₘ)/2`, `ω = Eₘ − Eₙ` and `Rₙₘ` random with zero mean and unit variance.
//! Computed over the pairs `n < m` of the window:
//!
//! - `pairs`, `low_omega_variance = ⟨|Aₙₘ|²⟩` over pairs with `|ω| < omega_max`;
//! - `gaussian_ratio Γ = ⟨|Aₙₘ|²⟩ / ⟨|Aₙₘ|⟩²` over the same pairs: `π/2` for real Gaussian
//!   elements, `4/π` for circular complex Gaussian ones; its standard error by the delta
//!   method from the sample moments of `|A|` and `|A|²`;
//! - `excess_kurtosis = ⟨x⁴⟩_c/⟨x²⟩_c² − 3` of `x = Re Aₙₘ` (real elements) or of the pooled
//!   real and imaginary parts (complex elements): 0 for Gaussian elements;
//! - `diag_offdiag_ratio = fluct_variance / low_omega_variance`, with `fluct_variance =
//!   ½⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩` of the same window ([`crate::analysis::diagonal::fluctuations`]):
//!   2 for real (time-reversal symmetric) and 1 for complex (GUE-like) ETH systems
//!   (Mehta 2004; D'Alessio et al. 2016);
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
use crate::analysis::thermo::{self, EntropyTable};
use crate::data::{Field, Matrix};
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
    /// Standard error of `mean_sq`.
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
    /// Standard error of Γ (delta method).
    pub gaussian_ratio_stderr: f64,
    /// Γ of Gaussian elements: π/2 (real) or 4/π (complex).
    pub gaussian_ratio_expected: f64,
    /// Excess kurtosis of the low-ω elements (real part; pooled real and imaginary parts when complex).
    pub excess_kurtosis: f64,
    /// `½⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩` in the window.
    pub fluct_variance: f64,
    /// `fluct_variance / low_omega_variance`.
    pub diag_offdiag_ratio: f64,
    /// Its standard error (errors of both parts combined in quadrature).
    pub diag_offdiag_ratio_stderr: f64,
    /// 2 (real, time-reversal symmetric) or 1 (complex).
    pub diag_offdiag_ratio_expected: f64,
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
}

/// Settings of the off-diagonal analysis.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct OffdiagonalOptions {
    /// Frequency cut; default `DEFAULT_OMEGA_SPACINGS` mean level spacings.
    pub omega_max: Option<f64>,
}

impl OffdiagonalOptions {
    /// The options with a frequency cut, which must be positive and finite when given.
    pub fn new(omega_max: Option<f64>) -> Result<Self> {
        match omega_max {
            Some(w) if !(w.is_finite() && w > 0.0) => Err(Error::usage(format!(
                "--omega-max {w}: expected a positive number"
            ))),
            _ => Ok(OffdiagonalOptions { omega_max }),
        }
    }
}

#[derive(Debug, Clone, Default)]
struct Bin {
    sw: f64,
    s2: f64,
    s4: f64,
    sf: f64,
    sff: f64,
    c: usize,
}

impl Bin {
    fn add(&mut self, w: f64, a2: f64, f2: f64) {
        self.sw += w;
        self.s2 += a2;
        self.s4 += a2 * a2;
        self.sf += f2;
        self.sff += f2 * f2;
        self.c += 1;
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
    field: Option<Field>,
    diag: Vec<f64>,
    // low-ω moments
    n_low: usize,
    s1: f64,
    s2: f64,
    s3: f64,
    s4: f64,
    // moments of the real (and imaginary) parts
    xn: usize,
    x1: f64,
    x2: f64,
    x3: f64,
    x4: f64,
    lin: Vec<Bin>,
    lin_width: f64,
    log: Vec<Bin>,
    log_lo: f64,
    log_step: f64,
    log_below: usize,
}

impl Accumulator {
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
            field: None,
            diag: Vec::new(),
            n_low: 0,
            s1: 0.0,
            s2: 0.0,
            s3: 0.0,
            s4: 0.0,
            xn: 0,
            x1: 0.0,
            x2: 0.0,
            x3: 0.0,
            x4: 0.0,
            lin: vec![Bin::default(); LINEAR_BINS],
            lin_width: omega_top / LINEAR_BINS as f64,
            log: vec![Bin::default(); LOG_BINS],
            log_lo,
            log_step,
            log_below: 0,
        })
    }

    /// The frequency cut in use.
    pub fn omega_max(&self) -> f64 {
        self.omega_max
    }

    fn add_x(&mut self, x: f64) {
        self.xn += 1;
        self.x1 += x;
        self.x2 += x * x;
        self.x3 += x * x * x;
        self.x4 += x * x * x * x;
    }

    fn add_pair(&mut self, n: usize, m: usize, re: f64, im: f64, complex: bool) {
        let (en, em) = (self.energies[n], self.energies[m]);
        let w = (em - en).abs();
        let a2 = re * re + im * im;
        if w < self.omega_max {
            let a = a2.sqrt();
            self.n_low += 1;
            self.s1 += a;
            self.s2 += a2;
            self.s3 += a2 * a;
            self.s4 += a2 * a2;
            self.add_x(re);
            if complex {
                self.add_x(im);
            }
        }
        let f2 = self.entropy.at(0.5 * (en + em)).exp() * a2;
        let k = if self.lin_width > 0.0 {
            ((w / self.lin_width) as usize).min(LINEAR_BINS - 1)
        } else {
            0
        };
        self.lin[k].add(w, a2, f2);
        if w < self.log_lo {
            self.log_below += 1;
        } else {
            let k = (((w / self.log_lo).ln() / self.log_step) as usize).min(LOG_BINS - 1);
            self.log[k].add(w, a2, f2);
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
        let complex = elements.field() == Field::Complex;
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
                self.add_pair(n, m, z.re, z.im, complex);
            }
        }
        Ok(())
    }

    /// Finishes into the result.
    pub fn finish(self) -> Result<OffdiagonalResult> {
        let field = self.field.unwrap_or(Field::Real);
        if self.n_low == 0 {
            return Err(Error::other(format!(
                "observable '{}': no pair of states in the window {} lies closer than omega_max = {:.4e}; raise --omega-max",
                self.name, self.window_label, self.omega_max
            )));
        }
        // diagonal elements arrive block by block in ascending order of the diagonal blocks
        let (_, _, fluct_variance, fv_err) = fluctuations(&self.diag);
        let nl = self.n_low as f64;
        let m1 = self.s1 / nl;
        let m2 = self.s2 / nl;
        let m3 = self.s3 / nl;
        let m4 = self.s4 / nl;
        let low_var_err = ((m4 - m2 * m2).max(0.0) / nl).sqrt();
        let gamma = m2 / (m1 * m1);
        // delta method for Γ = m2/m1²: gradient (1/m1², −2 m2/m1³)
        let (g1, g2) = (1.0 / (m1 * m1), -2.0 * m2 / (m1 * m1 * m1));
        let v22 = m4 - m2 * m2; // var |A|²
        let v11 = m2 - m1 * m1; // var |A|
        let v12 = m3 - m2 * m1; // cov(|A|², |A|)
        let gamma_err =
            ((g1 * g1 * v22 + 2.0 * g1 * g2 * v12 + g2 * g2 * v11).max(0.0) / nl).sqrt();
        let xn = self.xn as f64;
        let mu = self.x1 / xn;
        let c2 = self.x2 / xn - mu * mu;
        let c4 = self.x4 / xn - 4.0 * mu * self.x3 / xn + 6.0 * mu * mu * self.x2 / xn
            - 3.0 * mu.powi(4);
        let kurt = c4 / (c2 * c2) - 3.0;
        let ratio = fluct_variance / m2;
        let ratio_err =
            ratio * ((fv_err / fluct_variance).powi(2) + (low_var_err / m2).powi(2)).sqrt();
        let bins = |v: &[Bin], edge: &dyn Fn(usize) -> f64| -> Vec<EnvelopeBin> {
            v.iter()
                .enumerate()
                .filter(|(_, b)| b.c > 0)
                .map(|(k, b)| {
                    let (mean_sq, mean_sq_stderr) = mean_err(b.s2, b.s4, b.c);
                    let (f_sq, f_sq_stderr) = mean_err(b.sf, b.sff, b.c);
                    EnvelopeBin {
                        omega_lo: edge(k),
                        omega_hi: edge(k + 1),
                        omega: b.sw / b.c as f64,
                        mean_sq,
                        mean_sq_stderr,
                        f_sq,
                        f_sq_stderr,
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
        let real = field == Field::Real;
        Ok(OffdiagonalResult {
            name: self.name,
            window: self.window_label,
            window_states: [self.window.start, self.window.end],
            states: self.window.len(),
            field,
            mean_level_spacing: self.spacing,
            omega_max: self.omega_max,
            omega_max_rule: self.omega_rule,
            pairs: self.n_low,
            low_omega_variance: m2,
            low_omega_variance_stderr: low_var_err,
            gaussian_ratio: gamma,
            gaussian_ratio_stderr: gamma_err,
            gaussian_ratio_expected: if real {
                std::f64::consts::FRAC_PI_2
            } else {
                4.0 / std::f64::consts::PI
            },
            excess_kurtosis: kurt,
            fluct_variance,
            diag_offdiag_ratio: ratio,
            diag_offdiag_ratio_stderr: ratio_err,
            diag_offdiag_ratio_expected: if real { 2.0 } else { 1.0 },
            envelope,
            envelope_log,
            envelope_log_below: self.log_below,
            plateau,
            dos_width: self.entropy.sigma,
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
