//! Spin-1/2 chain Hamiltonians, standard observables and initial states.
//!
//! All operators are written as sums of Pauli strings on the basis of [`super::basis`]
//! (σᶻ diagonal, σˣ flips one bit, and σˣᵢσˣⱼ + σʸᵢσʸⱼ = 2(σ⁺ᵢσ⁻ⱼ + σ⁻ᵢσ⁺ⱼ) swaps two
//! antiparallel spins with amplitude 2, so every matrix is real). They are assembled in
//! CSR form over the full `2^L` space, projected into each reflection sector with the
//! embedding `P` (`PᵀOP`), densified, and diagonalised with faer.
//!
//! Models (sites `1..=L`, bonds `(i, i+1)` for `i < L`, plus `(L, 1)` when periodic):
//!
//! - mixed-field Ising `H = J Σ σᶻᵢσᶻᵢ₊₁ + g Σ σˣᵢ + h Σ σᶻᵢ`;
//! - transverse-field Ising, the same with `h = 0`;
//! - XXZ `H = J Σ (σˣᵢσˣᵢ₊₁ + σʸᵢσʸᵢ₊₁ + Δ σᶻᵢσᶻᵢ₊₁) + J₂ Σ (σˣᵢσˣᵢ₊₂ + σʸᵢσʸᵢ₊₂ + Δ σᶻᵢσᶻᵢ₊₂)`;
//! - free spins `H = h Σ σᶻᵢ`.
//!
//! [`Reflection::Break`] adds `field · σᶻ₁`. A periodic chain adds the wrap-around bonds
//! only when `L > 2d` for bonds of range `d` (so `L = 2` periodic equals open, and the J₂
//! wrap-around needs `L ≥ 5`), never counting a bond twice.
//!
//! Standard observables (site `i`, default the centre `⌈L/2⌉`):
//! `sz_site` = σᶻᵢ (diagonal), `sx_site` = σˣᵢ (CSR), `bond_energy` = the energy of bond
//! `(i, i+1)`: its nearest-neighbour coupling plus half of the one-site field terms of both
//! sites (CSR; Σ over bonds gives H on a periodic chain; J₂ terms are not included), and
//! `mz = (1/L) Σ σᶻᵢ` (diagonal). In a parity sector a site operator `Oᵢ` is not
//! reflection symmetric; what is written is `PᵀOᵢP`, which equals the symmetrised
//! `(Oᵢ + O_{L+1−i})/2` restricted to the sector (since `RP = ±P`); the dataset carries
//! an attribute `note` saying so.
//!
//! Initial states (full-space product states ψ, stored as `c = Pᵀψ` without
//! renormalisation; the writer adds the attribute `weight = ‖c‖²`, the probability of the
//! sector): `all_up_x` = every spin along +x (ψ_s = 2^(−L/2) for all s); `neel_z` =
//! ↑↓↑↓… (site 1 up); `domain_wall_z` = sites `1..=⌊L/2⌋` up, the others down.

use super::basis::{densify, Parity, SectorBasis};
use super::{AttrValue, Boundary, ChainModel, ChainSpec, Reflection, SectorData};
use crate::data::{Csr, Matrix, Observable, OpData, Operator, Vector};
use crate::error::{Error, Result};

/// One Pauli-string term of an operator (sites 0-based here).
#[derive(Debug, Clone, Copy)]
enum Term {
    /// `c σᶻᵢ`.
    Z(usize, f64),
    /// `c σˣᵢ`.
    X(usize, f64),
    /// `c σᶻᵢσᶻⱼ`.
    Zz(usize, usize, f64),
    /// `c (σˣᵢσˣⱼ + σʸᵢσʸⱼ)`.
    Hop(usize, usize, f64),
}

/// Assembles `Σ terms` over the full `2^L` space as CSR (duplicates merged, zeros dropped).
fn assemble(sites: usize, terms: &[Term]) -> Csr<f64> {
    let n = 1usize << sites;
    let mut indptr = Vec::with_capacity(n + 1);
    let mut indices = Vec::new();
    let mut data = Vec::new();
    indptr.push(0);
    let mut row: Vec<(usize, f64)> = Vec::new();
    for s in 0..n {
        row.clear();
        let z = |i: usize| if s >> i & 1 == 1 { 1.0 } else { -1.0 };
        let mut diag = 0.0;
        for t in terms {
            match *t {
                Term::Z(i, c) => diag += c * z(i),
                Term::Zz(i, j, c) => diag += c * z(i) * z(j),
                Term::X(i, c) => row.push((s ^ (1 << i), c)),
                Term::Hop(i, j, c) => {
                    if z(i) != z(j) {
                        row.push((s ^ (1 << i) ^ (1 << j), 2.0 * c));
                    }
                }
            }
        }
        row.push((s, diag));
        row.sort_unstable_by_key(|e| e.0);
        let mut k = 0;
        while k < row.len() {
            let col = row[k].0;
            let mut v = 0.0;
            while k < row.len() && row[k].0 == col {
                v += row[k].1;
                k += 1;
            }
            if v != 0.0 {
                indices.push(col);
                data.push(v);
            }
        }
        indptr.push(indices.len());
    }
    Csr {
        nrows: n,
        ncols: n,
        indptr,
        indices,
        data,
    }
}

