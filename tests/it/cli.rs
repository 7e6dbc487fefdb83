//! Bad input through the binary: one line `error: ...` naming the file, the dataset
//! and the problem, a non-zero exit, and never a panic or HDF5's own error stack.
//!
//! The bad files are written by `scripts/make_fixtures.py` (numpy 2.4.6, h5py 3.16.0)
//! into `fixtures/bad/`. Expected messages: our own wording (common practice, no source).
//! Submodules: shell completions and manual pages ([`completions`]), sizes in binary
//! units ([`units`]).

mod completions;
mod units;

use std::path::Path;
use std::process::Command;

use crate::util::run_binary as run;

/// Asserts that `args` fails with exactly the one-line `expected` on stderr and the exit
/// status of a usage or input error, 2 (the README's exit statuses).
fn fails_with(args: &[&str], expected: &str) {
    let (code, _out, err) = run(args);
    assert_eq!(code, Some(2), "exit code of {args:?}; stderr: {err}");
    assert!(!err.contains("panicked"), "{err}");
    assert!(!err.contains("HDF5-DIAG"), "HDF5 error stack leaked: {err}");
    assert_eq!(err, format!("error: {expected}\n"), "stderr of {args:?}");
}

#[test]
fn missing_file() {
    fails_with(
        &["inspect", "fixtures/bad/does_not_exist.h5"],
        "fixtures/bad/does_not_exist.h5: file not found",
    );
}

#[test]
fn not_an_hdf5_file() {
    fails_with(
        &["inspect", "fixtures/bad/not_hdf5.h5"],
        "fixtures/bad/not_hdf5.h5: not an HDF5 file (the HDF5 library cannot open it)",
    );
}

#[test]
fn no_sector_found() {
    fails_with(
        &["inspect", "fixtures/bad/no_sector.h5"],
        "fixtures/bad/no_sector.h5: no sector found: no group holds a dataset named 'energies' (use --energies-path for another layout)",
    );
}

#[test]
fn energies_path_override_reads_the_other_layout_and_a_missing_one_is_named() {
    let (code, out, err) = run(&[
        "inspect",
        "fixtures/bad/no_sector.h5",
        "--energies-path",
        "/results/evals",
    ]);
    assert_eq!(code, Some(0), "{err}");
    assert!(out.contains("sector results (group /results)"), "{out}");
    fails_with(
        &[
            "inspect",
            "fixtures/bad/no_sector.h5",
            "--energies-path",
            "/results/nothing",
        ],
        "fixtures/bad/no_sector.h5: /results/nothing: missing dataset (given as the energies path)",
    );
}

#[test]
fn missing_dataset_in_a_csr_group() {
    fails_with(
        &["inspect", "fixtures/bad/csr_missing.h5"],
        "fixtures/bad/csr_missing.h5: /observables/hop/indptr: missing dataset (a CSR group needs data, indices, indptr and attribute shape)",
    );
}

#[test]
fn eigenvector_shape_does_not_match_energies() {
    fails_with(
        &["inspect", "fixtures/bad/shape_vectors.h5"],
        "fixtures/bad/shape_vectors.h5: /eigenvectors: shape [10, 7] does not match 8 energies (layout [dim, n])",
    );
}

#[test]
fn observable_shape_does_not_match_dimension() {
    fails_with(
        &["inspect", "fixtures/bad/shape_observable.h5"],
        "fixtures/bad/shape_observable.h5: /observables/sz: shape [9] does not match the dimension 8 of the eigenvectors",
    );
}

#[test]
fn nan_in_energies() {
    fails_with(
        &["inspect", "fixtures/bad/nan_energies.h5"],
        "fixtures/bad/nan_energies.h5: /energies: non-finite value NaN at index [2]",
    );
}

#[test]
fn inf_in_eigenvectors() {
    fails_with(
        // the square set is read as columns (NumPy's convention), said explicitly: no
        // ambiguity warning before the error
        &[
            "inspect",
            "--verify",
            "fixtures/bad/inf_vectors.h5",
            "--layout",
            "columns",
        ],
        "fixtures/bad/inf_vectors.h5: /eigenvectors: non-finite value inf in component 2 of the eigenvector of state 0 (file order)",
    );
}

