//! `EigenFile::embedding`: the sector embeddings written by the model writer read back
//! exactly, and malformed embeddings give one-line errors naming the group.

use eigentherm::data::{Csr, Matrix};
use eigentherm::input::{EigenFile, Overrides};
use eigentherm::model::{
    build_chain, write_file, Boundary, ChainModel, ChainSpec, Reflection, SectorData,
};
use faer::Mat;

fn chain(sites: usize) -> Vec<SectorData> {
    build_chain(&ChainSpec {
        model: ChainModel::MixedFieldIsing {
            j: 1.0,
            g: 0.9045,
            h: 0.8090,
        },
        sites,
        boundary: Boundary::Open,
        reflection: Reflection::Resolve,
        site: None,
        sz: None,
        disorder: None,
    })
    .unwrap()
}

#[test]
fn generated_embeddings_read_back_and_cover_the_full_space() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("mfi5.h5");
    let sectors = chain(5);
    write_file(&path, &sectors).unwrap();
    let f = EigenFile::open(&path, &Overrides::default()).unwrap();
    let mut total_cols = 0;
    for (s, data) in f.sectors().iter().zip(&sectors) {
        let p = f
            .embedding(s)
            .unwrap()
            .expect("generated sectors have an embedding");
        let want = data.embedding.as_ref().unwrap();
        // the very arrays the writer was given (exact round trip)
        assert_eq!((p.nrows, p.ncols), (want.nrows, want.ncols));
        assert_eq!(p.indptr, want.indptr);
        assert_eq!(p.indices, want.indices);
        assert_eq!(p.data, want.data);
        assert_eq!(Some(p.ncols), s.dim);
        assert_eq!(p.nrows, 32); // 2^5 (definition of the full spin-1/2 space)
        total_cols += p.ncols;
    }
    // the parity sectors split the full space: dimensions add up to 2^L (linear algebra)
    assert_eq!(total_cols, 32);
}

/// A two-state sector with identity eigenvectors and the given embedding.
fn tiny(embedding: Csr<f64>) -> SectorData {
    SectorData {
        group: "s".into(),
        energies: vec![0.0, 1.0],
        eigenvectors: Some(Matrix::Real(Mat::identity(2, 2))),
        embedding: Some(embedding),
        ..Default::default()
    }
}

fn open_err(embedding: Csr<f64>) -> String {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bad.h5");
    write_file(&path, &[tiny(embedding)]).unwrap();
    let f = EigenFile::open(&path, &Overrides::default()).unwrap();
    let e = f.embedding(&f.sectors()[0]).unwrap_err().to_string();
    assert_eq!(e.lines().count(), 1, "{e}");
    assert!(e.contains("bad.h5") && e.contains("/s/embedding"), "{e}");
    e
}

#[test]
fn malformed_embeddings_are_one_line_errors() {
    // a valid [4, 2] isometry: sector states |0⟩ and (|1⟩ + |2⟩)/√2 (linear algebra)
    let r = std::f64::consts::FRAC_1_SQRT_2;
    let good = Csr {
        nrows: 4,
        ncols: 2,
        indptr: vec![0, 1, 2, 3, 3],
        indices: vec![0, 1, 1],
        data: vec![1.0, r, r],
    };
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("ok.h5");
    write_file(&path, &[tiny(good.clone())]).unwrap();
    let f = EigenFile::open(&path, &Overrides::default()).unwrap();
    assert!(f.embedding(&f.sectors()[0]).unwrap().is_some());

    // three columns for a two-dimensional sector
    let mut wide = good.clone();
    wide.ncols = 3;
    let e = open_err(wide);
    assert!(e.contains("does not match the sector dimension 2"), "{e}");
    // a column of norm² 1/2 (common practice, no source: the isometry check)
    let mut short = good.clone();
    short.data[2] = 0.0;
    let e = open_err(short);
    assert!(e.contains("column 1 has squared norm 0.5"), "{e}");
    // two overlapping unit columns: |0⟩ and (|0⟩ + |1⟩)/√2
    let overlap = Csr {
        nrows: 4,
        ncols: 2,
        indptr: vec![0, 2, 3, 3, 3],
        indices: vec![0, 1, 1],
        data: vec![1.0, r, r],
    };
    let e = open_err(overlap);
    assert!(e.contains("columns 0 and 1 overlap"), "{e}");
    // a column index beyond the sector dimension
    let mut out_of_range = good;
    out_of_range.indices[0] = 5;
    let e = open_err(out_of_range);
    assert!(e.contains("out of range"), "{e}");
}

#[test]
fn sectors_without_embedding_give_none() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("plain.h5");
    let s = SectorData {
        group: "/".into(),
        energies: vec![0.0, 1.0],
        eigenvectors: Some(Matrix::Real(Mat::identity(2, 2))),
        ..Default::default()
    };
    write_file(&path, &[s]).unwrap();
    let f = EigenFile::open(&path, &Overrides::default()).unwrap();
    assert!(f.embedding(&f.sectors()[0]).unwrap().is_none());
}
