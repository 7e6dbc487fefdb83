//! Checks of the spin-chain builder: analytic spectra, an independent dense construction
//! with nalgebra, parity sectors, eigenvector quality, embedding, observables and states.

use eigentherm::data::{Csr, Matrix, OpData, Operator, Vector};
use eigentherm::model::basis::{densify, Parity, SectorBasis};
use eigentherm::model::chain::full_hamiltonian;
use eigentherm::model::{build_chain, Boundary, ChainModel, ChainSpec, Reflection, SectorData};
use nalgebra::DMatrix;

fn spec(model: ChainModel, sites: usize, boundary: Boundary, reflection: Reflection) -> ChainSpec {
    ChainSpec {
        model,
        sites,
        boundary,
        reflection,
        site: None,
        sz: None,
        disorder: None,
    }
}

const MFI: ChainModel = ChainModel::MixedFieldIsing {
    j: 1.0,
    g: 0.9045,
    h: 0.8090,
};

fn real_vectors(s: &SectorData) -> &faer::Mat<f64> {
    match s.eigenvectors.as_ref().unwrap() {
        Matrix::Real(m) => m,
        Matrix::Complex(_) => panic!("chain eigenvectors should be real"),
    }
}

fn csr_of(op: &Operator) -> &Csr<f64> {
    match op {
        Operator::Real(OpData::Csr(c)) => c,
        other => panic!("expected a real CSR operator, got {:?}", other.form()),
    }
}

fn sorted(mut v: Vec<f64>) -> Vec<f64> {
    v.sort_by(f64::total_cmp);
    v
}

fn binomial(n: usize, k: usize) -> usize {
    (0..k).fold(1, |acc, i| acc * (n - i) / (i + 1))
}

#[test]
fn free_spins_have_analytic_levels_with_binomial_multiplicities() {
    // any statistical mechanics text: H = h Σσᶻ has levels h(2k − L), k spins up,
    // each with multiplicity C(L, k)
    let (l, h) = (7usize, 0.37);
    for reflection in [Reflection::Ignore, Reflection::Resolve] {
        let sectors = build_chain(&spec(
            ChainModel::FreeSpins { h },
            l,
            Boundary::Open,
            reflection,
        ))
        .unwrap();
        let all = sorted(sectors.iter().flat_map(|s| s.energies.clone()).collect());
        let mut want = Vec::new();
        for k in 0..=l {
            want.extend(std::iter::repeat_n(
                h * (2.0 * k as f64 - l as f64),
                binomial(l, k),
            ));
        }
        let want = sorted(want);
        assert_eq!(all.len(), want.len());
        for (a, b) in all.iter().zip(&want) {
            assert!((a - b).abs() < 1e-12, "{a} vs {b}");
        }
    }
}

/// Ground-state energy of H = J Σ σᶻᵢσᶻᵢ₊₁ + g Σ σˣᵢ on a periodic chain of even L:
/// E₀ = −Σ_k √(J² + g² − 2Jg cos k), k = π(2m − 1)/L, m = 1..L (even fermion parity,
/// antiperiodic fermion boundary conditions). Pfeuty, Ann. Phys. 57, 79 (1970); the sign of J
/// is immaterial for even L (rotate every other spin by π about x).
fn tfi_ground_state(l: usize, j: f64, g: f64) -> f64 {
    -(1..=l)
        .map(|m| {
            let k = std::f64::consts::PI * (2 * m - 1) as f64 / l as f64;
            (j * j + g * g - 2.0 * j * g * k.cos()).sqrt()
        })
        .sum::<f64>()
}

#[test]
fn transverse_field_ising_ground_state_matches_free_fermions() {
    // Pfeuty, Ann. Phys. 57, 79 (1970): free-fermion ground-state energy, to 1e-10
    for &(l, g) in &[(8usize, 0.9045), (8, 0.5), (6, 1.7), (4, 1.0)] {
        let m = ChainModel::TransverseFieldIsing { j: 1.0, g };
        let sectors = build_chain(&spec(m, l, Boundary::Periodic, Reflection::Resolve)).unwrap();
        let e0 = sectors
            .iter()
            .map(|s| s.energies[0])
            .fold(f64::INFINITY, f64::min);
        let want = tfi_ground_state(l, 1.0, g);
        assert!((e0 - want).abs() < 1e-10, "L={l} g={g}: {e0} vs {want}");
    }
}

