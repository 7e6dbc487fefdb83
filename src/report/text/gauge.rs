//! Text of `eigentherm gauge`.

use crate::analysis::gauge::{GaugeResult, Partners, Typical};
use crate::analysis::sector::ElementsOutput;
use std::fmt::Write;

fn typical_line(t: &mut String, what: &str, x: &Typical) {
    let _ = writeln!(
        t,
        "    {what}: geometric mean {:.4e} ± {:.1e}, median {:.4e} ± {:.1e}, mean {:.4e}, sd of ln {:.3}",
        x.geometric_mean, x.geometric_mean_stderr, x.median, x.median_stderr, x.mean, x.std_log
    );
}

/// The text of `eigentherm gauge`.
pub fn gauge_text(r: &ElementsOutput<GaugeResult>) -> String {
    let mut t = String::new();
    for s in &r.sectors {
        let dim = s.dim.map_or("-".to_string(), |d| d.to_string());
        let _ = writeln!(
            t,
            "{} [{}]: {} states, dimension {dim}",
            s.file, s.name, s.n_states
        );
        for o in &s.observables {
            let _ = writeln!(
                t,
                "  perturbation {}: window {} ({} states), sums over m in {} states {}..={}",
                o.name,
                o.window,
                o.states,
                match o.partners {
                    Partners::All => "all",
                    Partners::Window => "the window's",
                },
                o.partner_states[0],
                o.partner_states[1]
            );
            let _ = writeln!(
                t,
                "    cutoff mu = {:.4e} = {:.3} mean level spacings ({:.4e}); {}",
                o.cutoff, o.cutoff_spacings, o.mean_level_spacing, o.cutoff_rule
            );
            typical_line(&mut t, "chi_n(mu)", &o.chi);
            typical_line(&mut t, "fidelity susceptibility F_n", &o.fidelity);
            let _ = writeln!(
                t,
                "    errors: moving-block bootstrap over eigenstates, block {} states, {} resamples; {} degenerate pair(s) (|w| <= {:.1e}) left out of F_n",
                o.bootstrap_block_states, o.bootstrap_resamples, o.degenerate_pairs, o.degenerate_tolerance
            );
            let _ = writeln!(t, "    log10 chi_n histogram (bin lower edge: states):");
            for b in &o.log_chi_histogram {
                let _ = writeln!(
                    t,
                    "      {:>8.3}: {:>6} {}",
                    b.lo,
                    b.count,
                    "#".repeat(b.count.min(60))
                );
            }
        }
    }
    let _ = writeln!(
        t,
        "Chaotic (ETH) systems: chi_typ grows about as D/L at mu = L spacings; faster growth with D marks the crossover to integrability (Pandey et al., PRX 10, 041017 (2020)). Finite sizes: evidence, not proof."
    );
    t
}
