//! The sums over the pairs of kept states: the off-diagonal envelope `F(ω)`, the
//! infinite-time variance and its ETH estimate, the degenerate coherences, and the
//! Gershgorin radii of `A_KK`.
//!
//! Over the pairs `n < m` of kept states, with `ω = |Eₙ − Eₘ|` and normalised weights
//! `pₙ = |cₙ|²`, one sweep of the upper panels of `A_KK` gives
//!
//! - the envelope: the mean of `|Aₙₘ|²` over the pairs of each ω bin (unweighted, all pairs);
//! - `σ² = Σ_{ω > tol} 2 pₙ pₘ |Aₙₘ|²` and, for the ETH estimate
//!   `σ²_ETH = Σ_{ω > tol} 2 pₙ pₘ F(ω)`, the weights `Σ 2 pₙ pₘ` of each bin of `F`:
//!   `F` is constant on its bins, so `σ²_ETH = Σ_bins F_b · (Σ_{pairs in b} 2 pₙ pₘ)` needs
//!   the envelope only once the sweep is done;
//! - the degenerate pairs (`ω ≤ tol`) and their coherence `Σ 2 Re(cₙ* cₘ Aₙₘ)`;
//! - optionally the radii `Rₙ = Σ_{m≠n} |Aₙₘ|` (Gershgorin discs of `A_KK`).
//!
//! The panels are swept in parallel; each panel's partial sums are added in panel order, so
//! the result does not depend on the number of threads.

use crate::data::{c64, HermitianPanels, PanelRef};
use faer::{MatRef, Par};
use rayon::prelude::*;
use serde::Serialize;

/// An off-diagonal envelope: mean `|Aₙₘ|²` in bins of `ω = |Eₙ − Eₘ|`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Envelope {
    /// Bin edges, ascending (`mean_sq.len() + 1` of them).
    pub edges: Vec<f64>,
    /// Mean of `|Aₙₘ|²` in each bin (0 for empty bins).
    pub mean_sq: Vec<f64>,
    /// Number of pairs in each bin.
    pub counts: Vec<usize>,
}

impl Envelope {
    /// Builds the envelope from all pairs `n < m` of the kept states `K` (unweighted),
    /// with `bins` linear bins on `[0, ω_max]`, `ω_max` the largest kept gap.
    /// `a_kk` is `A` over `K` and `e_k` the kept energies.
    pub fn from_pairs(e_k: &[f64], a_kk: &HermitianPanels, bins: usize) -> Envelope {
        let zeros = vec![0.0; e_k.len()];
        let cz = vec![c64::new(0.0, 0.0); e_k.len()];
        let (wmax, edges) = linear_edges(e_k, bins);
        let sums = pair_sums(
            a_kk,
            &Pairs {
                e_k,
                p_k: &zeros,
                c_k: &cz,
                tol: -1.0,
                lookup: &edges,
                build: Some(wmax),
                radii: false,
            },
            Par::Seq,
        );
        sums.envelope(edges)
    }

    /// `F(ω)`: the mean of the bin holding `ω` (the nearest end bin outside the range; the
    /// nearest non-empty bin when the bin is empty; 0 when all are empty).
    pub fn at(&self, omega: f64) -> f64 {
        bin_of(&self.edges, omega).map_or(0.0, |b| self.bin_value(b))
    }

    /// The value `F` takes on bin `b` (see [`Envelope::at`]).
    pub fn bin_value(&self, b: usize) -> f64 {
        let nb = self.mean_sq.len();
        if nb == 0 || self.edges.len() != nb + 1 || b >= nb {
            return 0.0;
        }
        if self.counts.get(b).copied().unwrap_or(0) > 0 {
            return self.mean_sq[b];
        }
        // nearest non-empty bin
        for d in 1..nb {
            for c in [b.checked_sub(d), Some(b + d)].into_iter().flatten() {
                if c < nb && self.counts.get(c).copied().unwrap_or(0) > 0 {
                    return self.mean_sq[c];
                }
            }
        }
        0.0
    }
}

/// `ω_max = max e − min e` of the kept energies (1 when fewer than two states or no
/// spread) and `bins` (at least 1) linear bin edges on `[0, ω_max]`.
pub(crate) fn linear_edges(e_k: &[f64], bins: usize) -> (f64, Vec<f64>) {
    let bins = bins.max(1);
    let (lo, hi) = e_k
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &e| {
            (a.min(e), b.max(e))
        });
    let wmax = if e_k.len() >= 2 && hi > lo {
        hi - lo
    } else {
        1.0
    };
    (
        wmax,
        (0..=bins).map(|b| wmax * b as f64 / bins as f64).collect(),
    )
}

