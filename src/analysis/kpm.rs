//! Thermodynamics from Chebyshev moments: the kernel polynomial method (KPM; Weiße,
//! Wellein, Alvermann, Fehske, Rev. Mod. Phys. 78, 275 (2006)), for partial eigenbases.
//!
//! Input: the moments `μₙ = Tr Tₙ(H̃)/D` and `μₙ(A) = Tr(A Tₙ(H̃))/D`, `n < N`, of the
//! rescaled `H̃ = (H − b)/a` ([`crate::project::chebyshev`]), one sample per random vector
//! (their mean estimates the trace), with the exact low moments put in place of the
//! estimates. With `x = (E − b)/a`, `θ = arccos x`:
//!
//! - Jackson kernel `gₙ = [(N − n + 1) cos(πn/(N+1)) + sin(πn/(N+1)) cot(π/(N+1))]/(N+1)`;
//! - density of states (states per unit energy)
//!   `ρ(E) = D/(π a √(1 − x²)) · [g₀μ₀ + 2 Σₙ gₙ μₙ Tₙ(x)]`, entropy `S(E) = ln ρ(E)`;
//! - states in the shell `|E' − E| ≤ δ`: `D Σₙ gₙ cₙ μₙ` with the Chebyshev coefficients of
//!   the indicator of `[x₁, x₂]`, `c₀ = (θ₁ − θ₂)/π`, `cₙ = 2 (sin nθ₁ − sin nθ₂)/(nπ)`;
//!   the microcanonical average is `Σ gₙcₙμₙ(A) / Σ gₙcₙμₙ`;
//! - canonical averages from the expansion of `e^{−βH}` (no kernel: it converges faster
//!   than any power once `N > |β|a`):
//!   `e^{−βH} = e^{−βb} [I₀(−βa) + 2 Σₖ Iₖ(−βa) Tₖ(H̃)]` with `Iₖ` the modified Bessel
//!   functions, so `⟨A⟩_β = Σₖ cₖ μₖ(A) / Σₖ cₖ μₖ`, `cₖ = (2 − δₖ₀) Iₖ(−βa)`, and
//!   `⟨H̃⟩_β` uses `Tr(H̃ Tₖ) = (μₖ₊₁ + μₖ₋₁)/2` (`μ₁` for `k = 0`). β values whose last
//!   coefficient exceeds [`TRUNCATION`] of their sum are out of reach (`None`);
//! - `β(E)` solves `⟨H⟩_β = E` (bisection: `⟨H⟩_β` is a decreasing function of β for
//!   every sample, since each sample is `⟨r|H e^{−βH}|r⟩/⟨r|e^{−βH}|r⟩`);
//! - errors: a delete-one jackknife over the random vectors (R ≥ 2), at fixed β for the
//!   canonical average; zero for the exact trace.

use crate::project::chebyshev::{Moments, TraceMode};
use serde::Serialize;

/// Largest relative size of the last term of the canonical expansion.
pub const TRUNCATION: f64 = 1e-12;

/// Jackson kernel `g₀ … g_{N−1}` (module docs).
pub fn jackson(n: usize) -> Vec<f64> {
    let q = std::f64::consts::PI / (n as f64 + 1.0);
    (0..n)
        .map(|k| {
            let k_f = k as f64;
            ((n as f64 - k_f + 1.0) * (q * k_f).cos() + (q * k_f).sin() / q.tan())
                / (n as f64 + 1.0)
        })
        .collect()
}

