//! Numerical checks of a stored eigenbasis on a sample of states.
//!
//! - Orthonormality: with `V_S` the `[dim, k]` matrix of k sampled eigenvectors,
//!   the error is `max_{a,b} |(V_Sᴴ V_S − 1)_{ab}|`. The sample is
//!   [`SAMPLE`] states spread evenly over the spectrum (all states when fewer);
//!   the basis passes when the error is at most [`ORTHO_TOL`] (float64 storage) or
//!   [`ORTHO_TOL_F32`] (float32 storage, whose rounding alone gives ~10⁻⁷).
//! - Residuals: `max_j ‖H v_j − E_j v_j‖₂` over the same sample, where a
//!   Hamiltonian is stored; it passes when at most
//!   `tol · max(1, max_j |E_j|)` (relative to the spectral scale) with the same
//!   tolerances (float32 when either energies or eigenvectors are float32).

use super::{EigenFile, Element, Limit, Sector};
use crate::data::{c64, ColumnSource, Matrix, OpData, Operator, Spectrum};
use crate::error::{Error, Result};
use faer::Mat;
use serde::Serialize;

/// Number of sampled states in the checks.
pub const SAMPLE: usize = 64;
/// Largest accepted `|VᴴV − 1|` entry for float64 data.
pub const ORTHO_TOL: f64 = 1e-8;
/// Largest accepted `|VᴴV − 1|` entry for float32 data (about 100 float32 epsilons).
pub const ORTHO_TOL_F32: f64 = 1e-5;
/// Largest accepted residual `‖Hv − Ev‖` for float64 data, relative to `max(1, max |E|)`.
pub const RESIDUAL_TOL: f64 = 1e-8;
/// Largest accepted relative residual when energies or eigenvectors are float32.
pub const RESIDUAL_TOL_F32: f64 = 1e-5;

/// The tolerance for data stored with element types `elements`: `f32_tol` when any
/// is single precision, `f64_tol` otherwise.
pub fn tolerance_for(elements: &[Element], f64_tol: f64, f32_tol: f64) -> f64 {
    if elements
        .iter()
        .any(|e| matches!(e, Element::Float32 | Element::Complex64))
    {
        f32_tol
    } else {
        f64_tol
    }
}

/// Result of the orthonormality check.
#[derive(Debug, Clone, Serialize)]
pub struct OrthoCheck {
    /// Number of sampled states.
    pub sample: usize,
    /// `max |(V_Sᴴ V_S − 1)_{ab}|` over the sample (and, when [`OrthoCheck::cross`] is
    /// not zero, `max |⟨v_a|v_j⟩|` of those states against every other stored state).
    pub max_error: f64,
    /// Tolerance ([`ORTHO_TOL`]).
    pub tolerance: f64,
    /// `max_error ≤ tolerance`.
    pub pass: bool,
    /// Number of sampled states also checked against every stored state (0: none).
    #[serde(default)]
    pub cross: usize,
    /// Number of stored states.
    #[serde(default)]
    pub states: usize,
}

impl OrthoCheck {
    /// The failure in words, for an error line.
    pub fn problem(&self) -> String {
        let over = if self.cross > 0 {
            format!(
                "{} sampled states, {} of them against all {} states",
                self.sample, self.cross, self.states
            )
        } else {
            format!("{} sampled states", self.sample)
        };
        format!(
            "eigenvectors are not orthonormal: max |V^H V - 1| = {:.3e} over {over} exceeds {:e}",
            self.max_error, self.tolerance
        )
    }
}

/// Number of sampled states checked against every stored state by [`check_basis`].
pub const CROSS_SAMPLE: usize = 16;

/// Result of the residual check.
#[derive(Debug, Clone, Serialize)]
pub struct ResidualCheck {
    /// Number of sampled states.
    pub sample: usize,
    /// `max_j ‖H v_j − E_j v_j‖₂` over the sample.
    pub max_residual: f64,
    /// Index (ascending order) of the state with the largest residual.
    pub worst_state: usize,
    /// Threshold `RESIDUAL_TOL · max(1, max |E|)`.
    pub threshold: f64,
    /// `max_residual ≤ threshold`.
    pub pass: bool,
}

