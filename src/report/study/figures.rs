//! The figures of a study: ⟨r̃⟩ against size, spacing distributions, diagonal elements
//! against energy, off-diagonal envelopes and the fluctuation scaling of each family, and
//! the quench traces and temporal fluctuations.

use crate::analysis::diagonal::binned_curves;
use crate::analysis::offdiagonal::PLATEAU_MIN_COUNT;
use crate::analysis::quench::outcome::FileResult;
use crate::analysis::scaling::{Row, ScalingReport, MEAN_R_GOE, MEAN_R_GUE, MEAN_R_POISSON};
use crate::analysis::sector::{ObservableAnalysis, SectorAnalysis};
use crate::analysis::study::QuenchStudy;
use crate::report::plot::{Axis, Bin, Figure, Legend, Series, Style};
use std::path::Path;

/// A figure with its file stem and caption.
pub type Named = (String, Figure, String);

/// Every figure of the per-sector analyses and the scaling table, in report order.
pub fn figures(analyses: &[SectorAnalysis], scaling: &ScalingReport) -> Vec<Named> {
    // realizations are drawn averaged ([`super::ensemble_figures`]), not one by one
    let single: Vec<&SectorAnalysis> = analyses
        .iter()
        .filter(|a| a.realization.is_none())
        .collect();
    let mut out: Vec<Named> = Vec::new();
    if !single.is_empty() {
        out.push(mean_r_figure(&single));
    }
    out.extend(spacing_figures(&single));
    let mut fams: Vec<String> = scaling.rows.iter().map(|r| r.family.clone()).collect();
    fams.dedup();
    for fam in fams {
        let rows: Vec<&Row> = scaling.rows.iter().filter(|r| r.family == fam).collect();
        let Some(obs) = rows.first().map(|r| r.observable.clone()) else {
            continue;
        };
        let members: Vec<&SectorAnalysis> = analyses
            .iter()
            .filter(|a| {
                rows.iter().any(|r| {
                    // an averaged row is drawn from its first realization
                    r.member == format!("{}:{}", a.file, a.sector)
                        || (r.file.split('+').any(|f| f == a.file)
                            && r.sector.split('+').any(|s| s == a.sector))
                })
            })
            .collect();
        let stem = slug(&fam);
        if let Some(a) = members.iter().max_by_key(|a| a.dimension) {
            if let Some(o) = a.observables.iter().find(|o| o.name == obs) {
                out.push(diagonal_figure(a, o, &obs, &stem));
                out.extend(envelope_figure(&members, &obs, &stem));
            }
        }
        out.extend(fluctuation_figure(scaling, &fam, &rows, &obs, &stem));
    }
    out
}

/// ⟨r̃⟩ against size with the three references.
fn mean_r_figure(analyses: &[&SectorAnalysis]) -> Named {
    let x_title = if analyses.iter().all(|a| a.size.is_some()) {
        "L (sites)"
    } else {
        "D (Hilbert-space dimension)"
    };
    let sized = analyses.iter().all(|a| a.size.is_some());
    let mut fig = Figure::new(x_title, "⟨r̃⟩")
        .reference(MEAN_R_POISSON, "Poisson")
        .reference(MEAN_R_GOE, "GOE")
        .reference(MEAN_R_GUE, "GUE")
        .y_range(0.3, 0.65)
        .legend(Legend::LowerRight);
    for (k, (key, members)) in group_by(analyses, |a| {
        format!("{} {}", a.model.clone().unwrap_or_default(), a.sector)
    })
    .into_iter()
    .enumerate()
    {
        let mut pts: Vec<(f64, f64, f64)> = members
            .iter()
            .map(|a| {
                (
                    if sized {
                        a.size.unwrap_or(0) as f64
                    } else {
                        a.dimension as f64
                    },
                    a.levels.mean_r,
                    a.levels.mean_r_stderr,
                )
            })
            .collect();
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        fig = fig.series(
            Series::points(key.trim(), pts.iter().map(|p| (p.0, p.1)).collect())
                .with_errors(pts.iter().map(|p| p.2).collect())
                .style(Style::LinePoints)
                .color(k),
        );
    }
    ("mean_r".into(), fig, "Mean ratio of consecutive level spacings ⟨r̃⟩ in the levels window against system size, with the Poisson (0.3863), GOE (0.5307) and GUE (0.5996) references (Atas et al. 2013).".into())
}