#[test]
fn integer_energies_are_the_wrong_type() {
    fails_with(
        &["inspect", "fixtures/bad/int_energies.h5"],
        "fixtures/bad/int_energies.h5: /energies: found integer elements (int64); floating-point numbers (float32/float64) or complex compounds of two of them with fields {r, i}, {real, imag}, {re, im}, {Re, Im}, {Real, Imaginary}, {real, imaginary} are needed",
    );
}

#[test]
fn string_observable_is_the_wrong_type() {
    fails_with(
        &["inspect", "fixtures/bad/string_observable.h5"],
        "fixtures/bad/string_observable.h5: /observables/name: found string elements (string (len 4)); floating-point numbers (float32/float64) or complex compounds of two of them with fields {r, i}, {real, imag}, {re, im}, {Re, Im}, {Real, Imaginary}, {real, imaginary} are needed",
    );
}

#[test]
fn unknown_sector_lists_the_existing_ones() {
    fails_with(
        &[
            "inspect",
            "fixtures/bad/many_sectors.h5",
            "--sector",
            "nope",
        ],
        "fixtures/bad/many_sectors.h5: no sector named 'nope'; sectors: even, odd",
    );
}

#[test]
fn non_orthonormal_eigenvectors() {
    // v1 = v0 + 1e-3 v1 in the script: ⟨v0|v1⟩ = 1, so max |VᴴV − 1| = 1.0
    let (code, out, err) = run(&[
        "inspect",
        "--verify",
        "fixtures/bad/not_orthonormal.h5",
        "--layout",
        "columns",
    ]);
    assert_eq!(code, Some(2));
    assert!(
        out.contains("over 8 sampled states (tolerance 1e-8): FAIL"),
        "{out}"
    );
    assert_eq!(
        err,
        "error: fixtures/bad/not_orthonormal.h5: /eigenvectors: eigenvectors are not orthonormal: max |V^H V - 1| = 1.000e0 over 8 sampled states exceeds 1e-8\n"
    );
}

#[test]
fn non_hermitian_observable() {
    // the script adds 0.5 to A[0, 5] of a symmetric matrix
    fails_with(
        &["inspect", "--verify", "fixtures/bad/not_hermitian.h5"],
        "fixtures/bad/not_hermitian.h5: /observables/x: not Hermitian: |A[5, 0] - conj(A[0, 5])| = 5.000e-1 exceeds 1e-10 x max|A| = 2.166e-10",
    );
}

#[test]
fn csr_column_index_out_of_range() {
    fails_with(
        &["inspect", "--verify", "fixtures/bad/csr_bad_index.h5"],
        "fixtures/bad/csr_bad_index.h5: /observables/hop/indices: column index 8 at position 1 is out of range (the matrix has 8 columns)",
    );
}

