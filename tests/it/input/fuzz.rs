//! Corrupted files: every command ends with exit status 0, 1 or 2, never a signal or a
//! panic, with exactly one `error:` line when it fails, and the input unchanged. The two
//! committed cases (`fixtures/bad/heap_crash.h5`, `heap_hang.h5`: seeds 459 and 106 of
//! `scripts/fuzz` on `fixtures/good.h5`) made libhdf5 1.10.8 crash (SIGSEGV in its global
//! heap reads) and hang; a seeded subset of byte flips and truncations runs here, the full
//! set in `scripts/fuzz`. Expectations: the tool's contract (common practice, no source).

use rand::{Rng, SeedableRng};
use std::path::Path;
use std::process::Command;

/// Runs the binary (file locking off, as the other forking tests do; a 5 s deadline for
/// the opening of a file) and returns (exit code or None for a signal, stderr).
fn run(args: &[&str]) -> (Option<i32>, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_eigentherm"))
        .env("HDF5_USE_FILE_LOCKING", "FALSE")
        .env("EIGENTHERM_OPEN_DEADLINE", "5")
        .env_remove("EIGENTHERM_SUPERVISOR")
        .args(args)
        .output()
        .expect("the binary runs");
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Asserts the contract for one run on `file` (bytes `before`).
fn check(args: &[&str], file: &Path, before: &[u8]) {
    let (code, err) = run(args);
    let what = format!("{args:?}");
    assert!(
        matches!(code, Some(0..=2)),
        "{what}: ended by a signal or status {code:?}\n{err}"
    );
    assert!(!err.contains("panicked"), "{what}: {err}");
    if code != Some(0) {
        let errors = err.lines().filter(|l| l.starts_with("error: ")).count();
        assert_eq!(errors, 1, "{what}: {err}");
        assert!(
            err.trim_end()
                .lines()
                .last()
                .unwrap()
                .starts_with("error: "),
            "{what}: {err}"
        );
    }
    assert_eq!(
        std::fs::read(file).unwrap(),
        before,
        "{what}: the input changed"
    );
}

#[test]
fn files_that_crashed_or_hung_the_hdf5_library_end_with_one_error_line() {
    for name in ["heap_crash.h5", "heap_hang.h5"] {
        let file = Path::new("fixtures/bad").join(name);
        let before = std::fs::read(&file).unwrap();
        let f = file.to_str().unwrap();
        check(&["levels", f], &file, &before);
        let (code, err) = run(&["levels", f]);
        assert_eq!(code, Some(2), "{err}");
        assert!(err.contains(name), "the error names the file: {err}");
    }
}

#[test]
fn seeded_byte_flips_and_truncations_never_end_with_a_signal_or_a_panic() {
    let good = std::fs::read("fixtures/good.h5").unwrap();
    let dir = tempfile::tempdir().unwrap();
    for seed in 0..40u64 {
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
        let mut bytes = good.clone();
        match seed % 4 {
            0 => bytes.truncate(rng.random_range(0..good.len())),
            1 => {
                let at = rng.random_range(0..good.len());
                let end = (at + rng.random_range(1..256)).min(good.len());
                bytes[at..end].fill(0);
            }
            _ => {
                for _ in 0..rng.random_range(1..9) {
                    let at = rng.random_range(0..good.len());
                    bytes[at] ^= 1 << rng.random_range(0..8);
                }
            }
        }
        let file = dir.path().join(format!("flip{seed}.h5"));
        std::fs::write(&file, &bytes).unwrap();
        let f = file.to_str().unwrap();
        for args in [
            vec!["levels", f],
            vec!["inspect", f, "--verify"],
            vec!["diagonal", f, "--json"],
        ] {
            check(&args, &file, &bytes);
        }
    }
}
