//! The scaling table: one row per (file, sector, observable), grouped into families, with
//! the fits of each decaying figure and one verdict per family.
//!
//! Rows are grouped into families before fitting: by the sector attribute `model`
//! (written by `eigentherm generate`; files without it form one family), by the sector
//! name (kept apart by default; with `combine_sectors` the sectors of one size are merged
//! into one row: figures averaged, errors combined as `√(Σσ²)/k`, dimension averaged), and
//! by observable and its support (the attribute `observable_support`, or, without it, the
//! parity of the number of sites: a site observable of an even chain is not the operator of
//! an odd one). Each family's figures are fitted to `figure ∝ D^(−α)` (and `∝ e^(−κL)`
//! where sizes are known, [`super::fit`]) and judged by [`super::verdict::decide`].

use super::fit::{fit_exponential, fit_power_law, ScalingFit};
use super::resample::RESAMPLES;
use super::verdict::{
    decide, CanonicalDeviation, ExponentEvidence, GammaAtSize, LocalExponent, RatioAtSize,
    RatioEvidence, VerdictInputs, VerdictReport, MEAN_R_POISSON,
};
use crate::analysis::ensemble::{self, DisorderScan, EnsembleAverage};
use crate::analysis::levels::LevelOptions;
use crate::analysis::sector::{ObservableAnalysis, SectorAnalysis};
use crate::data::{Field, SymmetryClass};
use crate::error::{Error, Result};
use serde::Serialize;

/// One row of the scaling table: one (file, sector, observable).
#[derive(Debug, Clone, Serialize)]
pub struct Row {
    /// Family key (model, sector, observable) the row is fitted in.
    pub family: String,
    /// Attribute `model` of the sector (`None` when the file has none).
    pub model: Option<String>,
    /// File (or files, joined by `+`, for combined rows).
    pub file: String,
    /// Sector name (or names joined by `+`).
    pub sector: String,
    /// Observable.
    pub observable: String,
    /// Support of the observable: the attribute `observable_support`, or without it the
    /// parity of the number of sites (`even L`, `odd L`); `None` when neither is known.
    pub support: Option<String>,
    /// Hilbert-space dimension D (for rows combined over sectors the mean dimension of the
    /// merged sectors; written to JSON as the nearest integer, the fits use the mean).
    #[serde(serialize_with = "crate::data::dimension_as_integer")]
    pub dimension: f64,
    /// Number of sites L, when known.
    pub size: Option<usize>,
    /// Mean ratio of consecutive spacings ⟨r̃⟩ (levels window).
    pub mean_r: f64,
    /// Its standard error.
    pub mean_r_stderr: f64,
    /// `½⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩` in the window.
    pub fluct_variance: f64,
    /// Bootstrap standard error.
    pub fluct_variance_stderr: f64,
    /// `⟨|Aₙ₊₁,ₙ₊₁ − Aₙₙ|⟩` in the window.
    pub diff_mean_abs: f64,
    /// Bootstrap standard error.
    pub diff_mean_abs_stderr: f64,
    /// Mean `|Aₙₘ|²` over window pairs with `|ω| < omega_max` (NaN when unavailable).
    pub low_omega_variance: f64,
    /// Its standard error.
    pub low_omega_variance_stderr: f64,
    /// Γ = ⟨|Aₙₘ|²⟩/⟨|Aₙₘ|⟩² at low ω.
    pub gaussian_ratio: f64,
    /// Its standard error.
    pub gaussian_ratio_stderr: f64,
    /// Γ of the density-of-states rescaled elements (the verdict's Gaussianity figure).
    pub gaussian_ratio_rescaled: f64,
    /// Its standard error.
    pub gaussian_ratio_rescaled_stderr: f64,
    /// Variance of `Aₙₙ` about a local smooth fit in the window.
    pub residual_variance: f64,
    /// Its jackknife standard error.
    pub residual_variance_stderr: f64,
    /// Lag-1 autocorrelation of the residuals.
    pub residual_lag1: f64,
    /// `residual_variance / low_omega_variance`.
    pub diag_offdiag_ratio: f64,
    /// Its standard error.
    pub diag_offdiag_ratio_stderr: f64,
    /// RMS deviation of the binned A(E) from the canonical prediction in the window (NaN when unavailable).
    pub canonical_rms_deviation: f64,
    /// Spread max Aₙₙ − min Aₙₙ over all states (scale of the canonical criterion).
    pub observable_spread: f64,
    /// Element type of the eigenvectors (storage only: the references follow the class).
    pub field: Field,
    /// Symmetry class of the references.
    pub symmetry_class: SymmetryClass,
    /// How the class was decided.
    pub class_source: String,
    /// Fraction of consecutive level pairs in the levels window that are degenerate.
    pub degenerate_fraction: f64,
    /// True when all diagonal elements vanish by symmetry.
    pub diagonal_vanishes: bool,
    /// Attribute `disorder` (disorder strength), when present.
    pub disorder: Option<f64>,
    /// Realizations averaged in this row (1 for a single spectrum; [`super::realizations`]).
    pub realizations: usize,
    /// `fluct_variance` of each realization (averaged rows only).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub fluct_variance_samples: Vec<f64>,
    /// `residual_variance` of each realization (averaged rows only).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub residual_variance_samples: Vec<f64>,
    /// Thouless time τ_Th in Heisenberg times (of the realization-averaged connected form
    /// factor for averaged rows), when the criterion finds one.
    pub thouless_tau: Option<f64>,
    /// g = log₁₀(t_H/t_Th).
    pub thouless_g: Option<f64>,
    /// Ensemble key of a realization row (`None` without a `realization` attribute).
    #[serde(skip)]
    pub ensemble_key: Option<String>,
    /// `FILE:SECTOR` of the row's sector (first member of an averaged row).
    #[serde(skip)]
    pub member: String,
    /// Sector name without its realization component.
    #[serde(skip)]
    pub sector_key: String,
}

