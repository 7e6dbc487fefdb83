//! The verdict rule: from the level statistics, the fluctuation exponent, the canonical
//! deviation and the low-frequency ratio to *thermalizes*, *does not thermalize* or
//! *inconclusive*, with every threshold printed (see [`RULE`]).

use crate::data::SymmetryClass;
use serde::Serialize;

/// ⟨r̃⟩ of uncorrelated (Poisson) levels, `2 ln 2 − 1` (Atas, Bogomolny, Giraud, Roux,
/// PRL 110, 084101 (2013)).
pub const MEAN_R_POISSON: f64 = 0.386_294_361_119_890_6;
/// ⟨r̃⟩ of large GOE matrices, 0.5307(1) (Atas et al. 2013, from memory).
pub const MEAN_R_GOE: f64 = 0.5307;
/// ⟨r̃⟩ of large GUE matrices, 0.5996(1) (Atas et al. 2013, from memory).
pub const MEAN_R_GUE: f64 = 0.5996;

/// The overall answer.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The evidence is consistent with ETH and chaotic level statistics.
    Thermalizes,
    /// The evidence contradicts thermalization of this observable.
    DoesNotThermalize,
    /// Missing, too uncertain or contradictory evidence.
    Inconclusive,
    /// The sector is not a single symmetry sector (exact degeneracies or ⟨r̃⟩ far below
    /// Poisson): invalid input for a thermalization verdict, not evidence.
    #[serde(rename = "symmetries unresolved")]
    SymmetriesUnresolved,
}

impl std::fmt::Display for Verdict {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Verdict::Thermalizes => "thermalizes",
            Verdict::DoesNotThermalize => "does not thermalize",
            Verdict::Inconclusive => "inconclusive",
            Verdict::SymmetriesUnresolved => "symmetries unresolved",
        })
    }
}

/// One size's mean level-spacing ratio.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct RatioAtSize {
    /// Hilbert-space dimension of the sector (an integer in JSON).
    #[serde(serialize_with = "crate::data::dimension_as_integer")]
    pub dimension: f64,
    /// Mean ⟨r̃⟩ in the window.
    pub mean_r: f64,
    /// Its standard error.
    pub stderr: f64,
}

/// The exponent between two consecutive sizes: `α = −ln(y₂/y₁)/ln(D₂/D₁)`.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct LocalExponent {
    /// Geometric mean of the two dimensions.
    pub dimension: f64,
    /// The local exponent.
    pub alpha: f64,
    /// Its standard error (both points' relative errors in quadrature over `ln(D₂/D₁)`).
    pub stderr: f64,
}

/// A fitted exponent with its error and the value ETH predicts for it.
#[derive(Debug, Clone, Serialize)]
pub struct ExponentEvidence {
    /// Measured `α` of `figure ∝ D^(−α)`.
    pub alpha: f64,
    /// Its standard error.
    pub stderr: f64,
    /// The ETH expectation `α₀`.
    pub expected: f64,
    /// Degrees of freedom of the fit (points − 2).
    pub dof: usize,
    /// Local exponents between consecutive sizes (ascending dimension).
    pub local: Vec<LocalExponent>,
}

impl ExponentEvidence {
    /// Exponent of a variance figure (`fluct_variance`, `residual_variance`) `∝ D^(−α)`:
    /// ETH expects `α₀ = 1`.
    pub fn variance(alpha: f64, stderr: f64) -> Self {
        Self {
            alpha,
            stderr,
            expected: 1.0,
            dof: 0,
            local: Vec::new(),
        }
    }
    /// Exponent of a difference figure (`diff_mean_abs`) `∝ D^(−α)`: ETH expects `α₀ = 1/2`.
    pub fn difference(alpha: f64, stderr: f64) -> Self {
        Self {
            expected: 0.5,
            ..Self::variance(alpha, stderr)
        }
    }
}

/// Deviation of the smooth `A(E)` in the window from the canonical prediction.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct CanonicalDeviation {
    /// `|Ā − A_can|`, the eigenstate average in the window minus the canonical value at the
    /// same mean energy (largest size).
    pub deviation: f64,
    /// A natural scale of the observable to make it relative, e.g. the width
    /// `max − min` of its spectrum (2 for a Pauli operator) or its operator norm.
    pub scale: f64,
}