/// `e^{−|z|} Iₖ(z)`, `k < n`, by Miller's backward recurrence normalised with
/// `I₀ + 2 Σ Iₖ = e^{z}` (Abramowitz & Stegun 9.6.26 and 9.6.37); `Iₖ(−z) = (−1)ᵏ Iₖ(z)`.
pub fn bessel_i_scaled(z: f64, n: usize) -> Vec<f64> {
    let x = z.abs();
    if x == 0.0 {
        let mut v = vec![0.0; n];
        if n > 0 {
            v[0] = 1.0;
        }
        return v;
    }
    let start = n + 32 + (2.0 * x).ceil() as usize + (40.0 * x.sqrt()) as usize;
    let mut out = vec![0.0; n];
    let (mut ip1, mut i) = (0.0f64, 1e-300f64);
    let mut sum = 0.0;
    for k in (1..=start).rev() {
        let im1 = ip1 + 2.0 * k as f64 / x * i;
        ip1 = i;
        i = im1;
        if i > 1e250 {
            ip1 *= 1e-250;
            i *= 1e-250;
            sum *= 1e-250;
            for o in out.iter_mut() {
                *o *= 1e-250;
            }
        }
        // `i` is now I_{k−1}
        if k - 1 < n {
            out[k - 1] = i;
        }
        if k > 1 {
            sum += 2.0 * i;
        }
    }
    sum += i; // I₀
    let sign = if z < 0.0 { -1.0 } else { 1.0 };
    out.iter_mut().enumerate().for_each(|(k, o)| {
        *o /= sum;
        if k % 2 == 1 {
            *o *= sign;
        }
    });
    out
}

/// Parameters of a KPM estimate, as reported.
#[derive(Debug, Clone, Serialize)]
pub struct KpmInfo {
    /// Number N of Chebyshev moments.
    pub moments: usize,
    /// How the traces were taken (random vectors and seed, or exact).
    pub trace: TraceMode,
    /// Bounds of the spectrum used for the rescaling, and how they were found.
    pub bounds: [f64; 2],
    /// `"Gershgorin discs, padded by 1 %"`.
    pub bounds_rule: String,
    /// The kernel of the density of states and the shell (`"Jackson"`).
    pub kernel: String,
    /// Energy resolution of the Jackson kernel at the centre of the spectrum, `πa/N`.
    pub resolution: f64,
    /// Spectral extent estimated from the smoothed counting function (half a state from
    /// either end).
    pub extent: [f64; 2],
    /// How the errors are estimated.
    pub error_rule: String,
}

/// Moments averaged over samples, with the jackknife replicates (module docs).
#[derive(Debug, Clone)]
pub struct KpmThermo {
    dim: f64,
    a: f64,
    b: f64,
    kernel: Vec<f64>,
    /// `[0]` the mean; then one replicate per left-out sample (stochastic, R ≥ 2).
    h: Vec<Vec<f64>>,
    ops: Vec<Vec<Vec<f64>>>,
    info: KpmInfo,
}

/// Means over samples (and the delete-one replicates), low moments replaced by `exact`.
fn replicates(samples: &[Vec<f64>], exact: &[f64]) -> Vec<Vec<f64>> {
    let r = samples.len();
    let n = samples.first().map_or(0, Vec::len);
    let total: Vec<f64> = (0..n).map(|k| samples.iter().map(|s| s[k]).sum()).collect();
    let fix = |mut v: Vec<f64>| {
        for (x, e) in v.iter_mut().zip(exact) {
            *x = *e;
        }
        v
    };
    let mut out = vec![fix(total.iter().map(|t| t / r as f64).collect())];
    if r >= 2 {
        for s in samples {
            let v = total
                .iter()
                .zip(s)
                .map(|(t, x)| (t - x) / (r - 1) as f64)
                .collect();
            out.push(fix(v));
        }
    }
    out
}

/// Jackknife standard error of replicates `θ₋ₛ` (`None` without replicates).
fn jackknife(reps: &[f64]) -> Option<f64> {
    let r = reps.len();
    if r < 2 {
        return None;
    }
    let m = reps.iter().sum::<f64>() / r as f64;
    let v = reps.iter().map(|x| (x - m).powi(2)).sum::<f64>() * (r - 1) as f64 / r as f64;
    Some(v.sqrt())
}

