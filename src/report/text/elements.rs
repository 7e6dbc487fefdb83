//! Text of `eigentherm diagonal` and `eigentherm offdiagonal`.

use crate::analysis::diagonal::{Deviation, DiagonalResult};
use crate::analysis::ensemble::figures::FigureEnsemble;
use crate::analysis::offdiagonal::OffdiagonalResult;
use crate::analysis::sector::ElementsOutput;
use crate::project::PredictionStates;

fn opt(x: Option<f64>) -> String {
    x.map_or("-".to_string(), |v| format!("{v:.5}"))
}

/// Text of `eigentherm diagonal`: per observable the window's figures, the smooth A(E)
/// table with the thermal predictions, and their deviations.
pub fn diagonal_text(r: &ElementsOutput<DiagonalResult>) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    for s in &r.sectors {
        let _ = writeln!(
            t,
            "{} [{}]: {} states{}",
            s.file,
            s.name,
            s.n_states,
            s.dim.map_or(String::new(), |d| format!(", dimension {d}"))
        );
        let _ = writeln!(
            t,
            "  predictions from {} states; time: read {:.2} s (waited), project {:.2} s, analyze {:.2} s",
            match s.prediction_states.unwrap_or(PredictionStates::All) {
                PredictionStates::All => "all",
                PredictionStates::Window => "the window's",
            },
            s.timing.read_seconds,
            s.timing.project_seconds,
            s.timing.analyze_seconds
        );
        for o in &s.observables {
            let _ = writeln!(
                t,
                "  {}: window {} ({} states), mean A_nn = {:.6}",
                o.name, o.window, o.states, o.mean
            );
            let _ = writeln!(
                t,
                "    |A_n+1 - A_n|: mean {:.4e}, max {:.4e}; fluct_variance = {:.4e} ± {:.1e}; residual rms {:.4e}",
                o.diff_mean_abs, o.diff_max_abs, o.fluct_variance, o.fluct_variance_stderr, o.residual_rms
            );
            let _ = writeln!(t, "    smooth A(E): {}", o.smooth_rule);
            let _ = writeln!(
                t,
                "    {:>10} {:>6} {:>10} {:>10} {:>10} {:>10} {:>10}",
                "E", "count", "A(E)", "stderr", "micro", "beta", "canonical"
            );
            for b in &o.smooth {
                let _ = writeln!(
                    t,
                    "    {:>10.4} {:>6} {:>10.5} {:>10} {:>10} {:>10} {:>10}",
                    b.energy,
                    b.count,
                    b.mean,
                    opt(b.stderr),
                    opt(b.microcanonical),
                    opt(b.beta),
                    opt(b.canonical)
                );
            }
            let p = &o.predictions;
            let dev = |d: &Option<Deviation>| {
                d.as_ref().map_or("-".to_string(), |d| {
                    format!(
                        "max {:.4e}, rms {:.4e} over {} bins",
                        d.max_abs, d.rms, d.bins
                    )
                })
            };
            let _ = writeln!(
                t,
                "    A(E) - microcanonical (shell half-width {:.4}): {}",
                p.microcanonical_half_width,
                dev(&p.microcanonical)
            );
            let _ = writeln!(t, "    A(E) - canonical at beta(E): {}", dev(&p.canonical));
            let _ = writeln!(
                t,
                "    thermal source: {}{}",
                p.thermo_source,
                p.thermo
                    .as_ref()
                    .map_or(" (the stored states)".to_string(), |d| format!(": {d}"))
            );
            if let Some(note) = &p.note {
                let _ = writeln!(t, "    note: {note}");
            }
        }
    }
    t.push_str(&ensembles_text(&r.ensembles));
    t
}

/// Text of `eigentherm offdiagonal`: per observable the low-frequency figures, the
/// plateau and the logarithmic envelope table.
pub fn offdiagonal_text(r: &ElementsOutput<OffdiagonalResult>) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    for s in &r.sectors {
        let _ = writeln!(t, "{} [{}]: {} states", s.file, s.name, s.n_states);
        for o in &s.observables {
            let _ = writeln!(
                t,
                "  {}: window {} ({} states, {} elements), mean level spacing {:.4e}",
                o.name, o.window, o.states, o.field, o.mean_level_spacing
            );
            let _ = writeln!(
                t,
                "    omega_max = {:.4e} ({})",
                o.omega_max, o.omega_max_rule
            );
            let _ = writeln!(
                t,
                "    pairs {}: low_omega_variance {:.4e} ± {:.1e}",
                o.pairs, o.low_omega_variance, o.low_omega_variance_stderr
            );
            let _ = writeln!(
                t,
                "    gaussian_ratio {:.4} ± {:.4} (Gaussian: {:.4}); excess kurtosis {:.3} (Gaussian: 0)",
                o.gaussian_ratio, o.gaussian_ratio_stderr, o.gaussian_ratio_expected, o.excess_kurtosis
            );
            let _ = writeln!(
                t,
                "    diag_offdiag_ratio {:.4} ± {:.4} (random-matrix value: {}), fluct_variance {:.4e}",
                o.diag_offdiag_ratio,
                o.diag_offdiag_ratio_stderr,
                o.diag_offdiag_ratio_expected,
                o.fluct_variance
            );
            match &o.plateau {
                Some(p) => {
                    let _ = writeln!(
                        t,
                        "    envelope flat (random-matrix regime) up to omega = {:.4e}, plateau {:.4e}",
                        p.omega, p.value
                    );
                }
                None => {
                    let _ = writeln!(t, "    envelope: too few pairs to locate a plateau");
                }
            }
            let _ = writeln!(
                t,
                "    envelope (log bins; |f|^2 = e^S |A|^2, DOS width {:.4}, S(E) from {}):",
                o.dos_width, o.thermo_source
            );
            let _ = writeln!(
                t,
                "    {:>11} {:>8} {:>11} {:>11} {:>11}",
                "omega", "count", "|A|^2", "stderr", "|f|^2"
            );
            for b in &o.envelope_log {
                let err = if b.mean_sq_stderr.is_finite() {
                    format!("{:.1e}", b.mean_sq_stderr)
                } else {
                    "-".to_string()
                };
                let _ = writeln!(
                    t,
                    "    {:>11.4e} {:>8} {:>11.4e} {:>11} {:>11.4e}",
                    b.omega, b.count, b.mean_sq, err, b.f_sq
                );
            }
        }
    }
    t.push_str(&ensembles_text(&r.ensembles));
    t
}

/// Realization averages of the figures (empty without ensembles).
fn ensembles_text(ensembles: &[FigureEnsemble]) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    if ensembles.is_empty() {
        return t;
    }
    let _ = writeln!(
        t,
        "realization averages (same observable, size, disorder and label; error = sample sd / sqrt(n))"
    );
    for e in ensembles {
        let _ = writeln!(
            t,
            "  {} | {} | L = {} | W = {} | n = {}",
            e.observable,
            e.label,
            e.size.map_or("-".to_string(), |l| l.to_string()),
            e.disorder.map_or("-".to_string(), |w| w.to_string()),
            e.realizations
        );
        for f in &e.figures {
            let _ = writeln!(
                t,
                "    {:<26} {:>12.5e} +/- {:<10.3e} (sample sd {:.3e}{})",
                f.figure,
                f.mean,
                f.stderr,
                f.spread,
                if f.missing > 0 {
                    format!(", {} realizations without a value", f.missing)
                } else {
                    String::new()
                }
            );
        }
    }
    t
}