/// Fits of one figure in one family.
#[derive(Debug, Clone, Serialize)]
pub struct FigureFit {
    /// Family key.
    pub family: String,
    /// The family's `model` attribute (`None` without one).
    pub model: Option<String>,
    /// The family's sector name (`*` when sectors are combined or for top-level
    /// realization sectors).
    pub sector: String,
    /// The family's observable.
    pub observable: String,
    /// The family's observable support ([`Row::support`]).
    pub support: Option<String>,
    /// The family's disorder strength, when the rows carry one.
    pub disorder: Option<f64>,
    /// Figure name (`residual_variance`, `fluct_variance`, `diff_mean_abs`,
    /// `low_omega_variance`).
    pub figure: String,
    /// α in figure ∝ D^(−α).
    pub alpha: f64,
    /// Standard error of α.
    pub alpha_stderr: f64,
    /// Degrees of freedom of the power-law fit (points − 2).
    pub dof: usize,
    /// The α ETH predicts for this figure: 1 for the variances (`residual_variance`,
    /// `fluct_variance`, `low_omega_variance`: |Aₙₘ|² and the diagonal fluctuations scale
    /// as the inverse density of states, ∝ 1/D), ½ for `diff_mean_abs` (its square root);
    /// Srednicki, J. Phys. A 32, 1163 (1999); Beugeling, Moessner, Haque, PRE 89, 042112
    /// (2014) (from memory).
    pub eth_alpha: f64,
    /// Full power-law fit.
    pub power_law: ScalingFit,
    /// Exponents between consecutive sizes.
    pub local: Vec<LocalExponent>,
    /// κ in figure ∝ e^(−κL), when every row has a size.
    pub exponential: Option<ScalingFit>,
}

/// Verdict of one family.
#[derive(Debug, Clone, Serialize)]
pub struct FamilyVerdict {
    /// Family key.
    pub family: String,
    /// Observable.
    pub observable: String,
    /// The verdict, reasons, rule and caveat.
    pub verdict: VerdictReport,
}

/// JSON document of `eigentherm scaling`.
#[derive(Debug, Clone, Serialize)]
pub struct ScalingReport {
    /// How rows are grouped and errors obtained.
    pub method: String,
    /// One row per (file, sector, observable), or per (size, observable) with `--combine-sectors`.
    pub rows: Vec<Row>,
    /// Fits of each decaying figure per family.
    pub fits: Vec<FigureFit>,
    /// One verdict per family.
    pub verdicts: Vec<FamilyVerdict>,
    /// Realization averages of the level statistics (sectors with a `realization`
    /// attribute; [`crate::analysis::ensemble`]).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub ensembles: Vec<EnsembleAverage>,
    /// ⟨r̃⟩ against disorder strength per size, with crossings.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub disorder_scan: Option<DisorderScan>,
}

