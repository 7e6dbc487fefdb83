//! Averages over disorder realizations, and the scan over disorder strength.
//!
//! **Ensembles.** Sectors that carry the attribute `realization` are grouped by the
//! attributes (`size`, `disorder`, `label`): one group is one model at one size and one
//! disorder strength, one member per realization. For a figure xₖ measured on realization
//! k = 1 … n (here the mean spacing ratio ⟨r̃⟩ₖ of each spectrum's window) the ensemble
//! reports
//!
//! - the realization average x̄ = (1/n) Σₖ xₖ,
//! - the sample-to-sample standard deviation s = √(Σₖ (xₖ − x̄)² / (n − 1)),
//! - the standard error of the average s/√n (realizations are independent: no blocking),
//! - the per-realization values themselves (their distribution).
//!
//! **Disorder scan.** Ensembles of the same size at several disorder strengths W form a
//! curve x̄_L(W). For each pair of consecutive sizes L₁ < L₂ measured at the same strengths,
//! the crossing W* is where d(W) = x̄_{L₂}(W) − x̄_{L₁}(W) first changes sign from positive
//! to non-positive along increasing W (the larger system more chaotic at weak disorder,
//! less at strong disorder), located by linear interpolation of d between the two grid
//! strengths that bracket it. Its standard error is the standard deviation of W* over
//! [`CROSSING_RESAMPLES`] bootstrap resamples (each ensemble's realizations drawn with
//! replacement, independently; resamples without a crossing are counted and left out).
//! Finite-size crossings drift with L (Šuntajs, Bonča, Prosen, Vidmar, PRE 102, 062144
//! (2020); Sierant, Lewenstein, Zakrzewski, PRL 125, 156601 (2020)): a crossing locates the
//! crossover at these sizes, not a transition.

use crate::analysis::levels::surmise::Ensemble;
use crate::analysis::levels::thouless::{averaged_form_factor, AveragedFormFactor};
use crate::analysis::levels::LevelOptions;
use crate::data::SymmetryClass;
use rand::Rng;
use serde::Serialize;

/// Bootstrap resamples of the crossing strength.
pub const CROSSING_RESAMPLES: usize = 400;
/// Seed of the crossing bootstrap (fixed: the same files give the same error).
const CROSSING_SEED: u64 = 20_261_202;

/// One sector's contribution to an ensemble.
#[derive(Debug, Clone)]
pub struct Member {
    /// `FILE:SECTOR`.
    pub name: String,
    /// Attribute `size`.
    pub size: Option<usize>,
    /// Attribute `disorder`.
    pub disorder: Option<f64>,
    /// Attribute `label` (empty when absent).
    pub label: String,
    /// Attribute `realization`.
    pub realization: usize,
    /// The figure measured on this realization (⟨r̃⟩ of its window).
    pub value: f64,
    /// Its unfolded window levels at unit mean spacing (for the averaged form factor).
    pub unfolded: Vec<f64>,
    /// Its mean level spacing in the window, energy units.
    pub mean_spacing: f64,
    /// Its symmetry class (chooses the random-matrix curve of the Thouless time).
    pub class: SymmetryClass,
}

/// Realization average of ⟨r̃⟩ over one ensemble (module documentation).
#[derive(Debug, Clone, Serialize)]
pub struct EnsembleAverage {
    /// Attribute `label` shared by the members.
    pub label: String,
    /// Attribute `size`.
    pub size: Option<usize>,
    /// Attribute `disorder`.
    pub disorder: Option<f64>,
    /// Number of realizations n.
    pub realizations: usize,
    /// Realization average of ⟨r̃⟩.
    pub mean_r: f64,
    /// Sample-to-sample standard deviation of ⟨r̃⟩ (n − 1 in the denominator; 0 for n = 1).
    pub mean_r_spread: f64,
    /// Standard error of the average, spread/√n.
    pub mean_r_stderr: f64,
    /// ⟨r̃⟩ of each realization, in the order of `members`.
    pub mean_r_samples: Vec<f64>,
    /// The realization index of each member.
    pub realization_indices: Vec<usize>,
    /// `FILE:SECTOR` of each member.
    pub members: Vec<String>,
    /// The realization-averaged connected form factor with its band and the Thouless time
    /// ([`crate::analysis::levels::thouless`]).
    pub form_factor: Option<AveragedFormFactor>,
    /// Warnings (repeated realization indices, a single realization, mixed classes).
    pub warnings: Vec<String>,
}

