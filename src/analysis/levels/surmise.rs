//! Reference distributions of level statistics for uncorrelated levels (Poisson)
//! and the Gaussian orthogonal and unitary ensembles (GOE, GUE).
//!
//! - Ratio of consecutive spacings, r = sᵢ₊₁/sᵢ on [0, ∞): the 3×3 surmise of
//!   Atas, Bogomolny, Giraud, Roux, PRL 110, 084101 (2013),
//!   P_β(r) = (1/Z_β) (r + r²)^β / (1 + r + r²)^(1 + 3β/2), with Z₁ = 8/27 (GOE) and
//!   Z₂ = 4π/(81√3) (GUE); uncorrelated levels give P(r) = 1/(1 + r)². The folded
//!   ratio r̃ = min(r, 1/r) on [0, 1] has twice that density, because r and 1/r have
//!   the same law.
//! - Unfolded nearest-neighbour spacing (unit mean), Mehta, *Random Matrices*,
//!   3rd ed. (2004): Poisson e^(−s); GOE Wigner surmise (πs/2) e^(−πs²/4), CDF
//!   1 − e^(−πs²/4); GUE (32s²/π²) e^(−4s²/π), CDF erf(2s/√π) − (4s/π) e^(−4s²/π).
//! - Spectral form factor of unfolded levels (unit mean spacing, τ in units of the
//!   Heisenberg time) from the two-level cluster functions (Mehta 2004, from memory):
//!   Poisson K = 1; GUE K = min(τ, 1); GOE K = 2τ − τ ln(1 + 2τ) for τ ≤ 1 and
//!   2 − τ ln((2τ + 1)/(2τ − 1)) for τ > 1.
//! - Number variance Σ²(L) (Mehta 2004): Poisson L; large-L asymptotes
//!   GOE (2/π²)(ln(2πL) + γ + 1 − π²/8) and GUE (1/π²)(ln(2πL) + γ + 1).

use serde::{Deserialize, Serialize};
use std::f64::consts::{LN_2, PI};

/// Euler–Mascheroni constant γ.
pub const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;

/// ⟨r̃⟩ of uncorrelated (Poisson) levels, 2 ln 2 − 1 ≈ 0.38629 (Atas et al. 2013).
pub const MEAN_R_POISSON: f64 = 2.0 * LN_2 - 1.0;
/// ⟨r̃⟩ of large GOE matrices, 0.5307 (Atas et al. 2013, numerical, from memory).
pub const MEAN_R_GOE: f64 = 0.5307;
/// ⟨r̃⟩ of large GUE matrices, 0.5996 (Atas et al. 2013, numerical, from memory).
pub const MEAN_R_GUE: f64 = 0.5996;

/// ⟨r̃⟩ of the 3×3 GOE surmise, 4 − 2√3 ≈ 0.53590 (Atas et al. 2013, exact).
pub fn mean_r_goe_3x3() -> f64 {
    4.0 - 2.0 * 3f64.sqrt()
}

/// ⟨r̃⟩ of the 3×3 GUE surmise, 2√3/π − 1/2 ≈ 0.60266 (Atas et al. 2013, exact).
pub fn mean_r_gue_3x3() -> f64 {
    2.0 * 3f64.sqrt() / PI - 0.5
}

/// The three reference ensembles.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Ensemble {
    /// Uncorrelated levels (integrable or localised systems).
    Poisson,
    /// Gaussian orthogonal ensemble (chaotic, time-reversal symmetric).
    Goe,
    /// Gaussian unitary ensemble (chaotic, time-reversal broken).
    Gue,
}

impl Ensemble {
    /// All three, in the order Poisson, GOE, GUE.
    pub const ALL: [Ensemble; 3] = [Ensemble::Poisson, Ensemble::Goe, Ensemble::Gue];

    /// The random-matrix ensemble of a symmetry class: GOE (orthogonal) or GUE (unitary).
    pub fn of_class(class: crate::data::SymmetryClass) -> Self {
        match class {
            crate::data::SymmetryClass::Orthogonal => Ensemble::Goe,
            crate::data::SymmetryClass::Unitary => Ensemble::Gue,
        }
    }

