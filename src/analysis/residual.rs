//! Fluctuations of `Aₙₙ` about its smooth part, and the delete-a-block jackknife over
//! eigenstates that every resampled error of the matrix-element figures uses.
//!
//! **Smooth part and residuals.** For each state `n` of the window, `A(Eₙ)` is a local
//! linear fit of the *other* window states' `Aⱼ` against `Eⱼ − Eₙ`, with Gaussian weights
//! `wⱼ = exp(−(Eⱼ − Eₙ)²/2h²)` of width `h` = [`KERNEL_SPACINGS`] mean level spacings of
//! the window, cut at `3h` (a local constant where fewer than three states fall inside).
//! The fitted value is linear in the data, `A(Eₙ) = Σⱼ ℓⱼ Aⱼ`, so the leave-one-out
//! residual `rₙ = Aₙ − A(Eₙ)` of independent fluctuations of variance `σ²` about a locally
//! linear smooth part has variance `σ²(1 + Σⱼ ℓⱼ²)`; the scaled residuals
//! `r̃ₙ = rₙ / √(1 + Σⱼ ℓⱼ²)` estimate the fluctuations without the bias of either the fit
//! or the point itself (local polynomial regression: Fan & Gijbels, *Local Polynomial
//! Modelling and Its Applications*, 1996, from memory).
//!
//! - `residual_variance = ⟨r̃ₙ²⟩` over the window;
//! - `residual_lag1 = Σ r̃ₙ r̃ₙ₊₁ / Σ r̃ₙ²`, the lag-1 autocorrelation of the residuals
//!   (neighbouring eigenstates that fluctuate together make `½⟨(Aₙ₊₁ − Aₙ)²⟩` smaller than
//!   the variance: `½⟨Δ²⟩ = σ²(1 − ρ₁)`).
//!
//! **Jackknife.** The window's states are cut into `G` contiguous groups ([`groups`]:
//! `G = min(`[`JACKKNIFE_GROUPS`]`, ⌊W/2⌋)`). Each figure `θ` is recomputed with the states
//! of one group `k` left out, `θ₍ₖ₎`, and its standard error is
//! `√((G − 1)/G · Σₖ (θ₍ₖ₎ − θ̄)²)` (delete-a-group jackknife; Efron & Tibshirani, *An
//! Introduction to the Bootstrap*, 1993, ch. 11; Künsch 1989 for blocks of a correlated
//! sequence). Leaving out whole groups of neighbouring states keeps the correlations
//! between nearby eigenstates inside the resampled unit. Pair figures leave out every
//! pair with a state in the group ([`PairTable`]). The smooth fit is not refitted for each
//! deletion (it is local, and a group is many kernel widths long only for large windows;
//! the error is then slightly small).

use serde::Serialize;

/// Width of the Gaussian kernel of the local fit, in mean level spacings of the window.
pub const KERNEL_SPACINGS: f64 = 16.0;

/// Largest number of jackknife groups.
pub const JACKKNIFE_GROUPS: usize = 20;

/// The jackknife groups of a window of `w` states: `(G, group of state k of the window)`.
pub fn groups(w: usize) -> usize {
    JACKKNIFE_GROUPS.min(w / 2).max(1)
}

/// Group of the `k`-th state of a window of `w` states cut into `g` groups.
#[inline]
pub fn group_of(k: usize, w: usize, g: usize) -> usize {
    (k * g / w.max(1)).min(g - 1)
}

/// The delete-a-group jackknife standard error of the leave-one-group-out estimates
/// `theta` (NaN with fewer than two finite ones).
pub fn jackknife_stderr(theta: &[f64]) -> f64 {
    let t: Vec<f64> = theta.iter().copied().filter(|x| x.is_finite()).collect();
    let g = t.len() as f64;
    if t.len() < 2 {
        return f64::NAN;
    }
    let m = t.iter().sum::<f64>() / g;
    ((g - 1.0) / g * t.iter().map(|x| (x - m).powi(2)).sum::<f64>()).sqrt()
}

/// Residuals of the window's diagonal elements about their smooth part.
#[derive(Debug, Clone, Serialize)]
pub struct ResidualFit {
    /// `⟨r̃ₙ²⟩`.
    pub residual_variance: f64,
    /// Its delete-a-group jackknife standard error.
    pub residual_variance_stderr: f64,
    /// Lag-1 autocorrelation of the residuals.
    pub residual_lag1: f64,
    /// Jackknife groups and states per group.
    pub jackknife_groups: usize,
    /// States per jackknife group (the block length), rounded up.
    pub jackknife_block_states: usize,
    /// The fit, in words.
    pub rule: String,
    /// The scaled residuals `r̃ₙ` (not serialised).
    #[serde(skip)]
    pub scaled: Vec<f64>,
}