/// The sample size of the checks for eigenvectors of dimension `dim` within `limit`: at
/// most [`SAMPLE`], as many columns as fit twice over as complex numbers (the sample and the
/// column being read).
pub fn sample_within(limit: &Limit, dim: usize) -> usize {
    let per_column = 2.0 * 16.0 * dim.max(1) as f64;
    ((limit.bytes() as f64 / per_column) as usize).clamp(1, SAMPLE)
}

/// `k` indices spread evenly over `0..n` (all of them when `n ≤ k`):
/// `round(i (n − 1) / (k − 1))` for `i = 0..k`.
pub fn sample_indices(n: usize, k: usize) -> Vec<usize> {
    if n <= k {
        return (0..n).collect();
    }
    if k <= 1 {
        return vec![0];
    }
    let mut v: Vec<usize> = (0..k)
        .map(|i| ((i as f64) * (n - 1) as f64 / (k - 1) as f64).round() as usize)
        .collect();
    v.dedup();
    v
}

/// Reads the sampled columns as one complex `[dim, k]` matrix.
fn read_sample(src: &dyn ColumnSource, idx: &[usize]) -> Result<Mat<c64>> {
    let mut out = Mat::<c64>::zeros(src.dim(), idx.len());
    for (k, &j) in idx.iter().enumerate() {
        let col = src.read(j..j + 1)?;
        for i in 0..src.dim() {
            out[(i, k)] = col.get_c(i, 0);
        }
    }
    Ok(out)
}

/// Orthonormality error `max |V_Sᴴ V_S − 1|` on `sample` evenly spread states,
/// passing when at most `tolerance`.
pub fn orthonormality(src: &dyn ColumnSource, sample: usize, tolerance: f64) -> Result<OrthoCheck> {
    let idx = sample_indices(src.n_states(), sample);
    let v = read_sample(src, &idx)?;
    let g = v.adjoint() * &v;
    let mut err = 0.0f64;
    for b in 0..g.ncols() {
        for a in 0..g.nrows() {
            let target = if a == b { 1.0 } else { 0.0 };
            let d = (g[(a, b)] - c64::new(target, 0.0)).norm();
            err = if d.is_nan() {
                f64::INFINITY
            } else {
                err.max(d)
            };
        }
    }
    Ok(OrthoCheck {
        sample: idx.len(),
        max_error: err,
        tolerance,
        pass: err <= tolerance,
        cross: 0,
        states: src.n_states(),
    })
}

/// The full check of a stored basis: [`orthonormality`] on `sample` states, then, when
/// that passes and not every state was sampled, [`CROSS_SAMPLE`] of them against every
/// stored state, `max_{a, j ∉ S} |⟨v_a|v_j⟩|` ([`cross_overlap`]), so that a state
/// duplicated or mixed anywhere in the set is found once one of its pair is sampled.
pub fn check_basis(
    src: &dyn ColumnSource,
    sample: usize,
    tolerance: f64,
    limit: &Limit,
) -> Result<OrthoCheck> {
    match cross_probe(src, sample, tolerance)? {
        Probed::Done(c) => Ok(c),
        Probed::Cross(p) => {
            let cross = cross_overlap(src, &p.idx, limit)?;
            Ok(p.finish_with(cross))
        }
    }
}

/// The first half of [`check_basis`]: [`orthonormality`] on `sample` states; when it
/// passes and not every state was sampled, the [`CROSS_SAMPLE`] states still to be
/// checked against every stored state, read.
pub fn cross_probe(src: &dyn ColumnSource, sample: usize, tolerance: f64) -> Result<Probed> {
    let c = orthonormality(src, sample, tolerance)?;
    let n = src.n_states();
    if !c.pass || c.sample >= n {
        return Ok(Probed::Done(c));
    }
    let idx = sample_indices(n, CROSS_SAMPLE.min(c.sample));
    let columns = read_sample(src, &idx)?;
    Ok(Probed::Cross(CrossProbe {
        idx,
        columns,
        check: c,
    }))
}