/// Low-frequency ratio `residual_variance / low_omega_variance` with its error.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct RatioEvidence {
    /// Measured ratio (largest size).
    pub ratio: f64,
    /// Its standard error (NaN if unknown: then only the wide band counts).
    pub stderr: f64,
}

/// The low-frequency Gaussianity ratio `Γ = ⟨|Aₙₘ|²⟩/⟨|Aₙₘ|⟩²` at one size.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct GammaAtSize {
    /// Hilbert-space dimension (an integer in JSON).
    #[serde(serialize_with = "crate::data::dimension_as_integer")]
    pub dimension: f64,
    /// Measured Γ.
    pub gamma: f64,
    /// Its resampled standard error.
    pub stderr: f64,
}

/// Everything [`decide`] looks at. Missing pieces are `None` / empty.
#[derive(Debug, Clone, Serialize)]
pub struct VerdictInputs {
    /// The symmetry class (selects GOE or GUE, Γ₀ = π/2 or 4/π, the ratio 2 or 1).
    pub symmetry: SymmetryClass,
    /// Why the sectors are not single symmetry sectors, when they are not (then the
    /// verdict is [`Verdict::SymmetriesUnresolved`] and nothing else is judged).
    pub unresolved: Option<String>,
    /// ⟨r̃⟩ per size (any order).
    pub mean_r: Vec<RatioAtSize>,
    /// Fluctuation exponent across sizes.
    pub fluctuation: Option<ExponentEvidence>,
    /// Deviation from the canonical prediction.
    pub canonical: Option<CanonicalDeviation>,
    /// Diagonal / low-ω off-diagonal variance ratio.
    pub low_omega_ratio: Option<RatioEvidence>,
    /// Γ per size (any order).
    pub gaussianity: Vec<GammaAtSize>,
}

/// Thresholds of the verdict rule (defaults as in [`RULE`]).
#[derive(Debug, Clone, Copy, Serialize)]
pub struct VerdictThresholds {
    /// Level criterion passes when `η ≥ level_chaotic` (η = position of ⟨r̃⟩ between the
    /// Poisson (0) and GOE/GUE (1) references at the largest size).
    pub level_chaotic: f64,
    /// Level criterion fails when `η ≤ level_poisson`.
    pub level_poisson: f64,
    /// ... or when η falls from the smallest to the largest size by more than this and
    /// by more than `sigmas` standard errors.
    pub level_drift: f64,
    /// Number of standard errors used in the comparisons.
    pub sigmas: f64,
    /// Fluctuation exponent too uncertain when `σ_α > exponent_max_rel_stderr · α₀`.
    pub exponent_max_rel_stderr: f64,
    /// Fluctuation criterion passes only when `α − sigmas·σ_α ≥ exponent_floor · α₀`
    /// (and `|α − α₀| ≤ sigmas·σ_α`).
    pub exponent_floor: f64,
    /// Fluctuation criterion fails when `α + sigmas·σ_α < exponent_fail · α₀`.
    pub exponent_fail: f64,
    /// Standard errors of the Gaussianity comparisons.
    pub gauss_sigmas: f64,
    /// Relative tolerance of Γ at the largest size (unclear beyond it and `gauss_sigmas`
    /// standard errors); twice it at any size fails.
    pub gauss_tolerance: f64,
    /// Canonical criterion passes when the relative deviation is `≤ canonical_pass`.
    pub canonical_pass: f64,
    /// Canonical criterion fails when the relative deviation is `> canonical_fail`.
    pub canonical_fail: f64,
    /// Ratio criterion passes when `|ρ − ρ₀| ≤ max(sigmas·σ_ρ, ratio_pass · ρ₀)`.
    pub ratio_pass: f64,
    /// Ratio criterion fails when `|ρ − ρ₀| > ratio_fail · ρ₀ + sigmas·σ_ρ`.
    pub ratio_fail: f64,
}

impl Default for VerdictThresholds {
    fn default() -> Self {
        Self {
            level_chaotic: 0.75,
            level_poisson: 0.25,
            level_drift: 0.1,
            sigmas: 2.0,
            exponent_max_rel_stderr: 0.25,
            exponent_floor: 0.5,
            exponent_fail: 0.5,
            gauss_sigmas: 3.0,
            gauss_tolerance: 0.05,
            canonical_pass: 0.05,
            canonical_fail: 0.2,
            ratio_pass: 0.25,
            ratio_fail: 0.5,
        }
    }
}