#[test]
fn good_file_verifies_and_prints_json() {
    let (code, out, err) = run(&["inspect", "--verify", "--json", "fixtures/good.h5"]);
    assert_eq!(code, Some(0), "{err}");
    assert!(err.is_empty(), "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let sectors = v["files"][0]["sectors"].as_array().unwrap();
    assert_eq!(sectors.len(), 5);
    for s in sectors {
        let ortho = &s["verify"]["orthonormality"];
        if !ortho.is_null() {
            assert_eq!(ortho["pass"], true);
        }
    }
}

#[test]
fn bad_unfolding_options_are_one_line_usage_errors() {
    fails_with(
        &["levels", "fixtures/good.h5", "--unfold", "spline:3"],
        "--unfold spline:3: unknown unfolding 'spline:3': expected poly:D, kernel:K or kernel-energy:SIGMA",
    );
    fails_with(
        &["levels", "fixtures/good.h5", "--unfold", "kernel:-2"],
        "--unfold kernel:-2: kernel width (in mean spacings) '-2' must be a positive number",
    );
    fails_with(
        &[
            "levels",
            "fixtures/good.h5",
            "--unfold",
            "poly:3",
            "--unfold-degree",
            "3",
        ],
        "--unfold and --unfold-degree both given: use one (--unfold-degree D is --unfold poly:D)",
    );
}

#[test]
fn levels_reports_the_unfolding_used() {
    // our own option syntax and JSON keys (common practice, no source)
    let spec = |args: &[&str]| -> Vec<String> {
        let mut full = vec!["levels", "fixtures/good.h5", "--sector", "chain", "--json"];
        full.extend(args);
        let (code, out, err) = run(&full);
        assert_eq!(code, Some(0), "{err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        v["sectors"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["unfolding"]["spec"].as_str().unwrap().to_string())
            .collect()
    };
    // 16 levels in the window: the degree is lowered to n/10 = 1 whatever is asked
    assert_eq!(spec(&[]), ["poly:1"]);
    assert_eq!(spec(&["--unfold-degree", "3"]), ["poly:1"]);
    assert_eq!(spec(&["--unfold", "kernel:6"]), ["kernel:6"]);
    assert_eq!(spec(&["--unfold", "kernel"]), ["kernel:32"]);
    assert_eq!(
        spec(&["--unfold", "kernel-energy:0.25"]),
        ["kernel-energy:0.25"]
    );
}

#[test]
fn dense_observable_larger_than_the_memory_budget() {
    // A dense 32×32 float64 observable is held whole: 8 KiB, over a 4000-byte budget.
    // Our own wording (common practice, no source).
    let args = |memory: &'static str| {
        [
            "diagonal",
            "fixtures/good.h5",
            "--sector",
            "chain",
            "--observable",
            "dense_x",
            "--memory",
            memory,
            "--json",
        ]
    };
    fails_with(
        &args("4000"),
        "fixtures/good.h5: /chain/observables/dense_x: dense observable of shape 32×32 needs 8.00 KiB in memory (8.00 KiB for all observables held whole), more than the memory budget 3.91 KiB: give a larger --memory, or store it in CSR or diagonal form",
    );
    // the same observable under a budget that holds it analyses normally
    let (code, _out, err) = run(&args("1M"));
    assert_eq!(code, Some(0), "{err}");
}

#[test]
fn a_closed_pipe_is_a_normal_end() {
    // `eigentherm levels FILE | head -1`: the reader goes away after one line; the command
    // ends with status 0 and nothing on stderr (common practice of command-line tools, no
    // source). The pipe is closed before the command writes, so the write must fail.
    use std::process::Stdio;
    let mut child = Command::new(env!("CARGO_BIN_EXE_eigentherm"))
        .args(["levels", "fixtures/good.h5"])
        .current_dir(Path::new(env!("CARGO_MANIFEST_DIR")))
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the binary runs");
    drop(child.stdout.take());
    let out = child.wait_with_output().expect("the binary ends");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{err}");
    assert!(!err.contains("error") && !err.contains("panicked"), "{err}");
}

#[test]
fn exit_status_separates_usage_input_and_analysis_errors() {
    // 0 ok, 1 analysis error, 2 usage or input error (the README's exit statuses)
    let (code, _, err) = run(&["levels", "fixtures/good.h5", "--window", "0.5:0.4"]);
    assert_eq!(code, Some(2), "{err}");
    let (code, _, err) = run(&["levels", "fixtures/good.h5", "--threads", "0"]);
    assert_eq!(code, Some(2), "{err}");
    let (code, _, err) = run(&["levels", "fixtures/good.h5", "--threads", "1", "--json"]);
    assert_eq!(code, Some(0), "{err}");
    // a window holding one level: the analysis cannot be carried out on a valid file
    let args = [
        "levels",
        "fixtures/good.h5",
        "--sector",
        "chain",
        "--window",
        "0.5:0.51",
    ];
    let (code, _, err) = run(&args);
    assert_eq!(
        err,
        "error: fixtures/good.h5: /chain/energies: window 0.5:0.51 holds 1 of 32 levels; level statistics need at least 4\n"
    );
    assert_eq!(code, Some(1), "{err}");
}

/// Runs `eigentherm ARGS` with stderr redirected to a file and `env` set; returns the exit
/// code and the file's text.
fn stderr_to_file(args: &[&str], env: &[(&str, &str)]) -> (Option<i32>, String) {
    let dir = tempfile::tempdir().unwrap();
    let log = dir.path().join("stderr.log");
    let mut cmd = std::process::Command::new(env!("CARGO_BIN_EXE_eigentherm"));
    cmd.args(args)
        .env_remove("EIGENTHERM_PROGRESS")
        .stdout(std::process::Stdio::null())
        .stderr(std::fs::File::create(&log).unwrap());
    for (k, v) in env {
        cmd.env(k, v);
    }
    let code = cmd.status().unwrap().code();
    (code, std::fs::read_to_string(&log).unwrap())
}

#[test]
fn progress_always_logs_a_line_per_stage_to_a_file() {
    // The contract for batch logs (common practice, no source): with stderr in a
    // file, `--progress always` (or the environment variable) writes plain lines with the
    // elapsed time and rate; `auto` and `never` write none.
    let dir = tempfile::tempdir().unwrap();
    let files = crate::util::mixed_field_chains(dir.path(), &[6, 8]);
    let out = dir.path().join("study");
    let mut args = vec!["study"];
    args.extend(files.iter().map(|p| p.to_str().unwrap()));
    args.extend(["--observable", "sz_site", "--out", out.to_str().unwrap()]);
    let progress_lines = |log: &str| -> Vec<String> {
        log.lines()
            .filter(|l| l.starts_with("progress: "))
            .map(String::from)
            .collect()
    };

    let mut always = args.clone();
    always.extend(["--progress", "always"]);
    let (code, log) = stderr_to_file(&always, &[]);
    assert_eq!(code, Some(0), "{log}");
    let lines = progress_lines(&log);
    // the sector loop: a start line and a done line with 4 of 4 steps (two chains of two
    // reflection sectors each), time and rate; the per-sector passes inside it are quiet
    assert!(
        lines
            .iter()
            .any(|l| l == "progress: sectors: started, 4 steps"),
        "{log}"
    );
    assert!(!lines.iter().any(|l| l.contains("projecting")), "{log}");
    let done = lines
        .iter()
        .find(|l| l.starts_with("progress: sectors: done, 4/4 steps in "))
        .unwrap_or_else(|| panic!("{log}"));
    assert!(done.ends_with(" steps/s"), "{done}");
    // the writing of the folder is a stage of its own
    assert!(
        lines
            .iter()
            .any(|l| l.starts_with("progress: writing the report folder: done in ")),
        "{log}"
    );
    // every line of a stage that started also ends
    let started = lines.iter().filter(|l| l.contains(": started")).count();
    let ended = lines.iter().filter(|l| l.contains(": done")).count();
    assert_eq!(started, ended, "{log}");

    // the environment variable does the same; the flag overrides it
    let (code, log) = stderr_to_file(&args, &[("EIGENTHERM_PROGRESS", "always")]);
    assert_eq!(code, Some(0), "{log}");
    assert!(!progress_lines(&log).is_empty(), "{log}");
    let mut never = args.clone();
    never.extend(["--progress", "never"]);
    let (code, log) = stderr_to_file(&never, &[("EIGENTHERM_PROGRESS", "always")]);
    assert_eq!(code, Some(0), "{log}");
    assert!(progress_lines(&log).is_empty(), "{log}");
    // auto with stderr in a file: nothing
    let (code, log) = stderr_to_file(&args, &[]);
    assert_eq!(code, Some(0), "{log}");
    assert!(progress_lines(&log).is_empty(), "{log}");
    // a bad value of the variable is a one-line usage error naming it
    let (code, log) = stderr_to_file(&args, &[("EIGENTHERM_PROGRESS", "loud")]);
    assert_eq!(code, Some(2), "{log}");
    assert_eq!(
        log.trim_end(),
        "error: EIGENTHERM_PROGRESS loud: expected auto, always or never"
    );
}
