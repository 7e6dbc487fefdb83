//! Thermodynamics from a finite spectrum: canonical and microcanonical averages,
//! the inverse temperature of an energy.
//!
//! For eigenvalues `E_n` and diagonal values `a_n = A_nn`:
//!
//! - canonical average `⟨A⟩_β = Σₙ e^{−β(Eₙ−E₀)} aₙ / Σₙ e^{−β(Eₙ−E₀)}`
//!   (the shift by the ground energy E₀ keeps the exponentials finite; for β < 0 the
//!   shift is by the top energy instead);
//! - `β(E)` solves `⟨H⟩_β = E` (monotone decreasing in β, solved by bisection);
//! - microcanonical average at `E`: the mean of `aₙ` over the shell `|Eₙ − E| ≤ ΔE/2`;
//! - Gaussian-smoothed density of states `ρ(E) = Σₙ exp(−(E−Eₙ)²/2σ²) / (√(2π) σ)`
//!   (states per unit energy) and the microcanonical entropy `S(E) = ln(ρ(E)·ΔE)` with
//!   `ΔE` one unit of energy of the input, so that `e^{S(E)} = ρ(E)`;
//! - the default smoothing width [`default_dos_width`]
//!   `σ = (E_max − E_min)·max(0.02, 10/n)`: 2 % of the spectral width, widened for
//!   small spectra so that about ten or more states fall within one σ.

/// Where the thermal predictions (`S(E)`, `β(E)`, canonical and microcanonical averages)
/// come from: the stored states (`full`), the kernel polynomial method on the stored
/// Hamiltonian (`kpm`, [`crate::analysis::kpm`]), or a stored `spectrum` of every
/// eigenvalue for `S(E)` and `β(E)` (`stored`; averages of observables then from the KPM).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ThermoSource {
    /// The stored states.
    Full,
    /// Chebyshev moments of the stored Hamiltonian.
    Kpm,
    /// The stored `spectrum` dataset.
    Stored,
}

impl std::fmt::Display for ThermoSource {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            ThermoSource::Full => "full",
            ThermoSource::Kpm => "kpm",
            ThermoSource::Stored => "stored",
        })
    }
}

/// Thermal predictions of one observable from a source other than its stored `Aₙₙ`
/// (values with an error estimate where the source has one).
pub trait Predictor {
    /// The source, as reported.
    fn source(&self) -> ThermoSource;
    /// Half-width of the microcanonical shell (2 % of the spectral width of the source).
    fn half_width(&self) -> f64;
    /// `β(E)` solving `⟨H⟩_β = E`.
    fn beta(&self, e: f64) -> Option<(f64, Option<f64>)>;
    /// Canonical average `⟨A⟩_β`.
    fn canonical(&self, beta: f64) -> Option<(f64, Option<f64>)>;
    /// Microcanonical average over `|E' − e| ≤ half_width`.
    fn microcanonical(&self, e: f64, half_width: f64) -> Option<(f64, Option<f64>)>;
    /// `S(E) = ln ρ(E)`.
    fn entropy(&self, e: f64) -> f64;
    /// What the source is, in words.
    fn describe(&self) -> String;
}

/// Largest |β| searched, in units of the inverse spectral width.
const BETA_RANGE_WIDTHS: f64 = 1.0e3;

/// Canonical weights `e^{−β(Eₙ−E_ref)}` normalised to sum to 1.
pub fn canonical_weights(energies: &[f64], beta: f64) -> Vec<f64> {
    if energies.is_empty() {
        return Vec::new();
    }
    // Reference energy that makes the largest exponent zero.
    let e_ref = if beta >= 0.0 {
        energies.iter().cloned().fold(f64::INFINITY, f64::min)
    } else {
        energies.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
    };
    let w: Vec<f64> = energies
        .iter()
        .map(|&e| (-beta * (e - e_ref)).exp())
        .collect();
    let z: f64 = w.iter().sum();
    w.into_iter().map(|x| x / z).collect()
}

