//! Text of `eigentherm levels`: one block per (file, sector) with ⟨r̃⟩ beside the three
//! references, KS distances, small-spacing density, number variance, form factor,
//! degeneracies, verdict and warnings.

use crate::analysis::levels::{self, SectorLevels};
use std::fmt::Write as _;

/// Compact human-readable text of the level statistics: one block per (file, sector)
/// with the measured ⟨r̃⟩ beside the three references, KS distances, degeneracies,
/// number variance and form-factor summary, verdict and warnings.
pub fn levels_text(sectors: &[SectorLevels]) -> String {
    let mut s = String::new();
    for e in sectors {
        let r = &e.report;
        let _ = writeln!(
            s,
            "{}  sector {}  window {} (indices {}..{}, {} of {} levels)",
            e.file,
            e.name,
            r.window,
            r.window_indices[0],
            r.window_indices[1],
            r.states,
            r.total_states
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10} {:>9} {:>9} {:>9}",
            "", "measured", "Poisson", "GOE", "GUE"
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10.4} {:>9.4} {:>9.4} {:>9.4}   (+/- {:.4}, {} ratios{})",
            "mean r (spacing ratio)",
            r.mean_r,
            r.reference_mean_r[0],
            r.reference_mean_r[1],
            r.reference_mean_r[2],
            r.mean_r_stderr,
            r.ratios,
            if r.skipped_ratios > 0 {
                format!(", {} skipped", r.skipped_ratios)
            } else {
                String::new()
            }
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10} {:>9.4} {:>9.4} {:>9.4}   (nearest: {})",
            "KS distance, unfolded P(s)", "", r.ks_poisson, r.ks_goe, r.ks_gue, r.nearest_ensemble
        );
        let _ = writeln!(
            s,
            "  {:<28} {:>10.3} {:>9.3} {:>9.3} {:>9.3}",
            "density of spacings < 0.25",
            r.small_spacing_density,
            levels::Ensemble::Poisson.spacing_cdf(levels::SMALL_SPACING) / levels::SMALL_SPACING,
            levels::Ensemble::Goe.spacing_cdf(levels::SMALL_SPACING) / levels::SMALL_SPACING,
            levels::Ensemble::Gue.spacing_cdf(levels::SMALL_SPACING) / levels::SMALL_SPACING,
        );
        for p in &r.number_variance {
            let _ = writeln!(
                s,
                "  {:<28} {:>10} {:>9.3} {:>9.3} {:>9.3}",
                format!("number variance L = {}", p.l),
                p.sigma2.map_or("-".to_string(), |v| format!("{v:.3}")),
                p.poisson,
                p.goe_asymptote,
                p.gue_asymptote
            );
        }
        let f = &r.form_factor;
        let _ = writeln!(
            s,
            "  form factor: plateau {:.3} (expected 1), ramp reaches 0.8 x plateau at tau = {} (GOE 0.73, GUE 0.8, Poisson at once); Heisenberg time 2pi/mean spacing = {:.4e}",
            f.plateau,
            f.plateau_onset
                .map_or("-".to_string(), |t| format!("{t:.3}")),
            f.heisenberg_time
        );
        if let Some(t) = &f.thouless {
            let _ = writeln!(s, "  {}", thouless_line(t));
        }
        let _ = writeln!(
            s,
            "  degenerate pairs: {} (|dE| < {:e} x mean spacing); unfolding: {}",
            r.degenerate_pairs, r.degeneracy_tol_relative, r.unfolding.method
        );
        let _ = writeln!(s, "  verdict: {}", r.verdict);
        for w in &r.warnings {
            let _ = writeln!(s, "  warning: {w}");
        }
        s.push('\n');
    }
    s
}

