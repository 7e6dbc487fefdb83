//! Chebyshev moments of a stored Hamiltonian and of observables times it, for the kernel
//! polynomial method (Weiße, Wellein, Alvermann, Fehske, Rev. Mod. Phys. 78, 275 (2006)).
//!
//! With the spectrum of `H` inside `[lo, hi]` (Gershgorin discs, padded by
//! [`PADDING`]), `H̃ = (H − b)/a` with `b = (hi + lo)/2`, `a = (hi − lo)/(2(1 − PADDING))`
//! has its spectrum inside `[−1, 1]`, and the moments are
//!
//! ```text
//! μₙ = Tr Tₙ(H̃) / D ,     μₙ(A) = Tr(A Tₙ(H̃)) / D ,     n = 0 … N−1
//! ```
//!
//! computed with the recurrence `|αₙ₊₁⟩ = 2H̃|αₙ⟩ − |αₙ₋₁⟩` from `|α₀⟩ = |r⟩`,
//! `|α₁⟩ = H̃|r⟩`: `⟨r|αₙ⟩` and `⟨A r|αₙ⟩` (A Hermitian) for each start vector `r`.
//!
//! - **Stochastic trace** ([`TraceMode::Stochastic`]): `R` random vectors with entries of
//!   modulus one (±1 for real operators, `e^{iφ}` with uniform φ for complex ones; ChaCha8
//!   seeded with `seed`), `E[⟨r|M|r⟩] = Tr M`; each vector gives one sample of the moments
//!   (divided by `D`), kept apart so that the spread over vectors gives the error
//!   (it falls as `1/√(R·D)`, Weiße et al. 2006).
//! - **Exact trace** ([`TraceMode::Exact`]): the `D` unit vectors; one sample, the trace.
//!
//! The lowest moments are also computed exactly from the stored entries
//! (`Tr H`, `Tr H² = Σᵢⱼ |Hᵢⱼ|²`, `Tr A`, `Tr(AH) = Σᵢⱼ Aᵢⱼ conj(Hᵢⱼ)`, and for diagonal
//! and CSR observables `Tr(AH²) = Σᵢ ⟨hᵢ|A|hᵢ⟩` with `hᵢ = H eᵢ`):
//! [`Moments::exact_h`] holds `μ₀, μ₁, μ₂` and [`Moments::exact_ops`] `μ₀(A), μ₁(A)`
//! (and `μ₂(A)` for diagonal and CSR observables); near
//! infinite temperature they carry most of a thermal average, so replacing their
//! estimates removes most of its stochastic error.
//!
//! Every product `H·X` goes through the operator kernels of the projector on blocks of
//! start vectors sized by the budget (`(4 + q)·D·c` elements for `c` vectors and `q`
//! observables); no eigenvector is read.

use super::kernels::{apply_into, col_slice, op_shape, Elem};
use super::Budget;
use crate::data::{c64, Field, OpData, Operator};
use crate::error::{Error, Result};
use faer::Mat;
use rand::{Rng, SeedableRng};
use rayon::prelude::*;

/// Relative padding of the rescaled spectrum: `H̃` lies in `[−(1 − PADDING), 1 − PADDING]`.
pub const PADDING: f64 = 0.01;

/// How the traces are taken.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum TraceMode {
    /// `vectors` random vectors from a generator seeded with `seed`.
    Stochastic {
        /// Number R of random vectors.
        vectors: usize,
        /// Seed of the generator (ChaCha8).
        seed: u64,
    },
    /// All `D` unit vectors (the exact trace; for tests and small dimensions).
    Exact,
}

/// The moments of `H` and of each observable, per sample (module docs).
#[derive(Debug, Clone)]
pub struct Moments {
    /// Hilbert-space dimension `D`.
    pub dim: usize,
    /// Gershgorin bounds `[lo, hi]` of the spectrum of `H`.
    pub bounds: [f64; 2],
    /// Centre `b` of the rescaling.
    pub center: f64,
    /// Half-width `a` of the rescaling.
    pub half_width: f64,
    /// How the traces were taken.
    pub mode: TraceMode,
    /// `h[s][n]`: sample `s` of `μₙ`.
    pub h: Vec<Vec<f64>>,
    /// `ops[k][s][n]`: sample `s` of `μₙ(A_k)`.
    pub ops: Vec<Vec<Vec<f64>>>,
    /// Exact `μ₀, μ₁, μ₂` of `H` from its entries.
    pub exact_h: [f64; 3],
    /// Exact `μ₀(A), μ₁(A)` (and `μ₂(A)` for diagonal and CSR `A`) of each observable.
    pub exact_ops: Vec<Vec<f64>>,
}