/// Unfolded spacing histogram of the largest sector of each family, with the surmises.
fn spacing_figures(analyses: &[&SectorAnalysis]) -> Vec<Named> {
    let mut out: Vec<Named> = Vec::new();
    for (key, members) in group_by(analyses, |a| {
        format!("{} {}", a.model.clone().unwrap_or_default(), a.sector)
    }) {
        let Some(a) = members.iter().max_by_key(|a| a.dimension) else {
            continue;
        };
        let h = &a.levels.spacing_histogram;
        if h.is_empty() {
            continue;
        }
        let bins: Vec<Bin> = h
            .iter()
            .map(|b| Bin {
                lo: b.lo,
                hi: b.hi,
                value: b.density,
            })
            .collect();
        let centre = |f: &dyn Fn(&crate::analysis::levels::HistBin) -> f64| -> Vec<(f64, f64)> {
            h.iter().map(|b| (0.5 * (b.lo + b.hi), f(b))).collect()
        };
        let fig = Figure::new("s (unfolded spacing)", "P(s)")
            .histogram(format!("{} (D = {})", a.label, a.dimension), bins)
            .series(Series::line("Poisson e^(−s)", centre(&|b| b.poisson)).color(1))
            .series(Series::line("GOE surmise", centre(&|b| b.goe)).color(2))
            .series(
                Series::line("GUE surmise", centre(&|b| b.gue))
                    .style(Style::Dashed)
                    .color(3),
            )
            .legend(Legend::UpperRight);
        out.push((
            format!("spacings_{}", slug(&key)),
            fig,
            format!(
                "Unfolded nearest-neighbour spacing distribution of {} (D = {}), with the Poisson and Wigner-surmise curves (Mehta 2004); KS distances: Poisson {:.3}, GOE {:.3}, GUE {:.3}.",
                a.label, a.dimension, a.levels.ks_poisson, a.levels.ks_goe, a.levels.ks_gue
            ),
        ));
    }
    out
}

/// Palette index of the canonical prediction in the diagonal figure (black).
const CANONICAL_COLOR: usize = 6;

/// `Aₙₙ` against energy of the largest sector of a family, with the binned mean and the
/// canonical prediction.
fn diagonal_figure(a: &SectorAnalysis, o: &ObservableAnalysis, obs: &str, stem: &str) -> Named {
    let step = (o.points.len() / 2500).max(1);
    let pts: Vec<(f64, f64)> = o.points.iter().step_by(step).copied().collect();
    let curves = binned_curves(&o.points, 30);
    let mut fig = Figure::new("E (energy units of H)", format!("⟨n|{obs}|n⟩"));
    // the smooth bins span the analysis window's energies, first state to last
    let smooth = &o.diagonal.smooth;
    if let (Some(first), Some(last)) = (smooth.first(), smooth.last()) {
        if first.energy_lo < last.energy_hi {
            fig = fig.band(first.energy_lo, last.energy_hi, "analysis window");
        }
    }
    fig = fig
        .series(Series::points(format!("A_nn, {}", a.label), pts).color(0))
        .series(
            Series::line("binned A(E)", curves.iter().map(|c| (c.0, c.1)).collect())
                .with_errors(curves.iter().map(|c| c.2).collect())
                .style(Style::LinePoints)
                .color(1),
        )
        .legend(Legend::UpperLeft);
    let can: Vec<(f64, f64)> = curves
        .iter()
        .filter_map(|c| c.3.map(|v| (c.0, v)))
        .collect();
    if !can.is_empty() {
        // drawn last, dashed and dark, so that the markers never hide it
        fig = fig.series(
            Series::line("canonical at β(E)", can)
                .style(Style::Dashed)
                .color(CANONICAL_COLOR),
        );
    }
    (
        format!("diagonal_{stem}"),
        fig,
        format!(
            "Diagonal matrix elements of {obs} against energy in {} (D = {}): the binned mean A(E) over 30 \
             equal-width energy bins with standard errors, and the canonical prediction Σₙe^(−βEₙ)Aₙₙ/Z at \
             β(E) solving ⟨H⟩_β = E (dashed, on top). The shaded band is the analysis window {} ({}).",
            a.label,
            a.dimension,
            o.diagonal.window,
            o.diagonal.smooth_rule
        ),
    )
}