/// The verdict rule in words, with the default thresholds (printed with every verdict).
pub const RULE: &str = "\
Verdict rule (defaults). The symmetry class (orthogonal or unitary, from --class, the sector \
attribute symmetry_class, or the data: never from the storage type alone) selects the \
references: <r> = 0.3863 (Poisson), 0.5307 (GOE, orthogonal), 0.5996 (GUE, unitary); \
Gamma0 = pi/2 (orthogonal) or 4/pi (unitary); rho0 = 2 (orthogonal) or 1 (unitary). \
[U] symmetries unresolved: more than 1% of the consecutive level pairs exactly degenerate, or \
<r> below 0.3863 by more than max(5 standard errors, 0.05), at any size: the verdict is \
'symmetries unresolved' and nothing else is judged. \
eta = (<r> - 0.3863)/(r_chaos - 0.3863) at the largest size. \
[L] level statistics: pass if eta >= 0.75; fail if eta <= 0.25, or if eta falls from the \
smallest to the largest size by more than 0.1 and by more than 2 standard errors; otherwise \
unclear (also when missing). \
[F] fluctuations (ETH: residual_variance ~ D^-1, alpha0 = 1; alpha is the local exponent of \
the two largest sizes when there are three or more, else the fit): unclear if the fit's \
sigma_alpha > 0.25*alpha0 or missing; fail if alpha + 2*sigma_alpha < 0.5*alpha0; pass if \
|alpha - alpha0| <= 2*sigma_alpha and alpha - 2*sigma_alpha >= 0.5*alpha0 and the local \
exponents between consecutive sizes do not fall (last below first by more than 2 combined \
standard errors); otherwise unclear. \
[G] Gaussianity of the low-omega elements (Gamma of the elements rescaled by e^(S/2), S the \
entropy of the smoothed density of states): fail if |Gamma - Gamma0| > 3 standard errors and \
> 0.1*Gamma0 at any size, or if |Gamma - Gamma0| grows from the smallest to the largest size \
by more than 3 combined standard errors and ends above 0.025*Gamma0; unclear (weakened) if it \
is > 3 standard errors and > 0.05*Gamma0 at the largest size, or missing; pass otherwise. \
[C] canonical: relative deviation |A - A_can|/scale: pass if <= 0.05, fail if > 0.2, \
otherwise unclear (also when missing). \
[R] low-omega ratio residual_variance/low_omega_variance vs rho0: pass if |rho - rho0| <= \
max(2*sigma_rho, 0.25*rho0); fail if |rho - rho0| > 0.5*rho0 + 2*sigma_rho; otherwise \
unclear (also when missing). \
Thermalizes: L and F pass and none of G, C, R fails. \
Does not thermalize: F fails; or L fails and F does not pass; or C fails and F does not pass. \
Otherwise inconclusive (missing, uncertain or contradictory evidence).";

/// Outcome of one criterion.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    /// Consistent with thermalization.
    Pass,
    /// Contradicts thermalization.
    Fail,
    /// Missing or too uncertain.
    Unclear,
}

impl Outcome {
    /// `pass`, `fail` or `unclear`.
    pub fn label(self) -> &'static str {
        match self {
            Outcome::Pass => "pass",
            Outcome::Fail => "fail",
            Outcome::Unclear => "unclear",
        }
    }
}

/// One criterion's outcome and why.
#[derive(Debug, Clone, Serialize)]
pub struct Criterion {
    /// Short name: `levels`, `fluctuations`, `canonical`, `low_omega_ratio`.
    pub name: &'static str,
    /// The outcome.
    pub outcome: Outcome,
    /// One sentence with the numbers compared.
    pub reason: String,
}

/// A verdict with its evidence, thresholds, rule and caveat.
#[derive(Debug, Clone, Serialize)]
pub struct VerdictReport {
    /// The answer.
    pub verdict: Verdict,
    /// One line per criterion, in the order levels, fluctuations, canonical, ratio,
    /// Gaussianity (or the one line of unresolved symmetries).
    pub reasons: Vec<String>,
    /// The criteria (see `reasons`).
    pub criteria: Vec<Criterion>,
    /// The thresholds used.
    pub thresholds: VerdictThresholds,
    /// The rule in words (with default thresholds: [`RULE`]).
    pub rule: String,
    /// Finite-size caveat (always present).
    pub caveat: String,
}

