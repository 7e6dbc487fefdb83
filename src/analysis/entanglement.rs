//! Bipartite entanglement entropy of eigenstates against the random-state values.
//!
//! A state `|ψ⟩ = Σ_s ψ_s |s⟩` over spin-½ configurations `s` (site i is bit i − 1) is cut
//! after site ℓ: subsystem A holds sites 1..ℓ (`a = s mod 2^ℓ`), B the rest (`b = s >> ℓ`).
//! With `M[a, b] = ψ_s` and singular values `σ_k` of `M` (Schmidt decomposition), the
//! Schmidt weights `p_k = σ_k²` give
//!
//! ```text
//! S_vN = −Σ p_k ln p_k,     S_2 = −ln Σ p_k²
//! ```
//!
//! **U(1) sectors.** When every configuration of the sector has the same number N of up
//! spins, `ψ_{ab} ≠ 0` only for `n_A + n_B = N`, so the reduced state is block diagonal in
//! `n_A`: `M` splits into blocks `M_n[a, b]` (`popcount a = n`) whose singular values
//! together are those of `M`. Otherwise `M` is one block over the configurations present.
//!
//! **Random-state references** (complex Haar-random states):
//!
//! - full space (Page, PRL 71, 1291 (1993)), `d_A ≤ d_B`:
//!   `S_Page(d_A, d_B) = Σ_{k=d_B+1}^{d_A d_B} 1/k − (d_A − 1)/(2 d_B) ≈ ln d_A − d_A/(2 d_B)`;
//! - fixed particle number N (Vidmar & Rigol, PRL 119, 220603 (2017); Bianchi, Hackl,
//!   Kieburg, Rigol, Vidmar, PRX Quantum 3, 030201 (2022)). Derivation: a Haar-random state
//!   of the sector of dimension `D = Σ_n m_n`, `m_n = d_A(n) d_B(N − n)`, has block weights
//!   `p_n = ‖ψ_n‖²` Dirichlet-distributed with parameters `m_n`, independent of the
//!   normalised blocks, each Haar-random in its `d_A(n) × d_B(N − n)` space. With
//!   `S = −Σ p_n ln p_n + Σ p_n S(ρ_n)` and `E[−p_n ln p_n] = (m_n/D)(H_D − H_{m_n})`
//!   (`H_k` the harmonic numbers, the Dirichlet identity `E[p ln p] = (α/α₀)(ψ(α+1) − ψ(α₀+1))`):
//!   `⟨S⟩ = Σ_n (m_n/D) [H_D − H_{m_n} + S_Page(d_A(n), d_B(N − n))]`.
//!
//! Real eigenstates (time-reversal symmetric Hamiltonians) are compared with the same
//! complex-state values; real random states sit slightly lower, by O(d_A/d_B) at the
//! half cut (a caveat printed with the ratio).

use serde::Serialize;

/// Harmonic number `H_k = Σ_{j=1}^k 1/j` (exact sum below 10⁶, asymptotic series above).
pub fn harmonic(k: u64) -> f64 {
    if k < 1_000_000 {
        return (1..=k).rev().map(|j| 1.0 / j as f64).sum();
    }
    let x = k as f64;
    x.ln() + 0.577_215_664_901_532_9 + 1.0 / (2.0 * x) - 1.0 / (12.0 * x * x)
}

/// Page's mean entanglement entropy of a Haar-random pure state of `d_a × d_b` (module docs).
pub fn page(d_a: u64, d_b: u64) -> f64 {
    let (m, n) = if d_a <= d_b { (d_a, d_b) } else { (d_b, d_a) };
    if m == 0 {
        return 0.0;
    }
    harmonic(m * n) - harmonic(n) - (m as f64 - 1.0) / (2.0 * n as f64)
}

/// Binomial coefficient as f64 (exact for the sizes of spin chains).
fn binom(n: usize, k: usize) -> u64 {
    if k > n {
        return 0;
    }
    let k = k.min(n - k);
    (0..k).fold(1u64, |acc, i| acc * (n - i) as u64 / (i as u64 + 1))
}