/// Canonical average `⟨A⟩_β = Σₙ pₙ(β) aₙ` with `pₙ(β) ∝ e^{−βEₙ}`.
pub fn canonical_average(energies: &[f64], values: &[f64], beta: f64) -> f64 {
    canonical_weights(energies, beta)
        .iter()
        .zip(values)
        .map(|(p, a)| p * a)
        .sum()
}

/// Canonical energy `⟨H⟩_β`.
pub fn canonical_energy(energies: &[f64], beta: f64) -> f64 {
    canonical_average(energies, energies, beta)
}

/// Canonical mean and variance of the energy, `(⟨H⟩_β, ⟨H²⟩_β − ⟨H⟩_β²)`, in one pass
/// without allocation (energies measured from the same reference as
/// [`canonical_weights`], so the exponentials stay finite).
pub fn canonical_energy_moments(energies: &[f64], beta: f64) -> (f64, f64) {
    if energies.is_empty() {
        return (f64::NAN, f64::NAN);
    }
    let e_ref = if beta >= 0.0 {
        energies.iter().cloned().fold(f64::INFINITY, f64::min)
    } else {
        energies.iter().cloned().fold(f64::NEG_INFINITY, f64::max)
    };
    let (mut z, mut s1, mut s2) = (0.0f64, 0.0f64, 0.0f64);
    for &e in energies {
        let x = e - e_ref;
        let w = (-beta * x).exp();
        z += w;
        s1 += w * x;
        s2 += w * x * x;
    }
    let m = s1 / z;
    (e_ref + m, (s2 / z - m * m).max(0.0))
}

/// Inverse temperature `β` with `⟨H⟩_β = e`. `β ↦ ⟨H⟩_β` is monotone decreasing with
/// slope `d⟨H⟩_β/dβ = −Var_β(H)`, so Newton steps `β ← β + (⟨H⟩_β − e)/Var_β(H)` are
/// taken inside a bisection bracket (a step that leaves the bracket is replaced by
/// bisection); typically a few passes over the spectrum instead of about fifty.
/// `None` when `e` lies outside the range reachable with `|β| ≤ 10³/(E_max − E_min)`
/// (that is, at the very edges of the spectrum) or the spectrum is empty or flat.
pub fn beta_of_energy(energies: &[f64], e: f64) -> Option<f64> {
    let emin = energies.iter().cloned().fold(f64::INFINITY, f64::min);
    let emax = energies.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    let width = emax - emin;
    if width.is_nan() || width <= 0.0 || !e.is_finite() {
        return None;
    }
    let bmax = BETA_RANGE_WIDTHS / width;
    let (mut lo, mut hi) = (-bmax, bmax); // ⟨H⟩ decreases from ≈E_max at lo to ≈E_min at hi
    if e > canonical_energy(energies, lo) || e < canonical_energy(energies, hi) {
        return None;
    }
    let mut beta = 0.0f64; // inside the bracket (−bmax, bmax)
    for _ in 0..200 {
        let (h, var) = canonical_energy_moments(energies, beta);
        let f = h - e;
        if f.abs() <= 1e-14 * width {
            return Some(beta);
        }
        if f > 0.0 {
            lo = beta;
        } else {
            hi = beta;
        }
        if hi - lo < 1e-13 * bmax {
            break;
        }
        let newton = beta + f / var;
        beta = if var > 0.0 && newton > lo && newton < hi {
            newton
        } else {
            0.5 * (lo + hi)
        };
    }
    Some(beta)
}

/// Microcanonical average: mean of `values[n]` over the states with `|Eₙ − e| ≤ half_width`,
/// with the number of states in the shell; `None` when the shell is empty.
pub fn microcanonical_average(
    energies: &[f64],
    values: &[f64],
    e: f64,
    half_width: f64,
) -> Option<(f64, usize)> {
    let (sum, count) = energies
        .iter()
        .zip(values)
        .filter(|(en, _)| (**en - e).abs() <= half_width)
        .fold((0.0, 0usize), |(s, c), (_, a)| (s + a, c + 1));
    (count > 0).then(|| (sum / count as f64, count))
}