/// The envelope of every size of a family: bins of at least [`PLATEAU_MIN_COUNT`] pairs
/// with their jackknife errors, and the mean level spacing and the random-matrix scale of
/// the largest size as vertical lines.
fn envelope_figure(members: &[&SectorAnalysis], obs: &str, stem: &str) -> Option<Named> {
    let mut env = Figure::new("ω (energy units)", "|f(Ē, ω)|² = e^S(Ē) ⟨|A_nm|²⟩")
        .axes(Axis::Log, Axis::Log)
        .legend(Legend::LowerLeft);
    let mut sorted = members.to_vec();
    sorted.sort_by_key(|a| a.dimension);
    let mut largest = None;
    for (k, m) in sorted.iter().enumerate() {
        if let Some(off) = m
            .observables
            .iter()
            .find(|o| o.name == obs)
            .and_then(|o| o.offdiagonal.as_ref())
        {
            let bins: Vec<_> = off
                .envelope_log
                .iter()
                .filter(|b| b.count >= PLATEAU_MIN_COUNT && b.f_sq > 0.0)
                .collect();
            if !bins.is_empty() {
                largest = Some(off);
                env = env.series(
                    Series::points(
                        format!("D = {}", m.dimension),
                        bins.iter().map(|b| (b.omega, b.f_sq)).collect(),
                    )
                    .with_errors(bins.iter().map(|b| b.f_sq_stderr).collect())
                    .style(Style::LinePoints)
                    .color(k),
                );
            }
        }
    }
    let off = largest?;
    let mut marks = Vec::new();
    if off.mean_level_spacing > 0.0 {
        env = env.vertical(off.mean_level_spacing, "Δ̄");
        marks.push("the mean level spacing Δ̄");
    }
    if let Some(p) = off.plateau.as_ref().filter(|p| p.omega > 0.0) {
        env = env.vertical(p.omega, "ω_RM");
        marks.push("the random-matrix scale ω_RM (end of the low-ω plateau)");
    }
    let marks = if marks.is_empty() {
        String::new()
    } else {
        format!(
            " Dotted vertical lines: {} of the largest size.",
            marks.join(" and ")
        )
    };
    Some((
            format!("envelope_{stem}"),
            env,
            format!("Off-diagonal envelope of {obs}: mean |A_nm|² in logarithmic ω bins, rescaled by e^S(Ē) with S the entropy of the smoothed density of states, with jackknife errors; bins of fewer than {PLATEAU_MIN_COUNT} pairs are left out. Under ETH the curves of different sizes collapse onto |f(ω)|².{marks}"),
        ))
}

/// The fluctuation variance against D with the power-law fit.
fn fluctuation_figure(
    scaling: &ScalingReport,
    fam: &str,
    rows: &[&Row],
    obs: &str,
    stem: &str,
) -> Option<Named> {
    // no evidence when every diagonal element vanishes by symmetry: no figure, no fit
    if rows.iter().all(|r| r.diagonal_vanishes) {
        return None;
    }
    let pts: Vec<&&Row> = rows.iter().filter(|r| r.residual_variance > 0.0).collect();
    if pts.len() < 2 {
        return None;
    }
    let mut fig = Figure::new("D (Hilbert-space dimension)", "variance of Aₙₙ about A(E)")
        .axes(Axis::Log, Axis::Log)
        .series(
            Series::points(
                "measured",
                pts.iter()
                    .map(|r| (r.dimension, r.residual_variance))
                    .collect(),
            )
            .with_errors(pts.iter().map(|r| r.residual_variance_stderr).collect())
            .color(0),
        )
        .legend(Legend::UpperRight);
    if let Some(f) = scaling
        .fits
        .iter()
        .find(|f| f.family == fam && f.figure == "residual_variance")
    {
        let (d0, d1) = (pts[0].dimension, pts[pts.len() - 1].dimension);
        let line: Vec<(f64, f64)> = (0..=20)
            .map(|i| d0 * (d1 / d0).powf(i as f64 / 20.0))
            .map(|d| (d, f.power_law.predict(d)))
            .collect();
        fig = fig.series(
            Series::line(format!("fit ∝ {}", power_of_d(-f.alpha)), line)
                .style(Style::Dashed)
                .color(1),
        );
    }
    Some((
            format!("fluct_{stem}"),
            fig,
            format!("Variance of the diagonal elements of {obs} about their smooth part A(E) (local linear fit; jackknife errors over states) against Hilbert-space dimension, with the weighted power-law fit (ETH expects ∝ D^−1; Kim, Ikeda, Huse 2014, from memory)."),
        ))
}

