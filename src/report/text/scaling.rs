//! Text of `eigentherm scaling` (the table, the fits, the verdicts with their rule and
//! caveat) and the verdict lines that `study` and `demo` print.

use crate::analysis::scaling::ScalingReport;
use crate::report::study::tables::scaling_table;

/// Human-readable rendering: the table, the fits, the verdicts with their rule and caveat.
pub fn scaling_text(report: &ScalingReport) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    if let Ok(t) = scaling_table(report) {
        let _ = writeln!(s, "{}", t.to_markdown());
    }
    s.push_str(&super::ensembles_text(
        &report.ensembles,
        report.disorder_scan.as_ref(),
    ));
    let _ = writeln!(
        s,
        "Fits (figure ∝ D^-alpha; figure ∝ exp(-kappa L) where sizes are known):"
    );
    for f in &report.fits {
        let _ = write!(
            s,
            "  {:<40} {:<20} alpha = {}",
            f.family,
            f.figure,
            crate::report::table::format_uncertain(f.alpha, f.alpha_stderr)
        );
        if let Some(e) = &f.exponential {
            let _ = write!(
                s,
                "   kappa = {}",
                crate::report::table::format_uncertain(e.exponent, e.exponent_stderr)
            );
        }
        let _ = writeln!(
            s,
            "   (chi2/dof {:.2}, {} points)",
            f.power_law.chi2_per_dof, f.power_law.points
        );
    }
    let _ = writeln!(s, "\nVerdicts:");
    for v in &report.verdicts {
        let _ = writeln!(s, "  {}: {}", v.family, v.verdict.verdict);
        for r in &v.verdict.reasons {
            let _ = writeln!(s, "    - {r}");
        }
    }
    if let Some(v) = report.verdicts.first() {
        let _ = writeln!(s, "\n{}\n\nCaveat: {}", v.verdict.rule, v.verdict.caveat);
    }
    s
}

/// Verdict lines for the terminal, with the rule reference and the caveat.
pub fn verdicts_text(s: &ScalingReport) -> String {
    use std::fmt::Write;
    let mut t = String::new();
    for v in &s.verdicts {
        let _ = writeln!(t, "{:<48} {}", v.family, v.verdict.verdict);
        for r in &v.verdict.reasons {
            let _ = writeln!(t, "    - {r}");
        }
    }
    if let Some(v) = s.verdicts.first() {
        let _ = writeln!(
            t,
            "Rule: thresholds as printed in report.html and the README. Caveat: {}",
            v.verdict.caveat
        );
    }
    t
}