/// The realization averages (one line per ensemble) and the disorder scan (⟨r̃⟩ against W
/// per size, and the crossings with their rule); empty without ensembles.
pub fn ensembles_text(out: &levels::LevelsOutput) -> String {
    let mut s = String::new();
    if out.ensembles.is_empty() {
        return s;
    }
    let _ = writeln!(
        s,
        "realization averages (ensembles: same size, disorder and label; error = sample-to-sample sd / sqrt(n))"
    );
    let _ = writeln!(
        s,
        "  {:<28} {:>5} {:>8} {:>4} {:>9} {:>9} {:>9} {:>10} {:>6}",
        "label", "size", "W", "n", "mean r", "+/-", "spread", "tau_Th", "g"
    );
    for e in &out.ensembles {
        let th = e.form_factor.as_ref().map(|f| &f.thouless);
        let _ = writeln!(
            s,
            "  {:<28} {:>5} {:>8} {:>4} {:>9.4} {:>9.4} {:>9.4} {:>10} {:>6}",
            e.label,
            e.size.map(|l| l.to_string()).unwrap_or("-".into()),
            e.disorder.map(|w| format!("{w}")).unwrap_or("-".into()),
            e.realizations,
            e.mean_r,
            e.mean_r_stderr,
            e.mean_r_spread,
            th.and_then(|t| t.tau)
                .map_or("-".to_string(), |t| format!("{t:.3e}")),
            th.and_then(|t| t.g)
                .map_or("-".to_string(), |g| format!("{g:.2}"))
        );
        for w in &e.warnings {
            let _ = writeln!(s, "    warning: {w}");
        }
    }
    if let Some(t) = out
        .ensembles
        .iter()
        .find_map(|e| e.form_factor.as_ref().map(|f| &f.thouless))
    {
        let _ = writeln!(
            s,
            "  tau_Th: Thouless time of the realization-averaged connected form factor in Heisenberg times ({}); g = log10(t_H / t_Th)",
            t.criterion
        );
    }
    if let Some(scan) = &out.disorder_scan {
        let _ = writeln!(
            s,
            "disorder scan: mean r against W (Poisson 0.3863, GOE 0.5307)"
        );
        for c in &scan.curves {
            let pts: Vec<String> = c
                .points
                .iter()
                .map(|p| format!("W={} {:.4}+/-{:.4}", p.disorder, p.mean_r, p.mean_r_stderr))
                .collect();
            let _ = writeln!(s, "  L={:<3} {}", c.size, pts.join("  "));
        }
        for c in &scan.crossings {
            match (c.disorder, c.disorder_stderr) {
                (Some(w), Some(e)) => {
                    let _ = writeln!(
                        s,
                        "  crossing L={} / L={}: W* = {w:.3} +/- {e:.3} ({} of {} resamples without a crossing)",
                        c.size_small, c.size_large, c.resamples_without_crossing, c.resamples
                    );
                }
                (Some(w), None) => {
                    let _ = writeln!(
                        s,
                        "  crossing L={} / L={}: W* = {w:.3} (no bootstrap error)",
                        c.size_small, c.size_large
                    );
                }
                _ => {
                    let _ = writeln!(
                        s,
                        "  crossing L={} / L={}: none in the scanned range",
                        c.size_small, c.size_large
                    );
                }
            }
        }
        for n in &scan.notes {
            let _ = writeln!(s, "  note: {n}");
        }
        let _ = writeln!(s, "  rule: {}", scan.rule);
    }
    s
}

/// One line on a Thouless time.
fn thouless_line(t: &crate::analysis::levels::thouless::ThoulessTime) -> String {
    match (t.tau, t.g) {
        (Some(tau), Some(g)) if t.resolved => format!(
            "Thouless time: tau_Th = {tau:.3e} t_H (t_Th = {:.4e}), g = log10(t_H/t_Th) = {g:.2}; rule: {}",
            tau * t.heisenberg_time,
            t.criterion
        ),
        (Some(tau), _) => format!(
            "Thouless time: not resolved, tau_Th <= {tau:.3e} t_H (the connected K already follows {} in the first bin); rule: {}",
            t.reference, t.criterion
        ),
        _ => format!(
            "Thouless time: none (the connected K still deviates from {} at the Heisenberg time); rule: {}",
            t.reference, t.criterion
        ),
    }
}