/// Mean entropy of a Haar-random state with N up spins among L sites, cut after ℓ sites
/// (module docs: Dirichlet block weights plus a Page term per block).
pub fn fixed_number_mean(sites: usize, cut: usize, up: usize) -> f64 {
    let lb = sites - cut;
    let blocks: Vec<(u64, u64)> = (0..=cut.min(up))
        .filter(|&n| up - n <= lb)
        .map(|n| (binom(cut, n), binom(lb, up - n)))
        .collect();
    let d: u64 = blocks.iter().map(|(a, b)| a * b).sum();
    let hd = harmonic(d);
    blocks
        .iter()
        .map(|&(a, b)| {
            let m = a * b;
            (m as f64 / d as f64) * (hd - harmonic(m) + page(a, b))
        })
        .sum()
}

/// The Schmidt blocks of a sector's configurations for one cut.
#[derive(Debug, Clone)]
pub struct Bipartition {
    /// Per configuration (row of the eigenvectors): (block, row in block, column in block).
    place: Vec<(usize, usize, usize)>,
    /// Shape of each block.
    shapes: Vec<(usize, usize)>,
    /// Up spins of every configuration when the sector has a fixed number, else `None`.
    pub up: Option<usize>,
    /// Sites of subsystem A.
    pub cut: usize,
}

impl Bipartition {
    /// The blocks of `configs` (each below `2^sites`) for the cut after `cut` sites
    /// (`1 ≤ cut < sites`; the caller checks).
    pub fn new(configs: &[usize], cut: usize) -> Self {
        let mask = (1usize << cut) - 1;
        let pc = |x: usize| x.count_ones() as usize;
        let first = configs.first().map_or(0, |&s| pc(s));
        let fixed = configs.iter().all(|&s| pc(s) == first);
        let key = |s: usize| if fixed { pc(s & mask) } else { 0 };
        use std::collections::BTreeMap;
        let mut rows: BTreeMap<usize, BTreeMap<usize, usize>> = BTreeMap::new();
        let mut cols: BTreeMap<usize, BTreeMap<usize, usize>> = BTreeMap::new();
        for &s in configs {
            let k = key(s);
            let r = rows.entry(k).or_default();
            let n = r.len();
            r.entry(s & mask).or_insert(n);
            let c = cols.entry(k).or_default();
            let n = c.len();
            c.entry(s >> cut).or_insert(n);
        }
        let keys: Vec<usize> = rows.keys().copied().collect();
        let index: BTreeMap<usize, usize> = keys.iter().enumerate().map(|(i, &k)| (k, i)).collect();
        let place = configs
            .iter()
            .map(|&s| {
                let k = key(s);
                (index[&k], rows[&k][&(s & mask)], cols[&k][&(s >> cut)])
            })
            .collect();
        let shapes = keys
            .iter()
            .map(|k| (rows[k].len(), cols[k].len()))
            .collect();
        Bipartition {
            place,
            shapes,
            up: fixed.then_some(first),
            cut,
        }
    }

    /// Number of Schmidt blocks.
    pub fn blocks(&self) -> usize {
        self.shapes.len()
    }

    /// `(S_vN, S_2)` of the state with amplitudes `amp(row)` (`|amp|²` and the matrix
    /// entries as complex numbers: real states pass a zero imaginary part).
    pub fn entropies(&self, amp: impl Fn(usize) -> crate::data::c64) -> (f64, f64) {
        use crate::data::c64;
        let mut mats: Vec<faer::Mat<c64>> = self
            .shapes
            .iter()
            .map(|&(r, c)| faer::Mat::zeros(r, c))
            .collect();
        for (row, &(b, i, j)) in self.place.iter().enumerate() {
            mats[b][(i, j)] = amp(row);
        }
        let mut p = Vec::new();
        for m in &mats {
            let sv = m.as_ref().singular_values().unwrap_or_default();
            p.extend(sv.into_iter().map(|s| s * s));
        }
        entropies_of_weights(&p)
    }
}

