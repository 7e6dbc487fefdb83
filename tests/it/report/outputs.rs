//! Outputs never touch inputs: `study --out` at an input, at a folder holding one, at a
//! folder another program wrote or at a device is refused; a study folder is replaced as a
//! whole; pipes and devices are refused as inputs. Messages: our own wording (common
//! practice, no source).

use crate::util::{mixed_field_chains, run_binary};
use std::path::{Path, PathBuf};

/// Bytes of every file under `dir` (sorted by path), to show that nothing changed.
fn snapshot(dir: &Path) -> Vec<(PathBuf, Vec<u8>)> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap().flatten() {
            let p = e.path();
            if p.is_dir() {
                stack.push(p);
            } else {
                out.push((p.clone(), std::fs::read(&p).unwrap()));
            }
        }
    }
    out.sort();
    out
}

/// `study FILES --observable sz_site --out OUT`: (exit code, stderr).
fn study(files: &[PathBuf], out: &Path) -> (Option<i32>, String) {
    let mut args: Vec<&str> = vec!["study"];
    args.extend(files.iter().map(|p| p.to_str().unwrap()));
    args.extend(["--observable", "sz_site", "--out", out.to_str().unwrap()]);
    let (code, _, err) = run_binary(&args);
    (code, err)
}

#[test]
fn study_refuses_outputs_that_would_touch_inputs_or_foreign_folders() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("data");
    std::fs::create_dir(&data).unwrap();
    let files = mixed_field_chains(&data, &[6, 8]);
    let before = snapshot(dir.path());

    // an input file as the folder
    let (code, err) = study(&files, &files[0]);
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.trim_end()
            .ends_with("is an input of this study; choose another --out folder"),
        "{err}"
    );
    // the folder holding the inputs (replacing it would delete them)
    let (code, err) = study(&files, &data);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("holds the input"), "{err}");
    // a non-empty folder written by someone else
    let foreign = dir.path().join("notes");
    std::fs::create_dir(&foreign).unwrap();
    std::fs::write(foreign.join("thesis.tex"), "\\documentclass{article}").unwrap();
    let before_foreign = snapshot(dir.path());
    let (code, err) = study(&files, &foreign);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("was not written by eigentherm study"), "{err}");
    assert_eq!(snapshot(dir.path()), before_foreign);
    std::fs::remove_dir_all(&foreign).unwrap();
    // a device
    let (code, err) = study(&files, Path::new("/dev/null"));
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("/dev/null: exists and is not a directory"),
        "{err}"
    );
    // nothing was written or changed anywhere
    assert_eq!(snapshot(dir.path()), before);
}

#[test]
fn a_study_folder_is_replaced_as_a_whole() {
    let dir = tempfile::tempdir().unwrap();
    let files = mixed_field_chains(dir.path(), &[6, 8]);
    let out = dir.path().join("report");
    let (code, err) = study(&files, &out);
    assert_eq!(code, Some(0), "{err}");
    assert!(out.join(".eigentherm-study").is_file());
    assert!(out.join("report.html").is_file());
    // a file of the first run that the second does not write, and a staging folder left by
    // a killed run (a process id above Linux's largest, 2^22: never alive)
    std::fs::write(out.join("stale-figure.svg"), "<svg/>").unwrap();
    let stale = dir.path().join(".report.eigentherm-4194400-0");
    std::fs::create_dir(&stale).unwrap();
    let (code, err) = study(&files, &out);
    assert_eq!(code, Some(0), "{err}");
    assert!(
        !out.join("stale-figure.svg").exists(),
        "files of two runs mixed"
    );
    assert!(out.join("report.html").is_file());
    assert!(
        !stale.exists(),
        "the staging folder of a dead run was not removed"
    );
    let leftovers: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.contains(".eigentherm-"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
}

#[test]
fn pipes_and_devices_are_refused_as_inputs_and_as_file_outputs() {
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("pipe.h5");
    let made = std::process::Command::new("mkfifo").arg(&fifo).status();
    if made.map(|s| s.success()).unwrap_or(false) {
        let (code, _, err) = run_binary(&["levels", fifo.to_str().unwrap()]);
        assert_eq!(code, Some(2), "{err}");
        assert!(
            err.trim_end().ends_with("pipe.h5: is a FIFO (named pipe), not a regular file: HDF5 files are read by seeking, so pipes and devices are refused"),
            "{err}"
        );
    } else {
        eprintln!("SKIP the FIFO input check: mkfifo is not available");
    }
    let (code, _, err) = run_binary(&["levels", "/dev/zero"]);
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("/dev/zero: is a character device, not a regular file"),
        "{err}"
    );
    let (code, _, err) = run_binary(&[
        "generate",
        "--model",
        "goe",
        "--dim",
        "8",
        "--out",
        "/dev/null",
    ]);
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("/dev/null: exists and is a character device, not a regular file: refusing to replace it"),
        "{err}"
    );
}