fn kron_chain(l: usize, site: usize, op: &DMatrix<f64>) -> DMatrix<f64> {
    // our convention: site i is bit i−1 of the basis index (least significant first), so in
    // a Kronecker product (most significant factor first) site L comes first
    let id = DMatrix::<f64>::identity(2, 2);
    let mut m = DMatrix::<f64>::identity(1, 1);
    for s in (1..=l).rev() {
        m = m.kronecker(if s == site { op } else { &id });
    }
    m
}

fn pauli() -> (DMatrix<f64>, DMatrix<f64>, DMatrix<f64>) {
    // in the order (down = bit 0, up = bit 1): σᶻ = diag(−1, +1); σʸσʸ is real, so we build
    // iσʸ = [[0, 1], [−1, 0]] (in this order) and use σʸ⊗σʸ = −(iσʸ)⊗(iσʸ)
    let z = DMatrix::from_row_slice(2, 2, &[-1.0, 0.0, 0.0, 1.0]);
    let x = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, 1.0, 0.0]);
    let iy = DMatrix::from_row_slice(2, 2, &[0.0, 1.0, -1.0, 0.0]);
    (x, iy, z)
}

#[test]
fn xxz_with_next_nearest_coupling_matches_nalgebra() {
    // reference library: nalgebra 0.33 (Kronecker products + SymmetricEigen), an independent
    // construction and eigensolver
    let (l, j, delta, j2) = (6usize, 1.0, 0.55, 0.42);
    let (x, iy, z) = pauli();
    for boundary in [Boundary::Open, Boundary::Periodic] {
        let mut h = DMatrix::<f64>::zeros(1 << l, 1 << l);
        let mut pairs: Vec<(usize, usize, f64)> = (1..l).map(|i| (i, i + 1, j)).collect();
        pairs.extend((1..l - 1).map(|i| (i, i + 2, j2)));
        if boundary == Boundary::Periodic {
            pairs.push((l, 1, j));
            pairs.push((l - 1, 1, j2));
            pairs.push((l, 2, j2));
        }
        for (a, b, c) in pairs {
            let xx = kron_chain(l, a, &x) * kron_chain(l, b, &x);
            let yy = -(kron_chain(l, a, &iy) * kron_chain(l, b, &iy));
            let zz = kron_chain(l, a, &z) * kron_chain(l, b, &z);
            h += (xx + yy + zz * delta) * c;
        }
        let want = sorted(
            nalgebra::SymmetricEigen::new(h.clone())
                .eigenvalues
                .iter()
                .copied()
                .collect(),
        );
        let m = ChainModel::Xxz { j, delta, j2 };
        // the Hamiltonian itself, entry by entry
        let ours = densify(&full_hamiltonian(&spec(m, l, boundary, Reflection::Ignore)).unwrap());
        for r in 0..1 << l {
            for c in 0..1 << l {
                assert!((ours[(r, c)] - h[(r, c)]).abs() < 1e-13);
            }
        }
        for reflection in [Reflection::Ignore, Reflection::Resolve] {
            let sectors = build_chain(&spec(m, l, boundary, reflection)).unwrap();
            let got = sorted(sectors.iter().flat_map(|s| s.energies.clone()).collect());
            for (a, b) in got.iter().zip(&want) {
                assert!((a - b).abs() < 1e-10, "{a} vs {b}");
            }
        }
    }
}

#[test]
fn mixed_field_ising_matches_nalgebra_with_broken_reflection() {
    // reference library: nalgebra 0.33, H = J Σσᶻσᶻ + g Σσˣ + h Σσᶻ + b σᶻ₁ built by Kronecker products
    let (l, b) = (5usize, 0.25);
    let (x, _, z) = pauli();
    let mut h = DMatrix::<f64>::zeros(1 << l, 1 << l);
    for i in 1..l {
        h += kron_chain(l, i, &z) * kron_chain(l, i + 1, &z);
    }
    for i in 1..=l {
        h += kron_chain(l, i, &x) * 0.9045 + kron_chain(l, i, &z) * 0.8090;
    }
    h += kron_chain(l, 1, &z) * b;
    let want = sorted(
        nalgebra::SymmetricEigen::new(h)
            .eigenvalues
            .iter()
            .copied()
            .collect(),
    );
    let sectors = build_chain(&spec(
        MFI,
        l,
        Boundary::Open,
        Reflection::Break { field: b },
    ))
    .unwrap();
    assert_eq!(sectors.len(), 1);
    for (a, w) in sectors[0].energies.iter().zip(&want) {
        assert!((a - w).abs() < 1e-10);
    }
}

