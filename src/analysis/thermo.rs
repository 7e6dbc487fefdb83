//! Thermodynamics from a finite spectrum: canonical and microcanonical averages,
//! the inverse temperature of an energy.
//!
//! For eigenvalues `E_n` and diagonal values `a_n = A_nn`:
//!
//! - canonical average `⟨A⟩_β = Σₙ e^{−β(Eₙ−E₀)} aₙ / Σₙ e^{−β(Eₙ−E₀)}`
//!   (the shift by the ground energy E₀ keeps the exponentials finite; for β < 0 the
//!   shift is by the top energy instead);
//! - `β(E)` solves `⟨H⟩_β = E` (monotone decreasing in β, solved by bisection);
//! - microcanonical average at `E`: the mean of `aₙ` over the shell `|Eₙ − E| ≤ ΔE/2`.

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

/// Inverse temperature `β` with `⟨H⟩_β = e`, by bisection on the monotone function
/// `β ↦ ⟨H⟩_β`. `None` when `e` lies outside the range reachable with
/// `|β| ≤ 10³/(E_max − E_min)` (that is, at the very edges of the spectrum) or the
/// spectrum is empty or flat.
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
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if canonical_energy(energies, mid) > e {
            lo = mid;
        } else {
            hi = mid;
        }
        if hi - lo < 1e-13 * bmax {
            break;
        }
    }
    Some(0.5 * (lo + hi))
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

#[cfg(test)]
mod tests {
    use super::*;

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
        // β(⟨H⟩_β) = β: bisection on a monotone function (common practice, no source)
        let e: Vec<f64> = (0..50)
            .map(|i| (i as f64 * 0.37).sin() * 3.0 + i as f64 * 0.1)
            .collect();
        for beta in [-0.8, -0.1, 0.0, 0.25, 1.5] {
            let target = canonical_energy(&e, beta);
            let b = beta_of_energy(&e, target).expect("inside the range");
            assert!((b - beta).abs() < 1e-8, "beta {beta} got {b}");
        }
        assert!(beta_of_energy(&e, 1e9).is_none());
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
