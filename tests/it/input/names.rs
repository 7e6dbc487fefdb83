//! Errors stay one line whatever the names and numbers in a file: control characters in
//! names are shown as escapes, no message names its file twice, and integers at the edges of
//! their types are reported as stored. Expected messages: our own wording (common practice,
//! no source); escapes are Rust's `escape_default` spelling.

use crate::util::fails_naming;
use ndarray::{Array1, Array2};
use std::path::Path;

fn s(p: &Path) -> &str {
    p.to_str().unwrap()
}

fn energies(g: &hdf5::Group, e: &[f64]) {
    g.new_dataset_builder()
        .with_data(&Array1::from(e.to_vec()))
        .create("energies")
        .unwrap();
}

#[test]
fn names_with_newlines_and_escape_codes_are_escaped() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("names.h5");
    {
        let f = crate::util::create_h5(&p);
        let g = f.create_group("line\nbreak").unwrap();
        energies(&g, &[0.0, 1.0, f64::NAN]);
        let h = f.create_group("esc\u{1b}[31m").unwrap();
        energies(&h, &[0.0, 1.0]);
    }
    fails_naming(
        &["inspect", s(&p), "--sector", "none"],
        &["no sector named 'none'; sectors: esc\\u{1b}[31m, line\\nbreak"],
    );
    fails_naming(
        &["levels", s(&p), "--sector", "line\nbreak"],
        &["/line\\nbreak/energies: non-finite value NaN at index [2]"],
    );
}

#[test]
fn a_nan_in_the_eigenvectors_names_the_file_once() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("nan.h5");
    let n = 40;
    {
        let f = crate::util::create_h5(&p);
        let g = f.create_group("s").unwrap();
        energies(&g, &(0..n).map(|i| i as f64).collect::<Vec<_>>());
        let mut v = Array2::from_shape_fn((n, n), |(i, j)| if i == j { 1.0 } else { 0.0 });
        v[[3, 20]] = f64::NAN;
        g.new_dataset_builder()
            .with_data(&v)
            .create("eigenvectors")
            .unwrap();
        g.new_dataset_builder()
            .with_data(&Array1::from_elem(n, 1.0))
            .create("observables/sz")
            .unwrap();
    }
    for cmd in ["diagonal", "offdiagonal"] {
        let line = fails_naming(
            &[cmd, s(&p)],
            &["/s/eigenvectors: non-finite value NaN in component 3 of the eigenvector of state 20"],
        );
        assert_eq!(line.matches("nan.h5").count(), 1, "{line}");
    }
}

/// A CSR observable `hop` with the given `shape` attribute, `indices` and `indptr`, in a
/// sector without eigenvectors (so that the shape is not compared with a dimension).
fn csr_file(p: &Path, shape: [u64; 2], indices: &[u64], indptr: &[u64]) {
    let f = crate::util::create_h5(p);
    energies(&f, &[0.0, 1.0]);
    let g = f
        .create_group("observables")
        .unwrap()
        .create_group("hop")
        .unwrap();
    g.new_dataset_builder()
        .with_data(&Array1::from_elem(indices.len(), 1.0))
        .create("data")
        .unwrap();
    g.new_dataset_builder()
        .with_data(&Array1::from(indices.to_vec()))
        .create("indices")
        .unwrap();
    g.new_dataset_builder()
        .with_data(&Array1::from(indptr.to_vec()))
        .create("indptr")
        .unwrap();
    g.new_attr::<u64>()
        .shape([2])
        .create("shape")
        .unwrap()
        .write(&shape)
        .unwrap();
}

#[test]
fn integers_at_the_edges_of_their_types_are_reported_as_stored() {
    let dir = tempfile::tempdir().unwrap();
    // shape[0] + 1 would wrap to 0 for 2⁶⁴ − 1 rows
    let p = dir.path().join("shape.h5");
    csr_file(&p, [u64::MAX, u64::MAX], &[0, 1], &[0, 1, 2]);
    fails_naming(
        &["inspect", s(&p)],
        &["/observables/hop/indptr: shape [3] does not match 18446744073709551615 rows (expected [18446744073709551615 + 1])"],
    );
    // a uint64 column index of 2⁶³ + 1 is not clipped to 2⁶³ − 1 on reading
    let p = dir.path().join("index.h5");
    let big = (1u64 << 63) + 1;
    csr_file(&p, [2, 2], &[big, 0], &[0, 1, 2]);
    fails_naming(
        &["inspect", "--verify", s(&p)],
        &["/observables/hop/indices: column index 9223372036854775809 at position 0 is out of range (the matrix has 2 columns)"],
    );
}
