//! The reader against files written by h5py.
//!
//! Reference values: `fixtures/good_expected.json`, computed by numpy 2.4.6 and
//! written together with `fixtures/good.h5` by h5py 3.16.0 (HDF5 2.0.0 bundled) and
//! scipy 1.17.1 in `scripts/make_fixtures.py`. Eigenvectors are compared up to
//! nothing: the script stores the very vectors it reports.

use eigentherm::data::{c64, ColumnSource, Field, Matrix, OpData, Operator, OperatorForm};
use eigentherm::input::{validate, EigenFile, Layout, Overrides};
use serde_json::Value;
use std::path::{Path, PathBuf};

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures")
        .join(name)
}

fn expected() -> Value {
    let s = std::fs::read_to_string(fixture("good_expected.json")).unwrap();
    serde_json::from_str(&s).unwrap()
}

fn open() -> EigenFile {
    EigenFile::open(&fixture("good.h5"), &Overrides::default()).unwrap()
}

fn cval(v: &Value) -> c64 {
    c64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap())
}

fn close(a: c64, b: c64, tol: f64) -> bool {
    (a - b).norm() <= tol * (1.0 + b.norm())
}

/// Sum of all entries of an operator, promoted to complex.
fn op_sum(op: &Operator) -> (c64, usize) {
    fn go<T: Copy>(d: &OpData<T>, c: impl Fn(T) -> c64) -> (c64, usize) {
        match d {
            OpData::Diagonal(v) => (v.iter().map(|&x| c(x)).sum(), v.len()),
            OpData::Dense(m) | OpData::EnergyBasis(m) => {
                let mut s = c64::new(0.0, 0.0);
                for j in 0..m.ncols() {
                    for i in 0..m.nrows() {
                        s += c(m[(i, j)]);
                    }
                }
                (s, m.nrows() * m.ncols())
            }
            OpData::Csr(a) => (a.data.iter().map(|&x| c(x)).sum(), a.data.len()),
        }
    }
    match op {
        Operator::Real(d) => go(d, |x| c64::new(x, 0.0)),
        Operator::Complex(d) => go(d, |x| x),
    }
}

/// Entry (i, j) of an operator (summing CSR duplicates).
fn op_entry(op: &Operator, i: usize, j: usize) -> c64 {
    fn go<T: Copy>(d: &OpData<T>, i: usize, j: usize, c: impl Fn(T) -> c64) -> c64 {
        match d {
            OpData::Diagonal(v) => {
                if i == j {
                    c(v[i])
                } else {
                    c64::new(0.0, 0.0)
                }
            }
            OpData::Dense(m) | OpData::EnergyBasis(m) => c(m[(i, j)]),
            OpData::Csr(a) => (a.indptr[i]..a.indptr[i + 1])
                .filter(|&k| a.indices[k] == j)
                .map(|k| c(a.data[k]))
                .sum(),
        }
    }
    match op {
        Operator::Real(d) => go(d, i, j, |x| c64::new(x, 0.0)),
        Operator::Complex(d) => go(d, i, j, |x| x),
    }
}