/// Applies the verdict rule with the default thresholds ([`decide_with`]).
///
/// The rule is [`RULE`]; in short, with `η = (⟨r̃⟩ − 0.3863)/(r_chaos − 0.3863)` at the
/// largest dimension (`r_chaos = 0.5307` orthogonal, `0.5996` unitary; Atas et al. 2013):
///
/// - **U**: unresolved symmetries ([`VerdictInputs::unresolved`]) end the judgement.
/// - **L** (levels): pass if `η ≥ 0.75`; fail if `η ≤ 0.25` or if `η` falls with size.
/// - **F** (fluctuations, `α₀ = 1` for `residual_variance ∝ D^(−1)`, Kim, Ikeda, Huse
///   PRE 90, 052105 (2014); Beugeling, Moessner, Haque PRE 89, 042112 (2014), from memory):
///   pass only if `α` is consistent with `α₀` within 2σ, its lower bound `α − 2σ` clears
///   `0.5 α₀`, and the local exponents do not fall with size; fail if `α + 2σ < 0.5 α₀`.
/// - **G** (Gaussianity, `Γ₀ = π/2` or `4/π`): fail if Γ is more than 3σ and 10 % from Γ₀ at
///   any size, or moves away from Γ₀ with size; unclear if more than 3σ and 5 % away at the
///   largest size.
/// - **C** (canonical), **R** (ratio vs `ρ₀ = 2` or `1`, D'Alessio et al., Adv. Phys. 65,
///   239 (2016)) as in [`RULE`].
///
/// **Thermalizes** iff L and F pass and none of G, C, R fails. **Does not thermalize** iff F
/// fails, or L fails and F does not pass, or C fails and F does not pass. Otherwise
/// **inconclusive**. A single size never gives F, so it is never enough to conclude
/// "thermalizes".
pub fn decide(inputs: &VerdictInputs) -> VerdictReport {
    decide_with(inputs, &VerdictThresholds::default())
}

/// [`decide`] with explicit thresholds (the rule text then quotes the defaults, and the
/// thresholds actually used are in [`VerdictReport::thresholds`]).
pub fn decide_with(inputs: &VerdictInputs, t: &VerdictThresholds) -> VerdictReport {
    use Outcome::*;
    if let Some(why) = &inputs.unresolved {
        let c = crit("symmetries", Fail, why.clone());
        return VerdictReport {
            verdict: Verdict::SymmetriesUnresolved,
            reasons: vec![format!("[{}] {}: {}", c.name, c.outcome.label(), c.reason)],
            criteria: vec![c],
            thresholds: *t,
            rule: RULE.to_string(),
            caveat: caveat(inputs),
        };
    }
    let levels = level_criterion(inputs, t);
    let fluct = fluctuation_criterion(inputs, t);
    let gauss = gaussianity_criterion(inputs, t);
    let canon = canonical_criterion(inputs, t);
    let ratio = ratio_criterion(inputs, t);
    let verdict = if levels.outcome == Pass
        && fluct.outcome == Pass
        && gauss.outcome != Fail
        && canon.outcome != Fail
        && ratio.outcome != Fail
    {
        Verdict::Thermalizes
    } else if fluct.outcome == Fail
        || (levels.outcome == Fail && fluct.outcome != Pass)
        || (canon.outcome == Fail && fluct.outcome != Pass)
    {
        Verdict::DoesNotThermalize
    } else {
        Verdict::Inconclusive
    };
    let criteria = vec![levels, fluct, canon, ratio, gauss];
    let reasons = criteria
        .iter()
        .map(|c| format!("[{}] {}: {}", c.name, c.outcome.label(), c.reason))
        .collect();
    VerdictReport {
        verdict,
        reasons,
        criteria,
        thresholds: *t,
        rule: RULE.to_string(),
        caveat: caveat(inputs),
    }
}

fn caveat(inputs: &VerdictInputs) -> String {
    let n = inputs.mean_r.len();
    let dmax = inputs
        .mean_r
        .iter()
        .map(|p| p.dimension)
        .fold(f64::NAN, f64::max);
    let sizes = if n == 0 {
        "no level statistics were given".to_string()
    } else {
        format!("{n} size(s), largest dimension D = {dmax}")
    };
    format!(
        "Finite-size evidence only ({sizes}): exponents fitted over few sizes can drift as \
         sizes grow, and slow (e.g. near-integrable or many-body-localized) dynamics can look \
         either way at accessible sizes; this is numerical evidence about finite systems, \
         not a proof."
    )
}

