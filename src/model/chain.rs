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

use super::basis::{densify, SectorBasis, Symmetry};
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

/// The random fields hᵢ of `spec` (site 1 first; empty for a clean chain), uniform in
/// `[−W, W]` from the realization's seed (see [`super::Disorder`]).
pub fn random_fields(spec: &ChainSpec) -> Vec<f64> {
    use rand::Rng;
    match spec.disorder {
        None => Vec::new(),
        Some(d) => {
            let mut rng = super::rmt::rng(d.seed);
            (0..spec.sites)
                .map(|_| d.strength * (2.0 * rng.random::<f64>() - 1.0))
                .collect()
        }
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
    for (i, h) in random_fields(spec).into_iter().enumerate() {
        t.push(Term::Z(i, h));
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
    let conserves_sz = matches!(
        spec.model,
        ChainModel::Xxz { .. } | ChainModel::FreeSpins { .. }
    );
    if spec.sz.is_some() && !conserves_sz {
        return Err(Error::usage(format!(
            "--sz: the {} chain does not conserve the total S^z (XXZ and free spins do)",
            model_name(&spec.model)
        )));
    }
    up_spins(spec)?;
    if let Some(d) = spec.disorder {
        if !matches!(spec.model, ChainModel::Xxz { .. }) {
            return Err(Error::usage(
                "random fields are built for the XXZ chain only",
            ));
        }
        if !(d.strength.is_finite() && d.strength >= 0.0) {
            return Err(Error::usage(format!(
                "disorder strength must be finite and non-negative, got {}",
                d.strength
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

/// The number of up spins n_↑ = L/2 + S^z of the requested U(1) sector, if any.
pub fn up_spins(spec: &ChainSpec) -> Result<Option<usize>> {
    let Some(m) = spec.sz else { return Ok(None) };
    let up = spec.sites as f64 / 2.0 + m;
    if !(up.is_finite() && up >= 0.0 && up <= spec.sites as f64 && up.fract() == 0.0) {
        return Err(Error::usage(format!(
            "--sz {m}: a chain of {} sites has S^z in -{}, -{} + 1, ..., {}",
            spec.sites,
            spec.sites as f64 / 2.0,
            spec.sites as f64 / 2.0,
            spec.sites as f64 / 2.0
        )));
    }
    Ok(Some(up as usize))
}

/// One sector to build: group name, the word used in labels and the `parity` attribute,
/// and the symmetries its basis resolves.
struct SectorPlan {
    group: String,
    tag: String,
    symmetry: Symmetry,
}

/// The sectors of `spec`: reflection sectors `even`/`odd` when the reflection is resolved
/// and not broken by random fields; inside the U(1) block S^z = 0 of a clean XXZ chain
/// also the spin flip (`even_flip_even`, `even_flip_odd`, `odd_flip_even`, `odd_flip_odd`);
/// otherwise one sector `full` (its `parity` attribute `full`, `broken` or `disordered`).
fn sector_plan(spec: &ChainSpec) -> Result<Vec<SectorPlan>> {
    let up = up_spins(spec)?;
    let clean = spec.disorder.is_none();
    let flip = clean
        && matches!(spec.model, ChainModel::Xxz { .. })
        && up.is_some_and(|u| 2 * u == spec.sites);
    let word = |c: i8| if c > 0 { "even" } else { "odd" };
    if spec.reflection != Reflection::Resolve || !clean {
        let tag = match (spec.reflection, clean) {
            (_, false) => "disordered",
            (Reflection::Break { .. }, true) => "broken",
            _ => "full",
        };
        return Ok(vec![SectorPlan {
            group: "full".into(),
            tag: tag.into(),
            symmetry: Symmetry {
                up,
                ..Symmetry::default()
            },
        }]);
    }
    let mut plan = Vec::new();
    for r in [1i8, -1] {
        let flips: &[Option<i8>] = if flip { &[Some(1), Some(-1)] } else { &[None] };
        for &f in flips {
            let name = match f {
                Some(f) => format!("{}_flip_{}", word(r), word(f)),
                None => word(r).to_string(),
            };
            plan.push(SectorPlan {
                group: name.clone(),
                tag: name,
                symmetry: Symmetry {
                    up,
                    reflection: Some(r),
                    flip: f,
                },
            });
        }
    }
    Ok(plan)
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

/// Full-space operators shared by every sector of one chain.
struct FullSpace {
    h: Csr<f64>,
    sz: Vec<f64>,
    szsz: Vec<f64>,
    sx: Csr<f64>,
    bond: Csr<f64>,
    mz: Vec<f64>,
    states: Vec<(&'static str, Vec<f64>)>,
}

impl FullSpace {
    fn new(spec: &ChainSpec) -> Result<FullSpace> {
        let l = spec.sites;
        let site = observable_site(spec) - 1; // 0-based
        let next = (site + 1) % l;
        let fields = random_fields(spec);
        let mut bt = Vec::new();
        bond_terms(&spec.model, site, next, &mut bt);
        site_terms(&spec.model, site, 0.5, &mut bt);
        site_terms(&spec.model, next, 0.5, &mut bt);
        for i in [site, next] {
            if let Some(&h) = fields.get(i) {
                bt.push(Term::Z(i, 0.5 * h));
            }
        }
        let mz_terms: Vec<Term> = (0..l).map(|i| Term::Z(i, 1.0 / l as f64)).collect();
        Ok(FullSpace {
            h: full_hamiltonian(spec)?,
            sz: diagonal(l, &[Term::Z(site, 1.0)]),
            szsz: diagonal(l, &[Term::Zz(site, next, 1.0)]),
            sx: assemble(l, &[Term::X(site, 1.0)]),
            bond: assemble(l, &bt),
            mz: diagonal(l, &mz_terms),
            states: product_states(l),
        })
    }
}

/// [`build_chain`], also returning the time spent on each sector (projection and
/// diagonalisation; the shared full-space assembly is counted in the first sector).
pub fn build_chain_timed(spec: &ChainSpec) -> Result<Vec<(SectorData, std::time::Duration)>> {
    let assembly = std::time::Instant::now();
    check_spec(spec)?;
    let full = FullSpace::new(spec)?;
    let plan = sector_plan(spec)?;
    let assembly = assembly.elapsed();
    // The sectors are independent: diagonalise them concurrently (the dense
    // eigensolver is largely sequential, so this is what uses a second core).
    use rayon::prelude::*;
    let mut out = plan
        .par_iter()
        .map(|p| build_sector(spec, &full, p))
        .collect::<Result<Vec<_>>>()?;
    if let Some(first) = out.first_mut() {
        first.1 += assembly;
    }
    Ok(out)
}

/// The sectors of `n` realizations of `spec` (seeds `seed + k`): one realization keeps its
/// group names, several are put under groups `r000`, `r001`, ...
pub fn build_realizations(
    spec: &ChainSpec,
    n: usize,
) -> Result<Vec<(SectorData, std::time::Duration)>> {
    let Some(d) = spec.disorder.filter(|_| n > 1) else {
        return build_chain_timed(spec);
    };
    let mut out = Vec::new();
    for k in 0..n {
        let one = ChainSpec {
            disorder: Some(super::Disorder {
                seed: d.seed.wrapping_add(k as u64),
                realization: k,
                ..d
            }),
            ..spec.clone()
        };
        let built = build_chain_timed(&one)?;
        let single = built.len() == 1;
        for (mut s, t) in built {
            s.group = if single {
                format!("r{k:03}")
            } else {
                format!("r{k:03}/{}", s.group)
            };
            out.push((s, t));
        }
    }
    Ok(out)
}

/// The standard observables of one sector (module documentation): σˣ and the
/// magnetisation are left out of U(1) sectors (zero and constant there), σᶻ of sectors
/// with the spin flip resolved (identically zero); `szsz_bond` = σᶻᵢσᶻᵢ₊₁ is added in
/// U(1) sectors.
fn sector_observables(full: &FullSpace, basis: &SectorBasis) -> Vec<Observable> {
    let sym = basis.symmetry;
    let diag = |name: &str, d: &[f64]| Observable {
        name: name.into(),
        op: Operator::Real(OpData::Diagonal(basis.project_diagonal(d))),
    };
    let csr = |name: &str, o: &Csr<f64>| Observable {
        name: name.into(),
        op: Operator::Real(OpData::Csr(basis.project_csr(o))),
    };
    let mut obs = Vec::new();
    if sym.flip.is_none() {
        obs.push(diag("sz_site", &full.sz));
    }
    if sym.up.is_none() {
        obs.push(csr("sx_site", &full.sx));
    }
    obs.push(csr("bond_energy", &full.bond));
    if sym.up.is_none() {
        obs.push(diag("mz", &full.mz));
    } else {
        obs.push(diag("szsz_bond", &full.szsz));
    }
    obs
}

/// Typed attributes of a sector: dimensions, site, couplings, break field, S^z, disorder.
fn sector_attributes(spec: &ChainSpec, basis: &SectorBasis) -> Vec<(String, AttrValue)> {
    let mut typed = vec![
        (
            "full_dim".to_string(),
            AttrValue::Int(basis.full_dim as i64),
        ),
        (
            "site".to_string(),
            AttrValue::Int(observable_site(spec) as i64),
        ),
    ];
    for (name, v) in parameters(&spec.model) {
        typed.push((name.to_string(), AttrValue::Float(v)));
    }
    if let Reflection::Break { field } = spec.reflection {
        typed.push(("break_field".to_string(), AttrValue::Float(field)));
    }
    if let Some(m) = spec.sz {
        typed.push(("sz".to_string(), AttrValue::Float(m)));
    }
    if let Some(d) = spec.disorder {
        typed.push(("disorder".to_string(), AttrValue::Float(d.strength)));
        typed.push((
            "realization".to_string(),
            AttrValue::Int(d.realization as i64),
        ));
        typed.push(("seed".to_string(), AttrValue::Int(d.seed as i64)));
    }
    typed
}

/// Projects, diagonalises and describes one sector of the plan.
fn build_sector(
    spec: &ChainSpec,
    full: &FullSpace,
    plan: &SectorPlan,
) -> Result<(SectorData, std::time::Duration)> {
    let clock = std::time::Instant::now();
    let l = spec.sites;
    let basis = SectorBasis::symmetric(l, plan.symmetry)?;
    let mut label = format!("{} L={l}", short_name(&spec.model));
    if let Some(m) = spec.sz {
        label.push_str(&format!(" Sz={m}"));
    }
    if let Some(d) = spec.disorder {
        label.push_str(&format!(" W={}", d.strength));
    } else {
        label.push_str(&format!(" {}", plan.tag));
    }
    let h = basis.project_csr(&full.h);
    let pb = crate::progress::spinner(&format!("diagonalising {label} (dim {})", basis.dim()));
    let dense = densify(&h);
    let eig = crate::linalg::eigh_real(dense.as_ref());
    pb.finish_and_clear();
    let (energies, vectors) = eig?;

    let symmetrised = plan.symmetry.reflection.is_some();
    let note = "projection P^T O P of the site operator into the reflection sector, \
                equal to the symmetrised (O_i + O_{L+1-i})/2 restricted to the sector";
    let observables = sector_observables(full, &basis);
    let mut notes = Vec::new();
    if symmetrised {
        for o in &observables {
            if ["sz_site", "sx_site", "bond_energy", "szsz_bond"].contains(&o.name.as_str()) {
                notes.push((format!("observables/{}", o.name), note.to_string()));
            }
        }
    }
    let support = observable_support(spec, symmetrised);
    let supports: Vec<(String, String)> = observables
        .iter()
        .filter(|o| ["sz_site", "sx_site"].contains(&o.name.as_str()))
        .map(|o| (format!("observables/{}", o.name), support.clone()))
        .collect();
    let states = full
        .states
        .iter()
        .map(|(name, psi)| (name.to_string(), Vector::Real(basis.project_state(psi))))
        .collect();
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
        group: plan.group.clone(),
        energies,
        eigenvectors: Some(Matrix::Real(vectors)),
        observables,
        hamiltonian: Some(Operator::Real(OpData::Csr(h))),
        states,
        size: Some(l),
        label: Some(label),
        attributes: vec![
            ("model".into(), model_name(&spec.model).into()),
            ("boundary".into(), boundary.into()),
            ("reflection".into(), reflection.into()),
            ("parity".into(), plan.tag.clone()),
        ],
        typed_attributes: sector_attributes(spec, &basis),
        embedding: Some(basis.embedding()),
        basis: basis.configurations(),
        notes,
        supports,
    };
    Ok((sector, clock.elapsed()))
}
