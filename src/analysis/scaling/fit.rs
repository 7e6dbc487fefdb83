//! Weighted least-squares fits of a figure against system size: `y = c·D^(−α)` and
//! `y = c·e^(−κL)` as straight lines in `ln y` (see the module docs of
//! [`crate::analysis::scaling`] for the formulas and the error scaling).

use crate::error::{Error, Result};
use serde::Serialize;

/// Which scaling law was fitted.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FitModel {
    /// `y = c · D^(−α)` against the Hilbert-space dimension `D`.
    PowerLaw,
    /// `y = c · e^(−κ L)` against the number of sites `L`.
    Exponential,
}

/// Result of a weighted straight-line fit of `ln y` (see the module documentation).
#[derive(Debug, Clone, Serialize)]
pub struct ScalingFit {
    /// The law fitted.
    pub model: FitModel,
    /// `α` of `y ∝ D^(−α)` or `κ` of `y ∝ e^(−κ L)` (minus the slope of `ln y`).
    pub exponent: f64,
    /// Standard error of `exponent` (scaled as described in the module docs).
    pub exponent_stderr: f64,
    /// Prefactor `c = e^a`.
    pub prefactor: f64,
    /// Standard error of the prefactor, `c · σ_a`.
    pub prefactor_stderr: f64,
    /// Intercept `a = ln c`.
    pub ln_prefactor: f64,
    /// Standard error of `a`.
    pub ln_prefactor_stderr: f64,
    /// Covariance of `(a, exponent)`, scaled like the errors.
    pub covariance: f64,
    /// `χ² = Σ wᵢ (ln yᵢ − a − b xᵢ)²` (with unit weights when no errors were given).
    pub chi2: f64,
    /// `χ²/dof`, NaN when `dof = 0`.
    pub chi2_per_dof: f64,
    /// Degrees of freedom, `points − 2`.
    pub dof: usize,
    /// Number of points fitted.
    pub points: usize,
    /// Whether per-point uncertainties were used as weights.
    pub weighted: bool,
}

impl ScalingFit {
    /// The fitted figure at `x` (a dimension `D` for a power law, a size `L` for an
    /// exponential): `c · D^(−α)` or `c · e^(−κ L)`.
    pub fn predict(&self, x: f64) -> f64 {
        match self.model {
            FitModel::PowerLaw => (self.ln_prefactor - self.exponent * x.ln()).exp(),
            FitModel::Exponential => (self.ln_prefactor - self.exponent * x).exp(),
        }
    }
}

/// Fits `y = c · D^(−α)`: weighted least squares of `ln y` against `ln D` (module docs).
///
/// `dims` and `figures` must be positive and finite, with at least two distinct dimensions;
/// `errors`, when given, are the standard errors `σ_y` (positive and finite).
pub fn fit_power_law(dims: &[f64], figures: &[f64], errors: Option<&[f64]>) -> Result<ScalingFit> {
    if let Some((i, d)) = dims
        .iter()
        .enumerate()
        .find(|(_, d)| !(d.is_finite() && **d > 0.0))
    {
        return Err(Error::other(format!(
            "power-law fit: dimension {d} of point {i} is not positive"
        )));
    }
    let x: Vec<f64> = dims.iter().map(|d| d.ln()).collect();
    fit_log_line(FitModel::PowerLaw, &x, figures, errors)
}

/// Fits `y = c · e^(−κ L)`: weighted least squares of `ln y` against `L` (module docs).
///
/// Same requirements as [`fit_power_law`], with sizes `L` finite (any sign).
pub fn fit_exponential(
    sizes: &[f64],
    figures: &[f64],
    errors: Option<&[f64]>,
) -> Result<ScalingFit> {
    if let Some((i, l)) = sizes.iter().enumerate().find(|(_, l)| !l.is_finite()) {
        return Err(Error::other(format!(
            "exponential fit: size {l} of point {i} is not finite"
        )));
    }
    fit_log_line(FitModel::Exponential, sizes, figures, errors)
}

