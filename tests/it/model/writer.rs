//! Round trip of the writer, read back with the `hdf5` crate directly (hdf5-metno 0.15):
//! shapes, types, attributes and a few values.

use eigentherm::data::{c64, Matrix, Observable, OpData, Operator, Vector};
use eigentherm::model::{
    build_chain, build_random, write_file, RandomEnsemble, RandomSpec, SectorData,
};
use hdf5::types::VarLenUnicode;
use ndarray::{Array1, Array2};

fn text(attr: hdf5::Result<hdf5::Attribute>) -> String {
    let v: VarLenUnicode = attr.unwrap().read_scalar().unwrap();
    v.as_str().to_string()
}

#[test]
fn chain_file_round_trip() {
    // common practice, no source: what is written is read back unchanged
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("mfi.h5");
    let spec = crate::util::mixed_field_spec(6);
    let sectors = build_chain(&spec).unwrap();
    write_file(&path, &sectors).unwrap();
    // nothing but the final file is left in the folder
    let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(names.len(), 1);

    let f = hdf5::File::open(&path).unwrap();
    for s in &sectors {
        let g = f.group(&s.group).unwrap();
        let dim = s.eigenvectors.as_ref().unwrap().nrows();
        let e: Array1<f64> = g.dataset("energies").unwrap().read_1d().unwrap();
        assert_eq!(e.to_vec(), s.energies);
        let ev = g.dataset("eigenvectors").unwrap();
        assert_eq!(ev.shape(), vec![dim, dim]);
        assert_eq!(ev.chunk(), Some(vec![dim, dim.min((1 << 20) / (8 * dim))]));
        assert_eq!(text(ev.attr("layout")), "columns");
        let v: Array2<f64> = ev.read_2d().unwrap();
        let m = match s.eigenvectors.as_ref().unwrap() {
            Matrix::Real(m) => m,
            _ => unreachable!(),
        };
        for (i, j) in [(0, 0), (dim - 1, 3), (5, dim - 1)] {
            assert_eq!(v[[i, j]], m[(i, j)]);
        }
        // attributes
        let size: i64 = g.attr("size").unwrap().read_scalar().unwrap();
        assert_eq!(size, 6);
        let full_dim: i64 = g.attr("full_dim").unwrap().read_scalar().unwrap();
        assert_eq!(full_dim, 64);
        let gg: f64 = g.attr("g").unwrap().read_scalar().unwrap();
        assert_eq!(gg, 0.9045);
        assert_eq!(text(g.attr("label")), format!("MFI L=6 {}", s.group));
        assert_eq!(text(g.attr("model")), "mixed-field-ising");
        // CSR groups
        let h = g.group("hamiltonian").unwrap();
        let shape: Vec<i64> = h.attr("shape").unwrap().read_raw().unwrap();
        assert_eq!(shape, vec![dim as i64, dim as i64]);
        let indptr: Array1<i64> = h.dataset("indptr").unwrap().read_1d().unwrap();
        assert_eq!(indptr.len(), dim + 1);
        assert_eq!(h.dataset("indices").unwrap().dtype().unwrap().size(), 8);
        let emb = g.group("embedding").unwrap();
        let shape: Vec<i64> = emb.attr("shape").unwrap().read_raw().unwrap();
        assert_eq!(shape, vec![64, dim as i64]);
        // observables and notes
        let obs = g.group("observables").unwrap();
        let sz: Array1<f64> = obs.dataset("sz_site").unwrap().read_1d().unwrap();
        assert_eq!(sz.len(), dim);
        assert!(text(obs.dataset("sz_site").unwrap().attr("note")).contains("symmetrised"));
        assert!(text(obs.group("sx_site").unwrap().attr("note")).contains("symmetrised"));
        assert!(obs.dataset("mz").unwrap().attr("note").is_err());
        // states with their weight ‖Pᵀψ‖²
        let st = g.group("states").unwrap();
        for name in ["all_up_x", "neel_z", "domain_wall_z"] {
            let ds = st.dataset(name).unwrap();
            let c: Array1<f64> = ds.read_1d().unwrap();
            let w: f64 = ds.attr("weight").unwrap().read_scalar().unwrap();
            assert!((w - c.iter().map(|x| x * x).sum::<f64>()).abs() < 1e-15);
        }
    }
}

#[test]
fn complex_data_is_written_as_r_i_compound() {
    // h5py convention for complex numbers: compound {r, i} (DESIGN.md, input layout)
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("gue.h5");
    let s = build_random(&RandomSpec {
        ensemble: RandomEnsemble::Gue,
        dim: 40,
        seed: 7,
    })
    .unwrap();
    write_file(&path, std::slice::from_ref(&s)).unwrap();
    let f = hdf5::File::open(&path).unwrap();
    let ev = f.dataset("gue/eigenvectors").unwrap();
    let td = ev.dtype().unwrap().to_descriptor().unwrap();
    match td {
        hdf5::types::TypeDescriptor::Compound(c) => {
            let names: Vec<&str> = c.fields.iter().map(|f| f.name.as_str()).collect();
            assert_eq!(names, vec!["r", "i"]);
        }
        other => panic!("expected a compound type, got {other:?}"),
    }
    let v: Array2<c64> = ev.read_2d().unwrap();
    if let Some(Matrix::Complex(m)) = &s.eigenvectors {
        assert_eq!(v[[3, 5]], m[(3, 5)]);
    }
    let obs = f.group("gue/observables").unwrap();
    assert_eq!(obs.dataset("dense_rand").unwrap().shape(), vec![40, 40]);
    assert_eq!(obs.dataset("diag_pm").unwrap().shape(), vec![40]);
}

#[test]
fn root_group_energy_basis_and_complex_states() {
    // common practice, no source: a root sector, an energy-basis observable, a complex state
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("root.h5");
    let s = SectorData {
        group: "/".into(),
        energies: vec![-1.0, 0.5],
        observables: vec![Observable {
            name: "a".into(),
            op: Operator::Real(OpData::EnergyBasis(faer::Mat::from_fn(2, 2, |i, j| {
                (i + 2 * j) as f64
            }))),
        }],
        states: vec![(
            "psi".into(),
            Vector::Complex(vec![c64::new(0.6, 0.0), c64::new(0.0, 0.8)]),
        )],
        ..Default::default()
    };
    write_file(&path, &[s]).unwrap();
    let f = hdf5::File::open(&path).unwrap();
    let a = f.dataset("observables/a").unwrap();
    assert_eq!(text(a.attr("basis")), "energy");
    let m: Array2<f64> = a.read_2d().unwrap();
    assert_eq!(m[[0, 1]], 2.0);
    let w: f64 = f
        .dataset("states/psi")
        .unwrap()
        .attr("weight")
        .unwrap()
        .read_scalar()
        .unwrap();
    assert!((w - 1.0).abs() < 1e-15);
}

#[test]
fn failures_leave_no_file_behind() {
    // common practice, no source: the temporary file is removed on error
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bad.h5");
    let s = SectorData {
        group: "x".into(),
        energies: vec![0.0, 1.0],
        eigenvectors: Some(Matrix::Real(faer::Mat::identity(3, 3))),
        ..Default::default()
    };
    let err = write_file(&path, &[s]).unwrap_err().to_string();
    assert!(err.contains("/x/eigenvectors"), "{err}");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
    let dup = vec![
        SectorData {
            group: "a".into(),
            energies: vec![0.0],
            ..Default::default()
        };
        2
    ];
    assert!(write_file(&path, &dup).is_err());
    assert!(!path.exists());
}
