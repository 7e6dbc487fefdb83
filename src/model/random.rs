//! Random-matrix reference eigenbases (GOE, GUE, Poisson), one sector each.
//!
//! The Hamiltonian is drawn from [`super::rmt`] and scaled by `1/√N`. With the off-diagonal
//! variance 1/2 of `rmt`, the level density of both Gaussian ensembles then tends to the
//! semicircle ρ(E) = √(2 − E²)/π on `[−√2, √2]` (Mehta 2004), independent of N. Poisson
//! levels are independent and uniform on `[0, 1)` (`rmt::poisson_levels / N`) with a
//! diagonal Hamiltonian, so its eigenvectors are the identity.
//!
//! Observables, in the computational basis of the random matrix:
//! `diag_pm = diag(+1, −1, +1, −1, …)` (diagonal form) and `dense_rand`, a dense real
//! symmetric GOE matrix scaled by `1/√N`, drawn from the fixed seed [`DENSE_RAND_SEED`]
//! (independent of the Hamiltonian's seed).

use super::{rmt, AttrValue, SectorData};
use crate::data::{Matrix, Observable, OpData, Operator};
use crate::error::{Error, Result};
use faer::Mat;

/// Seed of the `dense_rand` observable (fixed, so files of the same dimension share it).
pub const DENSE_RAND_SEED: u64 = 0x5eed_0b5e;

/// Largest dimension accepted for a random matrix.
pub const MAX_DIM: usize = 1 << 15;

/// A random-matrix ensemble.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RandomEnsemble {
    /// Gaussian orthogonal ensemble (real symmetric).
    Goe,
    /// Gaussian unitary ensemble (complex Hermitian).
    Gue,
    /// Uncorrelated levels (diagonal Hamiltonian).
    Poisson,
}

impl RandomEnsemble {
    /// Lower-case name (`goe`, `gue`, `poisson`), also the sector group name.
    pub fn name(&self) -> &'static str {
        match self {
            RandomEnsemble::Goe => "goe",
            RandomEnsemble::Gue => "gue",
            RandomEnsemble::Poisson => "poisson",
        }
    }
}

/// A random matrix to draw and diagonalise.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RandomSpec {
    /// Ensemble.
    pub ensemble: RandomEnsemble,
    /// Dimension N.
    pub dim: usize,
    /// Seed of the Hamiltonian.
    pub seed: u64,
}

/// Draws the matrix of `spec`, diagonalises it and returns one sector (group = ensemble name)
/// with energies, eigenvectors, Hamiltonian and the observables `diag_pm`, `dense_rand`.
pub fn build_random(spec: &RandomSpec) -> Result<SectorData> {
    let n = spec.dim;
    if !(2..=MAX_DIM).contains(&n) {
        return Err(Error::usage(format!(
            "random-matrix dimension must be between 2 and {MAX_DIM}, got {n}"
        )));
    }
    let scale = (n as f64).sqrt().recip();
    let mut rng = rmt::rng(spec.seed);
    let label = format!("{} N={n}", spec.ensemble.name().to_uppercase());
    let pb = crate::progress::spinner(&format!("diagonalising {label}"));
    let (energies, eigenvectors, hamiltonian) = match spec.ensemble {
        RandomEnsemble::Goe => {
            let h = rmt::goe(n, &mut rng) * faer::Scale(scale);
            let (e, v) = crate::linalg::eigh_real(h.as_ref())?;
            (e, Matrix::Real(v), Operator::Real(OpData::Dense(h)))
        }
        RandomEnsemble::Gue => {
            let h = rmt::gue(n, &mut rng) * faer::Scale(faer::c64::new(scale, 0.0));
            let (e, v) = crate::linalg::eigh_complex(h.as_ref())?;
            (e, Matrix::Complex(v), Operator::Complex(OpData::Dense(h)))
        }
        RandomEnsemble::Poisson => {
            let e: Vec<f64> = rmt::poisson_levels(n, &mut rng)
                .into_iter()
                .map(|x| x / n as f64)
                .collect();
            let h = Operator::Real(OpData::Diagonal(e.clone()));
            (e, Matrix::Real(Mat::identity(n, n)), h)
        }
    };
    pb.finish_and_clear();
    let diag_pm = (0..n)
        .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
        .collect();
    let dense = rmt::goe(n, &mut rmt::rng(DENSE_RAND_SEED)) * faer::Scale(scale);
    Ok(SectorData {
        group: spec.ensemble.name().to_string(),
        energies,
        eigenvectors: Some(eigenvectors),
        observables: vec![
            Observable {
                name: "diag_pm".into(),
                op: Operator::Real(OpData::Diagonal(diag_pm)),
            },
            Observable {
                name: "dense_rand".into(),
                op: Operator::Real(OpData::Dense(dense)),
            },
        ],
        hamiltonian: Some(hamiltonian),
        states: Vec::new(),
        size: None,
        label: Some(label),
        attributes: vec![("model".into(), spec.ensemble.name().into())],
        typed_attributes: vec![
            ("seed".into(), AttrValue::Int(spec.seed as i64)),
            (
                "dense_rand_seed".into(),
                AttrValue::Int(DENSE_RAND_SEED as i64),
            ),
        ],
        embedding: None,
        basis: None,
        notes: Vec::new(),
        supports: Vec::new(),
    })
}