/// Builds the rows, fits and verdicts from per-sector analyses.
pub fn build(analyses: &[SectorAnalysis], combine_sectors: bool) -> Result<ScalingReport> {
    let members = ensemble::members_of(analyses);
    let ensembles = ensemble::ensembles(&members, &LevelOptions::default());
    let disorder_scan = ensemble::disorder_scan(&ensembles);
    let rows: Vec<Row> = analyses
        .iter()
        .flat_map(|a| {
            a.observables
                .iter()
                .map(move |o| row(a, o, combine_sectors))
        })
        .collect();
    let mut rows = super::realizations::average(rows, &ensembles);
    if combine_sectors {
        rows = combine(rows);
    }
    rows.sort_by(|a, b| {
        a.family
            .cmp(&b.family)
            .then(a.dimension.total_cmp(&b.dimension))
    });

    let mut families: Vec<String> = rows.iter().map(|r| r.family.clone()).collect();
    families.dedup();
    let mut fits = Vec::new();
    let mut verdicts = Vec::new();
    for fam in &families {
        let fr: Vec<&Row> = rows.iter().filter(|r| &r.family == fam).collect();
        let mut fluct_fit = None;
        for figure in [
            "residual_variance",
            "fluct_variance",
            "diff_mean_abs",
            "low_omega_variance",
        ] {
            if let Some(fit) = fit_figure(fam, figure, &fr, combine_sectors) {
                if figure == "residual_variance" {
                    fluct_fit = Some(fit.clone());
                }
                fits.push(fit);
            }
        }
        verdicts.push(family_verdict(fam, &fr, fluct_fit)?);
    }
    Ok(ScalingReport {
        method: format!(
            "families = (model attribute, sector{}, observable, observable support or parity of L); fits: \
             weighted least squares of ln(figure) against ln D (and against L where sizes are known), with \
             points - 2 degrees of freedom (three sizes: one); errors: residual variance and every \
             off-diagonal figure by a delete-a-group jackknife over the window's eigenstates (groups of \
             consecutive states), fluct_variance and diff_mean_abs by a moving-block bootstrap of \
             consecutive differences, {RESAMPLES} resamples, fixed seed",
            if combine_sectors { "s of one size combined" } else { " kept apart" }
        ),
        rows,
        fits,
        verdicts,
        ensembles,
        disorder_scan,
    })
}