/// `(−Σ p ln p, −ln Σ p²)` of Schmidt weights (zeros skipped).
pub fn entropies_of_weights(p: &[f64]) -> (f64, f64) {
    let svn = -p
        .iter()
        .filter(|&&x| x > 0.0)
        .map(|&x| x * x.ln())
        .sum::<f64>();
    let s2 = -p.iter().map(|x| x * x).sum::<f64>().ln();
    (svn, s2)
}

/// One energy bin of the entropies.
#[derive(Debug, Clone, Serialize)]
pub struct EntropyBin {
    /// Mean energy of the bin's states.
    pub energy: f64,
    /// Mean `S_vN`.
    pub mean: f64,
    /// Standard deviation of `S_vN` over the bin (n − 1).
    pub spread: f64,
    /// States in the bin.
    pub count: usize,
}

/// `S_vN`, `S_2` of one state.
#[derive(Debug, Clone, Serialize)]
pub struct StateEntropy {
    /// Index in the ascending spectrum.
    pub index: usize,
    /// Energy.
    pub energy: f64,
    /// Von Neumann entropy.
    pub s_vn: f64,
    /// Second Rényi entropy.
    pub s_2: f64,
}

/// The entanglement figures of one sector.
#[derive(Debug, Clone, Serialize)]
pub struct EntanglementResult {
    /// The window as given.
    pub window: String,
    /// Index range of the window.
    pub window_states: [usize; 2],
    /// Number of states.
    pub states: usize,
    /// Sites of subsystem A (sites 1..cut).
    pub cut: usize,
    /// Sites of the chain.
    pub sites: usize,
    /// Schmidt blocks (particle-number blocks of A in a U(1) sector, else 1).
    pub schmidt_blocks: usize,
    /// Up spins of the sector when fixed (U(1)), else null.
    pub fixed_up: Option<usize>,
    /// Mean `S_vN` over the window.
    pub mean_s_vn: f64,
    /// Its standard deviation over the window (n − 1).
    pub spread_s_vn: f64,
    /// Mean `S_2` over the window.
    pub mean_s_2: f64,
    /// The random-state reference: Page's value (full space) or the fixed-number mean.
    pub random_state_mean: f64,
    /// Which reference (`page` or `fixed_number`).
    pub random_state_rule: String,
    /// `mean_s_vn / random_state_mean`.
    pub ratio: f64,
    /// The leading term `min(ℓ, L − ℓ) ln 2`.
    pub max_entropy: f64,
    /// Binned mean and spread against energy.
    pub bins: Vec<EntropyBin>,
    /// Every window state.
    pub per_state: Vec<StateEntropy>,
    /// Caveats.
    pub notes: Vec<String>,
}