impl KpmThermo {
    /// From the moments of [`crate::project::chebyshev::moments`].
    pub fn new(m: &Moments) -> KpmThermo {
        let n = m.h.first().map_or(0, Vec::len);
        let h = replicates(&m.h, &m.exact_h);
        let ops = m
            .ops
            .iter()
            .zip(&m.exact_ops)
            .map(|(s, e)| replicates(s, e))
            .collect();
        let mut t = KpmThermo {
            dim: m.dim as f64,
            a: m.half_width,
            b: m.center,
            kernel: jackson(n),
            h,
            ops,
            info: KpmInfo {
                moments: n,
                trace: m.mode,
                bounds: m.bounds,
                bounds_rule: format!(
                    "Gershgorin discs of the stored Hamiltonian, padded by {} %",
                    crate::project::chebyshev::PADDING * 100.0
                ),
                kernel: "Jackson".into(),
                resolution: std::f64::consts::PI * m.half_width / n.max(1) as f64,
                extent: m.bounds,
                error_rule: match m.mode {
                    TraceMode::Exact => "exact trace: no stochastic error".into(),
                    TraceMode::Stochastic { vectors, .. } => format!(
                        "delete-one jackknife over the {vectors} random vectors (falls as 1/sqrt(R·D)); the moments μ₀–μ₂ of H and μ₀–μ₁ of each observable (μ₂ too for diagonal and CSR observables) are exact"
                    ),
                },
            },
        };
        t.info.extent = t.extent();
        t
    }

    /// The parameters, as reported.
    pub fn info(&self) -> &KpmInfo {
        &self.info
    }

    /// Number of observables.
    pub fn observables(&self) -> usize {
        self.ops.len()
    }

    /// Density of states `ρ(E)` (states per unit energy; 0 outside the rescaled range).
    pub fn density(&self, e: f64) -> f64 {
        let x = (e - self.b) / self.a;
        if x.abs() >= 1.0 {
            return 0.0;
        }
        let t = x.acos();
        let s: f64 = self.h[0]
            .iter()
            .zip(&self.kernel)
            .enumerate()
            .map(|(k, (mu, g))| {
                if k == 0 {
                    mu * g
                } else {
                    2.0 * mu * g * (k as f64 * t).cos()
                }
            })
            .sum();
        self.dim * s / (std::f64::consts::PI * self.a * (1.0 - x * x).sqrt())
    }

    /// `S(E) = ln ρ(E)`.
    pub fn entropy(&self, e: f64) -> f64 {
        self.density(e).max(f64::MIN_POSITIVE).ln()
    }

    /// Kernel-weighted Chebyshev coefficients `gₙcₙ` of the indicator of `[lo, hi]`.
    fn shell_coefficients(&self, lo: f64, hi: f64) -> Vec<f64> {
        let x1 = ((lo - self.b) / self.a).clamp(-1.0, 1.0);
        let x2 = ((hi - self.b) / self.a).clamp(-1.0, 1.0);
        let (t1, t2) = (x1.acos(), x2.acos());
        let pi = std::f64::consts::PI;
        self.kernel
            .iter()
            .enumerate()
            .map(|(k, g)| {
                let c = if k == 0 {
                    (t1 - t2) / pi
                } else {
                    let kf = k as f64;
                    2.0 * ((kf * t1).sin() - (kf * t2).sin()) / (kf * pi)
                };
                g * c
            })
            .collect()
    }

    /// Number of states with energies in `[lo, hi]` (kernel-smoothed).
    pub fn count(&self, lo: f64, hi: f64) -> f64 {
        let c = self.shell_coefficients(lo, hi);
        self.dim * c.iter().zip(&self.h[0]).map(|(c, m)| c * m).sum::<f64>()
    }

    /// Energies where the smoothed counting function reaches half a state from either end.
    fn extent(&self) -> [f64; 2] {
        let (lo, hi) = (self.b - self.a, self.b + self.a);
        let solve = |from_low: bool| {
            let (mut l, mut h) = (lo, hi);
            for _ in 0..100 {
                let mid = 0.5 * (l + h);
                let c = if from_low {
                    self.count(lo, mid)
                } else {
                    self.count(mid, hi)
                };
                if (c < 0.5) == from_low {
                    l = mid;
                } else {
                    h = mid;
                }
            }
            0.5 * (l + h)
        };
        [solve(true), solve(false)]
    }

    /// Microcanonical average of observable `k` over `|E' − e| ≤ half_width`, with its
    /// jackknife error; `None` when the shell holds less than half a state.
    pub fn microcanonical(&self, k: usize, e: f64, half_width: f64) -> Option<(f64, Option<f64>)> {
        let c = self.shell_coefficients(e - half_width, e + half_width);
        let val = |h: &[f64], a: &[f64]| -> (f64, f64) {
            let dot = |m: &[f64]| c.iter().zip(m).map(|(c, m)| c * m).sum::<f64>();
            (dot(a), dot(h))
        };
        let (num, den) = val(&self.h[0], &self.ops[k][0]);
        if den * self.dim < 0.5 {
            return None;
        }
        let reps: Vec<f64> = (1..self.h.len())
            .map(|s| {
                let (n, d) = val(&self.h[s], &self.ops[k][s]);
                n / d
            })
            .collect();
        Some((num / den, jackknife(&reps)))
    }

