//! Projector checks: exact identities, the four operator forms, an independent
//! implementation (nalgebra 0.33), and streaming in many blocks versus one.

use eigentherm::data::{c64, ColumnSource, Csr, Matrix, OpData, Operator};
use eigentherm::linalg::{eigh_complex, eigh_real};
use eigentherm::model::rmt;
use eigentherm::project::{for_each_block, project_diagonal, project_window, Budget, NoVectors};
use faer::Mat;
use nalgebra::DMatrix;
use rand::Rng;

const BIG: usize = 1 << 30;

fn one_block() -> Budget {
    Budget::new(BIG)
}

fn real_basis(n: usize, seed: u64) -> Mat<f64> {
    let mut r = rmt::rng(seed);
    eigh_real(rmt::goe(n, &mut r).as_ref()).unwrap().1
}

fn complex_basis(n: usize, seed: u64) -> Mat<c64> {
    let mut r = rmt::rng(seed);
    eigh_complex(rmt::gue(n, &mut r).as_ref()).unwrap().1
}

/// A random sparse Hermitian operator (about `density` of the entries non-zero), dense storage.
fn sparse_hermitian_c(n: usize, density: f64, seed: u64) -> Mat<c64> {
    let mut r = rmt::rng(seed);
    let mut a = Mat::<c64>::zeros(n, n);
    for i in 0..n {
        for j in i..n {
            if r.random::<f64>() < density {
                let x = c64::new(r.random::<f64>() - 0.5, r.random::<f64>() - 0.5);
                if i == j {
                    a[(i, i)] = c64::new(x.re, 0.0);
                } else {
                    a[(i, j)] = x;
                    a[(j, i)] = x.conj();
                }
            }
        }
    }
    a
}

fn sparse_symmetric(n: usize, density: f64, seed: u64) -> Mat<f64> {
    let c = sparse_hermitian_c(n, density, seed);
    Mat::from_fn(n, n, |i, j| c[(i, j)].re)
}

fn to_csr<T: Copy + PartialEq + Default>(a: &Mat<T>) -> Csr<T> {
    let mut indptr = vec![0];
    let (mut indices, mut data) = (Vec::new(), Vec::new());
    for i in 0..a.nrows() {
        for j in 0..a.ncols() {
            if a[(i, j)] != T::default() {
                indices.push(j);
                data.push(a[(i, j)]);
            }
        }
        indptr.push(indices.len());
    }
    Csr {
        nrows: a.nrows(),
        ncols: a.ncols(),
        indptr,
        indices,
        data,
    }
}

fn na_c(m: &Mat<c64>) -> DMatrix<c64> {
    DMatrix::from_fn(m.nrows(), m.ncols(), |i, j| m[(i, j)])
}

fn max_diff(a: &Matrix, b: &DMatrix<c64>) -> f64 {
    assert_eq!((a.nrows(), a.ncols()), b.shape());
    let mut d: f64 = 0.0;
    for i in 0..a.nrows() {
        for j in 0..a.ncols() {
            d = d.max((a.get_c(i, j) - b[(i, j)]).norm());
        }
    }
    d
}

fn max_diff_m(a: &Matrix, b: &Matrix) -> f64 {
    let na = DMatrix::from_fn(b.nrows(), b.ncols(), |i, j| b.get_c(i, j));
    max_diff(a, &na)
}