/// One point of a disorder scan.
#[derive(Debug, Clone, Serialize)]
pub struct ScanPoint {
    /// Disorder strength W.
    pub disorder: f64,
    /// Realization average of ⟨r̃⟩.
    pub mean_r: f64,
    /// Its standard error.
    pub mean_r_stderr: f64,
    /// Realizations averaged.
    pub realizations: usize,
    /// Thouless time τ_Th of the averaged connected form factor, in Heisenberg times.
    pub thouless_tau: Option<f64>,
    /// g = log₁₀(t_H/t_Th).
    pub thouless_g: Option<f64>,
}

/// ⟨r̃⟩ against disorder strength at one size.
#[derive(Debug, Clone, Serialize)]
pub struct ScanCurve {
    /// Attribute `size`.
    pub size: usize,
    /// Points in increasing W.
    pub points: Vec<ScanPoint>,
}

/// Where the curves of two sizes cross (module documentation).
#[derive(Debug, Clone, Serialize)]
pub struct Crossing {
    /// The smaller size L₁.
    pub size_small: usize,
    /// The larger size L₂.
    pub size_large: usize,
    /// Crossing strength W* of the realization averages (`None`: no sign change).
    pub disorder: Option<f64>,
    /// Bootstrap standard error of W*.
    pub disorder_stderr: Option<f64>,
    /// Bootstrap resamples drawn.
    pub resamples: usize,
    /// Resamples without a crossing (left out of the error).
    pub resamples_without_crossing: usize,
}

/// The disorder scan: curves and crossings.
#[derive(Debug, Clone, Serialize)]
pub struct DisorderScan {
    /// The crossing rule and the error, in words.
    pub rule: String,
    /// One curve per size.
    pub curves: Vec<ScanCurve>,
    /// One crossing per pair of consecutive sizes.
    pub crossings: Vec<Crossing>,
    /// Why a scan was not formed or is incomplete.
    pub notes: Vec<String>,
}

/// Mean, sample standard deviation (n − 1) and standard error of `x` (module documentation).
pub fn sample_stats(x: &[f64]) -> (f64, f64, f64) {
    let n = x.len() as f64;
    if x.is_empty() {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    let mean = x.iter().sum::<f64>() / n;
    if x.len() < 2 {
        return (mean, 0.0, 0.0);
    }
    let var = x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0);
    (mean, var.sqrt(), var.sqrt() / n.sqrt())
}

/// Groups `members` into ensembles by (size, disorder, label), sorted by size, then disorder
/// (members in order of appearance); each with its averaged form factor (the filter and
/// time grid of `opts`).
pub fn ensembles(members: &[Member], opts: &LevelOptions) -> Vec<EnsembleAverage> {
    let mut groups: Vec<Vec<&Member>> = Vec::new();
    for m in members {
        let same = |g: &&mut Vec<&Member>| {
            let f = g[0];
            f.size == m.size && f.disorder == m.disorder && f.label == m.label
        };
        match groups.iter_mut().find(|g| same(g)) {
            Some(g) => g.push(m),
            None => groups.push(vec![m]),
        }
    }
    groups.sort_by(|a, b| {
        let key = |g: &Vec<&Member>| (g[0].size, g[0].disorder.unwrap_or(f64::NAN));
        let ((la, wa), (lb, wb)) = (key(a), key(b));
        la.cmp(&lb).then(wa.total_cmp(&wb))
    });
    groups
        .into_iter()
        .map(|g| {
            let values: Vec<f64> = g.iter().map(|m| m.value).collect();
            let (mean, spread, stderr) = sample_stats(&values);
            let mut idx: Vec<usize> = g.iter().map(|m| m.realization).collect();
            let mut warnings = Vec::new();
            idx.sort_unstable();
            if idx.windows(2).any(|w| w[0] == w[1]) {
                warnings.push(
                    "a realization index appears more than once: the same realization stored twice would be counted twice".to_string(),
                );
            }
            if g.len() < 2 {
                warnings.push(
                    "one realization: no sample-to-sample error (reported as 0)".to_string(),
                );
            }
            let class = g[0].class;
            if g.iter().any(|m| m.class != class) {
                warnings.push(format!(
                    "members of different symmetry classes: the Thouless time is measured against the {class} curve of the first"
                ));
            }
            let reference = match class {
                SymmetryClass::Orthogonal => Ensemble::Goe,
                SymmetryClass::Unitary => Ensemble::Gue,
            };
            let spectra: Vec<(&[f64], f64)> = g
                .iter()
                .filter(|m| !m.unfolded.is_empty())
                .map(|m| (m.unfolded.as_slice(), m.mean_spacing))
                .collect();
            let form_factor = averaged_form_factor(&spectra, opts, reference);
            EnsembleAverage {
                label: g[0].label.clone(),
                size: g[0].size,
                disorder: g[0].disorder,
                realizations: g.len(),
                mean_r: mean,
                mean_r_spread: spread,
                mean_r_stderr: stderr,
                mean_r_samples: values,
                realization_indices: g.iter().map(|m| m.realization).collect(),
                members: g.iter().map(|m| m.name.clone()).collect(),
                form_factor,
                warnings,
            }
        })
        .collect()
}