    /// Expansion coefficients `cₖ` of `e^{−βH}` (common factor dropped), `None` when
    /// `N` moments do not resolve it.
    fn canonical_coefficients(&self, beta: f64) -> Option<Vec<f64>> {
        let n = self.kernel.len();
        let mut c = bessel_i_scaled(-beta * self.a, n);
        for x in c.iter_mut().skip(1) {
            *x *= 2.0;
        }
        let total: f64 = c.iter().map(|x| x.abs()).sum();
        let tail = c[n - 2].abs() + c[n - 1].abs();
        (tail <= TRUNCATION * total).then_some(c)
    }

    /// `⟨H⟩_β` from moment set `s` (0: the mean).
    fn energy_with(&self, c: &[f64], s: usize) -> f64 {
        let mu = &self.h[s];
        let n = mu.len();
        let (mut z, mut e) = (0.0, 0.0);
        for k in 0..n - 1 {
            z += c[k] * mu[k];
            let hk = if k == 0 {
                mu[1]
            } else {
                0.5 * (mu[k + 1] + mu[k - 1])
            };
            e += c[k] * hk;
        }
        self.b + self.a * e / z
    }

    /// Canonical energy `⟨H⟩_β` (None when β is out of reach).
    pub fn canonical_energy(&self, beta: f64) -> Option<f64> {
        self.canonical_coefficients(beta)
            .map(|c| self.energy_with(&c, 0))
    }

    /// Largest |β| the moments resolve (a power of two times `1/a`, searched downwards).
    fn beta_reach(&self) -> f64 {
        let mut b = self.kernel.len() as f64 / self.a;
        while b * self.a > 1e-6 && self.canonical_coefficients(b).is_none() {
            b *= 0.8;
        }
        b
    }

    /// `β(E)` solving `⟨H⟩_β = e` with moment set `s`: the root nearest to β = 0, bracketed
    /// by doubling steps from `±10⁻³/a` (at large |β| stochastic moments lose the
    /// positivity that makes `⟨H⟩_β` monotone, so the search never starts there), then
    /// bisected.
    fn beta_with(&self, e: f64, s: usize) -> Option<f64> {
        let reach = self.beta_reach();
        let f = |b: f64| {
            self.canonical_coefficients(b)
                .map(|c| self.energy_with(&c, s))
        };
        let f0 = f(0.0)?;
        if e == f0 {
            return Some(0.0);
        }
        let sign = if e < f0 { 1.0 } else { -1.0 };
        let above = |v: f64| (v > e) == (sign > 0.0); // still on the β = 0 side of the root
        let (mut lo, mut hi) = (0.0, sign * 1e-3 / self.a);
        loop {
            if hi.abs() > reach {
                return None;
            }
            if !above(f(hi)?) {
                break;
            }
            lo = hi;
            hi *= 2.0;
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if above(f(mid)?) {
                lo = mid;
            } else {
                hi = mid;
            }
            if (hi - lo).abs() < 1e-14 * reach {
                break;
            }
        }
        Some(0.5 * (lo + hi))
    }

    /// `β(E)` with its jackknife error.
    pub fn beta(&self, e: f64) -> Option<(f64, Option<f64>)> {
        let b = self.beta_with(e, 0)?;
        let reps: Option<Vec<f64>> = (1..self.h.len()).map(|s| self.beta_with(e, s)).collect();
        Some((b, reps.and_then(|r| jackknife(&r))))
    }

    /// Canonical average `⟨A_k⟩_β` with its jackknife error at fixed β.
    pub fn canonical(&self, k: usize, beta: f64) -> Option<(f64, Option<f64>)> {
        let c = self.canonical_coefficients(beta)?;
        let ratio = |s: usize| {
            let z: f64 = c.iter().zip(&self.h[s]).map(|(c, m)| c * m).sum();
            let a: f64 = c.iter().zip(&self.ops[k][s]).map(|(c, m)| c * m).sum();
            a / z
        };
        let reps: Vec<f64> = (1..self.h.len()).map(ratio).collect();
        Some((ratio(0), jackknife(&reps)))
    }
}

