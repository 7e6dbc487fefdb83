//! Unfolding: mapping levels Eᵢ to εᵢ = N̄(Eᵢ), where N̄ is a smooth fit of the
//! staircase (cumulative level count) N(E), so that the unfolded levels have unit
//! mean spacing and only the fluctuations around the local density remain.
//!
//! Method: least-squares fit of N(Eᵢ) = i + ½ (levels counted from the start of the
//! window, the staircase taken at mid-step) by a polynomial of degree d in the
//! scaled energy x = (E − E_c)/h ∈ [−1, 1] (E_c the centre and h the half-width of
//! the window), written in Chebyshev polynomials T₀ … T_d so that the least-squares
//! problem stays well conditioned; solved by a QR factorisation (faer).
//! The degree is lowered to at most n/10 and below the number of distinct levels.

use crate::error::{Error, Result};
use faer::linalg::solvers::SolveLstsq;
use faer::Mat;
use serde::Serialize;

/// What was done to unfold a spectrum.
#[derive(Debug, Clone, Serialize)]
pub struct Unfolding {
    /// Method, in words.
    pub method: String,
    /// Polynomial degree actually used.
    pub degree: usize,
    /// Number of levels fitted.
    pub levels: usize,
    /// Root-mean-square residual of the fit, √(mean (N(Eᵢ) − N̄(Eᵢ))²), in units of levels.
    pub rms_residual: f64,
    /// Number of consecutive pairs whose unfolded spacing came out negative
    /// (the fitted N̄ is not monotonic there; a lower degree is advisable).
    pub negative_spacings: usize,
}

/// Values T₀(x) … T_d(x) of the Chebyshev polynomials.
fn chebyshev(x: f64, d: usize, out: &mut [f64]) {
    out[0] = 1.0;
    if d >= 1 {
        out[1] = x;
    }
    for k in 2..=d {
        out[k] = 2.0 * x * out[k - 1] - out[k - 2];
    }
}

/// Unfolds the ascending levels `e` by a degree-`degree` polynomial fit of the staircase
/// (see the module documentation). Returns εᵢ = N̄(Eᵢ) and a description of the fit.
pub fn polynomial(e: &[f64], degree: usize) -> Result<(Vec<f64>, Unfolding)> {
    let n = e.len();
    if n < 3 {
        return Err(Error::other(format!(
            "cannot unfold {n} levels: at least 3 are needed"
        )));
    }
    let (lo, hi) = (e[0], e[n - 1]);
    let half = 0.5 * (hi - lo);
    if !(half > 0.0 && half.is_finite()) {
        return Err(Error::other(format!(
            "cannot unfold: all {n} levels of the window are equal"
        )));
    }
    let centre = 0.5 * (hi + lo);
    let distinct = 1 + e.windows(2).filter(|w| w[1] > w[0]).count();
    let d = degree.min((n / 10).max(1)).min(distinct - 1);
    let xs: Vec<f64> = e
        .iter()
        .map(|&v| ((v - centre) / half).clamp(-1.0, 1.0))
        .collect();
    let mut row = vec![0.0; d + 1];
    let mut a = Mat::<f64>::zeros(n, d + 1);
    for (i, &x) in xs.iter().enumerate() {
        chebyshev(x, d, &mut row);
        for (k, &t) in row.iter().enumerate() {
            a[(i, k)] = t;
        }
    }
    let y = Mat::<f64>::from_fn(n, 1, |i, _| i as f64 + 0.5);
    let coef = a.qr().solve_lstsq(&y);
    let mut unfolded = Vec::with_capacity(n);
    let mut sq = 0.0;
    for (i, &x) in xs.iter().enumerate() {
        chebyshev(x, d, &mut row);
        let p: f64 = (0..=d).map(|k| coef[(k, 0)] * row[k]).sum();
        sq += (p - (i as f64 + 0.5)).powi(2);
        unfolded.push(p);
    }
    if unfolded.iter().any(|v| !v.is_finite()) {
        return Err(Error::other(
            "unfolding failed: the staircase fit is not finite (check the energies)",
        ));
    }
    let negative_spacings = unfolded.windows(2).filter(|w| w[1] < w[0]).count();
    Ok((
        unfolded,
        Unfolding {
            method: format!(
                "least-squares polynomial fit (degree {d}, Chebyshev basis) of the staircase N(E) over the window"
            ),
            degree: d,
            levels: n,
            rms_residual: (sq / n as f64).sqrt(),
            negative_spacings,
        },
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unfolding_a_smooth_density_gives_unit_spacings() {
        // common practice, no source: levels Eᵢ = F⁻¹(i) of a smooth staircase F unfold to
        // (nearly) equidistant levels with unit spacing.
        let e: Vec<f64> = (0..500)
            .map(|i| {
                let x = (i as f64 + 0.5) / 500.0;
                x + 0.3 * x * x
            })
            .collect();
        let (u, info) = polynomial(&e, 6).unwrap();
        let s: Vec<f64> = u.windows(2).map(|w| w[1] - w[0]).collect();
        let mean = s.iter().sum::<f64>() / s.len() as f64;
        assert!((mean - 1.0).abs() < 1e-2, "mean {mean}");
        assert!(s.iter().all(|&x| (x - 1.0).abs() < 0.05));
        assert_eq!(info.negative_spacings, 0);
        assert!(info.rms_residual < 0.5);
    }

    #[test]
    fn equal_levels_are_an_error_not_a_panic() {
        assert!(polynomial(&[1.0; 20], 5).is_err());
        assert!(polynomial(&[1.0, 2.0], 5).is_err());
    }
}
