//! The symmetry class of a sector, decided from data, never from the storage type alone.
//!
//! In order: `--class orthogonal|unitary`; the sector attribute `symmetry_class`; real
//! eigenvectors with real operators (orthogonal); complex eigenvectors that are real up to
//! one phase per vector, with real operators (orthogonal: a valid eigenbasis of a real
//! problem, stored as complex or with each vector multiplied by a phase); a stored real
//! Hamiltonian (orthogonal); otherwise unitary, with a note that names `--class` (momentum
//! sectors `k ≠ 0, π` are complex, yet orthogonal when reflection times time reversal is a
//! symmetry).
//!
//! The phase test reads [`PHASE_SAMPLE`] eigenvectors spread over the spectrum: each vector
//! `v` is multiplied by the conjugate phase of its largest component; it is real up to a
//! phase when every imaginary part is then below [`PHASE_TOL`] × its largest component.

use crate::data::{c64, ClassInfo, ColumnSource, Matrix, OpData, Operator, SymmetryClass};
use crate::error::Result;
use crate::input::{EigenFile, Sector};

/// Eigenvectors read by the phase test.
pub const PHASE_SAMPLE: usize = 8;
/// Relative tolerance of the phase test.
pub const PHASE_TOL: f64 = 1e-8;

/// How the class is chosen.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum ClassChoice {
    /// From the attribute or the data (module docs).
    #[default]
    Auto,
    /// Given: this class.
    Given(SymmetryClass),
}

fn info(c: SymmetryClass, source: impl Into<String>) -> ClassInfo {
    ClassInfo {
        symmetry_class: c,
        class_source: source.into(),
    }
}

/// True when the operator has no imaginary part.
fn real_operator(op: &Operator) -> bool {
    match op {
        Operator::Real(_) => true,
        Operator::Complex(d) => {
            let zero = |v: &[c64]| v.iter().all(|z| z.im == 0.0);
            match d {
                OpData::Diagonal(v) => zero(v),
                OpData::Csr(s) => zero(&s.data),
                OpData::Dense(m) | OpData::EnergyBasis(m) => {
                    (0..m.ncols()).all(|j| (0..m.nrows()).all(|i| m[(i, j)].im == 0.0))
                }
            }
        }
    }
}

/// True when each sampled eigenvector of `src` is real up to one phase.
fn real_up_to_phase(src: &dyn ColumnSource) -> Result<bool> {
    let n = src.n_states();
    let picks: Vec<usize> = (0..PHASE_SAMPLE.min(n))
        .map(|k| k * n / PHASE_SAMPLE.min(n).max(1))
        .collect();
    for j in picks {
        let v = match src.read(j..j + 1)? {
            Matrix::Real(_) => continue,
            Matrix::Complex(m) => m,
        };
        let col: Vec<c64> = (0..v.nrows()).map(|i| v[(i, 0)]).collect();
        let Some(big) = col
            .iter()
            .copied()
            .max_by(|a, b| a.norm().total_cmp(&b.norm()))
        else {
            continue;
        };
        if big.norm() == 0.0 {
            continue;
        }
        let phase = big.conj() / big.norm();
        let worst = col.iter().map(|z| (z * phase).im.abs()).fold(0.0, f64::max);
        if worst > PHASE_TOL * big.norm() {
            return Ok(false);
        }
    }
    Ok(true)
}

/// The class of `sector` of `file` with eigenvectors `src` and operators `ops`.
pub fn sector_class(
    file: &EigenFile,
    sector: &Sector,
    src: Option<&dyn ColumnSource>,
    ops: &[&Operator],
    choice: ClassChoice,
) -> Result<ClassInfo> {
    if let ClassChoice::Given(c) = choice {
        return Ok(info(c, "given with --class"));
    }
    if let Some(a) = &sector.symmetry_class {
        if let Some(c) = SymmetryClass::parse(a) {
            return Ok(info(c, "sector attribute symmetry_class"));
        }
        return Err(crate::Error::dataset(
            file.path(),
            sector.group.clone(),
            format!("attribute symmetry_class = \"{a}\" is neither \"orthogonal\" nor \"unitary\""),
        ));
    }
    let ops_real = ops.iter().all(|o| real_operator(o));
    let vectors_real = sector.field.is_none_or(|f| f == crate::data::Field::Real);
    if vectors_real && ops_real {
        return Ok(info(
            SymmetryClass::Orthogonal,
            "real eigenvectors and real observables",
        ));
    }
    if ops_real {
        if let Some(src) = src.filter(|s| s.dim() > 0) {
            if real_up_to_phase(src)? {
                return Ok(info(
                    SymmetryClass::Orthogonal,
                    format!(
                        "complex eigenvectors real up to one phase per vector ({PHASE_SAMPLE} sampled), real observables"
                    ),
                ));
            }
        }
        if sector
            .hamiltonian
            .as_ref()
            .is_some_and(|h| h.field == crate::data::Field::Real)
        {
            return Ok(info(SymmetryClass::Orthogonal, "real stored Hamiltonian"));
        }
    }
    Ok(info(
        SymmetryClass::Unitary,
        "complex data not reducible to real (give --class orthogonal, or the sector attribute \
         symmetry_class, for an antiunitary symmetry such as reflection times time reversal in \
         a momentum sector k != 0, pi)",
    ))
}