/// The bin of ascending `edges` that [`Envelope::at`] reads for `omega`: the first bin
/// whose upper edge is at least `omega`, the last one above the range (`None` without
/// bins). Found from a linear guess and a short walk, which gives the binary search's
/// answer for any ascending edges.
pub(crate) fn bin_of(edges: &[f64], omega: f64) -> Option<usize> {
    let nb = edges.len().checked_sub(1).filter(|&n| n > 0)?;
    let (e0, e1) = (edges[0], edges[nb]);
    let mut g = if e1 > e0 {
        (((omega - e0) / (e1 - e0)) * nb as f64)
            .floor()
            .clamp(0.0, (nb - 1) as f64) as usize
    } else {
        0
    };
    while g > 0 && edges[g] >= omega {
        g -= 1;
    }
    while g + 1 < nb && edges[g + 1] < omega {
        g += 1;
    }
    Some(g)
}

/// What one sweep over the pairs needs.
pub(crate) struct Pairs<'a> {
    /// Kept energies.
    pub e_k: &'a [f64],
    /// Normalised weights of the kept states.
    pub p_k: &'a [f64],
    /// Normalised coefficients of the kept states.
    pub c_k: &'a [c64],
    /// Degeneracy tolerance (pairs with `ω ≤ tol` are degenerate).
    pub tol: f64,
    /// Bin edges of the envelope `F` used for `σ²_ETH`.
    pub lookup: &'a [f64],
    /// Also build the envelope on the bins `lookup`, which then are the linear edges of
    /// [`linear_edges`] on `[0, ω_max]`, with this `ω_max`.
    pub build: Option<f64>,
    /// Also sum the Gershgorin radii.
    pub radii: bool,
}

/// The sums of one sweep (see the module doc).
#[derive(Debug, Clone, Default)]
pub(crate) struct PairSums {
    /// `Σ_{ω > tol} 2 pₙ pₘ |Aₙₘ|²`.
    pub sigma2: f64,
    /// `Σ_{ω > tol} 2 pₙ pₘ` per bin of the lookup envelope.
    pub eth_weight: Vec<f64>,
    /// `Σ_{ω ≤ tol} 2 Re(cₙ* cₘ Aₙₘ)`.
    pub coherence: f64,
    /// Number of degenerate pairs.
    pub degenerate_pairs: usize,
    /// `Σ |Aₙₘ|²` per envelope bin (when built).
    pub env_sum: Vec<f64>,
    /// Pairs per envelope bin (when built).
    pub env_count: Vec<usize>,
    /// `Rₙ = Σ_{m≠n} |Aₙₘ|` (when asked for).
    pub radii: Vec<f64>,
    /// `Re Aₙₙ` (when the radii are asked for).
    pub diagonal: Vec<f64>,
}

impl PairSums {
    fn zero(nb: usize, build: Option<f64>) -> PairSums {
        let build = build.is_some();
        PairSums {
            eth_weight: vec![0.0; nb],
            env_sum: vec![0.0; if build { nb } else { 0 }],
            env_count: vec![0; if build { nb } else { 0 }],
            ..PairSums::default()
        }
    }

    fn add(&mut self, o: PairSums) {
        self.sigma2 += o.sigma2;
        self.coherence += o.coherence;
        self.degenerate_pairs += o.degenerate_pairs;
        for (a, b) in self.eth_weight.iter_mut().zip(o.eth_weight) {
            *a += b;
        }
        for (a, b) in self.env_sum.iter_mut().zip(o.env_sum) {
            *a += b;
        }
        for (a, b) in self.env_count.iter_mut().zip(o.env_count) {
            *a += b;
        }
        if self.radii.len() < o.radii.len() {
            self.radii.resize(o.radii.len(), 0.0);
        }
        for (a, b) in self.radii.iter_mut().zip(o.radii) {
            *a += b;
        }
        self.diagonal.extend(o.diagonal);
    }

    /// The envelope built on `edges` (the lookup edges of a sweep with `build`).
    pub fn envelope(&self, edges: Vec<f64>) -> Envelope {
        let mean_sq = self
            .env_sum
            .iter()
            .zip(&self.env_count)
            .map(|(s, &c)| if c > 0 { s / c as f64 } else { 0.0 })
            .collect();
        Envelope {
            edges,
            mean_sq,
            counts: self.env_count.clone(),
        }
    }

