//! Realization averages of the matrix-element figures of `diagonal` and `offdiagonal`.
//!
//! Sectors that carry a `realization` attribute are grouped, per observable, by the
//! attributes (`size`, `disorder`, `label`), as the level statistics are
//! ([`super::ensembles`]). For each figure xₖ of realization k = 1 … n the ensemble reports
//! the average x̄, the sample standard deviation s (n − 1), the standard error s/√n
//! (realizations are independent) and the per-realization values — the sample-to-sample
//! distribution (e.g. of the fluctuation variance ½⟨(Aₙ₊₁,ₙ₊₁ − Aₙₙ)²⟩). Non-finite values
//! (a figure a realization could not form) are left out and counted.

use super::sample_stats;
use crate::analysis::diagonal::DiagonalResult;
use crate::analysis::offdiagonal::OffdiagonalResult;
use serde::Serialize;

/// A result with named scalar figures that can be averaged over realizations.
pub trait Figures {
    /// The observable's name.
    fn observable(&self) -> &str;
    /// (figure name, value) in a fixed order.
    fn figures(&self) -> Vec<(&'static str, f64)>;
}

impl Figures for DiagonalResult {
    fn observable(&self) -> &str {
        &self.name
    }
    fn figures(&self) -> Vec<(&'static str, f64)> {
        vec![
            ("mean", self.mean),
            ("fluct_variance", self.fluct_variance),
            ("diff_mean_abs", self.diff_mean_abs),
            ("residual_variance", self.residual_variance),
            ("residual_lag1", self.residual_lag1),
        ]
    }
}

impl Figures for OffdiagonalResult {
    fn observable(&self) -> &str {
        &self.name
    }
    fn figures(&self) -> Vec<(&'static str, f64)> {
        vec![
            ("low_omega_variance", self.low_omega_variance),
            ("gaussian_ratio", self.gaussian_ratio),
            ("gaussian_ratio_rescaled", self.gaussian_ratio_rescaled),
            ("excess_kurtosis", self.excess_kurtosis),
            ("diag_offdiag_ratio", self.diag_offdiag_ratio),
        ]
    }
}

/// One sector's identity as an ensemble member.
#[derive(Debug, Clone)]
pub struct MemberKey {
    /// `FILE:SECTOR`.
    pub name: String,
    /// Attribute `size`.
    pub size: Option<usize>,
    /// Attribute `disorder`.
    pub disorder: Option<f64>,
    /// Attribute `label` (empty when absent).
    pub label: String,
}

/// The realization average of one figure.
#[derive(Debug, Clone, Serialize)]
pub struct FigureAverage {
    /// Figure name (the key of the per-sector result).
    pub figure: String,
    /// Realization average x̄ over the finite values.
    pub mean: f64,
    /// Sample standard deviation s (n − 1; 0 for one value).
    pub spread: f64,
    /// Standard error s/√n.
    pub stderr: f64,
    /// The value of each member (in the order of `members`; non-finite kept as null).
    pub samples: Vec<Option<f64>>,
    /// Members whose value is not finite (left out of the average).
    pub missing: usize,
}

/// The realization averages of one observable over one ensemble.
#[derive(Debug, Clone, Serialize)]
pub struct FigureEnsemble {
    /// Observable.
    pub observable: String,
    /// Attribute `label`.
    pub label: String,
    /// Attribute `size`.
    pub size: Option<usize>,
    /// Attribute `disorder`.
    pub disorder: Option<f64>,
    /// Number of realizations n.
    pub realizations: usize,
    /// `FILE:SECTOR` of each member.
    pub members: Vec<String>,
    /// One entry per figure.
    pub figures: Vec<FigureAverage>,
}

/// Groups `(member, result)` pairs by (observable, size, disorder, label) in order of first
/// appearance and averages each figure (module documentation).
pub fn figure_ensembles<T: Figures>(items: &[(MemberKey, &T)]) -> Vec<FigureEnsemble> {
    let mut groups: Vec<Vec<&(MemberKey, &T)>> = Vec::new();
    for it in items {
        let same = |g: &&mut Vec<&(MemberKey, &T)>| {
            let (k, r) = g[0];
            r.observable() == it.1.observable()
                && k.size == it.0.size
                && k.disorder == it.0.disorder
                && k.label == it.0.label
        };
        match groups.iter_mut().find(|g| same(g)) {
            Some(g) => g.push(it),
            None => groups.push(vec![it]),
        }
    }
    groups
        .into_iter()
        .map(|g| {
            let (k0, r0) = g[0];
            let figures = r0
                .figures()
                .iter()
                .enumerate()
                .map(|(i, (name, _))| {
                    let samples: Vec<Option<f64>> = g
                        .iter()
                        .map(|(_, r)| Some(r.figures()[i].1).filter(|x| x.is_finite()))
                        .collect();
                    let finite: Vec<f64> = samples.iter().flatten().copied().collect();
                    let (mean, spread, stderr) = sample_stats(&finite);
                    FigureAverage {
                        figure: name.to_string(),
                        mean,
                        spread,
                        stderr,
                        missing: samples.len() - finite.len(),
                        samples,
                    }
                })
                .collect();
            FigureEnsemble {
                observable: r0.observable().to_string(),
                label: k0.label.clone(),
                size: k0.size,
                disorder: k0.disorder,
                realizations: g.len(),
                members: g.iter().map(|(k, _)| k.name.clone()).collect(),
                figures,
            }
        })
        .collect()
}

impl Figures for crate::analysis::gauge::GaugeResult {
    fn observable(&self) -> &str {
        &self.name
    }
    fn figures(&self) -> Vec<(&'static str, f64)> {
        vec![
            ("chi_geometric_mean", self.chi.geometric_mean),
            ("chi_median", self.chi.median),
            ("chi_mean_log", self.chi.mean_log),
            ("fidelity_geometric_mean", self.fidelity.geometric_mean),
            ("fidelity_median", self.fidelity.median),
        ]
    }
}