/// First downward zero of `d` along `w` (increasing), by linear interpolation; `None` if
/// `d` never goes from positive to non-positive.
fn first_crossing(w: &[f64], d: &[f64]) -> Option<f64> {
    (1..w.len()).find_map(|k| {
        let (d0, d1) = (d[k - 1], d[k]);
        (d0 > 0.0 && d1 <= 0.0).then(|| w[k - 1] + (w[k] - w[k - 1]) * d0 / (d0 - d1))
    })
}

/// The disorder scan of `ensembles` (module documentation); `None` when no size has
/// ensembles at two or more disorder strengths.
pub fn disorder_scan(ensembles: &[EnsembleAverage]) -> Option<DisorderScan> {
    let mut notes = Vec::new();
    let mut sizes: Vec<usize> = ensembles
        .iter()
        .filter(|e| e.disorder.is_some())
        .filter_map(|e| e.size)
        .collect();
    sizes.sort_unstable();
    sizes.dedup();
    // per size: the ensembles sorted by W (one per W; several labels at one W are ambiguous)
    let mut per_size: Vec<(usize, Vec<&EnsembleAverage>)> = Vec::new();
    for &l in &sizes {
        let mut e: Vec<&EnsembleAverage> = ensembles
            .iter()
            .filter(|e| e.size == Some(l) && e.disorder.is_some())
            .collect();
        e.sort_by(|a, b| a.disorder.partial_cmp(&b.disorder).unwrap());
        if e.windows(2).any(|p| p[0].disorder == p[1].disorder) {
            notes.push(format!(
                "size {l}: several ensembles (labels) at one disorder strength; left out of the scan"
            ));
            continue;
        }
        if e.len() >= 2 {
            per_size.push((l, e));
        }
    }
    if per_size.is_empty() {
        return None;
    }
    let curves = per_size
        .iter()
        .map(|(l, e)| ScanCurve {
            size: *l,
            points: e
                .iter()
                .map(|x| ScanPoint {
                    disorder: x.disorder.unwrap_or(f64::NAN),
                    mean_r: x.mean_r,
                    mean_r_stderr: x.mean_r_stderr,
                    realizations: x.realizations,
                    thouless_tau: x.form_factor.as_ref().and_then(|f| f.thouless.tau),
                    thouless_g: x.form_factor.as_ref().and_then(|f| f.thouless.g),
                })
                .collect(),
        })
        .collect();
    let mut crossings = Vec::new();
    for pair in per_size.windows(2) {
        let ((l1, a), (l2, b)) = (&pair[0], &pair[1]);
        let common: Vec<(&EnsembleAverage, &EnsembleAverage)> = a
            .iter()
            .filter_map(|x| {
                b.iter()
                    .find(|y| y.disorder == x.disorder)
                    .map(|y| (*x, *y))
            })
            .collect();
        if common.len() < 2 {
            notes.push(format!(
                "sizes {l1} and {l2}: fewer than two common disorder strengths, no crossing"
            ));
            continue;
        }
        crossings.push(crossing(*l1, *l2, &common));
    }
    Some(DisorderScan {
        rule: format!(
            "W* = first W where mean r of the larger size falls to or below that of the smaller one (linear interpolation between the bracketing strengths); error = standard deviation over {CROSSING_RESAMPLES} bootstrap resamples of the realizations of every ensemble. A finite-size crossing drifts with the sizes: it locates the crossover at these sizes, it does not prove a transition."
        ),
        curves,
        crossings,
        notes,
    })
}

