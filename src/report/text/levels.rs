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
