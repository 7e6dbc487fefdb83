//! The verdict rule: from the level statistics, the fluctuation exponent, the canonical
//! deviation and the low-frequency ratio to *thermalizes*, *does not thermalize* or
//! *inconclusive*, with every threshold printed (see [`RULE`]).

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
}

impl std::fmt::Display for Verdict {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Verdict::Thermalizes => "thermalizes",
            Verdict::DoesNotThermalize => "does not thermalize",
            Verdict::Inconclusive => "inconclusive",
        })
    }
}

/// Whether the system is real (time-reversal symmetric: GOE references, ratio 2) or
/// complex (GUE references, ratio 1).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Symmetry {
    /// Real symmetric Hamiltonian and observable.
    Real,
    /// Complex Hermitian.
    Complex,
}

/// One size's mean level-spacing ratio.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct RatioAtSize {
    /// Hilbert-space dimension of the sector.
    pub dimension: f64,
    /// Mean ⟨r̃⟩ in the window.
    pub mean_r: f64,
    /// Its standard error.
    pub stderr: f64,
}

/// A fitted exponent with its error and the value ETH predicts for it.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct ExponentEvidence {
    /// Measured `α` of `figure ∝ D^(−α)`.
    pub alpha: f64,
    /// Its standard error.
    pub stderr: f64,
    /// The ETH expectation `α₀`.
    pub expected: f64,
}

impl ExponentEvidence {
    /// Exponent of `fluct_variance ∝ D^(−α)`: ETH expects `α₀ = 1`.
    pub fn variance(alpha: f64, stderr: f64) -> Self {
        Self {
            alpha,
            stderr,
            expected: 1.0,
        }
    }
    /// Exponent of a difference figure (`diff_mean_abs`) `∝ D^(−α)`: ETH expects `α₀ = 1/2`.
    pub fn difference(alpha: f64, stderr: f64) -> Self {
        Self {
            alpha,
            stderr,
            expected: 0.5,
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

/// Low-frequency ratio `fluct_variance / low_omega_variance` with its error.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct RatioEvidence {
    /// Measured ratio (largest size).
    pub ratio: f64,
    /// Its standard error (NaN if unknown: then only the wide band counts).
    pub stderr: f64,
}

/// Everything [`decide`] looks at. Missing pieces are `None` / empty.
#[derive(Debug, Clone, Serialize)]
pub struct VerdictInputs {
    /// Real or complex system (selects the GOE or GUE reference and the ratio 2 or 1).
    pub symmetry: Symmetry,
    /// ⟨r̃⟩ per size (any order).
    pub mean_r: Vec<RatioAtSize>,
    /// Fluctuation exponent across sizes.
    pub fluctuation: Option<ExponentEvidence>,
    /// Deviation from the canonical prediction.
    pub canonical: Option<CanonicalDeviation>,
    /// Diagonal / low-ω off-diagonal variance ratio.
    pub low_omega_ratio: Option<RatioEvidence>,
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
    /// Fluctuation exponent too uncertain when `σ_α > exponent_max_rel_err · α₀`.
    pub exponent_max_rel_err: f64,
    /// Fluctuation criterion passes when `α + sigmas·σ_α ≥ exponent_pass · α₀`.
    pub exponent_pass: f64,
    /// Fluctuation criterion fails when `α + sigmas·σ_α < exponent_fail · α₀`.
    pub exponent_fail: f64,
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
            exponent_max_rel_err: 0.25,
            exponent_pass: 0.75,
            exponent_fail: 0.25,
            canonical_pass: 0.05,
            canonical_fail: 0.2,
            ratio_pass: 0.25,
            ratio_fail: 0.5,
        }
    }
}

