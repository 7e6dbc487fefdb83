//! Square eigenvector sets without a `layout` attribute: with a Hamiltonian stored, the
//! reading whose residuals ‖Hv − Ev‖ are small is chosen (a row-major file gives the same
//! figures as the same data written as columns); without one, the columns reading is
//! assumed with a one-line warning naming `--layout rows`, and `inspect` says "(assumed)".
//! Expected messages: our own wording (common practice, no source).

use crate::util::run_binary;
use eigentherm::linalg::eigh_real;
use eigentherm::model::rmt;
use ndarray::{Array1, Array2};
use std::path::{Path, PathBuf};

const N: usize = 60;

/// A GOE Hamiltonian (seed 11), its eigenbasis written as columns with the attribute
/// (`reference`), or as rows without attribute (`rows`, with or without the Hamiltonian),
/// and a diagonal observable.
fn write(dir: &Path, name: &str, rows: bool, with_h: bool) -> PathBuf {
    let h = rmt::goe(N, &mut rmt::rng(11));
    let (e, v) = eigh_real(h.as_ref()).unwrap();
    let p = dir.join(name);
    let f = crate::util::create_h5(&p);
    f.new_dataset_builder()
        .with_data(&Array1::from(e))
        .create("energies")
        .unwrap();
    let vv = Array2::from_shape_fn((N, N), |(i, j)| if rows { v[(j, i)] } else { v[(i, j)] });
    let ds = f
        .new_dataset_builder()
        .with_data(&vv)
        .create("eigenvectors")
        .unwrap();
    if !rows {
        let s: hdf5::types::VarLenUnicode = "columns".parse().unwrap();
        ds.new_attr::<hdf5::types::VarLenUnicode>()
            .create("layout")
            .unwrap()
            .write_scalar(&s)
            .unwrap();
    }
    if with_h {
        let hh = Array2::from_shape_fn((N, N), |(i, j)| h[(i, j)]);
        f.new_dataset_builder()
            .with_data(&hh)
            .create("hamiltonian")
            .unwrap();
    }
    let occ = Array1::from_shape_fn(N, |i| ((i * 7) % 5) as f64 - 2.0);
    f.new_dataset_builder()
        .with_data(&occ)
        .create("observables/occ")
        .unwrap();
    p
}

/// `diagonal --json` of `args`: (mean, fluct_variance, stderr).
fn diagonal(args: &[&str]) -> (f64, f64, String) {
    let mut a = vec!["diagonal", "--json"];
    a.extend_from_slice(args);
    let (code, out, err) = run_binary(&a);
    assert_eq!(code, Some(0), "{a:?}: {err}");
    let j: serde_json::Value = serde_json::from_str(&out).unwrap();
    let o = &j["sectors"][0]["observables"][0];
    (
        o["mean"].as_f64().unwrap(),
        o["fluct_variance"].as_f64().unwrap(),
        err,
    )
}

#[test]
fn a_stored_hamiltonian_decides_the_layout_of_a_square_set() {
    let dir = tempfile::tempdir().unwrap();
    let reference = write(dir.path(), "reference.h5", false, false);
    let rows = write(dir.path(), "rows.h5", true, true);
    let (m0, f0, err0) = diagonal(&[reference.to_str().unwrap()]);
    assert!(err0.is_empty(), "{err0}");
    let (m1, f1, err1) = diagonal(&[rows.to_str().unwrap()]);
    // the same eigenbasis, read the other way round: the same figures up to rounding
    // (exact identity, no source)
    assert!(
        (m0 - m1).abs() < 1e-12 && (f0 - f1).abs() < 1e-12,
        "{m0} {m1} {f0} {f1}"
    );
    assert!(
        err1.starts_with("note: ")
            && err1.contains("read as rows [n, dim]")
            && err1.lines().count() == 1,
        "{err1}"
    );
    let (_, out, _) = run_binary(&["inspect", rows.to_str().unwrap()]);
    assert!(
        out.contains("layout rows (by the residuals ||Hv - Ev||) [n, dim]"),
        "{out}"
    );
}

#[test]
fn without_a_hamiltonian_the_columns_reading_is_assumed_with_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let reference = write(dir.path(), "reference.h5", false, false);
    let rows = write(dir.path(), "rows.h5", true, false);
    let p = rows.to_str().unwrap();
    let (m0, f0, _) = diagonal(&[reference.to_str().unwrap()]);
    let (m1, f1, err) = diagonal(&[p]);
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 1, "{err}");
    assert!(
        lines[0].starts_with("warning: ")
            && lines[0].contains("/eigenvectors: square [60, 60] eigenvector set without a layout attribute: ambiguous, assumed columns")
            && lines[0].contains("--layout rows"),
        "{err}"
    );
    // read as columns, the transposed basis gives other figures: that is why it warns
    assert!(
        (m0 - m1).abs() > 1e-6 || (f0 - f1).abs() > 1e-6,
        "{m0} {m1} {f0} {f1}"
    );
    let (_, out, err) = run_binary(&["inspect", p]);
    assert!(out.contains("layout columns (assumed) [dim, n]"), "{out}");
    assert!(
        err.is_empty(),
        "inspect without --verify reads no eigenvectors: {err}"
    );
    // --layout rows reads it correctly, silently
    let (m2, f2, err) = diagonal(&[p, "--layout", "rows"]);
    assert!(err.is_empty(), "{err}");
    assert!((m0 - m2).abs() < 1e-12 && (f0 - f2).abs() < 1e-12);
}