/// The scale of a quench's values: the largest finite `|⟨A(t)⟩|` or reference value of the
/// runs (for [`snap_zero`]).
pub(crate) fn quench_scale(runs: &[&FileResult]) -> f64 {
    runs.iter()
        .flat_map(|r| {
            let o = &r.overall;
            o.trace
                .iter()
                .map(|p| p.value)
                .chain([o.diagonal_ensemble])
                .chain(o.microcanonical.map(|m| m.value))
                .chain(o.canonical)
        })
        .map(f64::abs)
        .filter(|v| v.is_finite())
        .fold(0.0f64, f64::max)
}

/// `v`, or 0 when `|v|` is below `1e-9 · scale` (round-off of a value that vanishes, e.g. a
/// canonical value of an observable whose thermal mean is zero by symmetry).
pub(crate) fn snap_zero(v: f64, scale: f64) -> f64 {
    if v.abs() < 1e-9 * scale {
        0.0
    } else {
        v
    }
}

/// `D^−0.93` for the exponent `−0.93`, `D^+0.20` for `0.20` (one sign, never `D^−-x`).
pub fn power_of_d(exponent: f64) -> String {
    if exponent < 0.0 {
        format!("D^−{:.2}", -exponent)
    } else {
        format!("D^+{exponent:.2}")
    }
}

/// Legend label of one quench run: `L = size` (or `D = dimension`) and the file stem.
fn run_label(r: &FileResult) -> String {
    let stem = Path::new(&r.file)
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    match r.size {
        Some(l) => format!("L = {l} ({stem})"),
        None => format!("D = {} ({stem})", r.dimension),
    }
}

/// Runs of one quench grouped by model family, each group sorted by size (then dimension).
pub fn quench_families(q: &QuenchStudy) -> Vec<(String, Vec<&FileResult>)> {
    let mut fams: Vec<(String, Vec<&FileResult>)> = Vec::new();
    for r in &q.runs {
        let key = r.model.clone().unwrap_or_default();
        match fams.iter_mut().find(|(k, _)| *k == key) {
            Some((_, v)) => v.push(r),
            None => fams.push((key, vec![r])),
        }
    }
    for (_, v) in &mut fams {
        v.sort_by_key(|r| (r.size, r.dimension));
    }
    fams
}