#[test]
fn four_forms_agree_real_and_match_nalgebra() {
    // Independent implementation: nalgebra 0.33, Vᵀ A V. Forms must agree to 1e-12
    // (exact linear algebra, common practice, no source).
    let n = 40;
    let v = real_basis(n, 1);
    let d: Vec<f64> = (0..n).map(|i| ((i * 7) % 5) as f64 - 2.0).collect();
    let dense = Mat::from_fn(n, n, |i, j| if i == j { d[i] } else { 0.0 });
    let vn = DMatrix::from_fn(n, n, |i, j| c64::new(v[(i, j)], 0.0));
    let an = DMatrix::from_fn(n, n, |i, j| c64::new(dense[(i, j)], 0.0));
    let reference = vn.adjoint() * &an * &vn;
    let energy = Mat::from_fn(n, n, |i, j| reference[(i, j)].re);
    let forms = [
        Operator::Real(OpData::Diagonal(d.clone())),
        Operator::Real(OpData::Dense(dense.clone())),
        Operator::Real(OpData::Csr(to_csr(&dense))),
        Operator::Real(OpData::EnergyBasis(energy)),
    ];
    let src = Matrix::Real(v);
    let range = 5..33;
    let refw = reference.view((5, 5), (28, 28)).into_owned();
    let ops: Vec<&Operator> = forms.iter().collect();
    let got = project_window(&src, &ops, range.clone(), &one_block()).unwrap();
    for (k, g) in got.iter().enumerate() {
        assert!(matches!(g, Matrix::Real(_)), "real in, real out");
        let e = max_diff(g, &refw);
        assert!(e < 1e-12, "form {k}: max deviation {e:e}");
    }
    // diagonal-only path
    let diag = project_diagonal(&src, &ops, range.clone(), &one_block()).unwrap();
    for dk in &diag {
        for (i, x) in dk.iter().enumerate() {
            assert!((x - refw[(i, i)].re).abs() < 1e-12);
        }
    }
}

#[test]
fn dense_csr_energy_forms_agree_complex_and_match_nalgebra() {
    // nalgebra 0.33 reference Vᴴ A V for a complex Hermitian sparse operator and a GUE
    // eigenbasis (exact linear algebra, common practice, no source).
    let n = 36;
    let v = complex_basis(n, 2);
    let a = sparse_hermitian_c(n, 0.15, 3);
    let vn = na_c(&v);
    let reference = vn.adjoint() * na_c(&a) * &vn;
    let energy = Mat::from_fn(n, n, |i, j| reference[(i, j)]);
    let forms = [
        Operator::Complex(OpData::Dense(a.clone())),
        Operator::Complex(OpData::Csr(to_csr(&a))),
        Operator::Complex(OpData::EnergyBasis(energy)),
    ];
    let src = Matrix::Complex(v);
    let ops: Vec<&Operator> = forms.iter().collect();
    let got = project_window(&src, &ops, 0..n, &one_block()).unwrap();
    for (k, g) in got.iter().enumerate() {
        let e = max_diff(g, &reference);
        assert!(e < 1e-12, "form {k}: max deviation {e:e}");
    }
    // a real diagonal operator with complex eigenvectors is promoted
    let d: Vec<f64> = (0..n)
        .map(|i| if i % 3 == 0 { 1.0 } else { -1.0 })
        .collect();
    let dn = DMatrix::from_fn(n, n, |i, j| c64::new(if i == j { d[i] } else { 0.0 }, 0.0));
    let rd = vn.adjoint() * dn * &vn;
    let op = Operator::Real(OpData::Diagonal(d));
    let g = project_window(&src, &[&op], 0..n, &one_block()).unwrap();
    assert!(matches!(g[0], Matrix::Complex(_)));
    assert!(max_diff(&g[0], &rd) < 1e-12);
}