fn fit_log_line(
    model: FitModel,
    x: &[f64],
    y: &[f64],
    errors: Option<&[f64]>,
) -> Result<ScalingFit> {
    let what = match model {
        FitModel::PowerLaw => "power-law fit",
        FitModel::Exponential => "exponential fit",
    };
    if x.len() != y.len() {
        return Err(Error::other(format!(
            "{what}: {} abscissae but {} figures",
            x.len(),
            y.len()
        )));
    }
    if let Some(e) = errors {
        if e.len() != y.len() {
            return Err(Error::other(format!(
                "{what}: {} uncertainties for {} figures",
                e.len(),
                y.len()
            )));
        }
    }
    if y.len() < 2 {
        return Err(Error::other(format!(
            "{what}: needs at least two sizes, got {}",
            y.len()
        )));
    }
    if let Some((i, v)) = y
        .iter()
        .enumerate()
        .find(|(_, v)| !(v.is_finite() && **v > 0.0))
    {
        return Err(Error::other(format!(
            "{what}: figure {v} of point {i} is not positive (a logarithm is taken)"
        )));
    }
    let mut w = vec![1.0; y.len()];
    if let Some(e) = errors {
        for (i, (&s, &v)) in e.iter().zip(y).enumerate() {
            if !(s.is_finite() && s > 0.0) {
                return Err(Error::other(format!(
                    "{what}: uncertainty {s} of point {i} is not positive"
                )));
            }
            let sl = s / v;
            w[i] = 1.0 / (sl * sl);
        }
    }
    let ly: Vec<f64> = y.iter().map(|v| v.ln()).collect();
    let (mut s, mut sx, mut sy, mut sxx, mut sxy) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for i in 0..y.len() {
        s += w[i];
        sx += w[i] * x[i];
        sy += w[i] * ly[i];
        sxx += w[i] * x[i] * x[i];
        sxy += w[i] * x[i] * ly[i];
    }
    let delta = s * sxx - sx * sx;
    let spread = sxx / s - (sx / s).powi(2);
    let degenerate = delta.is_nan()
        || delta <= 0.0
        || spread.is_nan()
        || spread <= 1e-14 * (sxx / s).abs().max(1e-300);
    if degenerate {
        return Err(Error::other(format!(
            "{what}: all points have the same size, the exponent is undetermined"
        )));
    }
    let b = (s * sxy - sx * sy) / delta;
    let a = (sxx * sy - sx * sxy) / delta;
    let chi2: f64 = (0..y.len())
        .map(|i| w[i] * (ly[i] - a - b * x[i]).powi(2))
        .sum();
    let dof = y.len() - 2;
    let (chi2_per_dof, scale) = if dof > 0 {
        let r = chi2 / dof as f64;
        if errors.is_some() {
            (r, r.max(1.0))
        } else {
            (r, r)
        }
    } else if errors.is_some() {
        (f64::NAN, 1.0)
    } else {
        (f64::NAN, f64::NAN)
    };
    let var_a = sxx / delta * scale;
    let var_b = s / delta * scale;
    let cov_ab = -sx / delta * scale;
    let c = a.exp();
    Ok(ScalingFit {
        model,
        exponent: -b,
        exponent_stderr: var_b.sqrt(),
        prefactor: c,
        prefactor_stderr: c * var_a.sqrt(),
        ln_prefactor: a,
        ln_prefactor_stderr: var_a.sqrt(),
        covariance: -cov_ab,
        chi2,
        chi2_per_dof,
        dof,
        points: y.len(),
        weighted: errors.is_some(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exact_power_law_two_points() {
        // Exact data y = 3 D^(-0.5): linear algebra identity, no source needed.
        let d = [64.0, 1024.0];
        let y: Vec<f64> = d.iter().map(|x: &f64| 3.0 * x.powf(-0.5)).collect();
        let f = fit_power_law(&d, &y, None).unwrap();
        assert!((f.exponent - 0.5).abs() < 1e-12);
        assert!((f.prefactor - 3.0).abs() < 1e-10);
        assert_eq!(f.dof, 0);
        assert!(f.exponent_stderr.is_nan());
    }

    #[test]
    fn rejects_bad_input() {
        // Common practice, no source: logarithms of non-positive figures are undefined.
        assert!(fit_power_law(&[1.0, 2.0], &[1.0, 0.0], None).is_err());
        assert!(fit_power_law(&[4.0, 4.0], &[1.0, 2.0], None).is_err());
        assert!(fit_power_law(&[4.0], &[1.0], None).is_err());
        assert!(fit_power_law(&[4.0, 8.0], &[1.0, 2.0], Some(&[0.1, 0.0])).is_err());
    }
}
