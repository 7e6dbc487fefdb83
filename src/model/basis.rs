//! Computational basis of a spin-1/2 chain, its reflection symmetry and parity sectors.
//!
//! **Convention.** A chain of `L` sites has the `2^L` basis states `|s⟩`, `s = 0 .. 2^L − 1`,
//! eigenstates of every σᶻᵢ. Bit `i − 1` of `s` (counting from the least significant bit)
//! is site `i` (sites are numbered `1 ..= L`); bit value 1 means spin up, σᶻᵢ|s⟩ = +|s⟩,
//! bit value 0 means spin down, σᶻᵢ|s⟩ = −|s⟩.
//!
//! **Reflection.** `R` maps site `i` to `L + 1 − i`, i.e. bit `k` to bit `L − 1 − k`:
//! `R|s⟩ = |r(s)⟩`. It is an involution (`R² = 1`) with eigenvalues ±1. A Hamiltonian with
//! uniform couplings on an open or periodic chain commutes with `R`.
//!
//! **Sectors.** The orbits of `r` have one or two elements. Taking the representative
//! `s ≤ r(s)` of each orbit, the even sector (`R = +1`) has the orthonormal basis
//! `(|s⟩ + |r(s)⟩)/√2` for `s < r(s)` and `|s⟩` for `s = r(s)`; the odd sector (`R = −1`)
//! has `(|s⟩ − |r(s)⟩)/√2` for `s < r(s)` only. Their dimensions add up to `2^L`.
//!
//! **Embedding.** The `[2^L, dim]` matrix `P` whose columns are the sector basis vectors
//! is an isometry (`PᵀP = 1`); `PPᵀ` is the projector onto the sector. An operator `O` of
//! the full space becomes `PᵀOP` in the sector and a full-space state ψ has the sector
//! component `c = Pᵀψ`. Every row of `P` has at most one non-zero entry, which makes
//! these products cheap.

use crate::data::Csr;
use crate::error::{Error, Result};

/// Largest number of sites accepted (2^20 basis states; the dense diagonalisation is the limit anyway).
pub const MAX_SITES: usize = 20;

/// The reflected basis index `r(s)`: bit `k` of `s` moves to bit `L − 1 − k`.
pub fn reflect(s: usize, sites: usize) -> usize {
    let mut r = 0usize;
    for k in 0..sites {
        if s >> k & 1 == 1 {
            r |= 1 << (sites - 1 - k);
        }
    }
    r
}

/// Which reflection sector a basis is built for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Parity {
    /// The whole space, no symmetry used (`P = 1`).
    Full,
    /// `R = +1`.
    Even,
    /// `R = −1`.
    Odd,
}

/// An orthonormal sector basis in the full computational basis (the columns of `P`).
#[derive(Debug, Clone)]
pub struct SectorBasis {
    /// Dimension `2^L` of the full space.
    pub full_dim: usize,
    /// Which sector.
    pub parity: Parity,
    /// Basis vector `a` as its non-zero components `(full index, amplitude)`.
    pub vectors: Vec<Vec<(usize, f64)>>,
    /// For each full basis state `t`: `Some((a, P[t, a]))` if it has a component in the sector.
    pub row_of: Vec<Option<(usize, f64)>>,
}

impl SectorBasis {
    /// The basis of `parity` for a chain of `sites` sites (see the module documentation).
    pub fn new(sites: usize, parity: Parity) -> Result<SectorBasis> {
        if sites == 0 || sites > MAX_SITES {
            return Err(Error::usage(format!(
                "number of sites must be between 1 and {MAX_SITES}, got {sites}"
            )));
        }
        let full_dim = 1usize << sites;
        let h = std::f64::consts::FRAC_1_SQRT_2;
        let mut vectors = Vec::new();
        let mut row_of = vec![None; full_dim];
        for s in 0..full_dim {
            let a = vectors.len();
            match parity {
                Parity::Full => {
                    vectors.push(vec![(s, 1.0)]);
                    row_of[s] = Some((a, 1.0));
                }
                Parity::Even | Parity::Odd => {
                    let r = reflect(s, sites);
                    if s > r {
                        continue;
                    }
                    if s == r {
                        if parity == Parity::Even {
                            vectors.push(vec![(s, 1.0)]);
                            row_of[s] = Some((a, 1.0));
                        }
                        continue;
                    }
                    let sign = if parity == Parity::Even { 1.0 } else { -1.0 };
                    vectors.push(vec![(s, h), (r, sign * h)]);
                    row_of[s] = Some((a, h));
                    row_of[r] = Some((a, sign * h));
                }
            }
        }
        Ok(SectorBasis {
            full_dim,
            parity,
            vectors,
            row_of,
        })
    }

    /// Dimension of the sector.
    pub fn dim(&self) -> usize {
        self.vectors.len()
    }