fn chaos_reference(s: SymmetryClass) -> (f64, &'static str) {
    match s {
        SymmetryClass::Orthogonal => (MEAN_R_GOE, "GOE"),
        SymmetryClass::Unitary => (MEAN_R_GUE, "GUE"),
    }
}

/// The Gaussian value of `Γ = ⟨|A|²⟩/⟨|A|⟩²`: π/2 for real Gaussian elements (orthogonal
/// class), 4/π for circular complex ones (unitary class).
pub fn gaussian_gamma(s: SymmetryClass) -> f64 {
    match s {
        SymmetryClass::Orthogonal => std::f64::consts::FRAC_PI_2,
        SymmetryClass::Unitary => 4.0 / std::f64::consts::PI,
    }
}

/// The ETH ratio of the diagonal to the low-frequency off-diagonal variance: 2 (orthogonal)
/// or 1 (unitary).
pub fn eth_ratio(s: SymmetryClass) -> f64 {
    match s {
        SymmetryClass::Orthogonal => 2.0,
        SymmetryClass::Unitary => 1.0,
    }
}

fn level_criterion(inputs: &VerdictInputs, t: &VerdictThresholds) -> Criterion {
    let name = "levels";
    let pts: Vec<&RatioAtSize> = inputs
        .mean_r
        .iter()
        .filter(|p| p.mean_r.is_finite() && p.dimension.is_finite())
        .collect();
    let (rc, ens) = chaos_reference(inputs.symmetry);
    let span = rc - MEAN_R_POISSON;
    let eta = |r: f64| (r - MEAN_R_POISSON) / span;
    let Some(largest) = pts
        .iter()
        .max_by(|a, b| a.dimension.total_cmp(&b.dimension))
    else {
        return crit(name, Outcome::Unclear, "no level statistics");
    };
    let smallest = pts
        .iter()
        .min_by(|a, b| a.dimension.total_cmp(&b.dimension))
        .unwrap_or(largest);
    let e_l = eta(largest.mean_r);
    let head = format!(
        "<r> = {:.4} at D = {} gives eta = {:.2} between Poisson (0) and {ens} (1)",
        largest.mean_r, largest.dimension, e_l
    );
    if e_l >= t.level_chaotic {
        return crit(
            name,
            Outcome::Pass,
            format!("{head} >= {}", t.level_chaotic),
        );
    }
    if e_l <= t.level_poisson {
        return crit(
            name,
            Outcome::Fail,
            format!("{head} <= {}", t.level_poisson),
        );
    }
    if smallest.dimension < largest.dimension {
        let e_s = eta(smallest.mean_r);
        let drop = e_s - e_l;
        let err = (smallest.stderr.powi(2) + largest.stderr.powi(2)).sqrt() / span;
        let err = if err.is_finite() { err } else { 0.0 };
        if drop > t.level_drift && drop > t.sigmas * err {
            return crit(name, Outcome::Fail, format!(
                    "{head}, falling from {:.2} at D = {} (by {:.2} > {} and > {} x {:.2}): flows towards Poisson",
                    e_s, smallest.dimension, drop, t.level_drift, t.sigmas, err
                ));
        }
    }
    crit(
        name,
        Outcome::Unclear,
        format!(
            "{head}, between {} and {}",
            t.level_poisson, t.level_chaotic
        ),
    )
}

/// A criterion with its outcome and reason.
fn crit(name: &'static str, outcome: Outcome, reason: impl Into<String>) -> Criterion {
    Criterion {
        name,
        outcome,
        reason: reason.into(),
    }
}