/// The row of one observable of one sector (family key with the sector name, or `*` when
/// sectors are combined).
fn row(a: &SectorAnalysis, o: &ObservableAnalysis, combine_sectors: bool) -> Row {
    let d = &o.diagonal;
    let off = o.offdiagonal.as_ref();
    let nan = f64::NAN;
    let (lo, lo_e, g, g_e, r, r_e) = off
        .map(|x| {
            (
                x.low_omega_variance,
                x.low_omega_variance_stderr,
                x.gaussian_ratio,
                x.gaussian_ratio_stderr,
                x.diag_offdiag_ratio,
                x.diag_offdiag_ratio_stderr,
            )
        })
        .unwrap_or((nan, nan, nan, nan, nan, nan));
    let (gf, gf_e) = off
        .map(|x| (x.gaussian_ratio_rescaled, x.gaussian_ratio_rescaled_stderr))
        .unwrap_or((nan, nan));
    let (r, r_e) = if o.low_omega_vanishes || o.diagonal_vanishes {
        (nan, nan)
    } else {
        (r, r_e)
    };
    let (amin, amax) = o
        .points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p.1), hi.max(p.1))
        });
    let sector_name = match a.realization {
        Some(_) => without_realization(&a.sector),
        None => a.sector.clone(),
    };
    let sector_key = if combine_sectors {
        "*".to_string()
    } else {
        sector_name.clone()
    };
    let disorder = a.disorder.map_or(String::new(), |w| format!(" | W = {w}"));
    let model = a.model.clone().unwrap_or_else(|| "-".into());
    let support_name = match (&o.support, a.size) {
        (Some(s), _) => Some(s.clone()),
        (None, Some(l)) if l % 2 == 0 => Some("even L".to_string()),
        (None, Some(_)) => Some("odd L".to_string()),
        (None, None) => None,
    };
    let support = support_name
        .as_ref()
        .map_or(String::new(), |s| format!(" | {s}"));
    Row {
        family: format!("{model} | {sector_key} | {}{support}{disorder}", o.name),
        model: a.model.clone(),
        file: a.file.clone(),
        sector: a.sector.clone(),
        observable: o.name.clone(),
        support: support_name,
        dimension: a.dimension as f64,
        size: a.size,
        mean_r: a.levels.mean_r,
        mean_r_stderr: a.levels.mean_r_stderr,
        fluct_variance: d.fluct_variance,
        fluct_variance_stderr: o.bootstrap.fluct_variance,
        diff_mean_abs: d.diff_mean_abs,
        diff_mean_abs_stderr: o.bootstrap.diff_mean_abs,
        low_omega_variance: lo,
        low_omega_variance_stderr: lo_e,
        gaussian_ratio: g,
        gaussian_ratio_stderr: g_e,
        gaussian_ratio_rescaled: gf,
        gaussian_ratio_rescaled_stderr: gf_e,
        residual_variance: d.residual_variance,
        residual_variance_stderr: d.residual_variance_stderr,
        residual_lag1: d.residual_lag1,
        diag_offdiag_ratio: r,
        diag_offdiag_ratio_stderr: r_e,
        canonical_rms_deviation: d
            .predictions
            .canonical
            .as_ref()
            .map(|c| c.rms)
            .unwrap_or(nan),
        observable_spread: amax - amin,
        field: a.field,
        symmetry_class: a.class.symmetry_class,
        class_source: a.class.class_source.clone(),
        degenerate_fraction: a.levels.degenerate_pairs as f64
            / a.levels.states.saturating_sub(1).max(1) as f64,
        diagonal_vanishes: o.diagonal_vanishes,
        disorder: a.disorder,
        realizations: 1,
        fluct_variance_samples: Vec::new(),
        residual_variance_samples: Vec::new(),
        thouless_tau: a.levels.form_factor.thouless.as_ref().and_then(|t| t.tau),
        thouless_g: a.levels.form_factor.thouless.as_ref().and_then(|t| t.g),
        ensemble_key: a.realization.map(|_| {
            format!(
                "{model} | {sector_name} | {}{support}{disorder} | D = {}",
                o.name, a.dimension
            )
        }),
        member: format!("{}:{}", a.file, a.sector),
        sector_key: sector_name,
    }
}

/// A realization sector's name without its realization component: the first path
/// component of a nested name (`r003/even` → `even`), `*` for a top-level one.
fn without_realization(name: &str) -> String {
    match name.split_once('/') {
        Some((_, rest)) if !rest.is_empty() => rest.to_string(),
        _ => "*".to_string(),
    }
}

/// Fraction of degenerate consecutive level pairs above which a sector is taken not to be
/// a single symmetry sector.
pub const UNRESOLVED_DEGENERATE_FRACTION: f64 = 0.01;

/// Why the rows' sectors are not single symmetry sectors, if they are not: many exact
/// degeneracies, or ⟨r̃⟩ far below Poisson (levels of several sectors interleaved with
/// exact coincidences), at any size.
fn unresolved(fr: &[&Row]) -> Option<String> {
    for r in fr {
        if r.degenerate_fraction > UNRESOLVED_DEGENERATE_FRACTION {
            return Some(format!(
                "{:.1}% of the consecutive level pairs at D = {} are exactly degenerate (more than {}%): \
                 the sector holds several symmetry sectors; resolve the symmetry that maps them onto each \
                 other (a conserved magnetization S^z, spin flip, reflection or momentum) and analyze each \
                 sector on its own",
                100.0 * r.degenerate_fraction,
                r.dimension,
                100.0 * UNRESOLVED_DEGENERATE_FRACTION
            ));
        }
        let margin = (5.0 * r.mean_r_stderr).max(0.05);
        if r.mean_r < MEAN_R_POISSON - margin {
            return Some(format!(
                "<r> = {:.4} at D = {} lies below Poisson ({MEAN_R_POISSON:.4}) by more than {margin:.3}: \
                 level coincidences of interleaved symmetry sectors; resolve the conserved quantities \
                 (S^z, spin flip, reflection, momentum) before judging thermalization",
                r.mean_r, r.dimension
            ));
        }
    }
    None
}

