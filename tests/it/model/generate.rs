//! `eigentherm generate` through the command-line parser: options, defaults, errors.

use clap::Parser;
use eigentherm::cli::{run, Cli};
use hdf5::types::VarLenUnicode;
use ndarray::Array1;

fn generate(args: &[&str]) -> eigentherm::Result<()> {
    let mut all = vec!["eigentherm", "generate"];
    all.extend_from_slice(args);
    run(Cli::try_parse_from(all).map_err(|e| eigentherm::Error::usage(e.to_string()))?)
}

#[test]
fn chain_defaults_are_open_and_resolved() {
    // counting, no source: an open chain of L = 6 resolved by reflection has sectors of
    // dimension (64 ± 8)/2 = 36 and 28
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("tfi.h5");
    let o = out.to_str().unwrap();
    generate(&[
        "--model",
        "transverse-field-ising",
        "--sites",
        "6",
        "--g",
        "1.3",
        "--out",
        o,
    ])
    .unwrap();
    let f = hdf5::File::open(&out).unwrap();
    let even: Array1<f64> = f.dataset("even/energies").unwrap().read_1d().unwrap();
    let odd: Array1<f64> = f.dataset("odd/energies").unwrap().read_1d().unwrap();
    assert_eq!((even.len(), odd.len()), (36, 28));
    let g: f64 = f
        .group("even")
        .unwrap()
        .attr("g")
        .unwrap()
        .read_scalar()
        .unwrap();
    assert_eq!(g, 1.3);
    let b: VarLenUnicode = f
        .group("odd")
        .unwrap()
        .attr("boundary")
        .unwrap()
        .read_scalar()
        .unwrap();
    assert_eq!(b.as_str(), "open");
    let site: i64 = f
        .group("odd")
        .unwrap()
        .attr("site")
        .unwrap()
        .read_scalar()
        .unwrap();
    assert_eq!(site, 3);
}

#[test]
fn broken_reflection_and_random_matrices() {
    // counting, no source: one sector of the full dimension
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("x.h5");
    let o = out.to_str().unwrap();
    generate(&[
        "--model",
        "xxz",
        "--sites",
        "5",
        "--j2",
        "0.3",
        "--boundary",
        "periodic",
        "--reflection",
        "break",
        "--break-field",
        "0.2",
        "--out",
        o,
    ])
    .unwrap();
    let f = hdf5::File::open(&out).unwrap();
    assert_eq!(
        f.dataset("full/eigenvectors").unwrap().shape(),
        vec![32, 32]
    );
    let bf: f64 = f
        .group("full")
        .unwrap()
        .attr("break_field")
        .unwrap()
        .read_scalar()
        .unwrap();
    assert_eq!(bf, 0.2);
    drop(f);
    generate(&[
        "--model", "poisson", "--dim", "64", "--seed", "9", "--out", o,
    ])
    .unwrap();
    let f = hdf5::File::open(&out).unwrap();
    assert_eq!(f.dataset("poisson/energies").unwrap().shape(), vec![64]);
    assert!(f.group("full").is_err(), "the old file must be replaced");
}

#[test]
fn bad_options_are_clear_errors() {
    // common practice, no source
    let dir = tempfile::tempdir().unwrap();
    let o = dir.path().join("y.h5");
    let o = o.to_str().unwrap();
    let e = generate(&["--model", "goe", "--out", o])
        .unwrap_err()
        .to_string();
    assert!(e.contains("--dim"), "{e}");
    let e = generate(&["--model", "mixed-field-ising", "--out", o])
        .unwrap_err()
        .to_string();
    assert!(e.contains("--sites"), "{e}");
    let e = generate(&["--model", "xxz", "--sites", "4", "--dim", "3", "--out", o])
        .unwrap_err()
        .to_string();
    assert!(e.contains("--dim"), "{e}");
    let e = generate(&[
        "--model",
        "free-spins",
        "--sites",
        "4",
        "--site",
        "9",
        "--out",
        o,
    ])
    .unwrap_err()
    .to_string();
    assert!(e.contains("site"), "{e}");
    assert!(generate(&["--model", "heisenberg", "--sites", "4", "--out", o]).is_err());
    assert!(!std::path::Path::new(o).exists());
}