fn fluctuation_criterion(inputs: &VerdictInputs, t: &VerdictThresholds) -> Criterion {
    let name = "fluctuations";
    let Some(f) = &inputs.fluctuation else {
        return crit(
            name,
            Outcome::Unclear,
            "no fluctuation exponent (needs two or more sizes with non-vanishing fluctuations)",
        );
    };
    let head = format!(
        "alpha = {:.3} +- {:.3} (ETH: {}; fit with {} degree(s) of freedom)",
        f.alpha, f.stderr, f.expected, f.dof
    );
    if !(f.alpha.is_finite() && f.stderr.is_finite())
        || f.stderr > t.exponent_max_rel_stderr * f.expected
    {
        return crit(
            name,
            Outcome::Unclear,
            format!(
                "{head}: error larger than {} x {}",
                t.exponent_max_rel_stderr, f.expected
            ),
        );
    }
    let (s, a0) = (t.sigmas, f.expected);
    // With three or more sizes the exponent judged is the local one of the two largest:
    // finite-size corrections make the smallest sizes least reliable.
    let (alpha, stderr, what) = match f.local.last() {
        Some(l) if f.local.len() >= 2 && l.alpha.is_finite() && l.stderr.is_finite() => (
            l.alpha,
            l.stderr,
            "the local exponent of the two largest sizes",
        ),
        _ => (f.alpha, f.stderr, "the fitted exponent"),
    };
    let head = format!("{head}; judged: {what} {alpha:.3} +- {stderr:.3}");
    let upper = alpha + s * stderr;
    let lower = alpha - s * stderr;
    if upper < t.exponent_fail * a0 {
        return crit(
            name,
            Outcome::Fail,
            format!(
            "{head}: alpha + {s}sigma = {upper:.3} < {} x {a0}: fluctuations do not decay like ETH",
            t.exponent_fail
        ),
        );
    }
    if (alpha - a0).abs() > s * stderr {
        return crit(
            name,
            Outcome::Unclear,
            format!(
                "{head}: |alpha - {a0}| = {:.3} > {s}sigma = {:.3}: not consistent with ETH",
                (alpha - a0).abs(),
                s * stderr
            ),
        );
    }
    if lower < t.exponent_floor * a0 {
        return crit(
            name,
            Outcome::Unclear,
            format!(
                "{head}: alpha - {s}sigma = {lower:.3} < {} x {a0}: the decay is not established",
                t.exponent_floor
            ),
        );
    }
    if let (Some(first), Some(last)) = (f.local.first(), f.local.last()) {
        let err = (first.stderr.powi(2) + last.stderr.powi(2)).sqrt();
        if f.local.len() >= 2 && err.is_finite() && first.alpha - last.alpha > s * err {
            return crit(name, Outcome::Unclear, format!(
                "{head}, but the local exponent falls from {:.3} (D ~ {:.0}) to {:.3} (D ~ {:.0}), by more than {s} x {err:.3}: the decay slows with size",
                first.alpha, first.dimension, last.alpha, last.dimension
            ));
        }
    }
    crit(name, Outcome::Pass, format!(
        "{head}: consistent with {a0} within {s}sigma, alpha - {s}sigma = {lower:.3} >= {} x {a0}, local exponents not falling",
        t.exponent_floor
    ))
}

fn gaussianity_criterion(inputs: &VerdictInputs, t: &VerdictThresholds) -> Criterion {
    let name = "gaussianity";
    let g0 = gaussian_gamma(inputs.symmetry);
    let mut pts: Vec<&GammaAtSize> = inputs
        .gaussianity
        .iter()
        .filter(|p| p.gamma.is_finite() && p.dimension.is_finite())
        .collect();
    pts.sort_by(|a, b| a.dimension.total_cmp(&b.dimension));
    let (Some(smallest), Some(largest)) = (pts.first(), pts.last()) else {
        return crit(name, Outcome::Unclear, "no low-omega Gaussianity ratio");
    };
    let sig = |p: &GammaAtSize| if p.stderr.is_finite() { p.stderr } else { 0.0 };
    let dev = |p: &GammaAtSize| (p.gamma - g0).abs();
    let beyond = |p: &GammaAtSize, tol: f64| dev(p) > t.gauss_sigmas * sig(p) && dev(p) > tol * g0;
    let head = format!(
        "Gamma = {:.4} +- {:.4} at D = {} vs {g0:.4}: |dev| = {:.4}",
        largest.gamma,
        largest.stderr,
        largest.dimension,
        dev(largest)
    );
    let fail_tol = 2.0 * t.gauss_tolerance;
    if let Some(p) = pts.iter().find(|p| beyond(p, fail_tol)) {
        return crit(name, Outcome::Fail, format!(
            "{head}; at D = {} Gamma = {:.4} +- {:.4} lies more than {} sigma and more than {fail_tol} x {g0:.4} away: the low-frequency elements are not Gaussian",
            p.dimension, p.gamma, p.stderr, t.gauss_sigmas
        ));
    }
    let err = (sig(smallest).powi(2) + sig(largest).powi(2)).sqrt();
    if smallest.dimension < largest.dimension
        && dev(largest) - dev(smallest) > t.gauss_sigmas * err
        && dev(largest) > 0.5 * t.gauss_tolerance * g0
    {
        return crit(name, Outcome::Fail, format!(
            "{head}, up from {:.4} at D = {} by more than {} x {err:.4}: moving away from Gaussian with size",
            dev(smallest), smallest.dimension, t.gauss_sigmas
        ));
    }
    if beyond(largest, t.gauss_tolerance) {
        return crit(name, Outcome::Unclear, format!(
            "{head} > {} sigma and > {} x {g0:.4} at the largest size (weak evidence against Gaussian elements; not growing with size)",
            t.gauss_sigmas, t.gauss_tolerance
        ));
    }
    crit(
        name,
        Outcome::Pass,
        format!(
            "{head} within max({} sigma, {} x {g0:.4}); every size within max({} sigma, {fail_tol} x {g0:.4})",
            t.gauss_sigmas, t.gauss_tolerance, t.gauss_sigmas
        ),
    )
}