    /// Display name ("Poisson", "GOE", "GUE").
    pub fn label(self) -> &'static str {
        match self {
            Ensemble::Poisson => "Poisson",
            Ensemble::Goe => "GOE",
            Ensemble::Gue => "GUE",
        }
    }

    /// Reference ⟨r̃⟩ for large spectra: 2 ln 2 − 1, 0.5307, 0.5996 (Atas et al. 2013).
    pub fn mean_r(self) -> f64 {
        match self {
            Ensemble::Poisson => MEAN_R_POISSON,
            Ensemble::Goe => MEAN_R_GOE,
            Ensemble::Gue => MEAN_R_GUE,
        }
    }

    /// Density of the folded ratio r̃ ∈ [0, 1]: 2/(1 + r̃)² (Poisson) or
    /// 2 (r̃ + r̃²)^β / (Z_β (1 + r̃ + r̃²)^(1 + 3β/2)) (Atas et al. 2013).
    pub fn ratio_density(self, r: f64) -> f64 {
        if !(0.0..=1.0).contains(&r) {
            return 0.0;
        }
        match self {
            Ensemble::Poisson => 2.0 / ((1.0 + r) * (1.0 + r)),
            Ensemble::Goe => {
                let z = 8.0 / 27.0;
                2.0 * (r + r * r) / (z * (1.0 + r + r * r).powf(2.5))
            }
            Ensemble::Gue => {
                let z = 4.0 * PI / (81.0 * 3f64.sqrt());
                2.0 * (r + r * r).powi(2) / (z * (1.0 + r + r * r).powi(4))
            }
        }
    }

    /// Density of the unfolded spacing s ≥ 0 (Mehta 2004): e^(−s), (πs/2)e^(−πs²/4),
    /// (32s²/π²)e^(−4s²/π).
    pub fn spacing_density(self, s: f64) -> f64 {
        if s < 0.0 {
            return 0.0;
        }
        match self {
            Ensemble::Poisson => (-s).exp(),
            Ensemble::Goe => 0.5 * PI * s * (-0.25 * PI * s * s).exp(),
            Ensemble::Gue => 32.0 * s * s / (PI * PI) * (-4.0 * s * s / PI).exp(),
        }
    }

    /// Cumulative distribution of the unfolded spacing (Mehta 2004): 1 − e^(−s),
    /// 1 − e^(−πs²/4), erf(2s/√π) − (4s/π) e^(−4s²/π).
    pub fn spacing_cdf(self, s: f64) -> f64 {
        if s <= 0.0 {
            return 0.0;
        }
        match self {
            Ensemble::Poisson => -(-s).exp_m1(),
            Ensemble::Goe => -(-0.25 * PI * s * s).exp_m1(),
            Ensemble::Gue => {
                statrs::function::erf::erf(2.0 * s / PI.sqrt())
                    - 4.0 * s / PI * (-4.0 * s * s / PI).exp()
            }
        }
    }

    /// Spectral form factor K(τ) of unfolded levels, τ in units of the Heisenberg time
    /// (Mehta 2004, from memory): 1; 2τ − τ ln(1 + 2τ) (τ ≤ 1), 2 − τ ln((2τ+1)/(2τ−1)) (τ > 1);
    /// min(τ, 1).
    pub fn form_factor(self, tau: f64) -> f64 {
        let t = tau.abs();
        match self {
            Ensemble::Poisson => 1.0,
            Ensemble::Goe => {
                if t <= 1.0 {
                    2.0 * t - t * (1.0 + 2.0 * t).ln()
                } else {
                    2.0 - t * ((2.0 * t + 1.0) / (2.0 * t - 1.0)).ln()
                }
            }
            Ensemble::Gue => t.min(1.0),
        }
    }

    /// Number variance Σ²(L): exactly L for Poisson; the large-L asymptotes
    /// (2/π²)(ln(2πL) + γ + 1 − π²/8) (GOE) and (1/π²)(ln(2πL) + γ + 1) (GUE) (Mehta 2004).
    pub fn number_variance(self, l: f64) -> f64 {
        match self {
            Ensemble::Poisson => l,
            Ensemble::Goe => {
                2.0 / (PI * PI) * ((2.0 * PI * l).ln() + EULER_GAMMA + 1.0 - PI * PI / 8.0)
            }
            Ensemble::Gue => 1.0 / (PI * PI) * ((2.0 * PI * l).ln() + EULER_GAMMA + 1.0),
        }
    }
}