impl ResidualFit {
    /// `residual_variance` with the states of group `k` left out.
    pub fn variance_without(&self, k: usize) -> f64 {
        let w = self.scaled.len();
        let g = self.jackknife_groups;
        let (mut s, mut c) = (0.0, 0usize);
        for (i, r) in self.scaled.iter().enumerate() {
            if group_of(i, w, g) != k {
                s += r * r;
                c += 1;
            }
        }
        s / c.max(1) as f64
    }
}

/// The local linear leave-one-out fit of `values` (the window's `Aₙₙ`) against the
/// ascending `energies` of the same states (module docs).
pub fn residual_fit(energies: &[f64], values: &[f64]) -> ResidualFit {
    let w = energies.len().min(values.len());
    let span = if w > 1 {
        energies[w - 1] - energies[0]
    } else {
        0.0
    };
    let spacing = if w > 1 { span / (w - 1) as f64 } else { 0.0 };
    let h = (KERNEL_SPACINGS * spacing).max(f64::MIN_POSITIVE);
    let mut scaled = Vec::with_capacity(w);
    let mut lo = 0;
    for n in 0..w {
        let en = energies[n];
        while lo < n && energies[lo] < en - 3.0 * h {
            lo += 1;
        }
        let mut hi = n + 1;
        while hi < w && energies[hi] <= en + 3.0 * h {
            hi += 1;
        }
        let nb = (lo..hi).filter(|&j| j != n);
        let (mut s0, mut s1, mut s2) = (0.0, 0.0, 0.0);
        for j in nb.clone() {
            let x = energies[j] - en;
            let wt = (-0.5 * (x / h).powi(2)).exp();
            s0 += wt;
            s1 += wt * x;
            s2 += wt * x * x;
        }
        let det = s0 * s2 - s1 * s1;
        let linear = hi - lo > 3 && det > 1e-12 * s0 * s2;
        let (mut fit, mut l2) = (0.0, 0.0);
        for j in nb {
            let x = energies[j] - en;
            let wt = (-0.5 * (x / h).powi(2)).exp();
            let l = if linear {
                wt * (s2 - s1 * x) / det
            } else {
                wt / s0.max(f64::MIN_POSITIVE)
            };
            fit += l * values[j];
            l2 += l * l;
        }
        scaled.push((values[n] - fit) / (1.0 + l2).sqrt());
    }
    let g = groups(w);
    let sum2: f64 = scaled.iter().map(|r| r * r).sum();
    let residual_variance = sum2 / w.max(1) as f64;
    let lag: f64 = scaled.windows(2).map(|p| p[0] * p[1]).sum();
    let mut fit = ResidualFit {
        residual_variance,
        residual_variance_stderr: f64::NAN,
        residual_lag1: if sum2 > 0.0 { lag / sum2 } else { 0.0 },
        jackknife_groups: g,
        jackknife_block_states: w.div_ceil(g),
        rule: format!(
            "local linear leave-one-out fit in energy, Gaussian kernel of {KERNEL_SPACINGS} mean level spacings ({h:.4e}) cut at 3 widths; residuals scaled by 1/sqrt(1 + sum of squared fit weights); jackknife over {g} groups of about {} consecutive states",
            w.div_ceil(g)
        ),
        scaled,
    };
    if g >= 2 {
        let theta: Vec<f64> = (0..g).map(|k| fit.variance_without(k)).collect();
        fit.residual_variance_stderr = jackknife_stderr(&theta);
    }
    fit
}

/// Sums of `K` pair moments by the groups `(a, b)`, `a ≤ b`, of the two states of each
/// pair, so that any group can be left out of every pair figure afterwards.
#[derive(Debug, Clone)]
pub struct PairTable<const K: usize> {
    g: usize,
    cells: Vec<[f64; K]>,
}

impl<const K: usize> PairTable<K> {
    /// An empty table for `g` groups.
    pub fn new(g: usize) -> Self {
        PairTable {
            g,
            cells: vec![[0.0; K]; g * g],
        }
    }

    /// Adds the moments `v` of a pair whose states lie in groups `a` and `b`.
    #[inline]
    pub fn add(&mut self, a: usize, b: usize, v: [f64; K]) {
        let (i, j) = if a <= b { (a, b) } else { (b, a) };
        let c = &mut self.cells[i * self.g + j];
        for (c, v) in c.iter_mut().zip(v) {
            *c += v;
        }
    }

    /// The sums over all pairs.
    pub fn total(&self) -> [f64; K] {
        let mut t = [0.0; K];
        for c in &self.cells {
            for (t, c) in t.iter_mut().zip(c) {
                *t += c;
            }
        }
        t
    }

    /// The sums over the pairs with no state in group `k`.
    pub fn without(&self, k: usize) -> [f64; K] {
        let mut t = self.total();
        for other in 0..self.g {
            let (i, j) = if k <= other { (k, other) } else { (other, k) };
            for (t, c) in t.iter_mut().zip(&self.cells[i * self.g + j]) {
                *t -= c;
            }
        }
        t
    }