/// Default Gaussian width of the smoothed density of states (also the default
/// half-width of the microcanonical shell): `σ = (E_max − E_min)·max(0.02, 10/n)`;
/// 0 for fewer than two states or a flat spectrum.
pub fn default_dos_width(energies: &[f64]) -> f64 {
    let n = energies.len();
    if n < 2 {
        return 0.0;
    }
    let emin = energies.iter().cloned().fold(f64::INFINITY, f64::min);
    let emax = energies.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    (emax - emin).max(0.0) * f64::max(0.02, 10.0 / n as f64)
}

/// Gaussian-smoothed density of states at `e`:
/// `ρ(e) = Σₙ exp(−(e−Eₙ)²/2σ²) / (√(2π) σ)` (states per unit energy; `σ > 0`).
pub fn density_of_states(energies: &[f64], e: f64, sigma: f64) -> f64 {
    let norm = 1.0 / ((2.0 * std::f64::consts::PI).sqrt() * sigma);
    energies
        .iter()
        .map(|&en| {
            let x = (e - en) / sigma;
            (-0.5 * x * x).exp()
        })
        .sum::<f64>()
        * norm
}

/// Microcanonical entropy `S(e) = ln ρ(e)` (that is `ln(ρ(e)·ΔE)` with `ΔE` one unit of
/// energy) from the Gaussian-smoothed density of states of width `sigma`.
pub fn entropy(energies: &[f64], e: f64, sigma: f64) -> f64 {
    density_of_states(energies, e, sigma).ln()
}

/// `S(E)` tabulated on `points` equally spaced energies over `[lo, hi]`, for fast
/// linear interpolation ([`EntropyTable::at`]) when it is needed for many pairs of states.
#[derive(Debug, Clone, serde::Serialize)]
pub struct EntropyTable {
    /// Lowest tabulated energy.
    pub lo: f64,
    /// Highest tabulated energy.
    pub hi: f64,
    /// Gaussian width σ of the density of states.
    pub sigma: f64,
    /// `S` at the grid points.
    pub values: Vec<f64>,
}

impl EntropyTable {
    /// Tabulates `S(E) = ln ρ(E)` (width `sigma`) on `points ≥ 2` energies in `[lo, hi]`.
    pub fn new(energies: &[f64], lo: f64, hi: f64, sigma: f64, points: usize) -> EntropyTable {
        let points = points.max(2);
        let values = (0..points)
            .map(|k| {
                let e = lo + (hi - lo) * k as f64 / (points - 1) as f64;
                entropy(energies, e, sigma)
            })
            .collect();
        EntropyTable {
            lo,
            hi,
            sigma,
            values,
        }
    }

    /// Tabulates `S(E)` given by `entropy` (a density of states of resolution `sigma`).
    pub fn from_fn(
        entropy: impl Fn(f64) -> f64,
        lo: f64,
        hi: f64,
        sigma: f64,
        points: usize,
    ) -> EntropyTable {
        let points = points.max(2);
        let values = (0..points)
            .map(|k| entropy(lo + (hi - lo) * k as f64 / (points - 1) as f64))
            .collect();
        EntropyTable {
            lo,
            hi,
            sigma,
            values,
        }
    }