    /// The embedding `P` as a CSR matrix of shape `[full_dim, dim]`.
    pub fn embedding(&self) -> Csr<f64> {
        let mut indptr = Vec::with_capacity(self.full_dim + 1);
        let mut indices = Vec::with_capacity(self.full_dim);
        let mut data = Vec::with_capacity(self.full_dim);
        indptr.push(0);
        for r in &self.row_of {
            if let Some((a, p)) = r {
                indices.push(*a);
                data.push(*p);
            }
            indptr.push(indices.len());
        }
        Csr {
            nrows: self.full_dim,
            ncols: self.dim(),
            indptr,
            indices,
            data,
        }
    }

    /// `PᵀOP` for a full-space operator `O` in CSR form: row `a` is
    /// `Σ_t P[t,a] Σ_u O[t,u] P[u,b]` for every `b`; entries summing to exactly zero are dropped.
    pub fn project_csr(&self, op: &Csr<f64>) -> Csr<f64> {
        let dim = self.dim();
        let mut acc = vec![0.0; dim];
        let mut touched: Vec<usize> = Vec::new();
        let mut mark = vec![false; dim];
        let mut indptr = Vec::with_capacity(dim + 1);
        let mut indices = Vec::new();
        let mut data = Vec::new();
        indptr.push(0);
        for v in &self.vectors {
            for &(t, pt) in v {
                for k in op.indptr[t]..op.indptr[t + 1] {
                    if let Some((b, pu)) = self.row_of[op.indices[k]] {
                        if !mark[b] {
                            mark[b] = true;
                            touched.push(b);
                        }
                        acc[b] += pt * op.data[k] * pu;
                    }
                }
            }
            touched.sort_unstable();
            for &b in &touched {
                if acc[b] != 0.0 {
                    indices.push(b);
                    data.push(acc[b]);
                }
                acc[b] = 0.0;
                mark[b] = false;
            }
            touched.clear();
            indptr.push(indices.len());
        }
        Csr {
            nrows: dim,
            ncols: dim,
            indptr,
            indices,
            data,
        }
    }

    /// Diagonal of `PᵀDP` for a diagonal full-space operator `D = diag(d)`: entry `a` is
    /// `Σ_t P[t,a]² d_t` (`PᵀDP` is diagonal because each row of `P` has one entry at most).
    pub fn project_diagonal(&self, d: &[f64]) -> Vec<f64> {
        self.vectors
            .iter()
            .map(|v| v.iter().map(|&(t, p)| p * p * d[t]).sum())
            .collect()
    }

    /// Sector component `c = Pᵀψ` of a full-space state ψ (not renormalised).
    pub fn project_state(&self, psi: &[f64]) -> Vec<f64> {
        self.vectors
            .iter()
            .map(|v| v.iter().map(|&(t, p)| p * psi[t]).sum())
            .collect()
    }
}

/// Dense copy of a square CSR matrix (column-major faer matrix).
pub fn densify(op: &Csr<f64>) -> faer::Mat<f64> {
    let mut m = faer::Mat::<f64>::zeros(op.nrows, op.ncols);
    for i in 0..op.nrows {
        for k in op.indptr[i]..op.indptr[i + 1] {
            m[(i, op.indices[k])] += op.data[k];
        }
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reflection_is_an_involution_and_reverses_sites() {
        // linear algebra, no source: R² = 1, and site 1 ↔ site L
        for s in 0..(1 << 7) {
            assert_eq!(reflect(reflect(s, 7), 7), s);
        }
        assert_eq!(reflect(0b0000001, 7), 0b1000000);
        assert_eq!(reflect(0b0000011, 7), 0b1100000);
    }

    #[test]
    fn sector_dimensions_add_up() {
        // counting, no source: dim_even = (2^L + 2^⌈L/2⌉)/2, dim_odd = (2^L − 2^⌈L/2⌉)/2
        for l in 1..=9usize {
            let e = SectorBasis::new(l, Parity::Even).unwrap().dim();
            let o = SectorBasis::new(l, Parity::Odd).unwrap().dim();
            let fixed = 1usize << l.div_ceil(2);
            assert_eq!(e + o, 1 << l);
            assert_eq!(e, ((1 << l) + fixed) / 2);
        }
    }

    #[test]
    fn embedding_is_an_isometry() {
        // linear algebra, no source: PᵀP = 1 for orthonormal columns
        for parity in [Parity::Even, Parity::Odd, Parity::Full] {
            let b = SectorBasis::new(6, parity).unwrap();
            let p = densify(&b.embedding());
            let ptp = p.transpose() * &p;
            for i in 0..b.dim() {
                for j in 0..b.dim() {
                    let want = if i == j { 1.0 } else { 0.0 };
                    assert!((ptp[(i, j)] - want).abs() < 1e-14);
                }
            }
        }
    }
}