/// Chebyshev moments `n = 0 … moments−1` of `h` and of every operator in `ops`
/// (computational-basis forms, all `D × D`), traces taken as `mode` says.
pub fn moments(
    h: &Operator,
    ops: &[&Operator],
    moments: usize,
    mode: TraceMode,
    budget: &Budget,
) -> Result<Moments> {
    let complex = h.field() == Field::Complex || ops.iter().any(|o| o.field() == Field::Complex);
    if complex {
        moments_t::<c64>(h, ops, moments, mode, budget)
    } else {
        moments_t::<f64>(h, ops, moments, mode, budget)
    }
}

fn moments_t<T: Elem>(
    h: &Operator,
    ops: &[&Operator],
    n_mom: usize,
    mode: TraceMode,
    budget: &Budget,
) -> Result<Moments> {
    let hd = T::from_op(h)?;
    let od = ops
        .iter()
        .map(|o| T::from_op(o))
        .collect::<Result<Vec<_>>>()?;
    let (dim, c) = op_shape(&hd)?;
    if dim != c || dim == 0 {
        return Err(Error::other(format!(
            "the Hamiltonian is {dim}×{c}; a square operator is needed"
        )));
    }
    if matches!(*hd, OpData::EnergyBasis(_)) {
        return Err(Error::other(
            "the Hamiltonian is stored in the energy basis; Chebyshev moments need it in the computational basis",
        ));
    }
    for (k, o) in od.iter().enumerate() {
        let (r, cc) = op_shape(o)?;
        if matches!(**o, OpData::EnergyBasis(_)) || r != dim || cc != dim {
            return Err(Error::other(format!(
                "observable {k}: Chebyshev moments need a {dim}×{dim} operator in the computational basis"
            )));
        }
    }
    if n_mom < 3 {
        return Err(Error::other("at least 3 Chebyshev moments are needed"));
    }
    let bounds = gershgorin(&hd);
    let center = 0.5 * (bounds[0] + bounds[1]);
    let half_width = (0.5 * (bounds[1] - bounds[0]) / (1.0 - PADDING)).max(f64::MIN_POSITIVE);
    let exact_h = {
        let (tr, tr2) = (trace(&hd), trace_product(&hd, &hd));
        let d = dim as f64;
        let m1 = (tr / d - center) / half_width;
        let h2 = (tr2 - 2.0 * center * tr + center * center * d) / (half_width * half_width * d);
        [1.0, m1, 2.0 * h2 - 1.0]
    };
    let exact_ops = od
        .iter()
        .map(|o| {
            let d = dim as f64;
            let (ta, tah) = (trace(o), trace_product(o, &hd));
            let mut v = vec![ta / d, (tah - center * ta) / (half_width * d)];
            if let Some(tahh) = trace_sandwich(o, &hd) {
                let t2 = (tahh - 2.0 * center * tah + center * center * ta)
                    / (half_width * half_width * d);
                v.push(2.0 * t2 - ta / d);
            }
            v
        })
        .collect();
    let total = match mode {
        TraceMode::Stochastic { vectors, .. } => vectors.max(1),
        TraceMode::Exact => dim,
    };
    let q = od.len();
    let per_col = (4 + q) * dim * std::mem::size_of::<T>();
    let width = (budget.bytes / per_col.max(1)).clamp(1, 64).min(total);
    let mut rng = match mode {
        TraceMode::Stochastic { seed, .. } => rand_chacha::ChaCha8Rng::seed_from_u64(seed),
        TraceMode::Exact => rand_chacha::ChaCha8Rng::seed_from_u64(0),
    };
    let mut h_samples = Vec::new();
    let mut op_samples: Vec<Vec<Vec<f64>>> = vec![Vec::new(); q];
    let mut start = 0;
    while start < total {
        let w = width.min(total - start);
        let x0 = Mat::<T>::from_fn(dim, w, |i, j| match mode {
            TraceMode::Exact => T::from_c64(c64::new(if i == start + j { 1.0 } else { 0.0 }, 0.0)),
            TraceMode::Stochastic { .. } => random_unit::<T>(&mut rng),
        });
        let (hm, om) = recurrence(&hd, &od, &x0, n_mom, center, half_width, budget)?;
        match mode {
            TraceMode::Stochastic { .. } => {
                let d = dim as f64;
                h_samples.extend(
                    hm.into_iter()
                        .map(|v| v.into_iter().map(|x| x / d).collect()),
                );
                for (dst, src) in op_samples.iter_mut().zip(om) {
                    dst.extend(
                        src.into_iter()
                            .map(|v| v.into_iter().map(|x| x / d).collect()),
                    );
                }
            }
            TraceMode::Exact => {
                accumulate(&mut h_samples, &hm, dim);
                for (dst, src) in op_samples.iter_mut().zip(&om) {
                    accumulate(dst, src, dim);
                }
            }
        }
        start += w;
    }
    Ok(Moments {
        dim,
        bounds,
        center,
        half_width,
        mode,
        h: h_samples,
        ops: op_samples,
        exact_h,
        exact_ops,
    })
}