/// Diagonal of a sum of `Z`/`Zz` terms (other terms are ignored).
fn diagonal(sites: usize, terms: &[Term]) -> Vec<f64> {
    let z = |s: usize, i: usize| if s >> i & 1 == 1 { 1.0 } else { -1.0 };
    (0..1usize << sites)
        .map(|s| {
            terms
                .iter()
                .map(|t| match *t {
                    Term::Z(i, c) => c * z(s, i),
                    Term::Zz(i, j, c) => c * z(s, i) * z(s, j),
                    _ => 0.0,
                })
                .sum()
        })
        .collect()
}

/// Nearest-neighbour (distance `d`) bonds `(i, i+d)` as 0-based pairs.
fn bonds(sites: usize, boundary: Boundary, d: usize) -> Vec<(usize, usize)> {
    let mut b: Vec<(usize, usize)> = (0..sites.saturating_sub(d)).map(|i| (i, i + d)).collect();
    if boundary == Boundary::Periodic && sites > d {
        // a periodic chain of L ≤ 2d would double-count its bonds; require L > 2d
        if sites > 2 * d {
            b.extend((sites - d..sites).map(|i| (i, (i + d) % sites)));
        }
    }
    b
}

/// Coupling (two-site) terms of the model on the bond `(i, j)`.
fn bond_terms(model: &ChainModel, i: usize, j: usize, out: &mut Vec<Term>) {
    match *model {
        ChainModel::MixedFieldIsing { j: jj, .. }
        | ChainModel::TransverseFieldIsing { j: jj, .. } => out.push(Term::Zz(i, j, jj)),
        ChainModel::Xxz { j: jj, delta, .. } => {
            out.push(Term::Hop(i, j, jj));
            out.push(Term::Zz(i, j, jj * delta));
        }
        ChainModel::FreeSpins { .. } => {}
    }
}

/// One-site terms of the model on site `i`, scaled by `w`.
fn site_terms(model: &ChainModel, i: usize, w: f64, out: &mut Vec<Term>) {
    match *model {
        ChainModel::MixedFieldIsing { g, h, .. } => {
            out.push(Term::X(i, w * g));
            out.push(Term::Z(i, w * h));
        }
        ChainModel::TransverseFieldIsing { g, .. } => out.push(Term::X(i, w * g)),
        ChainModel::Xxz { .. } => {}
        ChainModel::FreeSpins { h } => out.push(Term::Z(i, w * h)),
    }
}

/// All terms of the Hamiltonian of `spec`.
fn hamiltonian_terms(spec: &ChainSpec) -> Vec<Term> {
    let l = spec.sites;
    let mut t = Vec::new();
    for (i, j) in bonds(l, spec.boundary, 1) {
        bond_terms(&spec.model, i, j, &mut t);
    }
    if let ChainModel::Xxz { delta, j2, .. } = spec.model {
        if j2 != 0.0 {
            for (i, j) in bonds(l, spec.boundary, 2) {
                t.push(Term::Hop(i, j, j2));
                t.push(Term::Zz(i, j, j2 * delta));
            }
        }
    }
    for i in 0..l {
        site_terms(&spec.model, i, 1.0, &mut t);
    }
    if let Reflection::Break { field } = spec.reflection {
        if field != 0.0 {
            t.push(Term::Z(0, field));
        }
    }
    t
}

/// The full-space Hamiltonian of `spec` in CSR form (computational basis of [`super::basis`]).
pub fn full_hamiltonian(spec: &ChainSpec) -> Result<Csr<f64>> {
    check_spec(spec)?;
    Ok(assemble(spec.sites, &hamiltonian_terms(spec)))
}

/// Short name used in labels: `MFI`, `TFI`, `XXZ`, `FREE`.
pub fn short_name(model: &ChainModel) -> &'static str {
    match model {
        ChainModel::MixedFieldIsing { .. } => "MFI",
        ChainModel::TransverseFieldIsing { .. } => "TFI",
        ChainModel::Xxz { .. } => "XXZ",
        ChainModel::FreeSpins { .. } => "FREE",
    }
}

/// Model name written in the attribute `model` (the `--model` spelling).
pub fn model_name(model: &ChainModel) -> &'static str {
    match model {
        ChainModel::MixedFieldIsing { .. } => "mixed-field-ising",
        ChainModel::TransverseFieldIsing { .. } => "transverse-field-ising",
        ChainModel::Xxz { .. } => "xxz",
        ChainModel::FreeSpins { .. } => "free-spins",
    }
}

