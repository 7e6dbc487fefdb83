//! File writers shared by the modules of the suite.
//!
//! It checks no values (common practice, no source): the model parameters below are the
//! demo's chosen couplings, not reference values; each check names its source where it is made.

use eigentherm::model::{build_chain, write_file, Boundary, ChainModel, ChainSpec, Reflection};
use std::path::{Path, PathBuf};

/// The open mixed-field Ising chain of `sites` sites with J = 1, g = 0.9045, h = 0.8090,
/// reflection sectors resolved (the demo's chaotic chain).
pub fn mixed_field_spec(sites: usize) -> ChainSpec {
    ChainSpec {
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
    }
}

/// Writes the chains of [`mixed_field_spec`] of lengths `sizes` into `dir` as `mfi{L}.h5`.
pub fn mixed_field_chains(dir: &Path, sizes: &[usize]) -> Vec<PathBuf> {
    sizes
        .iter()
        .map(|&l| {
            let path = dir.join(format!("mfi{l}.h5"));
            let sectors = build_chain(&mixed_field_spec(l)).unwrap();
            write_file(&path, &sectors).unwrap();
            path
        })
        .collect()
}

/// Runs `eigentherm ARGS` in the crate root and returns (exit code, stdout, stderr).
pub fn run_binary(args: &[&str]) -> (Option<i32>, String, String) {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_eigentherm"))
        .args(args)
        .current_dir(Path::new(env!("CARGO_MANIFEST_DIR")))
        .output()
        .expect("the binary runs");
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Asserts that `args` ends with exit status 2 and one stderr line starting `error: ` and
/// containing every one of `parts`, with at most warnings and notes before it; returns
/// that line.
pub fn fails_naming(args: &[&str], parts: &[&str]) -> String {
    let (code, _out, err) = run_binary(args);
    assert_eq!(code, Some(2), "exit code of {args:?}; stderr: {err}");
    assert!(!err.contains("panicked"), "{err}");
    let lines: Vec<&str> = err.lines().collect();
    let (last, before) = lines.split_last().expect("an error line");
    assert!(last.starts_with("error: "), "{err}");
    assert!(
        before
            .iter()
            .all(|l| l.starts_with("warning: ") || l.starts_with("note: ")),
        "one error line, only warnings and notes before it, for {args:?}: {err}"
    );
    for p in parts {
        assert!(last.contains(p), "{p:?} missing from: {err}");
    }
    last.to_string()
}

/// Creates an HDF5 file for writing without HDF5's file lock. The suite runs tests in
/// parallel threads and starts the binary from some of them; a child process inherits
/// every open descriptor (HDF5 does not mark them close-on-exec), and with it the lock of
/// a file another thread is writing, which then stays locked for the child's lifetime.
pub fn create_h5(path: &Path) -> hdf5::File {
    hdf5::File::with_options()
        .with_fapl(|p| p.file_locking(false))
        .create(path)
        .expect("a scratch HDF5 file")
}
