//! Layouts other programs write: vectors stored as `[1, n]` or `[n, 1]`, several sectors of
//! a custom layout read through relative dataset paths, and stored states named by their
//! dataset path `states/NAME`. Each gives the same figures as the same data in the README's
//! layout (exact identities, no source: the same numbers read through other paths).

use crate::util::run_binary;
use eigentherm::linalg::eigh_real;
use eigentherm::model::rmt;
use ndarray::{Array1, Array2};
use std::path::Path;

const N: usize = 48;

fn write(g: &hdf5::Group, name: &str, x: &Array2<f64>) {
    g.new_dataset_builder().with_data(x).create(name).unwrap();
}

fn write1(g: &hdf5::Group, name: &str, x: &Array1<f64>) {
    g.new_dataset_builder().with_data(x).create(name).unwrap();
}

/// A GOE eigenbasis (seed `seed`) with a diagonal observable and a state.
fn basis(seed: u64) -> (Array1<f64>, Array2<f64>, Array1<f64>, Array1<f64>) {
    let (e, v) = eigh_real(rmt::goe(N, &mut rmt::rng(seed)).as_ref()).unwrap();
    let v = Array2::from_shape_fn((N, N), |(i, j)| v[(i, j)]);
    let occ = Array1::from_shape_fn(N, |i| ((i * 5) % 3) as f64 - 1.0);
    let psi = Array1::from_shape_fn(N, |i| if i == 3 { 1.0 } else { 0.0 });
    (Array1::from(e), v, occ, psi)
}

/// The README's layout: sectors `a` and `b` with energies, eigenvectors (attribute
/// layout = "columns"), observables/occ and states/psi.
fn readme_layout(p: &Path) {
    let f = crate::util::create_h5(p);
    for (name, seed) in [("a", 1), ("b", 2)] {
        let (e, v, occ, psi) = basis(seed);
        let g = f.create_group(name).unwrap();
        write1(&g, "energies", &e);
        write(&g, "eigenvectors", &v);
        let lay: hdf5::types::VarLenUnicode = "columns".parse().unwrap();
        g.dataset("eigenvectors")
            .unwrap()
            .new_attr::<hdf5::types::VarLenUnicode>()
            .create("layout")
            .unwrap()
            .write_scalar(&lay)
            .unwrap();
        write1(&g, "observables/occ", &occ);
        write1(&g, "states/psi", &psi);
    }
}

/// The same data in a custom layout: per sector `evals` as [1, n], `vecs`, `obs` as
/// [n, 1] and `states/psi` as [1, n].
fn custom_layout(p: &Path) {
    let f = crate::util::create_h5(p);
    for (name, seed) in [("run/a", 1), ("run/b", 2)] {
        let (e, v, occ, psi) = basis(seed);
        let g = f.create_group(name).unwrap();
        write(
            &g,
            "evals",
            &e.clone().into_shape_with_order((1, N)).unwrap(),
        );
        write(&g, "vecs", &v);
        write(
            &g,
            "obs",
            &occ.clone().into_shape_with_order((N, 1)).unwrap(),
        );
        write(
            &g,
            "states/psi",
            &psi.clone().into_shape_with_order((1, N)).unwrap(),
        );
    }
}

fn json(args: &[&str]) -> serde_json::Value {
    let (code, out, err) = run_binary(args);
    assert_eq!(code, Some(0), "{args:?}: {err}");
    serde_json::from_str(&out).unwrap()
}

#[test]
fn a_custom_layout_with_relative_paths_reads_like_the_readme_layout() {
    let dir = tempfile::tempdir().unwrap();
    let (r, c) = (dir.path().join("readme.h5"), dir.path().join("custom.h5"));
    readme_layout(&r);
    custom_layout(&c);
    let (r, c) = (r.to_str().unwrap(), c.to_str().unwrap());
    let custom = [
        c,
        "--energies-path",
        "evals",
        "--eigenvectors-path",
        "vecs",
        "--layout",
        "columns",
        "--observable-path",
        "occ=obs",
    ];
    let mut a = vec!["diagonal", "--json", r];
    let want = json(&a);
    a.truncate(2);
    a.extend_from_slice(&custom);
    let got = json(&a);
    let (ws, gs) = (
        want["sectors"].as_array().unwrap(),
        got["sectors"].as_array().unwrap(),
    );
    assert_eq!(ws.len(), 2);
    assert_eq!(gs.len(), 2, "both custom sectors found");
    for (w, g) in ws.iter().zip(gs) {
        for key in ["mean", "fluct_variance", "diff_mean_abs"] {
            let (x, y) = (
                w["observables"][0][key].as_f64().unwrap(),
                g["observables"][0][key].as_f64().unwrap(),
            );
            assert!(
                (x - y).abs() <= 1e-14 * x.abs().max(1.0),
                "{key}: {x} vs {y}"
            );
        }
    }
    assert_eq!(gs[0]["name"], "run/a");
    // a stored state by its dataset path, in both layouts
    let mut q = vec![
        "quench",
        "--json",
        "--observable",
        "occ",
        "--sector",
        "a",
        "--state",
        "states/psi",
        r,
    ];
    let want = json(&q);
    q[8] = c;
    q[5] = "run/a";
    q.extend_from_slice(&custom[1..]);
    let got = json(&q);
    let (x, y) = (
        want["files"][0]["sectors"][0]["report"]["diagonal_ensemble"].clone(),
        got["files"][0]["sectors"][0]["report"]["diagonal_ensemble"].clone(),
    );
    assert!(x.is_object() || x.is_number(), "{want}");
    assert_eq!(x, y);
}