fn parameters(model: &ChainModel) -> Vec<(&'static str, f64)> {
    match *model {
        ChainModel::MixedFieldIsing { j, g, h } => vec![("j", j), ("g", g), ("h", h)],
        ChainModel::TransverseFieldIsing { j, g } => vec![("j", j), ("g", g)],
        ChainModel::Xxz { j, delta, j2 } => vec![("j", j), ("delta", delta), ("j2", j2)],
        ChainModel::FreeSpins { h } => vec![("h", h)],
    }
}

fn check_spec(spec: &ChainSpec) -> Result<()> {
    let l = spec.sites;
    if !(2..=super::basis::MAX_SITES).contains(&l) {
        return Err(Error::usage(format!(
            "number of sites must be between 2 and {}, got {l}",
            super::basis::MAX_SITES
        )));
    }
    for (name, v) in parameters(&spec.model) {
        if !v.is_finite() {
            return Err(Error::usage(format!(
                "coupling {name} must be finite, got {v}"
            )));
        }
    }
    if let Reflection::Break { field } = spec.reflection {
        if !field.is_finite() {
            return Err(Error::usage(format!(
                "break field must be finite, got {field}"
            )));
        }
    }
    if let Some(site) = spec.site {
        if site == 0 || site > l {
            return Err(Error::usage(format!(
                "site must be between 1 and {l}, got {site}"
            )));
        }
        if site == l && spec.boundary == Boundary::Open {
            return Err(Error::usage(format!(
                "site {site} is the last site of an open chain: bond ({site}, {}) does not exist",
                site + 1
            )));
        }
    }
    Ok(())
}

/// The site of the local observables (1-based): `spec.site` or the centre `⌈L/2⌉`.
pub fn observable_site(spec: &ChainSpec) -> usize {
    spec.site.unwrap_or(spec.sites.div_ceil(2))
}

/// Full-space product states: (name, ψ) with ψ real and normalised.
pub fn product_states(sites: usize) -> Vec<(&'static str, Vec<f64>)> {
    let n = 1usize << sites;
    let amp = (n as f64).sqrt().recip();
    let mut neel = vec![0.0; n];
    // site 1 (bit 0) up, site 2 down, ...: bits 0, 2, 4, ... set
    let neel_index = (0..sites).filter(|k| k % 2 == 0).fold(0, |a, k| a | 1 << k);
    neel[neel_index] = 1.0;
    let mut wall = vec![0.0; n];
    wall[(1usize << (sites / 2)) - 1] = 1.0;
    vec![
        ("all_up_x", vec![amp; n]),
        ("neel_z", neel),
        ("domain_wall_z", wall),
    ]
}

/// Builds the chain's Hamiltonian in each sector, diagonalises it, and returns the
/// sectors with energies, eigenvectors, Hamiltonian, embedding, the standard observables
/// and the initial states (see the module documentation).
///
/// Sector groups: `even` and `odd` for [`Reflection::Resolve`], `full` otherwise.
pub fn build_chain(spec: &ChainSpec) -> Result<Vec<SectorData>> {
    Ok(build_chain_timed(spec)?
        .into_iter()
        .map(|(s, _)| s)
        .collect())
}

/// The support of the site observables in words, the same for every chain length whose
/// operator is the same: `centre site`, `two centre sites (average)` (an even chain's
/// reflection sectors), or the site numbers otherwise.
fn observable_support(spec: &ChainSpec, symmetrised: bool) -> String {
    let site = observable_site(spec);
    let mirror = spec.sites + 1 - site;
    match (
        symmetrised && mirror != site,
        site == spec.sites.div_ceil(2),
    ) {
        (false, true) => "centre site".to_string(),
        (true, true) => "two centre sites (average)".to_string(),
        (false, false) => format!("site {site} of {}", spec.sites),
        (true, false) => format!("sites {site} and {mirror} of {} (average)", spec.sites),
    }
}

