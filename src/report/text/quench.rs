//! Text of `eigentherm quench`: per sector the energy, effective dimension, long-time
//! predictions, fluctuations and a sample of the trace; the combination over sectors.

use crate::analysis::quench::outcome::FileResult;
use crate::analysis::quench::TracePoint;

/// `writeln!` into a `String` (which cannot fail).
macro_rules! w {
    ($s:expr, $($arg:tt)*) => {{
        use std::fmt::Write as _;
        let _ = writeln!($s, $($arg)*);
    }};
}

fn opt(x: Option<f64>) -> String {
    x.map_or("n/a".to_string(), |v| format!("{v:.6}"))
}

/// Human-readable summary of one file's result.
pub fn quench_text(r: &FileResult) -> String {
    let mut out = String::new();
    let o = &mut out;
    w!(
        o,
        "{}: quench of '{}' from {}",
        r.file,
        r.observable,
        r.state
    );
    for s in &r.sectors {
        let q = &s.report;
        w!(
            o,
            "  sector {}: weight {:.6} (on stored eigenstates: {:.6}), {} states",
            s.name,
            s.weight,
            s.captured,
            q.states
        );
        w!(
            o,
            "    E = {:.6} ± {:.6} (energy density {:.4}), β(E) = {}, D_eff = {:.2}",
            q.energy,
            q.energy_width,
            q.energy_density,
            opt(q.beta),
            q.d_eff
        );
        w!(
            o,
            "    kept {} states with {:.12} of the weight (drop {:.1e}); trace error ≤ {:.2e}",
            q.kept,
            q.weight_kept,
            q.drop_weight,
            q.trace_error_bound
        );
        w!(o, "    diagonal ensemble  {:.6}", q.diagonal_ensemble);
        match &q.microcanonical {
            Some(m) => w!(
                o,
                "    microcanonical     {:.6}  (shell E ± {:.4}, {} states)  DE − micro = {}",
                m.value,
                m.half_width,
                m.states,
                opt(q.diff_diagonal_microcanonical)
            ),
            None => w!(o, "    microcanonical     n/a (empty shell)"),
        }
        w!(
            o,
            "    canonical          {}  DE − canonical = {}, micro − canonical = {}",
            opt(q.canonical),
            opt(q.diff_diagonal_canonical),
            opt(q.diff_microcanonical_canonical)
        );
        w!(
            o,
            "    σ² = {:.4e}, ETH estimate σ²_ETH = {:.4e} (ratio {}), bound ((λmax−λmin)/2)²/D_eff = {:.4e} [{}]",
            q.sigma2,
            q.sigma2_eth,
            opt(q.sigma2_eth_ratio),
            q.bound.bound,
            if q.bound.satisfied { "satisfied" } else { "VIOLATED" }
        );
        if q.degenerate_pairs > 0 {
            w!(
            o,
                "    {} degenerate kept pairs: time-independent coherence {:.4e} adds to the long-time mean",
                q.degenerate_pairs, q.degenerate_coherence
            );
        }
        if let Some(ts) = &q.trace_statistics {
            w!(
            o,
                "    trace over t ∈ [{:.4}, {:.4}] ({} points): mean {:.6}, variance {:.4e}, mean square deviation from DE {:.4e}",
                ts.from, ts.to, ts.points, ts.mean, ts.variance, ts.variance_about_diagonal
            );
        }
        trace_text(o, &q.trace);
    }
    if let Some(c) = &r.combined {
        w!(
            o,
            "  combined over sectors (total weight {:.6}): E = {:.6}, β(E) = {}, diagonal ensemble {:.6}, microcanonical {}, canonical {}",
            c.weight,
            c.energy,
            opt(c.beta),
            c.diagonal_ensemble,
            opt(c.microcanonical.map(|m| m.value)),
            opt(c.canonical)
        );
        trace_text(o, &c.trace);
        let whole = &r.overall;
        w!(
            o,
            "  whole state: D_eff = {:.2}, σ² = {:.4e}, σ²_ETH = {:.4e}, bound = {:.4e}",
            whole.d_eff,
            whole.sigma2,
            whole.sigma2_eth,
            whole.bound
        );
    }
    if !r.sectors_without_weight.is_empty() {
        w!(o, "  no weight in: {}", r.sectors_without_weight.join(", "));
    }
    out
}

/// Up to 21 evenly spaced points of a trace.
fn trace_text(o: &mut String, trace: &[TracePoint]) {
    let n = trace.len();
    if n == 0 {
        return;
    }
    let shown = n.min(21);
    w!(
        o,
        "    {:>12}  {:>12}   ({shown} of {n} points; --json for all)",
        "t",
        "<A(t)>"
    );
    for k in 0..shown {
        let i = if shown > 1 {
            k * (n - 1) / (shown - 1)
        } else {
            0
        };
        w!(o, "    {:>12.4}  {:>12.6}", trace[i].t, trace[i].value);
    }
}