    /// `S(e)` by linear interpolation (clamped to the tabulated range).
    pub fn at(&self, e: f64) -> f64 {
        let k = self.values.len() - 1;
        if self.hi <= self.lo {
            return self.values[0];
        }
        let x = ((e - self.lo) / (self.hi - self.lo)).clamp(0.0, 1.0) * k as f64;
        let i = (x.floor() as usize).min(k.saturating_sub(1));
        let t = x - i as f64;
        self.values[i] * (1.0 - t) + self.values[(i + 1).min(k)] * t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dos_integrates_to_state_count() {
        // ∫ρ(E) dE = n for a Gaussian-smoothed density (normalised Gaussians; no source needed)
        let e: Vec<f64> = (0..30).map(|i| (i as f64 * 0.7).sin() * 2.0).collect();
        let sigma = 0.3;
        let (a, b, m) = (-5.0, 5.0, 4000);
        let h = (b - a) / m as f64;
        let integral: f64 = (0..=m)
            .map(|k| {
                let w = if k == 0 || k == m { 0.5 } else { 1.0 };
                w * density_of_states(&e, a + k as f64 * h, sigma)
            })
            .sum::<f64>()
            * h;
        assert!((integral - 30.0).abs() < 1e-6, "{integral}");
        let t = EntropyTable::new(&e, -2.0, 2.0, sigma, 401);
        for x in [-1.9, -0.33, 0.0, 1.234] {
            assert!((t.at(x) - entropy(&e, x, sigma)).abs() < 1e-3, "{x}");
        }
    }

    #[test]
    fn two_level_canonical_energy() {
        // Two levels ±h: ⟨H⟩_β = −h tanh(βh) (any statistical mechanics text)
        let h = 0.7;
        let e = [-h, h];
        for beta in [-2.0, -0.3, 0.0, 0.4, 3.0] {
            let got = canonical_energy(&e, beta);
            assert!((got + h * (beta * h).tanh()).abs() < 1e-14, "beta {beta}");
        }
    }

    #[test]
    fn beta_inverts_canonical_energy() {
        // β(⟨H⟩_β) = β: safeguarded Newton on a monotone function (common practice, no source)
        let e: Vec<f64> = (0..50)
            .map(|i| (i as f64 * 0.37).sin() * 3.0 + i as f64 * 0.1)
            .collect();
        for beta in [-0.8, -0.1, 0.0, 0.25, 1.5] {
            let target = canonical_energy(&e, beta);
            let b = beta_of_energy(&e, target).expect("inside the range");
            assert!((b - beta).abs() < 1e-8, "beta {beta} got {b}");
        }
        assert!(beta_of_energy(&e, 1e9).is_none());
        // a 4096-level spectrum and energies near the edges, where Newton steps overshoot
        // and bisection takes over
        let big: Vec<f64> = (0..4096)
            .map(|i| (i as f64 * 0.618).fract() * 10.0)
            .collect();
        for beta in [-40.0, -2.0, 0.01, 3.0, 60.0] {
            let target = canonical_energy(&big, beta);
            let b = beta_of_energy(&big, target).expect("inside the range");
            let back = canonical_energy(&big, b);
            assert!(
                (back - target).abs() < 1e-10,
                "beta {beta}: ⟨H⟩ {back} vs {target}"
            );
        }
    }

    #[test]
    fn energy_moments_match_the_weights() {
        // mean and variance from the normalised Boltzmann weights (definition; common
        // practice, no source)
        let e: Vec<f64> = (0..40).map(|i| (i as f64 * 0.9).cos() * 2.0).collect();
        for beta in [-1.3, 0.0, 0.7] {
            let w = canonical_weights(&e, beta);
            let m: f64 = w.iter().zip(&e).map(|(p, x)| p * x).sum();
            let v: f64 = w.iter().zip(&e).map(|(p, x)| p * (x - m) * (x - m)).sum();
            let (gm, gv) = canonical_energy_moments(&e, beta);
            assert!(
                (gm - m).abs() < 1e-13 && (gv - v).abs() < 1e-12,
                "beta {beta}"
            );
        }
    }

    #[test]
    fn microcanonical_shell() {
        // mean over a shell (definition; common practice, no source)
        let e = [0.0, 1.0, 2.0, 3.0];
        let a = [10.0, 20.0, 30.0, 40.0];
        assert_eq!(microcanonical_average(&e, &a, 1.5, 0.6), Some((25.0, 2)));
        assert_eq!(microcanonical_average(&e, &a, 10.0, 0.5), None);
    }
}