/// [`build_chain`], also returning the time spent on each sector (projection and
/// diagonalisation; the shared full-space assembly is counted in the first sector).
pub fn build_chain_timed(spec: &ChainSpec) -> Result<Vec<(SectorData, std::time::Duration)>> {
    let assembly = std::time::Instant::now();
    check_spec(spec)?;
    let l = spec.sites;
    let site = observable_site(spec) - 1; // 0-based
    let h_full = full_hamiltonian(spec)?;

    // observables in the full space
    let sz = diagonal(l, &[Term::Z(site, 1.0)]);
    let sx = assemble(l, &[Term::X(site, 1.0)]);
    let next = (site + 1) % l;
    let mut bt = Vec::new();
    bond_terms(&spec.model, site, next, &mut bt);
    site_terms(&spec.model, site, 0.5, &mut bt);
    site_terms(&spec.model, next, 0.5, &mut bt);
    let bond = assemble(l, &bt);
    let mz_terms: Vec<Term> = (0..l).map(|i| Term::Z(i, 1.0 / l as f64)).collect();
    let mz = diagonal(l, &mz_terms);
    let states = product_states(l);

    let parities: &[Parity] = match spec.reflection {
        Reflection::Resolve => &[Parity::Even, Parity::Odd],
        _ => &[Parity::Full],
    };
    let assembly = assembly.elapsed();
    // The sectors are independent: diagonalise them concurrently (the dense
    // eigensolver is largely sequential, so this is what uses a second core).
    use rayon::prelude::*;
    let build_one = |parity: Parity| -> Result<(SectorData, std::time::Duration)> {
        let clock = std::time::Instant::now();
        let basis = SectorBasis::new(l, parity)?;
        let (group, tag) = match parity {
            Parity::Even => ("even", "even"),
            Parity::Odd => ("odd", "odd"),
            Parity::Full => (
                "full",
                match spec.reflection {
                    Reflection::Break { .. } => "broken",
                    _ => "full",
                },
            ),
        };
        let label = format!("{} L={l} {tag}", short_name(&spec.model));
        let h = basis.project_csr(&h_full);
        let pb = crate::progress::spinner(&format!("diagonalising {label} (dim {})", basis.dim()));
        pb.enable_steady_tick(std::time::Duration::from_millis(200));
        let dense = densify(&h);
        let eig = crate::linalg::eigh_real(dense.as_ref());
        pb.finish_and_clear();
        let (energies, vectors) = eig?;

        let symmetrised = parity != Parity::Full;
        let note = "projection P^T O P of the site operator into the reflection sector, \
                    equal to the symmetrised (O_i + O_{L+1-i})/2 restricted to the sector";
        let mut notes = Vec::new();
        if symmetrised {
            for name in ["sz_site", "sx_site", "bond_energy"] {
                notes.push((format!("observables/{name}"), note.to_string()));
            }
        }
        let support = observable_support(spec, symmetrised);
        let supports: Vec<(String, String)> = ["sz_site", "sx_site"]
            .iter()
            .map(|n| (format!("observables/{n}"), support.clone()))
            .collect();
        let observables = vec![
            Observable {
                name: "sz_site".into(),
                op: Operator::Real(OpData::Diagonal(basis.project_diagonal(&sz))),
            },
            Observable {
                name: "sx_site".into(),
                op: Operator::Real(OpData::Csr(basis.project_csr(&sx))),
            },
            Observable {
                name: "bond_energy".into(),
                op: Operator::Real(OpData::Csr(basis.project_csr(&bond))),
            },
            Observable {
                name: "mz".into(),
                op: Operator::Real(OpData::Diagonal(basis.project_diagonal(&mz))),
            },
        ];
        let sector_states = states
            .iter()
            .map(|(name, psi)| (name.to_string(), Vector::Real(basis.project_state(psi))))
            .collect();

        let mut typed = vec![
            (
                "full_dim".to_string(),
                AttrValue::Int(basis.full_dim as i64),
            ),
            ("site".to_string(), AttrValue::Int((site + 1) as i64)),
        ];
        for (name, v) in parameters(&spec.model) {
            typed.push((name.to_string(), AttrValue::Float(v)));
        }
        if let Reflection::Break { field } = spec.reflection {
            typed.push(("break_field".to_string(), AttrValue::Float(field)));
        }
        let boundary = match spec.boundary {
            Boundary::Open => "open",
            Boundary::Periodic => "periodic",
        };
        let reflection = match spec.reflection {
            Reflection::Ignore => "ignore",
            Reflection::Resolve => "resolve",
            Reflection::Break { .. } => "break",
        };
        let sector = SectorData {
            group: group.to_string(),
            energies,
            eigenvectors: Some(Matrix::Real(vectors)),
            observables,
            hamiltonian: Some(Operator::Real(OpData::Csr(h))),
            states: sector_states,
            size: Some(l),
            label: Some(label),
            attributes: vec![
                ("model".into(), model_name(&spec.model).into()),
                ("boundary".into(), boundary.into()),
                ("reflection".into(), reflection.into()),
                ("parity".into(), tag.into()),
            ],
            typed_attributes: typed,
            embedding: Some(basis.embedding()),
            notes,
            supports,
        };
        Ok((sector, clock.elapsed()))
    };
    let mut out = parities
        .par_iter()
        .map(|&p| build_one(p))
        .collect::<Result<Vec<_>>>()?;
    if let Some(first) = out.first_mut() {
        first.1 += assembly;
    }
    Ok(out)
}
