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

/// What is wrong with a LaTeX table written by eigentherm (booktabs `tabular`, plain math):
/// unbalanced braces, math shifts or environments, a row whose cell count differs from the
/// declared columns, escaped pipes or text-mode accents, `siunitx`, or non-ASCII characters.
/// Empty when it parses (common practice, no source: what pdflatex needs to compile it).
pub fn latex_table_problems(tex: &str) -> Vec<String> {
    let mut problems = Vec::new();
    // Characters with their escapes (`\{`, `\$`, `\&`, ...) removed.
    let plain = |s: &str| -> String {
        let mut out = String::new();
        let mut it = s.chars().peekable();
        while let Some(c) = it.next() {
            if c == '\\' && matches!(it.peek(), Some('{' | '}' | '$' | '&' | '%' | '#' | '_')) {
                it.next();
                continue;
            }
            out.push(c);
        }
        out
    };
    let p = plain(tex);
    let mut depth = 0i64;
    for c in p.chars() {
        depth += match c {
            '{' => 1,
            '}' => -1,
            _ => 0,
        };
        if depth < 0 {
            problems.push("a closing brace without an opening one".to_string());
            break;
        }
    }
    if depth != 0 {
        problems.push(format!("braces unbalanced by {depth}"));
    }
    for env in ["tabular", "table"] {
        let (b, e) = (
            tex.matches(&format!("\\begin{{{env}}}")).count(),
            tex.matches(&format!("\\end{{{env}}}")).count(),
        );
        if b != e {
            problems.push(format!("{b} \\begin{{{env}}} for {e} \\end{{{env}}}"));
        }
    }
    for bad in ["\\textbar", "\\~{", "siunitx", "\\SI{", "\\num{", "$$"] {
        if tex.contains(bad) {
            problems.push(format!("contains {bad}"));
        }
    }
    if let Some(c) = tex.chars().find(|c| !c.is_ascii()) {
        problems.push(format!("non-ASCII character {c:?}"));
    }
    let Some(spec) = tex
        .split("\\begin{tabular}{")
        .nth(1)
        .and_then(|s| s.split('}').next())
    else {
        problems.push("no \\begin{tabular}{...}".to_string());
        return problems;
    };
    let declared = spec
        .chars()
        .filter(|c| matches!(c, 'l' | 'r' | 'c'))
        .count();
    for rule in ["\\toprule", "\\midrule", "\\bottomrule"] {
        if !tex.contains(rule) {
            problems.push(format!("no {rule}"));
        }
    }
    for line in tex.lines().filter(|l| l.trim_end().ends_with("\\\\")) {
        let row = plain(line);
        let cells = row.matches('&').count() + 1;
        if cells != declared {
            problems.push(format!("{cells} cells for {declared} columns: {line}"));
        }
        if row.matches('$').count() % 2 != 0 {
            problems.push(format!("odd number of math shifts: {line}"));
        }
    }
    problems
}

/// Compiles `tabular` (a table as eigentherm writes it) inside a `table` environment of a
/// minimal document with pdflatex, when pdflatex is installed; prints why it is skipped
/// otherwise. Panics with the log when the compilation fails.
pub fn compile_latex_table(tabular: &str) {
    let Ok(out) = std::process::Command::new("pdflatex")
        .arg("--version")
        .output()
    else {
        println!("pdflatex not found: skipping the LaTeX compilation (the table was parsed)");
        return;
    };
    assert!(out.status.success());
    let dir = tempfile::tempdir().unwrap();
    let doc = format!(
        "\\documentclass{{article}}\n\\usepackage{{booktabs}}\n\\begin{{document}}\n\
         \\begin{{table}}\n\\centering\n{tabular}\\end{{table}}\n\\end{{document}}\n"
    );
    std::fs::write(dir.path().join("t.tex"), doc).unwrap();
    let run = std::process::Command::new("pdflatex")
        .args(["-interaction=nonstopmode", "-halt-on-error", "t.tex"])
        .current_dir(dir.path())
        .output()
        .unwrap();
    let log = String::from_utf8_lossy(&run.stdout);
    assert!(run.status.success(), "pdflatex failed:\n{log}");
    assert!(!log.contains("Missing character"), "{log}");
}
