//! The figures of disorder ensembles: ⟨r̃⟩ against disorder strength for each size (the
//! crossover figure, with the crossings of consecutive sizes), and the realization-averaged
//! connected spectral form factor of each disorder strength with its error band and the
//! GOE/GUE curve.

use super::figures::{slug, Named};
use crate::analysis::ensemble::{DisorderScan, EnsembleAverage};
use crate::analysis::levels::Ensemble;
use crate::analysis::scaling::{ScalingReport, MEAN_R_GOE, MEAN_R_GUE, MEAN_R_POISSON};
use crate::report::plot::{sample_curve_log, Axis, Figure, Legend, Series, Style};

/// The ensemble figures of a scaling report (none without ensembles).
pub fn ensemble_figures(scaling: &ScalingReport) -> Vec<Named> {
    let mut out = Vec::new();
    if let Some(scan) = &scaling.disorder_scan {
        out.push(crossover_figure(scan));
    }
    out.extend(form_factor_figures(&scaling.ensembles));
    out
}

/// ⟨r̃⟩ against W, one curve per size, with the crossings in the caption.
fn crossover_figure(scan: &DisorderScan) -> Named {
    let positive = scan
        .curves
        .iter()
        .flat_map(|c| c.points.iter())
        .all(|p| p.disorder > 0.0);
    let mut fig = Figure::new("W (disorder strength)", "⟨r̃⟩ (realization average)")
        .reference(MEAN_R_POISSON, "Poisson")
        .reference(MEAN_R_GOE, "GOE")
        .y_range(0.35, 0.56)
        .legend(Legend::LowerLeft);
    if positive {
        fig = fig.axes(Axis::Log, Axis::Linear);
    }
    if scan
        .curves
        .iter()
        .flat_map(|c| c.points.iter())
        .any(|p| p.mean_r > 0.56)
    {
        fig = fig.reference(MEAN_R_GUE, "GUE").y_range(0.35, 0.62);
    }
    for (k, c) in scan.curves.iter().enumerate() {
        fig = fig.series(
            Series::points(
                format!("L = {}", c.size),
                c.points.iter().map(|p| (p.disorder, p.mean_r)).collect(),
            )
            .with_errors(c.points.iter().map(|p| p.mean_r_stderr).collect())
            .style(Style::LinePoints)
            .color(k),
        );
    }
    let crossings: Vec<String> = scan
        .crossings
        .iter()
        .map(|c| match (c.disorder, c.disorder_stderr) {
            (Some(w), Some(e)) => format!(
                "L = {} and {} cross at W* = {}",
                c.size_small,
                c.size_large,
                crate::report::table::format_uncertain(w, e)
            ),
            (Some(w), None) => format!(
                "L = {} and {} cross at W* = {w:.3}",
                c.size_small, c.size_large
            ),
            _ => format!("L = {} and {} do not cross", c.size_small, c.size_large),
        })
        .collect();
    let caption = format!(
        "Realization-averaged mean spacing ratio ⟨r̃⟩ against disorder strength W for each size, error bars the sample-to-sample standard error s/√n; Poisson 0.3863 and GOE 0.5307 references (Atas et al. 2013). {}{} Finite-size crossings drift with L (Šuntajs et al. 2020; Sierant et al. 2020): they locate the crossover at these sizes, not a transition.",
        crossings.join("; "),
        if crossings.is_empty() { "" } else { " (linear interpolation; bootstrap error over realizations)." }
    );
    ("crossover".into(), fig, caption)
}

/// One figure per disorder strength: K_c(τ) of each size with its band and the GOE/GUE curve.
fn form_factor_figures(ensembles: &[EnsembleAverage]) -> Vec<Named> {
    let mut strengths: Vec<Option<f64>> = ensembles.iter().map(|e| e.disorder).collect();
    strengths.sort_by(|a, b| a.unwrap_or(f64::NAN).total_cmp(&b.unwrap_or(f64::NAN)));
    strengths.dedup();
    let mut out = Vec::new();
    for w in strengths {
        let members: Vec<&EnsembleAverage> = ensembles
            .iter()
            .filter(|e| e.disorder == w && e.form_factor.is_some())
            .collect();
        let Some(first) = members.first().and_then(|e| e.form_factor.as_ref()) else {
            continue;
        };
        let reference: Ensemble = first.thouless.reference;
        let mut fig = Figure::new("τ = t / t_H", "connected K(τ), realization average")
            .axes(Axis::Log, Axis::Log)
            .legend(Legend::LowerRight);
        let mut lo = f64::INFINITY;
        let mut hi: f64 = 0.0;
        let mut notes = Vec::new();
        for (k, e) in members.iter().enumerate() {
            let Some(f) = &e.form_factor else { continue };
            let pts: Vec<_> = f.table.iter().filter(|p| p.k_connected > 0.0).collect();
            if let (Some(a), Some(b)) = (pts.first(), pts.last()) {
                lo = lo.min(a.tau);
                hi = hi.max(b.tau);
            }
            let size = e.size.map_or("-".to_string(), |l| l.to_string());
            fig = fig.series(
                Series::line(
                    format!("L = {size} ({} realizations)", e.realizations),
                    pts.iter().map(|p| (p.tau, p.k_connected)).collect(),
                )
                .color(k),
            );
            for sign in [-1.0, 1.0] {
                let band: Vec<(f64, f64)> = pts
                    .iter()
                    .map(|p| (p.tau, p.k_connected + sign * p.k_connected_stderr))
                    .filter(|p| p.1 > 0.0)
                    .collect();
                fig = fig.series(Series::line("", band).style(Style::Dashed).color(k));
            }
            notes.push(match f.thouless.tau {
                Some(t) => format!(
                    "L = {size}: τ_Th = {t:.3}, g = {:.2}{}",
                    -t.log10(),
                    if f.thouless.resolved {
                        ""
                    } else {
                        " (upper bound)"
                    }
                ),
                None => format!("L = {size}: no Thouless time up to τ = 1"),
            });
        }
        if !(lo.is_finite() && hi > lo) {
            continue;
        }
        fig = fig.series(
            Series::line(
                reference.label(),
                sample_curve_log(|t| reference.form_factor(t), lo, hi, 200),
            )
            .style(Style::Dashed)
            .color(members.len()),
        );
        let wlabel = w.map_or("no disorder attribute".to_string(), |w| format!("W = {w}"));
        let tol = first.thouless.tolerance;
        out.push((
            format!("form_factor_{}", slug(&wlabel)),
            fig,
            format!(
                "Realization-averaged connected spectral form factor at {wlabel} (Gaussian filter η = {}, unfolded levels, logarithmic time bins), dashed bounds the standard error over realizations, against the {} curve (Mehta 2004). Thouless time: earliest time from which |log10(K_c/K_{})| < {tol} up to τ = 1 (after Šuntajs et al. 2020). {}.",
                first.eta,
                reference.label(),
                reference.label(),
                notes.join("; ")
            ),
        ));
    }
    out
}