#[test]
fn parity_sectors_split_the_full_spectrum() {
    // linear algebra, no source: R commutes with H, so spec(H) = spec(H_even) ∪ spec(H_odd)
    for boundary in [Boundary::Open, Boundary::Periodic] {
        let l = 8;
        let full = build_chain(&spec(MFI, l, boundary, Reflection::Ignore)).unwrap();
        let parts = build_chain(&spec(MFI, l, boundary, Reflection::Resolve)).unwrap();
        assert_eq!(parts.len(), 2);
        assert_eq!(parts[0].group, "even");
        assert_eq!(parts[1].group, "odd");
        let dims: Vec<usize> = parts.iter().map(|s| s.energies.len()).collect();
        // counting, no source: (2^L ± 2^(L/2))/2
        assert_eq!(dims, vec![136, 120]);
        let union = sorted(parts.iter().flat_map(|s| s.energies.clone()).collect());
        for (a, b) in union.iter().zip(&full[0].energies) {
            assert!((a - b).abs() < 1e-10);
        }
    }
}

#[test]
fn eigenvectors_are_orthonormal_with_small_residuals() {
    // linear algebra, no source: VᵀV = 1 and ‖Hv − Ev‖ ≈ 0 for an exact eigenbasis
    let sectors = build_chain(&spec(MFI, 9, Boundary::Open, Reflection::Resolve)).unwrap();
    for s in &sectors {
        let v = real_vectors(s);
        let h = densify(csr_of(s.hamiltonian.as_ref().unwrap()));
        let vtv = v.transpose() * v;
        let hv = &h * v;
        for a in 0..v.ncols() {
            for b in 0..v.ncols() {
                let want = if a == b { 1.0 } else { 0.0 };
                assert!((vtv[(a, b)] - want).abs() < 1e-10);
            }
            let res: f64 = (0..v.nrows())
                .map(|i| (hv[(i, a)] - s.energies[a] * v[(i, a)]).powi(2))
                .sum::<f64>()
                .sqrt();
            assert!(res < 1e-10, "residual {res}");
        }
    }
}

#[test]
fn embedding_maps_sector_hamiltonian_to_full_one() {
    // linear algebra, no source: PᵀP = 1 and H P = P H_sector (the sector is H-invariant)
    let l = 7;
    let h_full =
        densify(&full_hamiltonian(&spec(MFI, l, Boundary::Periodic, Reflection::Resolve)).unwrap());
    for s in build_chain(&spec(MFI, l, Boundary::Periodic, Reflection::Resolve)).unwrap() {
        let p = densify(s.embedding.as_ref().unwrap());
        let hs = densify(csr_of(s.hamiltonian.as_ref().unwrap()));
        let ptp = p.transpose() * &p;
        let lhs = &h_full * &p;
        let rhs = &p * &hs;
        for i in 0..p.nrows() {
            for a in 0..p.ncols() {
                assert!((lhs[(i, a)] - rhs[(i, a)]).abs() < 1e-12);
            }
        }
        for a in 0..p.ncols() {
            for b in 0..p.ncols() {
                let want = if a == b { 1.0 } else { 0.0 };
                assert!((ptp[(a, b)] - want).abs() < 1e-14);
            }
        }
        let full_dim = s
            .typed_attributes
            .iter()
            .find(|(k, _)| k == "full_dim")
            .map(|(_, v)| v.clone());
        assert_eq!(full_dim, Some(eigentherm::model::AttrValue::Int(1 << l)));
    }
}