#[test]
fn exact_identities_full_basis() {
    // Σₘ |Aₙₘ|² = (A²)ₙₙ (= 1 for a Pauli-like operator with A² = 1) and Σₙ Aₙₙ = Tr A
    // for a complete eigenbasis (linear algebra, REFERENCE-VALUES.md "Exact identities").
    let n = 32; // 5 spins
    let v = real_basis(n, 4);
    // σᶻ on spin 2: diagonal ±1
    let sz: Vec<f64> = (0..n)
        .map(|i| if (i >> 2) & 1 == 1 { -1.0 } else { 1.0 })
        .collect();
    // σˣ on spin 0: permutation i ↔ i^1, as CSR
    let sx = Csr {
        nrows: n,
        ncols: n,
        indptr: (0..=n).collect(),
        indices: (0..n).map(|i| i ^ 1).collect(),
        data: vec![1.0; n],
    };
    let a = sparse_symmetric(n, 0.3, 5);
    let a2 = &a * &a;
    let ops = [
        Operator::Real(OpData::Diagonal(sz.clone())),
        Operator::Real(OpData::Csr(sx)),
        Operator::Real(OpData::Dense(a.clone())),
    ];
    let refs: Vec<&Operator> = ops.iter().collect();
    let src = Matrix::Real(v);
    let m = project_window(&src, &refs, 0..n, &one_block()).unwrap();
    for (k, mk) in m.iter().enumerate() {
        let mut trace = 0.0;
        for i in 0..n {
            let row: f64 = (0..n).map(|j| mk.get_c(i, j).norm_sqr()).sum();
            if k < 2 {
                // Pauli operators: A² = 1
                assert!((row - 1.0).abs() < 1e-12, "op {k} row {i}: {row}");
            }
            trace += mk.get_c(i, i).re;
        }
        let tr_a: f64 = match k {
            0 => sz.iter().sum(),
            1 => 0.0,
            _ => (0..n).map(|i| a[(i, i)]).sum(),
        };
        assert!(
            (trace - tr_a).abs() < 1e-11,
            "op {k}: Σ Aₙₙ = {trace}, Tr A = {tr_a}"
        );
    }
    // (A²)ₙₙ in the eigenbasis: project A² directly and compare with Σₘ |Aₙₘ|²
    let a2op = Operator::Real(OpData::Dense(a2));
    let d2 = project_diagonal(&src, &[&a2op], 0..n, &one_block()).unwrap();
    for (i, x) in d2[0].iter().enumerate() {
        let row: f64 = (0..n).map(|j| m[2].get_c(i, j).norm_sqr()).sum();
        assert!((row - x).abs() < 1e-12, "row {i}: {row} vs {x}");
    }
}

#[test]
fn streaming_many_blocks_equals_one_block() {
    // Block decomposition is exact (A_IJ = V_Iᴴ A V_J; common practice, no source).
    let n = 48;
    let v = complex_basis(n, 6);
    let a = sparse_hermitian_c(n, 0.2, 7);
    let ops = [
        Operator::Complex(OpData::Csr(to_csr(&a))),
        Operator::Complex(OpData::Dense(a.clone())),
        Operator::Real(OpData::Diagonal((0..n).map(|i| i as f64).collect())),
    ];
    let refs: Vec<&Operator> = ops.iter().collect();
    let src = Matrix::Complex(v);
    let range = 3..45;
    let whole = project_window(&src, &refs, range.clone(), &one_block()).unwrap();
    // a budget that forces blocks of a few columns: (4+3)·48·b·16 + 3·b²·16 ≤ 20000 → b = 3
    let tight = Budget {
        block: None,
        ..Budget::new(20_000)
    };
    assert_eq!(
        eigentherm::project::block_size(range.len(), 3, n, 16, &tight),
        3
    );
    let mut count = 0;
    let mut seen = vec![vec![0u8; range.len()]; range.len()];
    for_each_block(&src, &refs, range.clone(), &tight, |blk| {
        count += 1;
        assert!(blk.rows.start <= blk.cols.start);
        for i in blk.rows.clone() {
            for j in blk.cols.clone() {
                seen[i - range.start][j - range.start] += 1;
            }
        }
        Ok(())
    })
    .unwrap();
    assert_eq!(count, 14 * 15 / 2, "42 states in blocks of 3: 14 blocks");
    for (i, row) in seen.iter().enumerate() {
        for (j, &c) in row.iter().enumerate().skip(i) {
            assert_eq!(c, 1, "pair ({i},{j}) delivered once");
        }
    }
    let budget_streamed = Budget {
        block: Some(5),
        ..Budget::new(usize::MAX)
    };
    let many = project_window(&src, &refs, range.clone(), &budget_streamed).unwrap();
    for (w, m) in whole.iter().zip(&many) {
        assert!(max_diff_m(w, m) < 1e-13);
    }
    let d1 = project_diagonal(&src, &refs, range.clone(), &one_block()).unwrap();
    let d2 = project_diagonal(&src, &refs, range.clone(), &tight).unwrap();
    for (x, y) in d1.iter().zip(&d2) {
        for (a, b) in x.iter().zip(y) {
            assert!((a - b).abs() < 1e-13);
        }
    }
}