/// Summarises the window's entropies (states in ascending energy).
pub fn summarize(
    label: &str,
    per_state: Vec<StateEntropy>,
    sites: usize,
    part: &Bipartition,
    full_space: bool,
) -> EntanglementResult {
    let n = per_state.len();
    let mean =
        |f: &dyn Fn(&StateEntropy) -> f64| per_state.iter().map(f).sum::<f64>() / n.max(1) as f64;
    let m = mean(&|s| s.s_vn);
    let spread = (per_state.iter().map(|s| (s.s_vn - m).powi(2)).sum::<f64>()
        / (n.max(2) - 1) as f64)
        .sqrt();
    let cut = part.cut;
    let (reference, rule) = match (part.up, full_space) {
        (_, true) | (None, _) => (
            page(1 << cut, 1 << (sites - cut)),
            format!("page: Page, PRL 71, 1291 (1993), d_A = 2^{cut}, d_B = 2^{}", sites - cut),
        ),
        (Some(up), false) => (
            fixed_number_mean(sites, cut, up),
            format!("fixed_number: {up} up spins of {sites}, Dirichlet block weights plus Page per block (Vidmar & Rigol 2017; Bianchi et al. 2022)"),
        ),
    };
    let nb = ((n as f64).sqrt().floor() as usize).clamp(1, 20);
    let bins = (0..nb)
        .filter_map(|k| {
            let s = &per_state[k * n / nb..(k + 1) * n / nb];
            if s.is_empty() {
                return None;
            }
            let c = s.len();
            let mu = s.iter().map(|x| x.s_vn).sum::<f64>() / c as f64;
            let var = s.iter().map(|x| (x.s_vn - mu).powi(2)).sum::<f64>() / (c.max(2) - 1) as f64;
            Some(EntropyBin {
                energy: s.iter().map(|x| x.energy).sum::<f64>() / c as f64,
                mean: mu,
                spread: var.sqrt(),
                count: c,
            })
        })
        .collect();
    EntanglementResult {
        window: label.to_string(),
        window_states: [per_state.first().map_or(0, |s| s.index), per_state.last().map_or(0, |s| s.index)],
        states: n,
        cut,
        sites,
        schmidt_blocks: part.blocks(),
        fixed_up: part.up.filter(|_| !full_space),
        mean_s_vn: m,
        spread_s_vn: spread,
        mean_s_2: mean(&|s| s.s_2),
        random_state_mean: reference,
        random_state_rule: rule,
        ratio: m / reference,
        max_entropy: cut.min(sites - cut) as f64 * std::f64::consts::LN_2,
        bins,
        per_state,
        notes: vec![
            "references are means over complex Haar-random states; real eigenstates of real Hamiltonians sit slightly lower (O(d_A/d_B) at the half cut)".to_string(),
        ],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn page_limits() {
        // Page, PRL 71, 1291 (1993): d_A = 1 gives 0; d_A = d_B = 2 gives 1/3 + 1/4 − 1/4 = 1/3
        assert_eq!(page(1, 8), 0.0);
        assert!((page(2, 2) - (1.0 / 3.0)).abs() < 1e-15);
        // the fixed-number mean at N = 0 (one configuration) is 0 (exact)
        assert!(fixed_number_mean(6, 3, 0).abs() < 1e-15);
    }

    #[test]
    fn product_and_bell_states() {
        // elementary: a product state has S = 0; a two-site singlet has S_vN = S_2 = ln 2
        let part = Bipartition::new(&[0b01, 0b10], 1);
        let h = std::f64::consts::FRAC_1_SQRT_2;
        let (s, s2) = part.entropies(|_| crate::data::c64::new(h, 0.0));
        assert!((s - std::f64::consts::LN_2).abs() < 1e-14);
        assert!((s2 - std::f64::consts::LN_2).abs() < 1e-14);
        let (s, _) = part.entropies(|r| crate::data::c64::new(if r == 0 { 1.0 } else { 0.0 }, 0.0));
        assert!(s.abs() < 1e-14);
    }
}

/// One sector of `eigentherm entanglement`.
#[derive(Debug, Clone, Serialize)]
pub struct EntanglementSector {
    /// File path.
    pub file: String,
    /// Sector name.
    pub name: String,
    /// Sector name, the key every command uses (`name` holds the same, kept for the
    /// contract's `levels`/`diagonal` keys).
    pub sector: String,
    /// Hilbert-space dimension of the sector.
    pub dim: usize,
    /// Number of stored states.
    pub n_states: usize,
    /// The figures.
    #[serde(flatten)]
    pub result: EntanglementResult,
}

/// The document of `eigentherm entanglement`.
#[derive(Debug, Clone, Serialize)]
pub struct EntanglementOutput {
    /// Memory budget of the pass, bytes.
    pub memory_budget: usize,
    /// Every selected sector.
    pub sectors: Vec<EntanglementSector>,
}