    /// `σ²_ETH = Σ_b F_b · eth_weight_b` with the envelope `env` (whose edges the sweep
    /// used).
    pub fn sigma2_eth(&self, env: &Envelope) -> f64 {
        self.eth_weight
            .iter()
            .enumerate()
            .map(|(b, w)| w * env.bin_value(b))
            .sum()
    }
}

/// Entry operations of the sweep, for real and complex panels.
trait Entry: Copy + Send + Sync {
    fn abs2(self) -> f64;
    fn abs(self) -> f64;
    fn re(self) -> f64;
    /// `Re(conj(cₙ) cₘ x)`.
    fn coherence(self, cn: c64, cm: c64) -> f64;
}

impl Entry for f64 {
    fn abs2(self) -> f64 {
        self * self
    }
    fn abs(self) -> f64 {
        f64::abs(self)
    }
    fn re(self) -> f64 {
        self
    }
    fn coherence(self, cn: c64, cm: c64) -> f64 {
        (cn.conj() * cm).re * self
    }
}

impl Entry for c64 {
    fn abs2(self) -> f64 {
        self.norm_sqr()
    }
    fn abs(self) -> f64 {
        self.norm()
    }
    fn re(self) -> f64 {
        self.re
    }
    fn coherence(self, cn: c64, cm: c64) -> f64 {
        (cn.conj() * cm * self).re
    }
}

/// The sweep of the module doc over the upper panels of `a`.
pub(crate) fn pair_sums(a: &HermitianPanels, inp: &Pairs<'_>, par: Par) -> PairSums {
    let nb = inp.lookup.len().saturating_sub(1);
    let one = |p: usize| -> PairSums {
        let cols = a.panels()[p].cols.clone();
        match a.panel(p) {
            PanelRef::Real(m) => panel_sums(m, cols, inp, nb),
            PanelRef::Complex(m) => panel_sums(m, cols, inp, nb),
        }
    };
    let n = a.panels().len();
    let parts: Vec<PairSums> = match par {
        Par::Seq => (0..n).map(one).collect(),
        _ => (0..n).into_par_iter().map(one).collect(),
    };
    let mut out = PairSums::zero(nb, inp.build);
    for p in parts {
        out.add(p);
    }
    out
}

