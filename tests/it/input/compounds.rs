//! Complex compounds with other field names than `{r, i}`: the files written by
//! `scripts/make_compound_fixtures.py` (numpy 2.4.6, h5py 3.16.0) hold one eigenbasis in
//! several spellings, and every accepted spelling must give the figures of the `{r, i}`
//! file (the README layout); a compound with unknown names is refused.

use crate::util::run_binary;
use serde_json::Value;

const DIR: &str = "fixtures/compounds";

/// `eigentherm ARGS FILE --json` on `DIR/name`, with the file's name replaced by `FILE`.
fn json_of(args: &[&str], name: &str) -> Value {
    let path = format!("{DIR}/{name}");
    let mut argv = vec![args[0], &path];
    argv.extend(&args[1..]);
    argv.push("--json");
    let (code, out, err) = run_binary(&argv);
    assert_eq!(code, Some(0), "{name}: {err}");
    serde_json::from_str(&out.replace(&path, "FILE")).unwrap()
}

/// Largest relative difference between two documents' numbers (timings skipped); panics
/// where their structure or text differs.
fn max_rel_diff(a: &Value, b: &Value, at: &str) -> f64 {
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => {
            assert_eq!(x.len(), y.len(), "{at}: keys");
            x.iter()
                .filter(|(k, _)| !k.contains("timing") && !k.ends_with("_seconds"))
                .map(|(k, v)| max_rel_diff(v, &y[k], &format!("{at}.{k}")))
                .fold(0.0, f64::max)
        }
        (Value::Array(x), Value::Array(y)) => {
            assert_eq!(x.len(), y.len(), "{at}: length");
            x.iter()
                .zip(y)
                .enumerate()
                .map(|(i, (u, v))| max_rel_diff(u, v, &format!("{at}[{i}]")))
                .fold(0.0, f64::max)
        }
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
            (x - y).abs() / x.abs().max(y.abs()).max(1e-300)
        }
        _ => {
            assert_eq!(a, b, "{at}");
            0.0
        }
    }
}

const RUNS: [&[&str]; 4] = [
    &["levels"],
    &["diagonal", "--observable", "z", "--observable", "hop"],
    &["offdiagonal", "--observable", "hop", "--window", "0.2:0.8"],
    &["quench", "--observable", "hop", "--state", "stored:psi"],
];

#[test]
fn every_accepted_spelling_gives_the_figures_of_r_i() {
    for args in RUNS {
        let reference = json_of(args, "r_i.h5");
        for name in ["real_imag.h5", "re_im.h5", "Real_Imaginary.h5"] {
            // identical float64 data read through another member-name mapping: the same
            // bits (exact identity, common practice, no source)
            let d = max_rel_diff(&reference, &json_of(args, name), args[0]);
            assert_eq!(d, 0.0, "{} on {name}", args[0]);
        }
        // float32 members, promoted member by member: the figures of NumPy's complex64
        // ({r, i} of float32) with the same rounded data, to the bit (common practice, no
        // source)
        let single = json_of(args, "r_i_f32.h5");
        let d = max_rel_diff(&single, &json_of(args, "re_im_f32.h5"), args[0]);
        assert_eq!(d, 0.0, "{} on re_im_f32.h5", args[0]);
    }
}

#[test]
fn a_compound_with_other_names_is_refused_naming_the_accepted_ones() {
    // HDF5 converts compound members by name and leaves unmatched ones as zeros, so an
    // unknown spelling must not be read (our own wording, common practice, no source)
    let line = crate::util::fails_naming(
        &["levels", &format!("{DIR}/x_y.h5")],
        &[
            "x_y.h5: /eigenvectors: found a compound type with fields {x, y}",
            "{r, i}, {real, imag}, {re, im}, {Re, Im}, {Real, Imaginary}, {real, imaginary}",
        ],
    );
    assert!(!line.contains("panicked"), "{line}");
}

#[test]
fn a_matlab_v73_file_gives_the_figures_of_the_readme_layout() {
    // matlab73.h5 emulates MATLAB's `save -v7.3` layout (MAT-file header in the user block,
    // column-major arrays, {real, imag}, a sparse group {data, ir, jc}); r_i.h5 holds the
    // same data in the README layout. Both readings give the same matrices, so the same
    // figures to the bit (exact identity, common practice, no source).
    let runs: [&[&str]; 5] = [
        &["levels"],
        &[
            "diagonal",
            "--observable",
            "z",
            "--observable",
            "hop",
            "--observable",
            "hop_sparse",
        ],
        &["offdiagonal", "--observable", "hop", "--window", "0.2:0.8"],
        &[
            "offdiagonal",
            "--observable",
            "hop_sparse",
            "--window",
            "0.2:0.8",
        ],
        &[
            "quench",
            "--observable",
            "hop_sparse",
            "--state",
            "stored:psi",
        ],
    ];
    for args in runs {
        let d = max_rel_diff(
            &json_of(args, "r_i.h5"),
            &json_of(args, "matlab73.h5"),
            args[0],
        );
        assert_eq!(d, 0.0, "{args:?}");
    }
    // the layout comes from the file format, not from an assumption
    let (code, out, err) = run_binary(&["inspect", &format!("{DIR}/matlab73.h5")]);
    assert_eq!(code, Some(0), "{err}");
    assert!(
        out.contains("layout rows (MATLAB v7.3 file, column-major) [n, dim]"),
        "{out}"
    );
    assert!(!err.contains("ambiguous"), "{err}");
}