/// The verdict of one family from its rows (ascending dimension) and the fit of its
/// residual variance.
fn family_verdict(fam: &str, fr: &[&Row], fluct_fit: Option<FigureFit>) -> Result<FamilyVerdict> {
    let last = fr.last().ok_or_else(|| Error::other("empty family"))?;
    let vanishes = fr.iter().all(|r| r.diagonal_vanishes);
    let inputs = VerdictInputs {
        symmetry: last.symmetry_class,
        unresolved: unresolved(fr),
        mean_r: fr
            .iter()
            .map(|r| RatioAtSize {
                dimension: r.dimension,
                mean_r: r.mean_r,
                stderr: r.mean_r_stderr,
            })
            .collect(),
        fluctuation: if vanishes {
            None
        } else {
            fluct_fit.map(|f| ExponentEvidence {
                dof: f.dof,
                local: f.local.clone(),
                ..ExponentEvidence::variance(f.alpha, f.alpha_stderr)
            })
        },
        canonical: (last.canonical_rms_deviation.is_finite() && last.observable_spread > 0.0)
            .then_some(CanonicalDeviation {
                deviation: last.canonical_rms_deviation,
                scale: last.observable_spread,
            }),
        low_omega_ratio: (last.diag_offdiag_ratio.is_finite() && !vanishes).then_some({
            RatioEvidence {
                ratio: last.diag_offdiag_ratio,
                stderr: last.diag_offdiag_ratio_stderr,
            }
        }),
        gaussianity: fr
            .iter()
            .filter(|r| r.gaussian_ratio_rescaled.is_finite())
            .map(|r| GammaAtSize {
                dimension: r.dimension,
                gamma: r.gaussian_ratio_rescaled,
                stderr: r.gaussian_ratio_rescaled_stderr,
            })
            .collect(),
    };
    let mut verdict = decide(&inputs);
    if vanishes {
        verdict.reasons.push(
            "every diagonal element vanishes by symmetry: fluctuation figures carry no evidence"
                .to_string(),
        );
    }
    Ok(FamilyVerdict {
        family: fam.to_string(),
        observable: last.observable.clone(),
        verdict,
    })
}

/// Fits `figure ∝ D^(−α)` (and `∝ e^(−κL)`) over the rows of a family; `None` with fewer
/// than two usable (positive, finite) points.
fn fit_figure(family: &str, figure: &str, rows: &[&Row], combined: bool) -> Option<FigureFit> {
    let pick = |r: &Row| match figure {
        "residual_variance" => (r.residual_variance, r.residual_variance_stderr),
        "fluct_variance" => (r.fluct_variance, r.fluct_variance_stderr),
        "diff_mean_abs" => (r.diff_mean_abs, r.diff_mean_abs_stderr),
        _ => (r.low_omega_variance, r.low_omega_variance_stderr),
    };
    let usable: Vec<&&Row> = rows
        .iter()
        .filter(|r| {
            let (y, _) = pick(r);
            y.is_finite() && y > 0.0
        })
        .collect();
    if usable.len() < 2 {
        return None;
    }
    let dims: Vec<f64> = usable.iter().map(|r| r.dimension).collect();
    let ys: Vec<f64> = usable.iter().map(|r| pick(r).0).collect();
    let es: Vec<f64> = usable.iter().map(|r| pick(r).1).collect();
    let errors = es
        .iter()
        .all(|e| e.is_finite() && *e > 0.0)
        .then_some(es.as_slice());
    let power_law = fit_power_law(&dims, &ys, errors).ok()?;
    let exponential = if usable.iter().all(|r| r.size.is_some()) {
        let sizes: Vec<f64> = usable.iter().map(|r| r.size.unwrap_or(0) as f64).collect();
        let distinct = sizes.windows(2).any(|w| w[0] != w[1]);
        if distinct {
            fit_exponential(&sizes, &ys, errors).ok()
        } else {
            None
        }
    } else {
        None
    };
    let local = dims
        .windows(2)
        .zip(ys.windows(2).zip(es.windows(2)))
        .filter(|(d, _)| d[1] > d[0])
        .map(|(d, (y, e))| {
            let ld = (d[1] / d[0]).ln();
            LocalExponent {
                dimension: (d[0] * d[1]).sqrt(),
                alpha: -(y[1] / y[0]).ln() / ld,
                stderr: ((e[0] / y[0]).powi(2) + (e[1] / y[1]).powi(2)).sqrt() / ld,
            }
        })
        .collect();
    let first = usable[0];
    Some(FigureFit {
        family: family.to_string(),
        model: first.model.clone(),
        sector: if combined {
            "*".to_string()
        } else {
            first.sector_key.clone()
        },
        observable: first.observable.clone(),
        support: first.support.clone(),
        disorder: first.disorder,
        figure: figure.to_string(),
        eth_alpha: if figure == "diff_mean_abs" { 0.5 } else { 1.0 },
        alpha: power_law.exponent,
        alpha_stderr: power_law.exponent_stderr,
        dof: power_law.dof,
        power_law,
        exponential,
        local,
    })
}

