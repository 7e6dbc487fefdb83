//! Sizes declared in a file's header are checked against the memory limit before anything
//! is allocated, and datasets whose values were never written are refused. The files are
//! written here with the hdf5 crate: chunked datasets of huge declared shape with no chunk
//! written take a few kilobytes on disk. Expected messages: our own wording (common
//! practice, no source); byte counts are shape × 8 bytes per float64 (× 24 for energies:
//! values, sorted copy, permutation).

use crate::util::fails_naming;
use ndarray::{Array1, Array2};
use std::path::{Path, PathBuf};

fn scratch(name: &str) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join(name);
    (dir, p)
}

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

/// An empty chunked float64 dataset of `shape` (nothing stored).
fn declare(f: &hdf5::Group, name: &str, shape: &[usize], chunk: &[usize]) {
    f.new_dataset::<f64>()
        .shape(shape)
        .chunk(chunk)
        .create(name)
        .unwrap();
}

#[test]
fn declared_huge_energies_are_refused_by_every_reading_command() {
    let (_d, p) = scratch("energies.h5");
    let f = crate::util::create_h5(&p);
    declare(&f, "energies", &[1_000_000_000], &[1024]);
    drop(f);
    for cmd in ["inspect", "levels", "diagonal"] {
        fails_naming(
            &[cmd, s(&p)],
            &[
                "/energies: declared shape [1000000000] of float64 needs 22.35 GiB in memory to read and sort, more than the memory budget of",
            ],
        );
    }
    // the limit is the --memory budget where one is given
    fails_naming(
        &["levels", s(&p), "--memory", "1G"],
        &[
            "needs 22.35 GiB",
            "more than the memory budget of 1.00 GiB (--memory)",
        ],
    );
}

#[test]
fn the_memory_budget_applies_to_the_spectrum_of_a_valid_file() {
    // 32 energies × 24 bytes = 768 bytes: over a 100-byte budget, within 1 KiB
    fails_naming(
        &["levels", "fixtures/good.h5", "--sector", "chain", "--memory", "100"],
        &[
            "fixtures/good.h5: /chain/energies: declared shape [32] of float64 needs 768.00 B in memory to read and sort, more than the memory budget of 100.00 B (--memory)",
        ],
    );
    let (code, _, err) = crate::util::run_binary(&["levels", "fixtures/good.h5", "--memory", "1K"]);
    assert_eq!(code, Some(0), "{err}");
}

#[test]
fn declared_huge_eigenvectors_csr_and_dense_operators_are_refused() {
    let (_d, p) = scratch("big.h5");
    let f = crate::util::create_h5(&p);
    let n = 4;
    f.new_dataset_builder()
        .with_data(&Array1::from_iter((0..n).map(|i| i as f64)))
        .create("energies")
        .unwrap();
    // 4 eigenvectors of declared dimension 2³⁶: four columns are 2 TiB
    declare(&f, "eigenvectors", &[1 << 36, n], &[1 << 20, 1]);
    drop(f);
    fails_naming(
        &["inspect", "--verify", s(&p)],
        &[
            "/eigenvectors: declared shape [68719476736, 4] of float64 needs 2.00 TiB in memory for the four eigenvectors a pass holds at least",
        ],
    );

    // a CSR observable of 2³³ declared values next to a small valid basis
    let (_d2, p) = scratch("csr.h5");
    let f = crate::util::create_h5(&p);
    let dim = 8;
    f.new_dataset_builder()
        .with_data(&Array1::from_iter((0..dim).map(|i| i as f64)))
        .create("energies")
        .unwrap();
    let eye = Array2::from_shape_fn((dim, dim), |(i, j)| if i == j { 1.0 } else { 0.0 });
    f.new_dataset_builder()
        .with_data(&eye)
        .create("eigenvectors")
        .unwrap();
    let g = f
        .create_group("observables")
        .unwrap()
        .create_group("hop")
        .unwrap();
    declare(&g, "data", &[1 << 33], &[1 << 20]);
    g.new_dataset::<i64>()
        .shape([1usize << 33])
        .chunk([1usize << 20])
        .create("indices")
        .unwrap();
    g.new_dataset_builder()
        .with_data(&Array1::from(vec![0i64; dim + 1]))
        .create("indptr")
        .unwrap();
    g.new_attr::<u64>()
        .shape([2])
        .create("shape")
        .unwrap()
        .write(&[dim as u64, dim as u64])
        .unwrap();
    drop((g, f));
    // 2³³ × (3·8 + 48) bytes = 576 GiB
    for args in [
        vec!["inspect", "--verify", s(&p)],
        vec!["diagonal", s(&p)],
        vec!["quench", s(&p), "--observable", "hop", "--state", "index:0"],
    ] {
        fails_naming(
            &args,
            &["/observables/hop/data: declared shape [8589934592] of float64 needs 576.00 GiB"],
        );
    }

    // a dense observable of declared shape 2²⁰ × 2²⁰ (8 TiB) beside eigenvectors of that
    // dimension (declared too)
    let (_d3, p) = scratch("dense.h5");
    let f = crate::util::create_h5(&p);
    let big = 1usize << 20;
    f.new_dataset_builder()
        .with_data(&Array1::from_iter((0..4).map(|i| i as f64)))
        .create("energies")
        .unwrap();
    declare(&f, "eigenvectors", &[big, 4], &[4096, 4]);
    let o = f.create_group("observables").unwrap();
    declare(&o, "big", &[big, big], &[1024, 1024]);
    drop((o, f));
    fails_naming(
        &["inspect", "--verify", s(&p)],
        &["/observables/big: declared shape [1048576, 1048576] of float64 needs 8.00 TiB in memory to hold the dense operator whole"],
    );
}

#[test]
fn datasets_never_written_are_refused_not_read_as_zeros() {
    // HDF5 returns the fill value (0) for storage never written: a file whose writer died
    // after creating its datasets would otherwise be analysed as data.
    let (_d, p) = scratch("unwritten.h5");
    let f = crate::util::create_h5(&p);
    let n = 16;
    f.new_dataset_builder()
        .with_data(&Array1::from_iter((0..n).map(|i| i as f64)))
        .create("energies")
        .unwrap();
    let v = f
        .new_dataset::<f64>()
        .shape([n, n])
        .chunk([4, 4])
        .create("eigenvectors")
        .unwrap();
    // three of the sixteen 4×4 chunks written
    let block = Array2::from_elem((4, 4), 0.5);
    for (i, j) in [(0, 0), (4, 4), (8, 8)] {
        v.write_slice(&block, ndarray::s![i..i + 4, j..j + 4])
            .unwrap();
    }
    // a contiguous observable created but never written
    f.new_dataset::<f64>().shape([n]).create("sz").unwrap();
    drop((v, f));
    fails_naming(
        &["inspect", "--verify", s(&p)],
        &["/eigenvectors: only 3 of the 16 chunks of the declared shape [16, 16] were ever written"],
    );
    fails_naming(
        &["diagonal", s(&p), "--observable-path", "sz=/sz"],
        &["/sz: declared shape [16] but no value was ever written"],
    );
}