    /// The jackknife standard error of the figure `f` of the sums.
    pub fn stderr(&self, f: impl Fn(&[f64; K]) -> f64) -> f64 {
        if self.g < 2 {
            return f64::NAN;
        }
        let theta: Vec<f64> = (0..self.g).map(|k| f(&self.without(k))).collect();
        jackknife_stderr(&theta)
    }

    /// Number of groups.
    pub fn groups(&self) -> usize {
        self.g
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn residual_variance_of_white_noise_on_a_curve() {
        // Aₙ = sin(Eₙ) + noise of variance 0.01: the scaled leave-one-out residuals recover
        // the noise variance (the module's bias correction; common practice, no source)
        let w = 4000;
        let mut rng = crate::model::rmt::rng(3);
        use rand_distr::{Distribution, StandardNormal};
        let e: Vec<f64> = (0..w).map(|k| k as f64 / w as f64).collect();
        let a: Vec<f64> = e
            .iter()
            .map(|x| {
                let z: f64 = StandardNormal.sample(&mut rng);
                (6.0 * x).sin() + 0.1 * z
            })
            .collect();
        let fit = residual_fit(&e, &a);
        assert!((fit.residual_variance - 0.01).abs() < 4.0 * fit.residual_variance_stderr);
        assert!(
            fit.residual_variance_stderr < 0.001,
            "{}",
            fit.residual_variance_stderr
        );
        assert!(fit.residual_lag1.abs() < 0.1, "{}", fit.residual_lag1);
        // half the consecutive differences' variance would be the same for white noise
        let (_, _, half, _) = crate::analysis::diagonal::fluctuations(&a);
        assert!((half - 0.01).abs() < 0.001, "{half}");
    }

    #[test]
    fn correlated_neighbours_lower_the_difference_estimate_but_not_the_residual_one() {
        // AR(1) noise with ρ = 0.5: ½⟨Δ²⟩ = σ²(1 − ρ) while the residual variance stays σ²
        // (stationary AR(1) identities; common practice, no source)
        let w = 20000;
        let rho: f64 = 0.5;
        let mut rng = crate::model::rmt::rng(4);
        use rand_distr::{Distribution, StandardNormal};
        let mut x = 0.0f64;
        let a: Vec<f64> = (0..w)
            .map(|_| {
                let z: f64 = StandardNormal.sample(&mut rng);
                x = rho * x + (1.0 - rho * rho).sqrt() * z;
                x
            })
            .collect();
        let e: Vec<f64> = (0..w).map(|k| k as f64).collect();
        let fit = residual_fit(&e, &a);
        let (_, _, half, _) = crate::analysis::diagonal::fluctuations(&a);
        assert!((half - 0.5).abs() < 0.03, "{half}");
        assert!(
            (fit.residual_variance - 1.0).abs() < 0.1,
            "{}",
            fit.residual_variance
        );
        assert!(
            (fit.residual_lag1 - 0.5).abs() < 0.05,
            "{}",
            fit.residual_lag1
        );
    }

    #[test]
    fn pair_table_leaves_out_every_pair_touching_a_group() {
        // exact bookkeeping (no source needed)
        let mut t = PairTable::<1>::new(3);
        for a in 0..3 {
            for b in a..3 {
                t.add(a, b, [((a + 1) * 10 + b + 1) as f64]);
            }
        }
        // pairs (by groups 1..3): 11, 12, 13, 22, 23, 33 -> without group 2 (index 1):
        // 11, 13, 33
        assert_eq!(t.without(1), [11.0 + 13.0 + 33.0]);
        assert_eq!(t.without(0), [22.0 + 23.0 + 33.0]);
        assert_eq!(t.total(), [11.0 + 12.0 + 13.0 + 22.0 + 23.0 + 33.0]);
    }

    #[test]
    fn jackknife_of_a_mean_is_the_standard_error() {
        // delete-a-group jackknife of the mean of iid data ≈ σ/√n (Efron & Tibshirani 1993)
        let n = 2000;
        let mut rng = crate::model::rmt::rng(9);
        use rand_distr::{Distribution, StandardNormal};
        let x: Vec<f64> = (0..n).map(|_| StandardNormal.sample(&mut rng)).collect();
        let g = 20;
        let theta: Vec<f64> = (0..g)
            .map(|k| {
                let kept: Vec<f64> = x
                    .iter()
                    .enumerate()
                    .filter(|(i, _)| group_of(*i, n, g) != k)
                    .map(|(_, v)| *v)
                    .collect();
                kept.iter().sum::<f64>() / kept.len() as f64
            })
            .collect();
        let se = jackknife_stderr(&theta);
        assert!((se / (1.0 / (n as f64).sqrt()) - 1.0).abs() < 0.45, "{se}");
    }
}