#[test]
fn site_observables_are_symmetrised_in_parity_sectors() {
    // linear algebra, no source: RP = ±P, so Pᵀ O_i P = Pᵀ (O_i + O_{L+1−i})/2 P
    let l = 6;
    let site = 2;
    let mut sp = spec(MFI, l, Boundary::Open, Reflection::Resolve);
    sp.site = Some(site);
    let sectors = build_chain(&sp).unwrap();
    let (x, _, z) = pauli();
    for s in &sectors {
        let p = densify(s.embedding.as_ref().unwrap());
        let p = DMatrix::from_fn(p.nrows(), p.ncols(), |i, j| p[(i, j)]);
        let sym_x = (kron_chain(l, site, &x) + kron_chain(l, l + 1 - site, &x)) * 0.5;
        let sym_z = (kron_chain(l, site, &z) + kron_chain(l, l + 1 - site, &z)) * 0.5;
        let want_x = p.transpose() * sym_x * &p;
        let want_z = p.transpose() * sym_z * &p;
        let sx = densify(csr_of(
            &s.observables
                .iter()
                .find(|o| o.name == "sx_site")
                .unwrap()
                .op,
        ));
        let sz = match &s
            .observables
            .iter()
            .find(|o| o.name == "sz_site")
            .unwrap()
            .op
        {
            Operator::Real(OpData::Diagonal(d)) => d.clone(),
            _ => panic!("sz_site should be diagonal"),
        };
        for a in 0..p.ncols() {
            assert!((sz[a] - want_z[(a, a)]).abs() < 1e-14);
            for b in 0..p.ncols() {
                assert!((sx[(a, b)] - want_x[(a, b)]).abs() < 1e-14);
            }
        }
        assert!(s.notes.iter().any(|(k, _)| k == "observables/sx_site"));
    }
}

#[test]
fn bond_energies_sum_to_the_hamiltonian_on_a_periodic_chain() {
    // definition of the local energy, no source: Σ_i h_(i,i+1) = H on a periodic chain;
    // by translation invariance Tr(ρ h_b) is the same for each bond, so for the full-space
    // ground state ⟨h_b⟩ = E₀/L
    let l = 6;
    let sectors = build_chain(&spec(MFI, l, Boundary::Periodic, Reflection::Ignore)).unwrap();
    let s = &sectors[0];
    let v = real_vectors(s);
    let hb = densify(csr_of(
        &s.observables
            .iter()
            .find(|o| o.name == "bond_energy")
            .unwrap()
            .op,
    ));
    let g = v.col(0);
    let e = (g.transpose() * &hb * g) as f64;
    assert!(
        (e - s.energies[0] / l as f64).abs() < 1e-10,
        "{e} vs {}",
        s.energies[0] / l as f64
    );
}

#[test]
fn product_states_split_into_sector_weights_that_sum_to_one() {
    // linear algebra, no source: P_even P_evenᵀ + P_odd P_oddᵀ = 1, so the weights ‖Pᵀψ‖² add to 1
    let sectors = build_chain(&spec(MFI, 8, Boundary::Open, Reflection::Resolve)).unwrap();
    for name in ["all_up_x", "neel_z", "domain_wall_z"] {
        let total: f64 = sectors
            .iter()
            .map(
                |s| match &s.states.iter().find(|(n, _)| n == name).unwrap().1 {
                    Vector::Real(c) => c.iter().map(|x| x * x).sum::<f64>(),
                    Vector::Complex(_) => panic!("real state expected"),
                },
            )
            .sum();
        assert!((total - 1.0).abs() < 1e-14, "{name}: {total}");
    }
    // all_up_x is reflection symmetric: its weight is entirely in the even sector
    // (linear algebra, no source)
    let odd = &sectors[1]
        .states
        .iter()
        .find(|(n, _)| n == "all_up_x")
        .unwrap()
        .1;
    if let Vector::Real(c) = odd {
        assert!(c.iter().all(|x| x.abs() < 1e-15));
    }
}

#[test]
fn bad_specs_give_errors_not_panics() {
    // common practice, no source
    assert!(build_chain(&spec(MFI, 1, Boundary::Open, Reflection::Ignore)).is_err());
    let mut sp = spec(MFI, 6, Boundary::Open, Reflection::Ignore);
    sp.site = Some(6);
    assert!(build_chain(&sp).is_err());
    sp.site = Some(0);
    assert!(build_chain(&sp).is_err());
    let nan = ChainModel::FreeSpins { h: f64::NAN };
    assert!(build_chain(&spec(nan, 4, Boundary::Open, Reflection::Ignore)).is_err());
    let _ = SectorBasis::new(3, Parity::Even).unwrap();
}