/// Adds the columns' moments (divided by `dim`) into one sample.
fn accumulate(dst: &mut Vec<Vec<f64>>, cols: &[Vec<f64>], dim: usize) {
    let Some(first) = cols.first() else {
        return;
    };
    if dst.is_empty() {
        dst.push(vec![0.0; first.len()]);
    }
    for col in cols {
        for (d, x) in dst[0].iter_mut().zip(col) {
            *d += x / dim as f64;
        }
    }
}

/// A random entry of modulus one: ±1 (real) or `e^{iφ}` (complex).
fn random_unit<T: Elem>(rng: &mut impl Rng) -> T {
    match T::field() {
        Field::Real => T::from_c64(c64::new(if rng.random::<bool>() { 1.0 } else { -1.0 }, 0.0)),
        Field::Complex => {
            let phi = rng.random::<f64>() * std::f64::consts::TAU;
            T::from_c64(c64::new(phi.cos(), phi.sin()))
        }
    }
}

/// `(⟨r_j|αₙ⟩, ⟨A_k r_j|αₙ⟩)` (real parts) for the columns `r_j` of `x0`, `n < n_mom`.
#[allow(clippy::type_complexity)]
fn recurrence<T: Elem>(
    h: &OpData<T>,
    ops: &[std::borrow::Cow<'_, OpData<T>>],
    x0: &Mat<T>,
    n_mom: usize,
    b: f64,
    a: f64,
    budget: &Budget,
) -> Result<(Vec<Vec<f64>>, Vec<Vec<Vec<f64>>>)> {
    let (dim, w) = (x0.nrows(), x0.ncols());
    let par = budget.par;
    let ar: Vec<Vec<T>> = ops
        .iter()
        .map(|o| {
            let mut out = vec![T::zero(); dim * w];
            apply_into(o, x0.as_ref(), &mut out, par);
            out
        })
        .collect();
    let mut hm = vec![vec![0.0; n_mom]; w];
    let mut om = vec![vec![vec![0.0; n_mom]; w]; ops.len()];
    let record = |alpha: &[T], n: usize, hm: &mut [Vec<f64>], om: &mut [Vec<Vec<f64>>]| {
        let dots: Vec<f64> = (0..w)
            .into_par_iter()
            .map(|j| {
                let r = col_slice(x0.as_ref(), j).unwrap_or(&[]);
                dot_re(r, &alpha[j * dim..(j + 1) * dim])
            })
            .collect();
        for (j, d) in dots.into_iter().enumerate() {
            hm[j][n] = d;
        }
        for (k, a_r) in ar.iter().enumerate() {
            for j in 0..w {
                om[k][j][n] = dot_re(&a_r[j * dim..(j + 1) * dim], &alpha[j * dim..(j + 1) * dim]);
            }
        }
    };
    let mut prev: Vec<T> = (0..w)
        .flat_map(|j| col_slice(x0.as_ref(), j).unwrap_or(&[]).to_vec())
        .collect();
    if prev.len() != dim * w {
        return Err(Error::other("internal: start vectors are not contiguous"));
    }
    record(&prev, 0, &mut hm, &mut om);
    let mut hx = vec![T::zero(); dim * w];
    let apply = |v: &[T], out: &mut [T]| {
        let m = faer::MatRef::from_column_major_slice(v, dim, w);
        apply_into(h, m, out, par);
    };
    apply(&prev, &mut hx);
    let mut cur: Vec<T> = hx
        .par_iter()
        .zip(&prev)
        .map(|(&y, &x)| y.add(x.scale(-b)).scale(1.0 / a))
        .collect();
    record(&cur, 1, &mut hm, &mut om);
    for n in 2..n_mom {
        apply(&cur, &mut hx);
        prev.par_iter_mut()
            .zip(hx.par_iter().zip(&cur))
            .for_each(|(p, (&y, &x))| {
                *p = y.add(x.scale(-b)).scale(2.0 / a).add(p.scale(-1.0));
            });
        std::mem::swap(&mut prev, &mut cur);
        record(&cur, n, &mut hm, &mut om);
    }
    Ok((hm, om))
}

/// `Re Σᵢ conj(xᵢ) yᵢ`.
fn dot_re<T: Elem>(x: &[T], y: &[T]) -> f64 {
    x.iter().zip(y).map(|(&a, &b)| a.conj().mul(b).re()).sum()
}

/// Calls `f(j, A_ij)` for the stored entries of row `i`.
fn row_entries<T: Elem>(op: &OpData<T>, i: usize, mut f: impl FnMut(usize, T)) {
    match op {
        OpData::Diagonal(d) => f(i, d[i]),
        OpData::Dense(m) | OpData::EnergyBasis(m) => {
            for j in 0..m.ncols() {
                f(j, m[(i, j)]);
            }
        }
        OpData::Csr(s) => {
            for k in s.indptr[i]..s.indptr[i + 1] {
                f(s.indices[k], s.data[k]);
            }
        }
    }
}

fn nrows<T>(op: &OpData<T>) -> usize {
    match op {
        OpData::Diagonal(d) => d.len(),
        OpData::Dense(m) | OpData::EnergyBasis(m) => m.nrows(),
        OpData::Csr(s) => s.nrows,
    }
}

/// Gershgorin bounds `[min_i (Re Aᵢᵢ − Σ_{j≠i}|Aᵢⱼ|), max_i (Re Aᵢᵢ + Σ_{j≠i}|Aᵢⱼ|)]`:
/// every eigenvalue of a Hermitian `A` lies inside (Gershgorin's circle theorem).
pub(crate) fn gershgorin<T: Elem>(op: &OpData<T>) -> [f64; 2] {
    let (lo, hi) = (0..nrows(op))
        .into_par_iter()
        .map(|i| {
            let (mut c, mut r) = (0.0, 0.0);
            row_entries(op, i, |j, x| {
                if j == i {
                    c += x.re();
                } else {
                    r += x.to_c64().norm();
                }
            });
            (c - r, c + r)
        })
        .reduce(
            || (f64::INFINITY, f64::NEG_INFINITY),
            |a, b| (a.0.min(b.0), a.1.max(b.1)),
        );
    [lo, hi]
}

/// `Tr A = Σᵢ Re Aᵢᵢ`. The traces below form their row terms in parallel and add them in
/// row order, so that the result does not depend on how the work was split (a parallel
/// sum's order would move the last bit from run to run).
fn trace<T: Elem>(op: &OpData<T>) -> f64 {
    (0..nrows(op))
        .into_par_iter()
        .map(|i| {
            let mut t = 0.0;
            row_entries(op, i, |j, x| {
                if j == i {
                    t += x.re();
                }
            });
            t
        })
        .collect::<Vec<f64>>()
        .iter()
        .sum::<f64>()
}

/// `Tr(A B) = Σᵢⱼ Aᵢⱼ Bⱼᵢ = Re Σᵢⱼ Aᵢⱼ conj(Bᵢⱼ)` for Hermitian `B` (row `i` of `B`
/// scattered into a workspace, row `i` of `A` run over it).
fn trace_product<T: Elem>(a: &OpData<T>, b: &OpData<T>) -> f64 {
    let n = nrows(a);
    (0..n)
        .into_par_iter()
        .map_init(
            || (vec![T::zero(); n], Vec::<usize>::new()),
            |(ws, touched), i| {
                row_entries(b, i, |j, x| {
                    if j < n {
                        ws[j] = ws[j].add(x);
                        touched.push(j);
                    }
                });
                let mut t = 0.0;
                row_entries(a, i, |j, x| {
                    if j < n {
                        t += x.mul(ws[j].conj()).re();
                    }
                });
                for &j in touched.iter() {
                    ws[j] = T::zero();
                }
                touched.clear();
                t
            },
        )
        .collect::<Vec<f64>>()
        .iter()
        .sum::<f64>()
}

/// `Tr(A H²) = Σᵢ ⟨hᵢ|A|hᵢ⟩` with `hᵢ = H eᵢ = conj(row i of H)` (H Hermitian), for a
/// diagonal or CSR `A` (`None` otherwise: the sum would cost `D³` for a dense one).
fn trace_sandwich<T: Elem>(a: &OpData<T>, h: &OpData<T>) -> Option<f64> {
    if !matches!(a, OpData::Diagonal(_) | OpData::Csr(_)) {
        return None;
    }
    let n = nrows(h);
    let total = (0..n)
        .into_par_iter()
        .map_init(
            || (vec![T::zero(); n], Vec::<usize>::new()),
            |(ws, touched), i| {
                row_entries(h, i, |k, x| {
                    if k < n {
                        ws[k] = ws[k].add(x.conj());
                        touched.push(k);
                    }
                });
                let mut t = 0.0;
                touched.sort_unstable();
                touched.dedup();
                for &j in touched.iter() {
                    let hj = ws[j].conj();
                    row_entries(a, j, |k, x| {
                        if k < n {
                            t += hj.mul(x.mul(ws[k])).re();
                        }
                    });
                }
                for &j in touched.iter() {
                    ws[j] = T::zero();
                }
                touched.clear();
                t
            },
        )
        .collect::<Vec<f64>>()
        .iter()
        .sum::<f64>();
    Some(total)
}