impl std::fmt::Display for Ensemble {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

/// Composite Simpson rule for ∫ₐᵇ f with `n` (made even) sub-intervals.
pub(crate) fn simpson(f: impl Fn(f64) -> f64, a: f64, b: f64, n: usize) -> f64 {
    let n = (n.max(2) + 1) & !1;
    let h = (b - a) / n as f64;
    let mut s = f(a) + f(b);
    for i in 1..n {
        let x = a + i as f64 * h;
        s += if i % 2 == 1 { 4.0 } else { 2.0 } * f(x);
    }
    s * h / 3.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ratio_densities_are_normalised_and_have_published_means() {
        // Atas, Bogomolny, Giraud, Roux, PRL 110, 084101 (2013): normalisations Z_β and
        // ⟨r̃⟩ = 2 ln 2 − 1 (Poisson), 4 − 2√3 (GOE 3×3), 2√3/π − 1/2 (GUE 3×3).
        let means = [MEAN_R_POISSON, mean_r_goe_3x3(), mean_r_gue_3x3()];
        for (e, want) in Ensemble::ALL.into_iter().zip(means) {
            let norm = simpson(|r| e.ratio_density(r), 0.0, 1.0, 2000);
            let mean = simpson(|r| r * e.ratio_density(r), 0.0, 1.0, 2000);
            assert!((norm - 1.0).abs() < 1e-9, "{e}: norm {norm}");
            assert!((mean - want).abs() < 1e-9, "{e}: mean {mean} vs {want}");
        }
    }

    #[test]
    fn spacing_laws_match_mehta() {
        // Mehta, Random Matrices (2004): unit mean; ⟨s²⟩ = 2 (Poisson), 4/π (GOE), 3π/8 (GUE);
        // the CDFs are the integrals of the densities.
        let second = [2.0, 4.0 / PI, 3.0 * PI / 8.0];
        for (e, want) in Ensemble::ALL.into_iter().zip(second) {
            let norm = simpson(|s| e.spacing_density(s), 0.0, 40.0, 20000);
            let mean = simpson(|s| s * e.spacing_density(s), 0.0, 40.0, 20000);
            let m2 = simpson(|s| s * s * e.spacing_density(s), 0.0, 40.0, 20000);
            assert!((norm - 1.0).abs() < 1e-8, "{e}: norm {norm}");
            assert!((mean - 1.0).abs() < 1e-8, "{e}: mean {mean}");
            assert!((m2 - want).abs() < 1e-8, "{e}: <s²> {m2} vs {want}");
            for x in [0.1, 0.5, 1.0, 2.0, 3.5] {
                let num = simpson(|s| e.spacing_density(s), 0.0, x, 4000);
                assert!((num - e.spacing_cdf(x)).abs() < 1e-10, "{e}: CDF({x})");
            }
        }
    }

    #[test]
    fn form_factor_references_are_continuous_and_saturate() {
        // Mehta (2004), from memory: K_GOE(1) = 2 − ln 3 from both sides; K → 1 at long times.
        let g = Ensemble::Goe;
        assert!((g.form_factor(1.0) - (2.0 - 3f64.ln())).abs() < 1e-12);
        assert!((g.form_factor(1.0 + 1e-9) - g.form_factor(1.0)).abs() < 1e-6);
        assert!((g.form_factor(100.0) - 1.0).abs() < 1e-4);
        assert_eq!(Ensemble::Gue.form_factor(0.3), 0.3);
        assert_eq!(Ensemble::Gue.form_factor(3.0), 1.0);
    }
}
