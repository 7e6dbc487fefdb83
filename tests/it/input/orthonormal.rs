//! Every analysis checks the eigenvectors it is given: a set scaled by 1.01, one with a
//! duplicated column, or all zeros is refused with one line (exit 2) by `diagonal`,
//! `offdiagonal`, `quench`, `scaling` and `study`, and a sound set of the same file passes.
//! Expected messages: our own wording (common practice, no source).

use crate::util::{fails_naming, run_binary};
use eigentherm::linalg::eigh_real;
use eigentherm::model::rmt;
use ndarray::{Array1, Array2};
use std::path::{Path, PathBuf};

const N: usize = 200;

/// A GOE eigenbasis of dimension `N` (seed 3), spoiled by `spoil`, with a diagonal
/// observable `sz` = ±1, written to `dir/name`.
fn write(dir: &Path, name: &str, spoil: impl Fn(&mut Array2<f64>)) -> PathBuf {
    let (e, v) = eigh_real(rmt::goe(N, &mut rmt::rng(3)).as_ref()).unwrap();
    let mut vv = Array2::from_shape_fn((N, N), |(i, j)| v[(i, j)]);
    spoil(&mut vv);
    let p = dir.join(name);
    let f = crate::util::create_h5(&p);
    f.new_dataset_builder()
        .with_data(&Array1::from(e))
        .create("energies")
        .unwrap();
    f.new_dataset_builder()
        .with_data(&vv)
        .create("eigenvectors")
        .unwrap();
    let sz = Array1::from_shape_fn(N, |i| if i % 2 == 0 { 1.0 } else { -1.0 });
    f.new_dataset_builder()
        .with_data(&sz)
        .create("observables/sz")
        .unwrap();
    p
}

/// The argument lists of every analysis on `p` (study into `out`).
fn commands(p: &str, out: &str) -> Vec<Vec<String>> {
    let v = |a: &[&str]| a.iter().map(|s| s.to_string()).collect::<Vec<_>>();
    vec![
        v(&["diagonal", p]),
        v(&["offdiagonal", p]),
        v(&["quench", p, "--observable", "sz", "--state", "index:0"]),
        v(&["scaling", p, "--observable", "sz"]),
        v(&["study", p, "--observable", "sz", "--out", out]),
    ]
}

#[test]
fn non_orthonormal_sets_are_refused_by_every_analysis() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("report");
    let cases: Vec<(PathBuf, &str)> = vec![
        // ‖1.01 v‖² − 1 = 0.0201
        (
            write(dir.path(), "scaled.h5", |v| v.mapv_inplace(|x| 1.01 * x)),
            "max |V^H V - 1| = 2.010e-2",
        ),
        // column 7 replaced by column 0: ⟨v0|v7⟩ = 1; column 7 is not in the sample,
        // column 0 is, so only the check against all states can find it
        (
            write(dir.path(), "duplicated.h5", |v| {
                let c = v.column(0).to_owned();
                v.column_mut(7).assign(&c);
            }),
            "max |V^H V - 1| = 1.000e0 over 64 sampled states, 16 of them against all 200 states",
        ),
        (
            write(dir.path(), "zeros.h5", |v| v.fill(0.0)),
            "max |V^H V - 1| = 1.000e0",
        ),
    ];
    for (p, expect) in &cases {
        for args in commands(p.to_str().unwrap(), out.to_str().unwrap()) {
            let args: Vec<&str> = args.iter().map(String::as_str).collect();
            fails_naming(
                &args,
                &["/eigenvectors: eigenvectors are not orthonormal", expect],
            );
        }
    }
    assert!(
        !out.join("results.json").exists(),
        "no report of a refused basis"
    );
}

#[test]
fn a_sound_set_passes_every_analysis() {
    // the same writer without spoiling: the checks pass (an orthogonal matrix from the
    // eigensolver, |VᵀV − 1| ~ 1e-14)
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "good.h5", |_| {});
    let out = dir.path().join("report");
    for args in commands(p.to_str().unwrap(), out.to_str().unwrap()) {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let (code, _, err) = run_binary(&args);
        assert_eq!(code, Some(0), "{args:?}: {err}");
    }
}