/// Merges rows of one family and one size (or dimension, when sizes are unknown).
fn combine(rows: Vec<Row>) -> Vec<Row> {
    let mut out: Vec<Row> = Vec::new();
    let mut groups: Vec<Vec<Row>> = Vec::new();
    for r in rows {
        let key = |x: &Row| {
            (
                x.family.clone(),
                x.size.map(|s| s as f64).unwrap_or(x.dimension),
            )
        };
        match groups.iter_mut().find(|g| key(&g[0]) == key(&r)) {
            Some(g) => g.push(r),
            None => groups.push(vec![r]),
        }
    }
    for g in groups {
        let k = g.len() as f64;
        let avg = |f: &dyn Fn(&Row) -> f64| g.iter().map(f).sum::<f64>() / k;
        let comb = |f: &dyn Fn(&Row) -> f64| g.iter().map(|r| f(r).powi(2)).sum::<f64>().sqrt() / k;
        let mut r = g[0].clone();
        r.file = join(g.iter().map(|x| x.file.as_str()));
        r.sector = join(g.iter().map(|x| x.sector.as_str()));
        r.dimension = avg(&|x| x.dimension);
        r.mean_r = avg(&|x| x.mean_r);
        r.mean_r_stderr = comb(&|x| x.mean_r_stderr);
        r.fluct_variance = avg(&|x| x.fluct_variance);
        r.fluct_variance_stderr = comb(&|x| x.fluct_variance_stderr);
        r.diff_mean_abs = avg(&|x| x.diff_mean_abs);
        r.diff_mean_abs_stderr = comb(&|x| x.diff_mean_abs_stderr);
        r.low_omega_variance = avg(&|x| x.low_omega_variance);
        r.low_omega_variance_stderr = comb(&|x| x.low_omega_variance_stderr);
        r.gaussian_ratio = avg(&|x| x.gaussian_ratio);
        r.gaussian_ratio_stderr = comb(&|x| x.gaussian_ratio_stderr);
        r.gaussian_ratio_rescaled = avg(&|x| x.gaussian_ratio_rescaled);
        r.gaussian_ratio_rescaled_stderr = comb(&|x| x.gaussian_ratio_rescaled_stderr);
        r.residual_variance = avg(&|x| x.residual_variance);
        r.residual_variance_stderr = comb(&|x| x.residual_variance_stderr);
        r.residual_lag1 = avg(&|x| x.residual_lag1);
        r.degenerate_fraction = g.iter().map(|x| x.degenerate_fraction).fold(0.0, f64::max);
        r.diag_offdiag_ratio = avg(&|x| x.diag_offdiag_ratio);
        r.diag_offdiag_ratio_stderr = comb(&|x| x.diag_offdiag_ratio_stderr);
        r.canonical_rms_deviation = avg(&|x| x.canonical_rms_deviation);
        r.observable_spread = g.iter().map(|x| x.observable_spread).fold(0.0, f64::max);
        r.diagonal_vanishes = g.iter().all(|x| x.diagonal_vanishes);
        out.push(r);
    }
    out
}

fn join<'a>(it: impl Iterator<Item = &'a str>) -> String {
    let mut v: Vec<&str> = it.collect();
    v.dedup();
    v.join("+")
}