/// What [`cross_probe`] found.
#[derive(Debug)]
pub enum Probed {
    /// The check is complete (failed on the sample, or every state was sampled).
    Done(OrthoCheck),
    /// The sample passed; these states are still to be checked against every state.
    Cross(CrossProbe),
}

/// The sampled states of the second half of [`check_basis`], for a pass over the stored
/// states that forms their overlaps `⟨v_j|v_a⟩` (`j` every stored state, `a` in `idx`)
/// on the way, e.g. the coefficients of a quench's state pass.
#[derive(Debug)]
pub struct CrossProbe {
    /// Indices of the probe states.
    pub idx: Vec<usize>,
    /// The probe states `v_a`, `[dim, idx.len()]`.
    pub columns: Mat<c64>,
    check: OrthoCheck,
}

impl CrossProbe {
    /// The completed check from the overlaps `overlaps[(j, a)] = ⟨v_j|v_a⟩` of every stored
    /// state `j` with the probe states (`[n, idx.len()]`).
    pub fn finish(&self, overlaps: faer::MatRef<'_, c64>) -> OrthoCheck {
        let cross = worst_overlap(overlaps, 0, &self.idx);
        self.finish_with(cross)
    }

    fn finish_with(&self, cross: f64) -> OrthoCheck {
        let mut c = self.check.clone();
        c.cross = self.idx.len();
        c.max_error = if cross.is_nan() {
            f64::INFINITY
        } else {
            c.max_error.max(cross)
        };
        c.pass = c.max_error <= c.tolerance;
        c
    }
}

/// `max |g[(j − j0, a)]|` over the rows `j` (offset by `j0`) not in `idx` and all columns
/// `a`; NaN when an entry is NaN.
fn worst_overlap(g: faer::MatRef<'_, c64>, j0: usize, idx: &[usize]) -> f64 {
    let mut worst = 0.0f64;
    for r in 0..g.nrows() {
        if idx.contains(&(j0 + r)) {
            continue;
        }
        for a in 0..g.ncols() {
            let x = g[(r, a)].norm();
            if x.is_nan() {
                return f64::NAN;
            }
            worst = worst.max(x);
        }
    }
    worst
}

/// `max |⟨v_a|v_j⟩|` over the states `a` of `idx` and every stored state `j` not in
/// `idx`, reading the stored states in blocks of at most a quarter of `limit` (cut on the
/// storage's chunk boundaries when it has them).
pub fn cross_overlap(src: &dyn ColumnSource, idx: &[usize], limit: &Limit) -> Result<f64> {
    let (n, dim) = (src.n_states(), src.dim().max(1));
    let s = match src.field() {
        crate::data::Field::Real => 8,
        crate::data::Field::Complex => 16,
    };
    let mut width = (limit.bytes() / (4 * dim * s)).clamp(1, 4096);
    if let Some(c) = src.chunk_states().filter(|&c| c > 0 && c <= width) {
        width -= width % c;
    }
    let sample = read_sample(src, idx)?;
    let mut worst = 0.0f64;
    let mut j0 = 0;
    while j0 < n {
        let j1 = (j0 + width).min(n);
        let block = src.read(j0..j1)?.to_complex();
        let g = block.adjoint() * &sample;
        let w = worst_overlap(g.as_ref(), j0, idx);
        if w.is_nan() {
            return Ok(w);
        }
        worst = worst.max(w);
        j0 = j1;
    }
    Ok(worst)
}

