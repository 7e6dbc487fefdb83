//! The check of the bound `σ² ≤ ‖A − c‖² / D_eff` on the temporal fluctuations.
//!
//! For every constant `c`, `σ² ≤ ‖A − c‖²/D_eff` (Short, New J. Phys. 13, 053009 (2011)
//! with gap degeneracy 1; Reimann, PRL 101, 190403 (2008), from memory). Over the kept
//! states, with `ω = Σ_{n∈K} pₙ|n⟩⟨n|`, `Σ_{n,m∈K} pₙpₘ|Aₙₘ|² = Tr(A ω A ω) ≤ ‖Aω‖_F² ≤
//! ‖A_KK‖² Tr ω² ≤ ‖A_KK‖²/D_eff`, and the off-diagonal part is unchanged by `A → A − c`,
//! so the tightest form is `σ² ≤ h²/D_eff` with `h = (λ_max − λ_min)/2` the half spread of
//! the eigenvalues of `A_KK`. Any interval `[lo, hi]` that holds the spectrum of `A_KK` gives
//! a valid bound `((hi − lo)/2)²/D_eff`:
//!
//! - up to [`BOUND_EIGEN_MAX`] kept states, the eigenvalues of `A_KK` themselves (exact);
//! - above, the intersection of two enclosures: the Gershgorin interval of `A_KK`,
//!   `[minₙ(Aₙₙ − Rₙ), maxₙ(Aₙₙ + Rₙ)]` with `Rₙ = Σ_{m≠n}|Aₙₘ|` (Gershgorin circle theorem;
//!   Horn & Johnson, *Matrix Analysis*, from memory), and the operator's own range when it is
//!   known ([`operator_range`]), which holds the spectrum of the compression `A_KK` by
//!   Cauchy interlacing. The norm `‖A_KK‖ = max|λ|` is bounded by `max(|lo|, |hi|)` and by the
//!   largest absolute row sum `maxₙ(|Aₙₙ| + Rₙ)`.

use crate::data::HermitianPanels;
use crate::error::Result;
use serde::Serialize;

/// Largest number of kept states whose `A_KK` eigenvalues are computed exactly for the
/// bound (a dense eigenvalue problem of that size takes milliseconds); above it the spread
/// is bounded by the enclosures of the module doc.
pub const BOUND_EIGEN_MAX: usize = 512;

/// The check of `σ² ≤ ‖A − c‖² / D_eff`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BoundCheck {
    /// How the spectrum of `A_KK` was enclosed: `"eigenvalues"` (exact, `|K| ≤ 512`), or for
    /// larger `|K|` an upper bound of the spread: `"gershgorin"` (the Gershgorin interval of
    /// `A_KK`), `"operator_range"` (the operator's Gershgorin interval, which holds the
    /// spectrum of `A_KK` by Cauchy interlacing) or `"gershgorin+operator_range"` (their
    /// intersection, each giving one end).
    pub method: String,
    /// `‖A_KK‖` (largest |eigenvalue|, or an upper bound of it).
    pub norm: f64,
    /// `(λ_max − λ_min)/2` of `A_KK` (`= min_c ‖A_KK − c‖`), or an upper bound of it.
    pub half_spread: f64,
    /// `‖A_KK‖² / D_eff`.
    pub bound_norm: f64,
    /// `((λ_max − λ_min)/2)² / D_eff`, the bound checked.
    pub bound: f64,
    /// `σ² ≤ bound` (with a relative slack of 10⁻¹⁰ for rounding).
    pub satisfied: bool,
}

/// Gershgorin interval of a Hermitian operator in its stored basis:
/// `[minᵢ(aᵢᵢ − Rᵢ), maxᵢ(aᵢᵢ + Rᵢ)]` with `Rᵢ = Σ_{j≠i} |aᵢⱼ|` (exact for a diagonal
/// operator). It holds every eigenvalue of the operator (Gershgorin circle theorem; Horn &
/// Johnson, *Matrix Analysis*), hence of any compression `V_Kᴴ A V_K` (Cauchy interlacing).
pub fn operator_range(op: &crate::data::Operator) -> Option<(f64, f64)> {
    use crate::data::{OpData, Operator};
    fn gersh(n: usize, row: impl Fn(usize) -> (f64, f64)) -> Option<(f64, f64)> {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for i in 0..n {
            let (d, r) = row(i);
            lo = lo.min(d - r);
            hi = hi.max(d + r);
        }
        (n > 0).then_some((lo, hi))
    }
    fn csr_row<T: Copy>(
        c: &crate::data::Csr<T>,
        i: usize,
        re: impl Fn(T) -> f64,
        abs: impl Fn(T) -> f64,
    ) -> (f64, f64) {
        let (mut d, mut r) = (0.0, 0.0);
        for k in c.indptr[i]..c.indptr[i + 1] {
            if c.indices[k] == i {
                d += re(c.data[k]);
            } else {
                r += abs(c.data[k]);
            }
        }
        (d, r)
    }
    match op {
        Operator::Real(OpData::Diagonal(v)) => gersh(v.len(), |i| (v[i], 0.0)),
        Operator::Complex(OpData::Diagonal(v)) => gersh(v.len(), |i| (v[i].re, 0.0)),
        Operator::Real(OpData::Csr(c)) => gersh(c.nrows, |i| csr_row(c, i, |x| x, f64::abs)),
        Operator::Complex(OpData::Csr(c)) => {
            gersh(c.nrows, |i| csr_row(c, i, |x| x.re, |x| x.norm()))
        }
        Operator::Real(OpData::Dense(m)) | Operator::Real(OpData::EnergyBasis(m)) => {
            gersh(m.nrows(), |i| {
                (
                    m[(i, i)],
                    (0..m.ncols())
                        .filter(|&j| j != i)
                        .map(|j| m[(i, j)].abs())
                        .sum(),
                )
            })
        }
        Operator::Complex(OpData::Dense(m)) | Operator::Complex(OpData::EnergyBasis(m)) => {
            gersh(m.nrows(), |i| {
                (
                    m[(i, i)].re,
                    (0..m.ncols())
                        .filter(|&j| j != i)
                        .map(|j| m[(i, j)].norm())
                        .sum(),
                )
            })
        }
    }
}