/// Quench figures: per (observable, state, family) the trace ⟨A(t)⟩ of every size with the
/// reference values of the largest, and σ² against D_eff across sizes with the bound.
pub fn quench_figures(quench: &[QuenchStudy]) -> Vec<Named> {
    let mut out: Vec<Named> = Vec::new();
    for q in quench {
        for (fam, runs) in quench_families(q) {
            let Some(big) = runs.last() else { continue };
            let stem = slug(&format!("{} {} {}", q.observable, q.state, fam));
            let famtxt = if fam.is_empty() {
                String::new()
            } else {
                format!(" ({fam})")
            };
            let o = &big.overall;
            // the values in the labels tell close lines apart (their labels are stacked in
            // the order of the values)
            // a value below 1e-9 of the figure's scale (the largest |⟨A(t)⟩| or reference)
            // is round-off of zero and reads 0
            let scale = quench_scale(&runs);
            let value = |v: f64| crate::report::table::format_value(snap_zero(v, scale));
            let mut fig = Figure::new("t (ħ / energy unit)", format!("⟨{}(t)⟩", q.observable))
                .legend(Legend::UpperRight)
                .reference(
                    o.diagonal_ensemble,
                    format!("diagonal ensemble {}", value(o.diagonal_ensemble)),
                );
            if let Some(m) = o.microcanonical.map(|m| m.value) {
                fig = fig.reference(m, format!("microcanonical {}", value(m)));
            }
            if let Some(c) = o.canonical {
                fig = fig.reference(c, format!("canonical {}", value(c)));
            }
            for (k, r) in runs.iter().enumerate() {
                fig = fig.series(
                    Series::line(
                        run_label(r),
                        r.overall.trace.iter().map(|p| (p.t, p.value)).collect(),
                    )
                    .color(k),
                );
            }
            out.push((
                format!("quench_trace_{stem}"),
                fig,
                format!(
                    "Quench of {}{famtxt} from the state {}: ⟨A(t)⟩ = Σₙₘ cₙ* cₘ Aₙₘ e^(i(Eₙ−Eₘ)t) for every size, with the diagonal-ensemble value Σₙ |cₙ|² Aₙₙ, the microcanonical value at E and the canonical value at β(E) of the largest size ({}) as horizontal lines.",
                    q.observable,
                    q.state,
                    run_label(big)
                ),
            ));
            let pts = |f: &dyn Fn(&crate::analysis::quench::Overall) -> f64| -> Vec<(f64, f64)> {
                runs.iter()
                    .map(|r| (r.overall.d_eff, f(&r.overall)))
                    .filter(|p| p.0 > 0.0 && p.1 > 0.0)
                    .collect()
            };
            let measured = pts(&|o| o.sigma2);
            if measured.is_empty() {
                continue;
            }
            let fig = Figure::new("D_eff = 1/Σₙ pₙ²", "σ² (infinite-time variance)")
                .axes(Axis::Log, Axis::Log)
                .legend(Legend::LowerLeft)
                .series(
                    Series::points("σ²", measured)
                        .style(Style::LinePoints)
                        .color(0),
                )
                .series(
                    Series::points("σ²_ETH (envelope estimate)", pts(&|o| o.sigma2_eth)).color(1),
                )
                .series(
                    Series::line("bound ((λmax−λmin)/2)²/D_eff", pts(&|o| o.bound))
                        .style(Style::Dashed)
                        .color(2),
                );
            out.push((
                format!("quench_fluct_{stem}"),
                fig,
                format!(
                    "Temporal fluctuations of {}{famtxt} after the quench from {}: σ² = Σ_(n≠m) pₙpₘ|Aₙₘ|² against the effective dimension D_eff across sizes, with the ETH estimate from the off-diagonal envelope and the bound σ² ≤ ((λmax−λmin)/2)²/D_eff (Reimann 2008; Short 2011; from memory). Fluctuations that fall as 1/D_eff signal relaxation.",
                    q.observable, q.state
                ),
            ));
        }
    }
    out
}

fn group_by<'a>(
    analyses: &[&'a SectorAnalysis],
    key: impl Fn(&SectorAnalysis) -> String,
) -> Vec<(String, Vec<&'a SectorAnalysis>)> {
    let mut out: Vec<(String, Vec<&SectorAnalysis>)> = Vec::new();
    for &a in analyses {
        let k = key(a);
        match out.iter_mut().find(|(kk, _)| *kk == k) {
            Some((_, v)) => v.push(a),
            None => out.push((k, vec![a])),
        }
    }
    out
}

pub fn slug(s: &str) -> String {
    let mut out = String::new();
    for c in s.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if !out.ends_with('_') {
            out.push('_');
        }
    }
    out.trim_matches('_').to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponents_carry_one_sign() {
        // a fit exponent of −1.61 is D^−1.61, never D^−-1.61 (common practice, no source)
        assert_eq!(power_of_d(-1.61), "D^−1.61");
        assert_eq!(power_of_d(0.2), "D^+0.20");
        // a reference value at round-off of zero against a trace of size 0.3 reads 0, a
        // small but real one keeps its digits (common practice, no source)
        assert_eq!(snap_zero(5.321e-17, 0.3), 0.0);
        assert_eq!(snap_zero(-2.0e-10, 0.3), 0.0);
        assert_eq!(snap_zero(4.0e-10, 0.3), 4.0e-10);
        assert_eq!(snap_zero(1e-17, 0.0), 1e-17);
    }
}
