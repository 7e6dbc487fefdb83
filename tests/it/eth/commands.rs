//! The `diagonal` and `offdiagonal` commands end to end on a small HDF5 file written here
//! with the `hdf5` crate: the figures equal those of the library on the same data in
//! memory, whatever the memory budget.

use clap::Parser;
use eigentherm::analysis::diagonal;
use eigentherm::analysis::offdiagonal::{analyze_matrix, OffdiagonalOptions};
use eigentherm::cli::{Cli, Command};
use eigentherm::data::{Matrix, OpData, Operator};
use eigentherm::linalg::eigh_real;
use eigentherm::model::rmt;
use eigentherm::project::{project_diagonal, project_window, Budget};
use faer::Mat;

const N: usize = 120;

fn write_file(dir: &std::path::Path) -> (std::path::PathBuf, Vec<f64>, Mat<f64>, Vec<f64>) {
    let mut r = rmt::rng(21);
    let (e, v) = eigh_real(rmt::goe(N, &mut r).as_ref()).unwrap();
    let d: Vec<f64> = (0..N)
        .map(|i| if i % 3 == 0 { 1.0 } else { -0.5 })
        .collect();
    let path = dir.join("goe.h5");
    let f = crate::util::create_h5(&path);
    f.new_dataset_builder()
        .with_data(&ndarray::Array1::from(e.clone()))
        .create("energies")
        .unwrap();
    let vv = ndarray::Array2::from_shape_fn((N, N), |(i, j)| v[(i, j)]);
    f.new_dataset_builder()
        .with_data(&vv)
        .create("eigenvectors")
        .unwrap();
    let g = f.create_group("observables").unwrap();
    g.new_dataset_builder()
        .with_data(&ndarray::Array1::from(d.clone()))
        .create("occ")
        .unwrap();
    (path, e, v, d)
}

/// `eigentherm diagonal` without printing (the `auto` prediction policy).
fn diagonal_of(
    a: &eigentherm::cli::elements::DiagonalArgs,
) -> eigentherm::Result<
    eigentherm::analysis::sector::ElementsOutput<eigentherm::analysis::diagonal::DiagonalResult>,
> {
    eigentherm::pipeline::elements::diagonal(&a.common.resolve()?, None, false)
}

/// `eigentherm offdiagonal` without printing.
fn offdiagonal_of(
    a: &eigentherm::cli::elements::OffdiagonalArgs,
) -> eigentherm::Result<
    eigentherm::analysis::sector::ElementsOutput<
        eigentherm::analysis::offdiagonal::OffdiagonalResult,
    >,
> {
    eigentherm::pipeline::elements::offdiagonal(&a.common.resolve()?, &a.omega.resolve()?)
}

fn parse(args: &[&str]) -> Command {
    Cli::try_parse_from(args).unwrap().command
}

#[test]
fn commands_match_library_on_file() {
    // same data through file + projector + analysis as through the library in memory
    // (exact up to rounding; common practice, no source)
    let dir = tempfile::tempdir().unwrap();
    let (path, e, v, d) = write_file(dir.path());
    let p = path.to_str().unwrap();
    let src = Matrix::Real(v);
    let op = Operator::Real(OpData::Diagonal(d));
    let big = Budget::new(1 << 30);

    // diagonal
    let Command::Diagonal(a) = parse(&["eigentherm", "diagonal", p, "--window", "0.2:0.8"]) else {
        panic!("parsed another command")
    };
    let rep = diagonal_of(&a).unwrap();
    assert_eq!(rep.sectors.len(), 1);
    let got = &rep.sectors[0].observables[0];
    let diag = project_diagonal(&src, &[&op], 0..N, &big)
        .unwrap()
        .remove(0);
    let w = eigentherm::window::Window { lo: 0.2, hi: 0.8 }.indices(N);
    let want = diagonal::analyze("occ", &e, &diag, w.clone(), "0.2:0.8", Some(N)).unwrap();
    assert_eq!(got.name, "occ");
    assert_eq!(got.states, want.states);
    assert!((got.fluct_variance - want.fluct_variance).abs() < 1e-14);
    assert!((got.mean - want.mean).abs() < 1e-14);
    assert!(eigentherm::report::text::diagonal_text(&rep).contains("fluct_variance"));

    // off-diagonal, one block and a budget forcing many blocks
    let full = project_window(&src, &[&op], w.clone(), &big)
        .unwrap()
        .remove(0);
    let want = analyze_matrix(
        "occ",
        &e,
        w,
        "0.2:0.8",
        &full,
        &OffdiagonalOptions::default(),
    )
    .unwrap();
    for mem in ["1G", "40K"] {
        let Command::Offdiagonal(a) = parse(&[
            "eigentherm",
            "offdiagonal",
            p,
            "--window",
            "0.2:0.8",
            "--memory",
            mem,
            "--json",
        ]) else {
            panic!("parsed another command")
        };
        let rep = offdiagonal_of(&a).unwrap();
        let got = &rep.sectors[0].observables[0];
        assert_eq!(got.pairs, want.pairs, "memory {mem}");
        assert!((got.low_omega_variance - want.low_omega_variance).abs() < 1e-14);
        assert!((got.gaussian_ratio - want.gaussian_ratio).abs() < 1e-10);
        assert!((got.diag_offdiag_ratio - want.diag_offdiag_ratio).abs() < 1e-10);
        let json = serde_json::to_value(&rep).unwrap();
        let o = &json["sectors"][0]["observables"][0];
        for key in [
            "omega_max",
            "pairs",
            "low_omega_variance",
            "gaussian_ratio",
            "diag_offdiag_ratio",
            "envelope",
        ] {
            assert!(!o[key].is_null(), "JSON key {key}");
        }
    }

    // an explicit omega_max is used as given
    let Command::Offdiagonal(a) = parse(&["eigentherm", "offdiagonal", p, "--omega-max", "0.5"])
    else {
        panic!("parsed another command")
    };
    let rep = offdiagonal_of(&a).unwrap();
    assert_eq!(rep.sectors[0].observables[0].omega_max, 0.5);
}

#[test]
fn unknown_observable_is_a_one_line_error() {
    // bad input → one-line error naming the file (DESIGN.md contract)
    let dir = tempfile::tempdir().unwrap();
    let (path, ..) = write_file(dir.path());
    let p = path.to_str().unwrap();
    let Command::Offdiagonal(a) = parse(&["eigentherm", "offdiagonal", p, "--observable", "nope"])
    else {
        panic!("parsed another command")
    };
    let e = offdiagonal_of(&a).unwrap_err().to_string();
    assert!(
        e.contains("goe.h5") && e.contains("nope") && !e.contains('\n'),
        "{e}"
    );
    let Command::Offdiagonal(a) = parse(&["eigentherm", "offdiagonal", p, "--omega-max=-1"]) else {
        panic!("parsed another command")
    };
    assert!(offdiagonal_of(&a).is_err());
}