/// The crossing of two curves measured at the strengths of `common`, with its bootstrap error.
fn crossing(l1: usize, l2: usize, common: &[(&EnsembleAverage, &EnsembleAverage)]) -> Crossing {
    let w: Vec<f64> = common
        .iter()
        .map(|(x, _)| x.disorder.unwrap_or(f64::NAN))
        .collect();
    let d: Vec<f64> = common.iter().map(|(x, y)| y.mean_r - x.mean_r).collect();
    let at = first_crossing(&w, &d);
    let mut rng = crate::model::rmt::rng(CROSSING_SEED);
    let draw = |e: &EnsembleAverage, rng: &mut rand_chacha::ChaCha8Rng| {
        let n = e.mean_r_samples.len();
        (0..n)
            .map(|_| e.mean_r_samples[rng.random_range(0..n)])
            .sum::<f64>()
            / n as f64
    };
    let mut found = Vec::new();
    let mut missing = 0;
    for _ in 0..CROSSING_RESAMPLES {
        let d: Vec<f64> = common
            .iter()
            .map(|(x, y)| draw(y, &mut rng) - draw(x, &mut rng))
            .collect();
        match first_crossing(&w, &d) {
            Some(c) => found.push(c),
            None => missing += 1,
        }
    }
    let (_, spread, _) = sample_stats(&found);
    Crossing {
        size_small: l1,
        size_large: l2,
        disorder: at,
        disorder_stderr: (at.is_some() && found.len() >= 2).then_some(spread),
        resamples: CROSSING_RESAMPLES,
        resamples_without_crossing: missing,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn member(size: usize, w: f64, k: usize, value: f64) -> Member {
        Member {
            name: format!("f:r{k}"),
            size: Some(size),
            disorder: Some(w),
            label: format!("L={size} W={w}"),
            realization: k,
            value,
            unfolded: Vec::new(),
            mean_spacing: 1.0,
            class: SymmetryClass::Orthogonal,
        }
    }

    #[test]
    fn averages_and_sample_errors() {
        // definition (module doc): mean 2, sample sd 1 (n − 1), error 1/√3
        let m = vec![
            member(8, 1.0, 0, 1.0),
            member(8, 1.0, 1, 2.0),
            member(8, 1.0, 2, 3.0),
        ];
        let e = ensembles(&m, &LevelOptions::default());
        assert_eq!(e.len(), 1);
        assert_eq!(e[0].realizations, 3);
        assert!((e[0].mean_r - 2.0).abs() < 1e-15);
        assert!((e[0].mean_r_spread - 1.0).abs() < 1e-15);
        assert!((e[0].mean_r_stderr - 3f64.sqrt().recip()).abs() < 1e-15);
    }

    #[test]
    fn crossing_by_linear_interpolation() {
        // exact: d = +0.1 at W = 1, −0.1 at W = 3 → W* = 2; the realizations are constant, so
        // every bootstrap resample gives W* = 2 and the error is 0
        let mut m = Vec::new();
        for k in 0..4 {
            m.push(member(10, 1.0, k, 0.50));
            m.push(member(10, 3.0, k, 0.45));
            m.push(member(12, 1.0, k, 0.60));
            m.push(member(12, 3.0, k, 0.35));
        }
        let scan = disorder_scan(&ensembles(&m, &LevelOptions::default())).unwrap();
        assert_eq!(scan.curves.len(), 2);
        let c = &scan.crossings[0];
        assert!((c.disorder.unwrap() - 2.0).abs() < 1e-12, "{c:?}");
        assert!(c.disorder_stderr.unwrap().abs() < 1e-12);
        // no sign change: no crossing
        assert_eq!(first_crossing(&[1.0, 2.0], &[0.1, 0.05]), None);
        assert_eq!(first_crossing(&[1.0, 2.0], &[-0.1, 0.05]), None);
    }
}