#[test]
fn partial_basis_and_energy_basis_without_vectors() {
    // n < dim (shift-invert style partial basis): the projection only needs the window's
    // columns (linear algebra; common practice, no source).
    let dim = 30;
    let full = real_basis(dim, 8);
    let part = Matrix::Real(full.subcols(10, 12).to_owned());
    assert_eq!(part.n_states(), 12);
    let a = sparse_symmetric(dim, 0.25, 9);
    let op = Operator::Real(OpData::Dense(a));
    let all = project_window(&Matrix::Real(full), &[&op], 10..22, &one_block()).unwrap();
    let sub = project_window(&part, &[&op], 0..12, &one_block()).unwrap();
    assert!(max_diff_m(&all[0], &sub[0]) < 1e-13);
    // energy-basis operator with no eigenvectors at all
    let e = Mat::from_fn(5, 5, |i, j| (i + j) as f64);
    let eop = Operator::Real(OpData::EnergyBasis(e));
    let got = project_window(&NoVectors { n: 5 }, &[&eop], 1..4, &one_block()).unwrap();
    assert_eq!(got[0].get_c(0, 2).re, 4.0); // entry (1, 3) = 1 + 3
    assert!(project_window(&NoVectors { n: 5 }, &[&op], 0..2, &one_block()).is_err());
}

#[test]
fn window_too_large_for_budget_is_an_error() {
    // bad input → error, not a panic (common practice, no source)
    let v = Matrix::Real(real_basis(20, 10));
    let op = Operator::Real(OpData::Diagonal(vec![1.0; 20]));
    let e = project_window(&v, &[&op], 0..20, &Budget::new(100)).unwrap_err();
    assert!(e.to_string().contains("memory budget"), "{e}");
}

#[test]
fn sparse_products_agree_with_dense_for_every_group_remainder() {
    // The CSR product handles 8 columns at a time; windows of 1, 7, 8, 9 and 17 states
    // leave every remainder. Same operator in CSR and dense form, same numbers to
    // rounding (exact linear algebra, common practice, no source); the diagonal pass
    // (⟨n|A|n⟩ without storing A V) agrees with the window's diagonal.
    let n = 40;
    let v = complex_basis(n, 21);
    let a = sparse_hermitian_c(n, 0.1, 22);
    let dense = Operator::Complex(OpData::Dense(a.clone()));
    let csr = Operator::Complex(OpData::Csr(to_csr(&a)));
    let src = Matrix::Complex(v);
    for w in [1usize, 7, 8, 9, 17] {
        let range = 5..5 + w;
        let got = project_window(&src, &[&csr, &dense], range.clone(), &one_block()).unwrap();
        let diag = project_diagonal(&src, &[&csr, &dense], range.clone(), &one_block()).unwrap();
        for (i, (d_csr, d_dense)) in diag[0].iter().zip(&diag[1]).enumerate() {
            for j in 0..w {
                let d = (got[0].get_c(i, j) - got[1].get_c(i, j)).norm();
                assert!(d < 1e-13, "w = {w}: A[{i}, {j}] differs by {d:e}");
            }
            assert!((d_csr - got[1].get_c(i, i).re).abs() < 1e-13, "w = {w}");
            assert!((d_csr - d_dense).abs() < 1e-13, "w = {w}");
        }
    }
}