/// `y = H x` for a computational-basis operator (complex arithmetic).
pub(super) fn apply(h: &Operator, x: &[c64]) -> Result<Vec<c64>> {
    fn go<T: Copy>(d: &OpData<T>, x: &[c64], c: impl Fn(T) -> c64) -> Result<Vec<c64>> {
        let n = x.len();
        match d {
            OpData::Diagonal(v) => Ok(v.iter().zip(x).map(|(&a, &b)| c(a) * b).collect()),
            OpData::Dense(m) => Ok((0..n)
                .map(|i| (0..n).map(|j| c(m[(i, j)]) * x[j]).sum())
                .collect()),
            OpData::Csr(a) => Ok((0..a.nrows)
                .map(|i| {
                    (a.indptr[i]..a.indptr[i + 1])
                        .map(|k| c(a.data[k]) * x[a.indices[k]])
                        .sum()
                })
                .collect()),
            OpData::EnergyBasis(_) => Err(Error::other(
                "a Hamiltonian in the energy basis cannot be used for residuals",
            )),
        }
    }
    match h {
        Operator::Real(d) => go(d, x, |a| c64::new(a, 0.0)),
        Operator::Complex(d) => go(d, x, |a| a),
    }
}

/// Largest residual `‖H v_j − E_j v_j‖₂` over `sample` evenly spread states,
/// passing when at most `rel_tol · max(1, max |E|)`.
pub fn residuals(
    src: &dyn ColumnSource,
    spectrum: &Spectrum,
    h: &Operator,
    sample: usize,
    rel_tol: f64,
) -> Result<ResidualCheck> {
    let idx = sample_indices(src.n_states(), sample);
    let scale = spectrum.energies.iter().fold(1.0f64, |m, e| m.max(e.abs()));
    let mut worst = (0.0f64, idx.first().copied().unwrap_or(0));
    for &j in &idx {
        let col: Matrix = src.read(j..j + 1)?;
        let x: Vec<c64> = (0..src.dim()).map(|i| col.get_c(i, 0)).collect();
        let hx = apply(h, &x)?;
        let e = spectrum.energies[j];
        let r = hx
            .iter()
            .zip(&x)
            .map(|(a, b)| (a - b * e).norm_sqr())
            .sum::<f64>()
            .sqrt();
        let r = if r.is_nan() { f64::INFINITY } else { r };
        if r > worst.0 {
            worst = (r, j);
        }
    }
    let threshold = rel_tol * scale;
    Ok(ResidualCheck {
        sample: idx.len(),
        max_residual: worst.0,
        worst_state: worst.1,
        threshold,
        pass: worst.0 <= threshold,
    })
}

/// The orthonormality tolerance of a sector's eigenvectors ([`ORTHO_TOL`] or [`ORTHO_TOL_F32`]).
pub fn ortho_tolerance(sector: &Sector) -> f64 {
    let el: Vec<Element> = sector.element.into_iter().collect();
    tolerance_for(&el, ORTHO_TOL, ORTHO_TOL_F32)
}

/// The relative residual tolerance of a sector ([`RESIDUAL_TOL`] or [`RESIDUAL_TOL_F32`]).
pub fn residual_tolerance(sector: &Sector) -> f64 {
    let mut el: Vec<Element> = sector.element.into_iter().collect();
    el.push(sector.energies_element);
    tolerance_for(&el, RESIDUAL_TOL, RESIDUAL_TOL_F32)
}

/// Checks orthonormality ([`check_basis`] with up to [`SAMPLE`] states within the file's
/// memory limit and the sector's tolerance) and turns a failure into an error naming the
/// eigenvector dataset. Every analysis calls this before using a basis read from a file.
pub fn require_orthonormal(
    file: &EigenFile,
    sector: &Sector,
    src: &dyn ColumnSource,
) -> Result<OrthoCheck> {
    let k = sample_within(file.limit(), src.dim());
    let c = check_basis(src, k, ortho_tolerance(sector), file.limit())?;
    refuse_failed(file, sector, c)
}

/// The first half of [`require_orthonormal`] ([`cross_probe`]): refuses a basis whose
/// sample fails; the probe, when the cross check is still to be done by the caller's pass
/// (then [`require_probe`]).
pub fn require_sample(
    file: &EigenFile,
    sector: &Sector,
    src: &dyn ColumnSource,
) -> Result<Option<CrossProbe>> {
    let k = sample_within(file.limit(), src.dim());
    match cross_probe(src, k, ortho_tolerance(sector))? {
        Probed::Done(c) => refuse_failed(file, sector, c).map(|_| None),
        Probed::Cross(p) => Ok(Some(p)),
    }
}