fn canonical_criterion(inputs: &VerdictInputs, t: &VerdictThresholds) -> Criterion {
    let name = "canonical";
    let Some(c) = inputs.canonical else {
        return crit(name, Outcome::Unclear, "no canonical comparison");
    };
    let rel = c.deviation.abs() / c.scale;
    if !rel.is_finite() {
        return crit(
            name,
            Outcome::Unclear,
            format!(
                "relative deviation {} / {} is not a number",
                c.deviation, c.scale
            ),
        );
    }
    let head = format!(
        "|A - A_can| / scale = {:.3e} / {:.3e} = {:.3}",
        c.deviation.abs(),
        c.scale,
        rel
    );
    if rel <= t.canonical_pass {
        crit(
            name,
            Outcome::Pass,
            format!("{head} <= {}", t.canonical_pass),
        )
    } else if rel > t.canonical_fail {
        crit(
            name,
            Outcome::Fail,
            format!("{head} > {}", t.canonical_fail),
        )
    } else {
        crit(
            name,
            Outcome::Unclear,
            format!(
                "{head}, between {} and {}",
                t.canonical_pass, t.canonical_fail
            ),
        )
    }
}

fn ratio_criterion(inputs: &VerdictInputs, t: &VerdictThresholds) -> Criterion {
    let name = "low_omega_ratio";
    let Some(r) = inputs.low_omega_ratio else {
        return crit(name, Outcome::Unclear, "no low-omega ratio");
    };
    let rho0 = eth_ratio(inputs.symmetry);
    if !r.ratio.is_finite() {
        return crit(
            name,
            Outcome::Unclear,
            format!("ratio {} is not a number", r.ratio),
        );
    }
    let sig = if r.stderr.is_finite() { r.stderr } else { 0.0 };
    let dev = (r.ratio - rho0).abs();
    let head = format!(
        "ratio = {:.3} +- {:.3} vs {rho0}: |dev| = {dev:.3}",
        r.ratio, r.stderr
    );
    let pass_band = (t.sigmas * sig).max(t.ratio_pass * rho0);
    let fail_band = t.ratio_fail * rho0 + t.sigmas * sig;
    if dev <= pass_band {
        crit(name, Outcome::Pass, format!("{head} <= {pass_band:.3}"))
    } else if dev > fail_band {
        crit(name, Outcome::Fail, format!("{head} > {fail_band:.3}"))
    } else {
        crit(
            name,
            Outcome::Unclear,
            format!("{head} between {pass_band:.3} and {fail_band:.3}"),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rule_text_quotes_default_thresholds() {
        // Common practice, no source: the printed rule must match the thresholds in use.
        let t = VerdictThresholds::default();
        for v in [
            t.level_chaotic,
            t.level_poisson,
            t.level_drift,
            t.exponent_max_rel_stderr,
            t.exponent_floor,
            t.exponent_fail,
            t.gauss_tolerance,
            t.canonical_pass,
            t.canonical_fail,
            t.ratio_pass,
            t.ratio_fail,
        ] {
            assert!(RULE.contains(&format!("{v}")), "{v} missing from RULE");
        }
        assert!(RULE.contains(&format!("{} standard errors", t.sigmas)));
        assert!(RULE.contains(&format!("> {} standard errors", t.gauss_sigmas)));
    }
}