/// The verdict rule in words, with the default thresholds (printed with every verdict).
pub const RULE: &str = "\
Verdict rule (defaults). References: <r> = 0.3863 (Poisson), 0.5307 (GOE, real systems), \
0.5996 (GUE, complex systems); eta = (<r> - 0.3863)/(r_chaos - 0.3863) at the largest size. \
[L] level statistics: pass if eta >= 0.75; fail if eta <= 0.25, or if eta falls from the \
smallest to the largest size by more than 0.1 and by more than 2 standard errors; otherwise \
unclear (also when missing). \
[F] fluctuations (ETH: fluct_variance ~ D^-1, alpha0 = 1; difference figures ~ D^-1/2, \
alpha0 = 0.5): unclear if sigma_alpha > 0.25*alpha0 or missing; else pass if \
alpha + 2*sigma_alpha >= 0.75*alpha0; fail if alpha + 2*sigma_alpha < 0.25*alpha0; \
otherwise unclear. \
[C] canonical: relative deviation |A - A_can|/scale: pass if <= 0.05, fail if > 0.2, \
otherwise unclear (also when missing). \
[R] low-omega ratio fluct_variance/low_omega_variance vs rho0 = 2 (real) or 1 (complex): \
pass if |rho - rho0| <= max(2*sigma_rho, 0.25*rho0); fail if |rho - rho0| > 0.5*rho0 + \
2*sigma_rho; otherwise unclear (also when missing). \
Thermalizes: L and F pass and neither C nor R fails. \
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
    /// One line per criterion, in the order levels, fluctuations, canonical, ratio.
    pub reasons: Vec<String>,
    /// The four criteria.
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
/// The rule (same as [`RULE`]); `η = (⟨r̃⟩ − 0.3863)/(r_chaos − 0.3863)` at the largest
/// dimension, with `r_chaos = 0.5307` (GOE, real) or `0.5996` (GUE, complex):
///
/// - **L** (levels): pass if `η ≥ 0.75`; fail if `η ≤ 0.25`, or if `η` falls from the
///   smallest to the largest size by more than 0.1 and by more than 2 standard errors;
///   otherwise (or missing) unclear.
/// - **F** (fluctuations, `α₀ = 1` for `fluct_variance ∝ D^(−1)`, `α₀ = 1/2` for the
///   difference figures, Kim, Ikeda, Huse PRE 90, 052105 (2014); Beugeling, Moessner,
///   Haque PRE 89, 042112 (2014), from memory): unclear if `σ_α > 0.25 α₀` (or missing);
///   else pass if `α + 2σ_α ≥ 0.75 α₀`, fail if `α + 2σ_α < 0.25 α₀`, otherwise unclear.
/// - **C** (canonical): relative deviation `|Ā − A_can|/scale`: pass if `≤ 0.05`,
///   fail if `> 0.2`, otherwise (or missing) unclear.
/// - **R** (low-ω ratio vs `ρ₀ = 2` real / `1` complex, D'Alessio et al., Adv. Phys. 65,
///   239 (2016)): pass if `|ρ − ρ₀| ≤ max(2σ_ρ, 0.25 ρ₀)`; fail if
///   `|ρ − ρ₀| > 0.5 ρ₀ + 2σ_ρ`; otherwise (or missing) unclear.
///
/// **Thermalizes** iff L and F pass and neither C nor R fails. **Does not thermalize** iff F
/// fails, or L fails and F does not pass, or C fails and F does not pass. Otherwise
/// **inconclusive**. A single size never gives F, so it is never enough to conclude
/// "thermalizes".
pub fn decide(inputs: &VerdictInputs) -> VerdictReport {
    decide_with(inputs, &VerdictThresholds::default())
}

/// [`decide`] with explicit thresholds (the rule text then quotes the defaults, and the
/// thresholds actually used are in [`VerdictReport::thresholds`]).
pub fn decide_with(inputs: &VerdictInputs, t: &VerdictThresholds) -> VerdictReport {
    let levels = level_criterion(inputs, t);
    let fluct = fluctuation_criterion(inputs, t);
    let canon = canonical_criterion(inputs, t);
    let ratio = ratio_criterion(inputs, t);
    use Outcome::*;
    let verdict = if levels.outcome == Pass
        && fluct.outcome == Pass
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
    let criteria = vec![levels, fluct, canon, ratio];
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

fn chaos_reference(s: Symmetry) -> (f64, &'static str) {
    match s {
        Symmetry::Real => (MEAN_R_GOE, "GOE"),
        Symmetry::Complex => (MEAN_R_GUE, "GUE"),
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
    let Some(f) = inputs.fluctuation else {
        return crit(
            name,
            Outcome::Unclear,
            "no fluctuation exponent (needs two or more sizes with non-vanishing fluctuations)",
        );
    };
    let head = format!(
        "alpha = {:.3} +- {:.3} (ETH: {})",
        f.alpha, f.stderr, f.expected
    );
    if !(f.alpha.is_finite() && f.stderr.is_finite())
        || f.stderr > t.exponent_max_rel_err * f.expected
    {
        return crit(
            name,
            Outcome::Unclear,
            format!(
                "{head}: error larger than {} x {}",
                t.exponent_max_rel_err, f.expected
            ),
        );
    }
    let upper = f.alpha + t.sigmas * f.stderr;
    if upper >= t.exponent_pass * f.expected {
        crit(
            name,
            Outcome::Pass,
            format!(
                "{head}: alpha + {}sigma = {upper:.3} >= {} x {}",
                t.sigmas, t.exponent_pass, f.expected
            ),
        )
    } else if upper < t.exponent_fail * f.expected {
        crit(name, Outcome::Fail, format!(
                "{head}: alpha + {}sigma = {upper:.3} < {} x {}: fluctuations do not decay like ETH",
                t.sigmas, t.exponent_fail, f.expected
            ))
    } else {
        crit(
            name,
            Outcome::Unclear,
            format!(
                "{head}: alpha + {}sigma = {upper:.3} between {} and {} x {}",
                t.sigmas, t.exponent_fail, t.exponent_pass, f.expected
            ),
        )
    }
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
    let rho0 = match inputs.symmetry {
        Symmetry::Real => 2.0,
        Symmetry::Complex => 1.0,
    };
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
            t.exponent_max_rel_err,
            t.exponent_pass,
            t.exponent_fail,
            t.canonical_pass,
            t.canonical_fail,
            t.ratio_pass,
            t.ratio_fail,
        ] {
            assert!(RULE.contains(&format!("{v}")), "{v} missing from RULE");
        }
        assert!(RULE.contains(&format!("{} standard errors", t.sigmas)));
    }
}