/// The sums of one panel (columns `cols`, rows `0..cols.end`).
fn panel_sums<T: Entry>(
    m: MatRef<'_, T>,
    cols: std::ops::Range<usize>,
    inp: &Pairs<'_>,
    nb: usize,
) -> PairSums {
    let mut s = PairSums::zero(nb, inp.build);
    if inp.radii {
        s.radii = vec![0.0; cols.end];
    }
    // ascending energies: along a column, ω = E_b − E_a falls as a rises, and so does its
    // lookup bin, which is then followed by a short walk instead of a search per pair
    let sorted = inp.e_k[..cols.end].windows(2).all(|w| w[0] <= w[1]);
    for (c, b) in cols.clone().enumerate() {
        let (eb, pb, cb) = (inp.e_k[b], inp.p_k[b], inp.c_k[b]);
        let col = m.col(c).try_as_col_major();
        let mut g = if sorted && b > 0 {
            bin_of(inp.lookup, (eb - inp.e_k[0]).abs())
        } else {
            None
        };
        for a in 0..b {
            let x = match col {
                Some(col) => col.as_slice()[a],
                None => m[(a, c)],
            };
            let w = (eb - inp.e_k[a]).abs();
            let x2 = x.abs2();
            if let (Some(wmax), true) = (inp.build, nb > 0) {
                let bin = ((w / wmax * nb as f64) as usize).min(nb - 1);
                s.env_sum[bin] += x2;
                s.env_count[bin] += 1;
            }
            if w <= inp.tol {
                s.degenerate_pairs += 1;
                // c_n* c_m A_nm + c_m* c_n A_mn = 2 Re(c_n* c_m A_nm)
                s.coherence += 2.0 * x.coherence(inp.c_k[a], cb);
            } else {
                let pp = 2.0 * inp.p_k[a] * pb;
                s.sigma2 += pp * x2;
                let bin = match g.as_mut() {
                    Some(g) => {
                        while *g > 0 && inp.lookup[*g] >= w {
                            *g -= 1;
                        }
                        Some(*g)
                    }
                    None => bin_of(inp.lookup, w),
                };
                if let Some(bin) = bin {
                    s.eth_weight[bin] += pp;
                }
            }
            if inp.radii {
                let r = x.abs();
                s.radii[a] += r;
                s.radii[b] += r;
            }
        }
        if inp.radii {
            s.diagonal.push(m[(b, c)].re());
        }
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Matrix;

    #[test]
    fn envelope_lookup() {
        // bin lookup with the nearest non-empty bin (our stated rule; no source)
        let env = Envelope {
            edges: vec![0.0, 1.0, 2.0, 3.0],
            mean_sq: vec![1.0, 0.0, 3.0],
            counts: vec![4, 0, 2],
        };
        assert_eq!(env.at(0.5), 1.0);
        assert_eq!(env.at(2.5), 3.0);
        assert_eq!(env.at(7.0), 3.0);
        assert_eq!(env.at(1.5), 1.0);
        // an edge belongs to the bin below it, as for a binary search over the upper edges
        assert_eq!(env.at(1.0), 1.0);
        assert_eq!(env.at(2.0 + 1e-12), 3.0);
    }

    #[test]
    fn bin_lookup_is_the_binary_search() {
        // the guess-and-walk lookup gives partition_point's bin on uniform and uneven
        // edges, on and between edges (the definition of the lookup; no source)
        for edges in [
            (0..=50).map(|b| 3.7 * b as f64 / 50.0).collect::<Vec<_>>(),
            vec![0.0, 0.1, 0.15, 2.0, 2.5, 9.0],
        ] {
            let nb = edges.len() - 1;
            let mut probes: Vec<f64> = edges.clone();
            probes.extend((0..400).map(|i| -0.5 + 0.025 * i as f64));
            for w in probes {
                let want = edges[1..].partition_point(|&e| e < w).min(nb - 1);
                assert_eq!(bin_of(&edges, w), Some(want), "ω = {w}");
            }
        }
        assert_eq!(bin_of(&[1.0], 0.5), None);
    }

    #[test]
    fn pair_sums_match_the_double_loop() {
        // the panel sweep, whatever the panel width and the parallelism, equals the plain
        // loop over pairs n < m (definitions of the module doc; exact up to rounding)
        use rand::Rng;
        let k = 37;
        let mut rng = crate::model::rmt::rng(31);
        let a = crate::model::rmt::gue(k, &mut rng);
        let mut e: Vec<f64> = (0..k).map(|_| rng.random::<f64>() * 3.0).collect();
        e.sort_by(f64::total_cmp);
        e[5] = e[4]; // one degenerate pair
        let p: Vec<f64> = (0..k).map(|_| rng.random::<f64>() / k as f64).collect();
        let c: Vec<c64> = p.iter().map(|&x| c64::new(x.sqrt(), 0.1)).collect();
        let (wmax, edges) = linear_edges(&e, 7);
        let (mut s2, mut eth, mut coh, mut deg) = (0.0, vec![0.0; 7], 0.0, 0);
        let mut radii = vec![0.0; k];
        for m in 0..k {
            for n in 0..m {
                let w = (e[m] - e[n]).abs();
                let x = a[(n, m)];
                radii[n] += x.norm();
                radii[m] += x.norm();
                if w <= 1e-12 {
                    deg += 1;
                    coh += 2.0 * (c[n].conj() * c[m] * x).re;
                } else {
                    s2 += 2.0 * p[n] * p[m] * x.norm_sqr();
                    eth[edges[1..].partition_point(|&q| q < w).min(6)] += 2.0 * p[n] * p[m];
                }
            }
        }
        for width in [1, 5, 37] {
            for par in [Par::Seq, Par::rayon(2)] {
                let h = HermitianPanels::from_full(&Matrix::Complex(a.clone()), width);
                let got = pair_sums(
                    &h,
                    &Pairs {
                        e_k: &e,
                        p_k: &p,
                        c_k: &c,
                        tol: 1e-12,
                        lookup: &edges,
                        build: Some(wmax),
                        radii: true,
                    },
                    par,
                );
                assert!((got.sigma2 - s2).abs() < 1e-14 * s2);
                assert!((got.coherence - coh).abs() < 1e-14);
                assert_eq!(got.degenerate_pairs, deg);
                for (x, y) in got.eth_weight.iter().zip(&eth) {
                    assert!((x - y).abs() < 1e-15);
                }
                for (x, y) in got.radii.iter().zip(&radii) {
                    assert!((x - y).abs() < 1e-12);
                }
                assert_eq!(got.diagonal.len(), k);
                assert_eq!(got.env_count.iter().sum::<usize>(), k * (k - 1) / 2);
            }
        }
    }
}