/// Predictions of observable `k` from the KPM moments, with `S(E)` and `β(E)` from a
/// stored `spectrum` when one is given (source `stored`), else from the moments (`kpm`).
/// The shell half-width is 2 % of the spectral width: of the stored spectrum, or of the
/// KPM extent ([`KpmInfo::extent`]).
#[derive(Debug, Clone, Copy)]
pub struct KpmPredictor<'a> {
    /// The moments (None: a stored spectrum only, no observable averages).
    pub kpm: Option<&'a KpmThermo>,
    /// Index of the observable among the moments.
    pub k: usize,
    /// Every eigenvalue of the sector, ascending, when stored.
    pub spectrum: Option<&'a [f64]>,
}

impl KpmPredictor<'_> {
    /// Spectral width of the source.
    fn width(&self) -> f64 {
        match (self.spectrum, self.kpm) {
            (Some(s), _) if s.len() >= 2 => s[s.len() - 1] - s[0],
            (_, Some(k)) => k.info.extent[1] - k.info.extent[0],
            _ => 0.0,
        }
    }
}

impl crate::analysis::thermo::Predictor for KpmPredictor<'_> {
    fn source(&self) -> crate::analysis::thermo::ThermoSource {
        if self.spectrum.is_some() {
            crate::analysis::thermo::ThermoSource::Stored
        } else {
            crate::analysis::thermo::ThermoSource::Kpm
        }
    }
    fn half_width(&self) -> f64 {
        0.02 * self.width()
    }
    fn beta(&self, e: f64) -> Option<(f64, Option<f64>)> {
        match (self.spectrum, self.kpm) {
            (Some(s), _) => crate::analysis::thermo::beta_of_energy(s, e).map(|b| (b, None)),
            (None, Some(k)) => k.beta(e),
            _ => None,
        }
    }
    fn canonical(&self, beta: f64) -> Option<(f64, Option<f64>)> {
        self.kpm.and_then(|k| k.canonical(self.k, beta))
    }
    fn microcanonical(&self, e: f64, half_width: f64) -> Option<(f64, Option<f64>)> {
        self.kpm
            .and_then(|k| k.microcanonical(self.k, e, half_width))
    }
    fn entropy(&self, e: f64) -> f64 {
        match (self.spectrum, self.kpm) {
            (Some(s), _) => {
                let sigma = crate::analysis::thermo::default_dos_width(s).max(f64::MIN_POSITIVE);
                crate::analysis::thermo::entropy(s, e, sigma)
            }
            (None, Some(k)) => k.entropy(e),
            _ => f64::NAN,
        }
    }
    fn describe(&self) -> String {
        let kpm = self.kpm.map(|k| {
            let i = &k.info;
            let trace = match i.trace {
                TraceMode::Exact => "exact trace".to_string(),
                TraceMode::Stochastic { vectors, seed } => {
                    format!("{vectors} random vectors, seed {seed}")
                }
            };
            format!(
                "kernel polynomial method on the stored Hamiltonian ({} Chebyshev moments, {trace}, Jackson kernel, bounds [{:.4}, {:.4}] from Gershgorin discs)",
                i.moments, i.bounds[0], i.bounds[1]
            )
        });
        match (self.spectrum, kpm) {
            (Some(s), Some(k)) => format!(
                "S(E) and beta(E) from the stored spectrum ({} eigenvalues); averages of the observable from the {k}",
                s.len()
            ),
            (Some(s), None) => format!(
                "S(E) and beta(E) from the stored spectrum ({} eigenvalues); no Hamiltonian stored, so no canonical or microcanonical average of the observable",
                s.len()
            ),
            (None, Some(k)) => k,
            (None, None) => "no thermal source".into(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bessel_values() {
        // I₀(1) = 1.2660658777520082, I₁(1) = 0.5651591039924851, I₂(1) = 0.1357476697670383
        // (Abramowitz & Stegun, Table 9.8; from memory, checked against the series below)
        let v = bessel_i_scaled(1.0, 3);
        let e = 1.0f64.exp();
        assert!((v[0] * e - 1.2660658777520082).abs() < 1e-13);
        assert!((v[1] * e - 0.5651591039924851).abs() < 1e-13);
        assert!((v[2] * e - 0.1357476697670383).abs() < 1e-13);
        // the power series Iₖ(z) = Σ_m (z/2)^{2m+k}/(m!(m+k)!) at z = 7.3, k = 0..20,
        // and the sign rule Iₖ(−z) = (−1)ᵏ Iₖ(z) (A&S 9.6.10, 9.6.30)
        let z = 7.3f64;
        let w = bessel_i_scaled(z, 21);
        let neg = bessel_i_scaled(-z, 21);
        for k in 0..21 {
            let mut term = (0.5 * z).powi(k as i32) / (1..=k).map(|x| x as f64).product::<f64>();
            let mut s = 0.0;
            for m in 0..200 {
                s += term;
                term *= (0.5 * z).powi(2) / ((m + 1) as f64 * (m + 1 + k) as f64);
            }
            let got = w[k] * z.exp();
            assert!((got - s).abs() < 1e-12 * s, "k {k}: {got} vs {s}");
            let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
            assert!((neg[k] - sign * w[k]).abs() < 1e-15 * w[0]);
        }
    }

    /// Exact moments of a spectrum with values `a` (`μₙ = mean Tₙ(xᵢ)`).
    fn exact_moments(e: &[f64], a: &[f64], n: usize, lo: f64, hi: f64) -> Moments {
        let (b, w) = (0.5 * (hi + lo), 0.5 * (hi - lo) / 0.99);
        let t = |k: usize, x: f64| (k as f64 * ((x - b) / w).acos()).cos();
        let d = e.len() as f64;
        let h: Vec<f64> = (0..n)
            .map(|k| e.iter().map(|&x| t(k, x)).sum::<f64>() / d)
            .collect();
        let o: Vec<f64> = (0..n)
            .map(|k| e.iter().zip(a).map(|(&x, y)| y * t(k, x)).sum::<f64>() / d)
            .collect();
        Moments {
            dim: e.len(),
            bounds: [lo, hi],
            center: b,
            half_width: w,
            mode: TraceMode::Exact,
            exact_h: [h[0], h[1], h[2]],
            exact_ops: vec![vec![o[0], o[1], o[2]]],
            h: vec![h],
            ops: vec![vec![o]],
        }
    }

    #[test]
    fn canonical_sums_from_exact_moments() {
        // with exact moments the Bessel expansion of e^{−βH} reproduces the Boltzmann
        // sums over the spectrum (Weiße et al. 2006, sec. IV; A&S 9.6.34 for the
        // generating function e^{z cos θ} = I₀(z) + 2 Σ Iₖ(z) cos kθ)
        let e: Vec<f64> = (0..300)
            .map(|i| (i as f64 * 0.37).sin() * 5.0 + 0.01 * i as f64)
            .collect();
        let a: Vec<f64> = e.iter().map(|x| (0.7 * x).cos()).collect();
        let m = exact_moments(&e, &a, 256, -6.0, 8.0);
        let k = KpmThermo::new(&m);
        for beta in [-0.5, -0.05, 0.0, 0.1, 0.8, 2.0] {
            let want = crate::analysis::thermo::canonical_energy(&e, beta);
            let got = k.canonical_energy(beta).unwrap();
            assert!((got - want).abs() < 1e-10, "beta {beta}: {got} vs {want}");
            let wa = crate::analysis::thermo::canonical_average(&e, &a, beta);
            let (ga, _) = k.canonical(0, beta).unwrap();
            assert!((ga - wa).abs() < 1e-10, "beta {beta}: {ga} vs {wa}");
            let (gb, _) = k.beta(want).unwrap();
            assert!((gb - beta).abs() < 1e-8, "beta {beta}: {gb}");
        }
    }

    #[test]
    fn jackson_kernel_ends() {
        // g₀ = 1 and gₙ decreasing to ≈ 0 at n = N−1 (Weiße et al. 2006, eq. 71)
        let g = jackson(64);
        assert!((g[0] - 1.0).abs() < 1e-14);
        assert!(g.windows(2).all(|w| w[1] < w[0]));
        assert!(g[63].abs() < 1e-3);
    }
}