#[test]
fn sectors_are_discovered_in_depth_first_sorted_order_with_metadata() {
    let exp = expected();
    let f = open();
    let names: Vec<&str> = f.sectors().iter().map(|s| s.name.as_str()).collect();
    let want: Vec<&str> = exp["sector_order"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    // layout contract in DESIGN.md: depth-first, names sorted
    assert_eq!(names, want);
    for s in f.sectors() {
        let e = &exp["sectors"][s.name.as_str()];
        // values from scripts/make_fixtures.py (numpy 2.4.6 / h5py 3.16.0)
        assert_eq!(s.group, e["group"].as_str().unwrap());
        assert_eq!(s.n_states as u64, e["n"].as_u64().unwrap(), "{}", s.name);
        assert_eq!(s.dim.map(|d| d as u64), e["dim"].as_u64(), "{}", s.name);
        assert_eq!(s.size.map(|d| d as u64), e["size"].as_u64(), "{}", s.name);
        assert_eq!(s.label.as_deref(), e["label"].as_str(), "{}", s.name);
        assert_eq!(s.has_hamiltonian, e["has_hamiltonian"].as_bool().unwrap());
        if s.dim.is_some() {
            let field = match s.field.unwrap() {
                Field::Real => "real",
                Field::Complex => "complex",
            };
            assert_eq!(field, e["field"].as_str().unwrap(), "{}", s.name);
            let layout = match s.layout {
                Layout::Columns => "columns",
                Layout::Rows => "rows",
            };
            assert_eq!(layout, e["layout"].as_str().unwrap(), "{}", s.name);
            let chunk: Option<Vec<u64>> = e["chunk"]
                .as_array()
                .map(|a| a.iter().map(|x| x.as_u64().unwrap()).collect());
            assert_eq!(
                s.chunk
                    .as_ref()
                    .map(|c| c.iter().map(|&x| x as u64).collect::<Vec<_>>()),
                chunk,
                "{}",
                s.name
            );
            let mut obs: Vec<&str> = s.observables.iter().map(|o| o.name.as_str()).collect();
            obs.sort();
            let mut want: Vec<&str> = e["observables"]
                .as_object()
                .unwrap()
                .keys()
                .map(|k| k.as_str())
                .collect();
            want.sort();
            assert_eq!(obs, want, "{}", s.name);
        }
    }
}

#[test]
fn spectra_match_numpy_including_float32_and_unsorted() {
    let exp = expected();
    let f = open();
    for s in f.sectors() {
        let e = &exp["sectors"][s.name.as_str()];
        let spec = f.spectrum(s).unwrap();
        let want: Vec<f64> = e["energies"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect();
        // numpy.linalg.eigh values (float32-rounded for complex/rows); the JSON
        // round trip of serde_json (without float_roundtrip) may differ in the last bit
        assert_eq!(spec.energies.len(), want.len());
        for (a, b) in spec.energies.iter().zip(&want) {
            assert!(
                (a - b).abs() <= 1e-14 * (1.0 + b.abs()),
                "{}: {a} vs {b}",
                s.name
            );
        }
        if let Some(order) = e["order"].as_array() {
            let order: Vec<usize> = order.iter().map(|x| x.as_u64().unwrap() as usize).collect();
            // numpy.argsort of the stored energies
            assert_eq!(spec.order, order);
            assert!(!spec.was_sorted());
        } else {
            assert!(spec.was_sorted(), "{}", s.name);
        }
    }
}

#[test]
fn eigenvector_entries_and_column_sums_match_numpy() {
    let exp = expected();
    let f = open();
    for s in f.sectors().iter().filter(|s| s.dim.is_some()) {
        let e = &exp["sectors"][s.name.as_str()];
        let spec = f.spectrum(s).unwrap();
        let r = f.vectors(s, &spec).unwrap();
        let all = r.read(0..r.n_states()).unwrap();
        assert_eq!(all.nrows(), s.dim.unwrap());
        assert_eq!(all.ncols(), s.n_states);
        // single-precision files hold float32-rounded values; numpy promoted the same way
        let tol = 1e-12;
        for t in e["vec_entries"].as_array().unwrap() {
            let (i, k) = (
                t[0].as_u64().unwrap() as usize,
                t[1].as_u64().unwrap() as usize,
            );
            let want = cval(&t[2]);
            // numpy value of v[i, k] (k in ascending-energy order)
            assert!(
                close(all.get_c(i, k), want, tol),
                "{} [{i},{k}]: {} vs {want}",
                s.name,
                all.get_c(i, k)
            );
        }
        for (k, cs) in e["col_sums"].as_array().unwrap().iter().enumerate() {
            let got: c64 = (0..all.nrows()).map(|i| all.get_c(i, k)).sum();
            // numpy v.sum(axis=0)
            assert!(close(got, cval(cs), 1e-10), "{} column {k}", s.name);
        }
    }
}

#[test]
fn window_reads_equal_the_same_columns_of_a_full_read() {
    // common practice, no source: a hyperslab read must equal slicing a full read
    let f = open();
    for s in f.sectors().iter().filter(|s| s.dim.is_some()) {
        let spec = f.spectrum(s).unwrap();
        let r = f.vectors(s, &spec).unwrap();
        let n = r.n_states();
        let all = r.read(0..n).unwrap();
        for range in [0..1, 1..4, 3..n - 2, n / 2..n, 5..5, 2..n.min(11)] {
            let w = r.read(range.clone()).unwrap();
            let want = all.columns(range.clone());
            assert_eq!(w.ncols(), range.len());
            for j in 0..w.ncols() {
                for i in 0..w.nrows() {
                    assert_eq!(w.get_c(i, j), want.get_c(i, j), "{} {range:?}", s.name);
                }
            }
        }
        // pairs at every position: in the unsorted sector some pairs map to distant
        // file indices (read as separate runs), others to nearby ones (one span)
        for k in 0..n - 1 {
            let w = r.read(k..k + 2).unwrap();
            for j in 0..2 {
                for i in 0..w.nrows() {
                    assert_eq!(w.get_c(i, j), all.get_c(i, k + j), "{} pair {k}", s.name);
                }
            }
        }
        assert!(r.read(0..n + 1).is_err());
    }
}

#[test]
fn unsorted_sector_columns_follow_the_sorting_permutation() {
    // identity of linear algebra: H v_k = E_k v_k for the k-th ascending state;
    // checked through the stored Hamiltonian (numpy.linalg.eigh in the script)
    let f = open();
    let s = f.select(Some("unsorted")).unwrap()[0];
    let spec = f.spectrum(s).unwrap();
    let r = f.vectors(s, &spec).unwrap();
    let h = f.hamiltonian(s).unwrap().unwrap();
    let chk = validate::residuals(&r, &spec, &h, 64, validate::RESIDUAL_TOL).unwrap();
    assert_eq!(chk.sample, 16);
    assert!(chk.max_residual < 1e-12, "{}", chk.max_residual);
    // chunked [16, 4] along the state axis
    assert_eq!(r.chunk_states(), Some(4));
}

#[test]
fn observables_and_states_match_numpy_in_every_form() {
    let exp = expected();
    let f = open();
    for s in f.sectors() {
        let e = &exp["sectors"][s.name.as_str()];
        let Some(obs) = e["observables"].as_object() else {
            continue;
        };
        for (name, o) in obs {
            let op = f.observable(s, name).unwrap();
            let form = match op.form() {
                OperatorForm::Diagonal => "diagonal",
                OperatorForm::Dense => "dense",
                OperatorForm::Csr => "csr",
                OperatorForm::EnergyBasis => "energy_basis",
            };
            assert_eq!(form, o["form"].as_str().unwrap(), "{name}");
            let field = match op.field() {
                Field::Real => "real",
                Field::Complex => "complex",
            };
            assert_eq!(field, o["field"].as_str().unwrap(), "{name}");
            let (sum, count) = op_sum(&op);
            // numpy / scipy.sparse .sum()
            assert!(close(sum, cval(&o["sum"]), 1e-10), "{name}: {sum}");
            if let Some(nnz) = o["nnz"].as_u64() {
                // scipy.sparse nnz
                assert_eq!(count as u64, nnz);
            }
            let t = &o["entry"];
            let (i, j) = (
                t[0].as_u64().unwrap() as usize,
                t[1].as_u64().unwrap() as usize,
            );
            // numpy entry A[i, j] (energy basis: ascending-energy order)
            assert!(
                close(op_entry(&op, i, j), cval(&t[2]), 1e-12),
                "{name} [{i},{j}]"
            );
        }
        for (name, st) in e["states"].as_object().unwrap() {
            let v = f.state(s, name).unwrap();
            let sum: c64 = v.to_complex().iter().sum();
            // numpy .sum() of the stored state
            assert!(close(sum, cval(&st["sum"]), 1e-12), "{name}");
            assert_eq!(
                v.field() == Field::Complex,
                st["field"].as_str() == Some("complex")
            );
        }
    }
}

#[test]
fn energy_basis_observable_is_reordered_for_an_unsorted_file() {
    // Σₙ Aₙₙ = Tr A (REFERENCE-VALUES.md, exact identity) and the projected matrix
    // of numpy (ascending order) entry [1, 6] from good_expected.json
    let exp = expected();
    let f = open();
    let s = f.select(Some("/unsorted")).unwrap()[0];
    let op = f.observable(s, "projected").unwrap();
    let e = &exp["sectors"]["unsorted"]["observables"]["projected"]["entry"];
    assert!(close(op_entry(&op, 1, 6), cval(&e[2]), 1e-12));
    let Operator::Real(OpData::EnergyBasis(m)) = &op else {
        panic!("expected a real energy-basis operator");
    };
    // symmetric after reordering (same permutation on rows and columns)
    for i in 0..16 {
        for j in 0..16 {
            assert!((m[(i, j)] - m[(j, i)]).abs() < 1e-12);
        }
    }
}

#[test]
fn verification_passes_on_good_data_and_inspect_summarises_every_sector() {
    // orthonormality of numpy.linalg.eigh output (VᴴV = 1, exact identity)
    let f = open();
    let rep = eigentherm::input::inspect::inspect(&f, None, true).unwrap();
    assert_eq!(rep.sectors.len(), 5);
    for s in &rep.sectors {
        let v = s.verify.as_ref().unwrap();
        assert!(v.pass(), "{}", s.sector.name);
        if let Some(c) = &v.orthonormality {
            assert!(c.max_error < c.tolerance);
            assert_eq!(c.sample, s.sector.n_states.min(validate::SAMPLE));
        }
    }
    let chain = &rep.sectors[0];
    // chain: 4 observables + 1 state + the Hamiltonian read and checked
    assert_eq!(chain.verify.as_ref().unwrap().operators_checked, 6);
    assert!(chain.verify.as_ref().unwrap().residual.is_some());
    assert!(!rep.sectors[4].sorted);
}

#[test]
fn overrides_define_a_single_sector_from_custom_paths() {
    // common practice, no source: a file in another layout read through explicit paths
    let ov = Overrides {
        energies: Some("/complex/rows/energies".into()),
        eigenvectors: Some("eigenvectors".into()),
        layout: None,
        observables: vec![("hop".into(), "/chain/observables/sz".into())],
        states: vec![],
        attributes: vec![],
        hamiltonian: None,
        memory: None,
        ensemble_by: Default::default(),
    };
    // /chain/observables/sz has dim 32, this sector dim 24: a shape error
    let err = EigenFile::open(&fixture("good.h5"), &ov)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("/chain/observables/sz") && err.contains("24"),
        "{err}"
    );
    let ov = Overrides {
        observables: vec![],
        ..ov
    };
    let f = EigenFile::open(&fixture("good.h5"), &ov).unwrap();
    assert_eq!(f.sectors().len(), 1);
    assert_eq!(f.sectors()[0].name, "complex/rows");
    assert_eq!(f.sectors()[0].layout, Layout::Rows);
    // --layout is only a default: the file's attribute wins
    let ov2 = Overrides {
        energies: Some("/partial/energies".into()),
        layout: Some(Layout::Rows),
        ..Default::default()
    };
    let err = EigenFile::open(&fixture("good.h5"), &ov2)
        .unwrap_err()
        .to_string();
    // [20, 12] read as rows [n, dim] does not match 12 energies
    assert!(
        err.contains("/partial/eigenvectors") && err.contains("[20, 12]"),
        "{err}"
    );
}

#[test]
fn unknown_names_list_what_exists() {
    let f = open();
    let err = f.select(Some("L99")).unwrap_err().to_string();
    assert!(
        err.ends_with(
            "no sector named 'L99'; sectors: chain, chain/half, complex/rows, partial, unsorted"
        ),
        "{err}"
    );
    let s = f.select(Some("chain")).unwrap()[0];
    let err = f.observable(s, "sx").unwrap_err().to_string();
    assert!(
        err.ends_with(
            "/chain/observables: no observable named 'sx'; observables: dense_x, hop, projected, sz"
        ),
        "{err}"
    );
    let err = f.state(s, "up").unwrap_err().to_string();
    assert!(err.ends_with("no state named 'up'; states: neel"), "{err}");
    let half = f.select(Some("chain/half")).unwrap()[0];
    let spec = f.spectrum(half).unwrap();
    let err = f.vectors(half, &spec).unwrap_err().to_string();
    assert!(
        err.contains("/chain/half/eigenvectors: missing dataset"),
        "{err}"
    );
}

#[test]
fn in_memory_matrix_and_file_reader_agree_on_orthonormality() {
    // VᴴV = 1 (exact identity); the checker must see the same error either way
    let f = open();
    let s = f.select(Some("complex/rows")).unwrap()[0];
    let spec = f.spectrum(s).unwrap();
    let r = f.vectors(s, &spec).unwrap();
    let m: Matrix = r.read(0..r.n_states()).unwrap();
    let a = validate::orthonormality(&r, 64, 1e-8).unwrap();
    let b = validate::orthonormality(&m, 64, 1e-8).unwrap();
    assert_eq!(a.max_error, b.max_error);
    assert!(a.pass);
    assert!(a.max_error < 1e-13, "{}", a.max_error);
}
