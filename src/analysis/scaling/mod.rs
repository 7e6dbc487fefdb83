//! Finite-size scaling: weighted fits, bootstrap errors and the verdict rule.
//!
//! # Fits
//!
//! A figure `y` measured at several system sizes is fitted to
//!
//! - a power law in the Hilbert-space dimension, `y = c · D^(−α)`, i.e. the straight line
//!   `ln y = ln c − α ln D` ([`fit_power_law`]);
//! - an exponential in the number of sites, `y = c · e^(−κ L)`, i.e. `ln y = ln c − κ L`
//!   ([`fit_exponential`]).
//!
//! Both are weighted linear least squares of `ln y` on `x` (`x = ln D` or `x = L`). With
//! per-point uncertainties `σ_y`, the uncertainty of `ln y` is `σ_y / y` (first-order error
//! propagation) and the weights are `wᵢ = (yᵢ/σ_yᵢ)²`; without them every weight is 1. With
//! `S = Σ w`, `Sx = Σ w x`, `Sy = Σ w ln y`, `Sxx = Σ w x²`, `Sxy = Σ w x ln y` and
//! `Δ = S·Sxx − Sx²`, the line `ln y = a + b x` has `b = (S·Sxy − Sx·Sy)/Δ`,
//! `a = (Sxx·Sy − Sx·Sxy)/Δ`, and the covariance of `(a, b)` is
//! `Var a = Sxx/Δ`, `Var b = S/Δ`, `Cov(a, b) = −Sx/Δ` (any numerical-methods text, e.g.
//! Press et al., *Numerical Recipes*, §15.2). `χ² = Σ wᵢ (ln yᵢ − a − b xᵢ)²` and
//! `dof = points − 2`.
//!
//! **Error scaling.** Without input uncertainties the standard errors are scaled by
//! `√(χ²/dof)` (the scatter about the line sets the error scale: ordinary least squares).
//! With input uncertainties they are scaled by `S = max(1, √(χ²/dof))`, the scale factor of
//! the Particle Data Group (Review of Particle Physics, Introduction, "averaging
//! procedures", from memory): a poor fit inflates the errors, a fit better than the input
//! errors suggest never shrinks them (with few points `χ²/dof` scatters widely, and
//! shrinking would give overconfident exponents). With exactly two points (`dof = 0`) the
//! line passes through both: the errors then come from the input uncertainties alone, and
//! are NaN when none were given.
//! The exponent is `α = −b` (or `κ = −b`), the prefactor `c = e^a` with
//! `σ_c = c · σ_a` (first-order propagation).
//!
//! # Bootstrap
//!
//! [`bootstrap`] resamples `n` values with replacement `resamples` times
//! ([`RESAMPLES`] = 200 by default) from a ChaCha8 generator seeded with `seed`
//! ([`DEFAULT_SEED`]); the estimate is the statistic of the original sample and the standard
//! error the sample standard deviation (denominator `B − 1`) of the `B` resampled statistics
//! (Efron & Tibshirani, *An Introduction to the Bootstrap*, 1993, ch. 6).
//! [`block_bootstrap`] is the moving-block bootstrap for correlated sequences (Künsch,
//! Ann. Stat. 17, 1217 (1989)): it draws `⌈n/ℓ⌉` blocks of `ℓ` consecutive values at
//! uniformly random start positions `0 ..= n − ℓ`, concatenates them and truncates to `n`.
//! Differences of consecutive eigenstate values, `Aₙ₊₁,ₙ₊₁ − Aₙₙ`, share a state with their
//! neighbours and are correlated at lag 1; [`default_block_length`] gives
//! `ℓ = max(2, ⌈n^(1/3)⌉)`, the usual `n^(1/3)` growth rate of the block length
//! (Hall, Horowitz & Jing, Biometrika 82, 561 (1995)).
//!
//! # Verdict
//!
//! [`decide`] turns the evidence into [`Verdict::Thermalizes`],
//! [`Verdict::DoesNotThermalize`] or [`Verdict::Inconclusive`] by the rule written out in
//! [`RULE`] (reproduced in the doc comment of [`decide`]), with all thresholds in
//! [`VerdictThresholds`]. Every verdict carries a finite-size caveat.
//!
//! # Files
//!
//! [`fit`]: the weighted fits; [`realizations`]: realization averages of rows; [`resample`]: bootstrap and block bootstrap;
//! [`verdict`]: the rule and its thresholds; [`table`]: rows of the scaling table,
//! families and the fits and verdicts of each family.

pub mod fit;
pub mod realizations;
pub mod resample;
pub mod table;
pub mod verdict;

pub use fit::{fit_exponential, fit_power_law, FitModel, ScalingFit};
pub use resample::{
    block_bootstrap, bootstrap, default_block_length, mean, DEFAULT_SEED, RESAMPLES,
};
pub use table::{build, FamilyVerdict, FigureFit, Row, ScalingReport};
pub use verdict::*;
