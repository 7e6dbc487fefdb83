//! Realization averages of scaling rows.
//!
//! Rows of sectors that carry the attribute `realization` are grouped by their ensemble
//! key: (model, sector name without its realization component, observable and support,
//! disorder strength, Hilbert-space dimension). The sector name's realization component is
//! its first path component when the sector is nested (`r003/even` → `even`); a top-level
//! realization group (`r003`) or a file holding one realization keeps no sector name (`*`)
//! unless every member shares it. For each figure xₖ of realization k = 1 … n the averaged
//! row reports the realization average x̄ = (1/n) Σₖ xₖ and the sample-to-sample standard
//! error s/√n, s² = Σₖ (xₖ − x̄)²/(n − 1) ([`crate::analysis::ensemble::sample_stats`]):
//! realizations are independent, and their spread contains the within-sample statistical
//! error. Ratios (Γ, diagonal/off-diagonal ratio) are averaged as ratios. With one
//! realization the row keeps its within-sample errors. The per-realization values of the
//! fluctuation figures (`fluct_variance_samples`, `residual_variance_samples`) are kept: the
//! sample-to-sample distribution the disorder literature shows. The Thouless time of an
//! averaged row is that of the realization-averaged connected form factor of its ensemble
//! ([`crate::analysis::levels::thouless`]).

use super::table::Row;
use crate::analysis::ensemble::{sample_stats, EnsembleAverage};

/// Replaces the rows of each ensemble by their realization average (module documentation);
/// rows without a realization pass unchanged. Order: first appearance.
pub fn average(rows: Vec<Row>, ensembles: &[EnsembleAverage]) -> Vec<Row> {
    let mut out: Vec<Row> = Vec::new();
    let mut groups: Vec<Vec<Row>> = Vec::new();
    for r in rows {
        if r.ensemble_key.is_none() {
            out.push(r);
            continue;
        }
        match groups
            .iter_mut()
            .find(|g| g[0].ensemble_key == r.ensemble_key)
        {
            Some(g) => g.push(r),
            None => groups.push(vec![r]),
        }
    }
    out.extend(groups.into_iter().map(|g| averaged(g, ensembles)));
    out
}

/// The realization average of one ensemble's rows.
fn averaged(g: Vec<Row>, ensembles: &[EnsembleAverage]) -> Row {
    let n = g.len();
    let mut r = g[0].clone();
    r.realizations = n;
    r.fluct_variance_samples = g.iter().map(|x| x.fluct_variance).collect();
    r.residual_variance_samples = g.iter().map(|x| x.residual_variance).collect();
    let ensemble = ensembles
        .iter()
        .find(|e| e.members.iter().any(|m| g.iter().any(|x| &x.member == m)));
    let thouless = ensemble
        .and_then(|e| e.form_factor.as_ref())
        .map(|f| &f.thouless);
    r.thouless_tau = thouless.and_then(|t| t.tau);
    r.thouless_g = thouless.and_then(|t| t.g);
    let mut files: Vec<&str> = g.iter().map(|x| x.file.as_str()).collect();
    files.dedup();
    r.file = files.join("+");
    r.sector = format!("{} ({n} realizations)", r.sector_key);
    if n < 2 {
        return r;
    }
    let stats = |f: &dyn Fn(&Row) -> f64| {
        let v: Vec<f64> = g.iter().map(f).collect();
        let (mean, _, stderr) = sample_stats(&v);
        (mean, stderr)
    };
    let mean = |f: &dyn Fn(&Row) -> f64| stats(f).0;
    (r.mean_r, r.mean_r_stderr) = stats(&|x| x.mean_r);
    (r.fluct_variance, r.fluct_variance_stderr) = stats(&|x| x.fluct_variance);
    (r.diff_mean_abs, r.diff_mean_abs_stderr) = stats(&|x| x.diff_mean_abs);
    (r.low_omega_variance, r.low_omega_variance_stderr) = stats(&|x| x.low_omega_variance);
    (r.gaussian_ratio, r.gaussian_ratio_stderr) = stats(&|x| x.gaussian_ratio);
    (r.gaussian_ratio_rescaled, r.gaussian_ratio_rescaled_stderr) =
        stats(&|x| x.gaussian_ratio_rescaled);
    (r.residual_variance, r.residual_variance_stderr) = stats(&|x| x.residual_variance);
    (r.diag_offdiag_ratio, r.diag_offdiag_ratio_stderr) = stats(&|x| x.diag_offdiag_ratio);
    r.residual_lag1 = mean(&|x| x.residual_lag1);
    r.canonical_rms_deviation = mean(&|x| x.canonical_rms_deviation);
    r.observable_spread = mean(&|x| x.observable_spread);
    r.degenerate_fraction = g.iter().map(|x| x.degenerate_fraction).fold(0.0, f64::max);
    r.diagonal_vanishes = g.iter().all(|x| x.diagonal_vanishes);
    r
}
