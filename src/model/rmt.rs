//! Random-matrix ensembles (Mehta, *Random Matrices*, 3rd ed., 2004).
//!
//! - GOE: `H = (X + Xᵀ)/2` with `X_ij ~ N(0, 1)` i.i.d.: diagonal variance 1,
//!   off-diagonal variance 1/2 (ratio 2).
//! - GUE: `H = (X + Xᴴ)/2` with `Re X_ij, Im X_ij ~ N(0, 1/2)`, so that the
//!   diagonal variance is 1/2 and the mean of |H_ij|² off the diagonal is 1/2 (ratio 1).
//! - Poisson: independent uniform levels (a diagonal Hamiltonian).

use crate::data::c64;
use faer::Mat;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;

/// Seeded random number generator used for every random model.
pub fn rng(seed: u64) -> ChaCha8Rng {
    ChaCha8Rng::seed_from_u64(seed)
}

/// A GOE matrix of dimension `n`: `H = (X + Xᵀ)/2`, `X_ij ~ N(0, 1)`.
pub fn goe(n: usize, rng: &mut impl Rng) -> Mat<f64> {
    let x = Mat::<f64>::from_fn(n, n, |_, _| rng.sample(StandardNormal));
    Mat::from_fn(n, n, |i, j| 0.5 * (x[(i, j)] + x[(j, i)]))
}

/// A GUE matrix of dimension `n`: `H = (X + Xᴴ)/2` with `X_ij = (a + i b)/√2`, `a, b ~ N(0, 1)`.
/// Diagonal variance 1/2 and off-diagonal ⟨|H_ij|²⟩ = 1/2.
pub fn gue(n: usize, rng: &mut impl Rng) -> Mat<c64> {
    let s = std::f64::consts::FRAC_1_SQRT_2;
    let x = Mat::<c64>::from_fn(n, n, |_, _| {
        let a: f64 = rng.sample(StandardNormal);
        let b: f64 = rng.sample(StandardNormal);
        c64::new(s * a, s * b)
    });
    Mat::from_fn(n, n, |i, j| (x[(i, j)] + x[(j, i)].conj()) * 0.5)
}

/// `n` independent levels uniform on `[0, n)`, sorted (Poisson statistics, unit mean spacing).
pub fn poisson_levels(n: usize, rng: &mut impl Rng) -> Vec<f64> {
    let mut v: Vec<f64> = (0..n).map(|_| rng.random::<f64>() * n as f64).collect();
    v.sort_by(f64::total_cmp);
    v
}