/// The bound check of the module doc. `gershgorin` gives `(Re Aₙₙ, Rₙ)` of `A_KK`, needed
/// above [`BOUND_EIGEN_MAX`] kept states; `range` is an interval known to hold the
/// operator's spectrum.
pub(crate) fn bound_check(
    a_kk: &HermitianPanels,
    gershgorin: Option<(&[f64], &[f64])>,
    d_eff: f64,
    sigma2: f64,
    range: Option<(f64, f64)>,
) -> Result<BoundCheck> {
    let k = a_kk.dim();
    let (method, norm, half_spread) = if k == 0 {
        ("eigenvalues".to_string(), 0.0, 0.0)
    } else if k <= BOUND_EIGEN_MAX || gershgorin.is_none() {
        let ev = match a_kk.to_full() {
            crate::data::Matrix::Real(a) => crate::linalg::eigvalsh_real(a.as_ref())?,
            crate::data::Matrix::Complex(a) => crate::linalg::eigvalsh_complex(a.as_ref())?,
        };
        let lo = ev.iter().cloned().fold(f64::INFINITY, f64::min);
        let hi = ev.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
        (
            "eigenvalues".to_string(),
            lo.abs().max(hi.abs()),
            0.5 * (hi - lo),
        )
    } else {
        let (diag, radii) = gershgorin.unwrap_or((&[], &[]));
        let (mut glo, mut ghi, mut row) = (f64::INFINITY, f64::NEG_INFINITY, 0.0f64);
        for (&d, &r) in diag.iter().zip(radii) {
            glo = glo.min(d - r);
            ghi = ghi.max(d + r);
            row = row.max(d.abs() + r);
        }
        let (olo, ohi) = range.unwrap_or((f64::NEG_INFINITY, f64::INFINITY));
        let (lo, lo_op) = if olo > glo { (olo, true) } else { (glo, false) };
        let (hi, hi_op) = if ohi < ghi { (ohi, true) } else { (ghi, false) };
        // both enclose the spectrum; an empty intersection can only come from rounding
        let (lo, hi, lo_op, hi_op) = if lo <= hi {
            (lo, hi, lo_op, hi_op)
        } else {
            (glo, ghi, false, false)
        };
        let method = match (lo_op, hi_op) {
            (false, false) => "gershgorin",
            (true, true) => "operator_range",
            _ => "gershgorin+operator_range",
        };
        (
            method.to_string(),
            lo.abs().max(hi.abs()).min(row),
            0.5 * (hi - lo),
        )
    };
    let bound_norm = norm * norm / d_eff;
    let bound = half_spread * half_spread / d_eff;
    Ok(BoundCheck {
        method,
        norm,
        half_spread,
        bound_norm,
        bound,
        satisfied: sigma2 <= bound * (1.0 + 1e-10) + 1e-300,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Matrix;

    #[test]
    fn enclosures_hold_the_spectrum() {
        // above BOUND_EIGEN_MAX the half spread is an upper bound of the exact one
        // (Gershgorin circle theorem and Cauchy interlacing; Horn & Johnson, from memory),
        // and each end comes from the tighter enclosure
        let k = BOUND_EIGEN_MAX + 40;
        let mut rng = crate::model::rmt::rng(17);
        let a = crate::model::rmt::goe(k, &mut rng);
        let h = HermitianPanels::from_full(&Matrix::Real(a.clone()), 64);
        let ev = crate::linalg::eigvalsh_real(a.as_ref()).unwrap();
        let exact = 0.5 * (ev[k - 1] - ev[0]);
        let norm = ev[0].abs().max(ev[k - 1].abs());
        let diag: Vec<f64> = (0..k).map(|i| a[(i, i)]).collect();
        let radii: Vec<f64> = (0..k)
            .map(|i| (0..k).filter(|&j| j != i).map(|j| a[(i, j)].abs()).sum())
            .collect();
        let g = bound_check(&h, Some((&diag, &radii)), 10.0, 0.0, None).unwrap();
        assert_eq!(g.method, "gershgorin");
        assert!(g.half_spread >= exact && g.norm >= norm);
        // a known range tighter than Gershgorin on one side
        let lo = ev[0] - 0.01;
        let r = bound_check(&h, Some((&diag, &radii)), 10.0, 0.0, Some((lo, 1e9))).unwrap();
        assert_eq!(r.method, "gershgorin+operator_range");
        assert!(r.half_spread >= exact && r.half_spread < g.half_spread);
        // exact eigenvalues below the threshold
        let small =
            HermitianPanels::from_full(&Matrix::Real(a.submatrix(0, 0, 50, 50).to_owned()), 16);
        let e = bound_check(&small, None, 4.0, 0.0, None).unwrap();
        let ev50 = crate::linalg::eigvalsh_real(a.submatrix(0, 0, 50, 50)).unwrap();
        assert_eq!(e.method, "eigenvalues");
        assert!((e.half_spread - 0.5 * (ev50[49] - ev50[0])).abs() < 1e-12);
        assert!((e.bound - e.half_spread.powi(2) / 4.0).abs() < 1e-15);
    }
}