/// The second half of [`require_orthonormal`]: refuses the basis when the overlaps of
/// every stored state with the probe states (`[n, probe.idx.len()]`) fail.
pub fn require_probe(
    file: &EigenFile,
    sector: &Sector,
    probe: &CrossProbe,
    overlaps: faer::MatRef<'_, c64>,
) -> Result<OrthoCheck> {
    refuse_failed(file, sector, probe.finish(overlaps))
}

fn refuse_failed(file: &EigenFile, sector: &Sector, c: OrthoCheck) -> Result<OrthoCheck> {
    if !c.pass {
        return Err(Error::dataset(
            file.path(),
            sector.eigenvectors_path.clone().unwrap_or_default(),
            c.problem(),
        ));
    }
    Ok(c)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sample_spreads_over_the_spectrum_including_both_ends() {
        // common practice, no source: evenly spaced sample with endpoints
        let v = sample_indices(1000, 64);
        assert_eq!(v.len(), 64);
        assert_eq!((v[0], v[63]), (0, 999));
        assert!(v.windows(2).all(|w| w[1] > w[0]));
        assert_eq!(sample_indices(10, 64), (0..10).collect::<Vec<_>>());
    }

    #[test]
    fn orthonormality_error_of_a_rotated_basis_and_a_skewed_one() {
        // VᵀV = 1 for a rotation (exact identity). Columns v0 = (1, 0), v1 = (t, 1):
        // ⟨v0|v1⟩ = t and ‖v1‖² − 1 = t², so max |VᵀV − 1| = t for t < 1.
        let (c, s) = (0.6f64, 0.8f64);
        let rot = Matrix::Real(Mat::from_fn(2, 2, |i, j| match (i, j) {
            (0, 0) | (1, 1) => c,
            (1, 0) => s,
            _ => -s,
        }));
        let r = orthonormality(&rot, 64, ORTHO_TOL).unwrap();
        assert!(r.pass && r.max_error < 1e-15, "{}", r.max_error);
        let t = 1e-3;
        let skew = Matrix::Real(Mat::from_fn(2, 2, |i, j| match (i, j) {
            (0, 0) | (1, 1) => 1.0,
            (0, 1) => t,
            _ => 0.0,
        }));
        let r = orthonormality(&skew, 64, ORTHO_TOL).unwrap();
        assert!(!r.pass);
        assert!((r.max_error - t).abs() < 1e-15, "{}", r.max_error);
    }

    #[test]
    fn residual_of_exact_and_perturbed_eigenpairs() {
        // H = diag(1, 2) with the unit vectors: residual 0 (exact); with E shifted by δ
        // the residual is |δ| (‖Hv − (E+δ)v‖ = |δ|)
        let h = Operator::Real(OpData::Diagonal(vec![1.0, 2.0]));
        let v = Matrix::Real(Mat::from_fn(2, 2, |i, j| if i == j { 1.0 } else { 0.0 }));
        let sp = Spectrum::from_unsorted(vec![1.0, 2.0]);
        let r = residuals(&v, &sp, &h, 64, RESIDUAL_TOL).unwrap();
        assert_eq!(r.max_residual, 0.0);
        assert!(r.pass);
        let sp = Spectrum::from_unsorted(vec![1.0, 2.0 + 1e-6]);
        let r = residuals(&v, &sp, &h, 64, RESIDUAL_TOL).unwrap();
        assert!((r.max_residual - 1e-6).abs() < 1e-15);
        assert_eq!(r.worst_state, 1);
        assert!(!r.pass);
        // threshold relative to max(1, max|E|) = 2 + 1e-6
        assert!((r.threshold - RESIDUAL_TOL * (2.0 + 1e-6)).abs() < 1e-20);
    }
}
