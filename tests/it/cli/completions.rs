//! `eigentherm completions SHELL` and `eigentherm manpage`, through the binary: every
//! subcommand is in every script and in the page, the scripts parse, a shell we do not
//! support is a usage error. Expectations: common practice, no source.

use std::process::Command;

use crate::util::run_binary as run;

/// The subcommands as the command line defines them (not a hand-kept list).
fn subcommands() -> Vec<String> {
    let names = eigentherm::cli::subcommand_names();
    // the thirteen subcommands of `eigentherm --help` (common practice, no source): a
    // change here is a change of the command line, to be made in the README as well
    assert_eq!(names.len(), 13, "{names:?}");
    assert!(names.iter().any(|n| n == "completions"), "{names:?}");
    assert!(names.iter().any(|n| n == "manpage"), "{names:?}");
    names
}

/// Runs `completions SHELL` and checks that it succeeds and names every subcommand.
fn script(shell: &str) -> String {
    let (code, out, err) = run(&["completions", shell]);
    assert_eq!(code, Some(0), "completions {shell}: {err}");
    assert!(err.is_empty(), "{err}");
    assert!(
        out.len() > 500,
        "completions {shell}: a short script: {out}"
    );
    for name in subcommands() {
        assert!(out.contains(&name), "completions {shell} miss {name}");
    }
    out
}

/// Whether `program` runs here (`program --version` succeeds).
fn installed(program: &str) -> bool {
    Command::new(program)
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success())
}

/// `program -n FILE` (parse without running) accepts `text`; skipped with a printed
/// reason when the shell is not installed.
fn parses_in(program: &str, text: &str) {
    if !installed(program) {
        println!("skipped: {program} is not installed, its script is not syntax-checked");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("script");
    std::fs::write(&path, text).unwrap();
    let out = Command::new(program).arg("-n").arg(&path).output().unwrap();
    assert!(
        out.status.success(),
        "{program} -n rejects the script: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn bash_completions_name_every_subcommand_and_parse() {
    let s = script("bash");
    assert!(s.contains("complete "), "no `complete` line: {s}");
    parses_in("bash", &s);
}

#[test]
fn zsh_completions_name_every_subcommand() {
    let s = script("zsh");
    assert!(
        s.starts_with("#compdef eigentherm"),
        "{}",
        &s[..80.min(s.len())]
    );
    parses_in("zsh", &s);
}

#[test]
fn fish_completions_name_every_subcommand() {
    let s = script("fish");
    assert!(s.contains("complete -c eigentherm"), "{s}");
    parses_in("fish", &s);
}

#[test]
fn an_unsupported_shell_is_a_usage_error() {
    for shell in ["tcsh", "powershell", "BASH"] {
        let (code, out, err) = run(&["completions", shell]);
        assert_eq!(code, Some(2), "completions {shell:?}: {err}");
        assert!(out.is_empty(), "{out}");
        assert!(err.contains("invalid value"), "{err}");
        assert!(!err.contains("panicked"), "{err}");
    }
    let (code, _, err) = run(&["completions"]);
    assert_eq!(code, Some(2), "no shell: {err}");
}

#[test]
fn completions_into_a_closed_pipe_end_quietly() {
    // a reader that goes away is a normal end (README exit statuses): status 0, no message
    let mut child = Command::new(env!("CARGO_BIN_EXE_eigentherm"))
        .args(["completions", "bash"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(0));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.is_empty(), "{err}");
}

/// The first request of a page after the string definitions (`.ds`, under `.ie`/`.el`)
/// that open every page clap_mangen writes: its `.TH` title line.
fn title_line(page: &str) -> &str {
    page.lines()
        .find(|l| !l.starts_with(".ie ") && !l.starts_with(".el ") && !l.starts_with(".\\\""))
        .unwrap_or_default()
}

/// The `.TH` line of the main page and its SUBCOMMANDS section.
fn check_main_page(page: &str) {
    let first = title_line(page);
    assert!(first.starts_with(".TH eigentherm 1 "), "{first}");
    assert!(first.contains(env!("CARGO_PKG_VERSION")), "{first}");
    let subs = page.find(".SH SUBCOMMANDS").expect("a SUBCOMMANDS section");
    for name in subcommands() {
        assert!(
            page[subs..].contains(&format!("eigentherm\\-{name}(1)")),
            "{name} missing from the SUBCOMMANDS section"
        );
    }
}

#[test]
fn manpage_starts_with_th_lists_subcommands_and_renders() {
    let (code, page, err) = run(&["manpage"]);
    assert_eq!(code, Some(0), "{err}");
    check_main_page(&page);
    if !installed("groff") {
        println!("skipped: groff is not installed, the page is not rendered");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("eigentherm.1");
    std::fs::write(&path, &page).unwrap();
    let out = Command::new("groff")
        // -k: UTF-8 input (the page has ω, ², Σ); -ww: every warning; -P-cbou: plain text
        .args(["-k", "-man", "-Tutf8", "-ww", "-P-cbou"])
        .arg(&path)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    let warnings = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "groff: {warnings}");
    assert!(warnings.is_empty(), "groff warnings: {warnings}");
    assert!(text.contains("SUBCOMMANDS"), "{text}");
    assert!(text.contains("eigentherm-levels(1)"), "{text}");
    assert!(text.contains("--threads"), "{text}");
}

#[test]
fn manpage_dir_writes_one_page_per_subcommand() {
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("man1");
    let (code, out, err) = run(&["manpage", "--dir", folder.to_str().unwrap()]);
    assert_eq!(code, Some(0), "{err}");
    let main = std::fs::read_to_string(folder.join("eigentherm.1")).unwrap();
    check_main_page(&main);
    let names = subcommands();
    for name in &names {
        let path = folder.join(format!("eigentherm-{name}.1"));
        let page = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path:?}: {e}"));
        let first = title_line(&page);
        assert!(
            first.starts_with(&format!(".TH eigentherm-{name} 1 ")),
            "{first}"
        );
        assert!(first.contains(env!("CARGO_PKG_VERSION")), "{first}");
        assert!(out.contains(&path.display().to_string()), "{out}");
    }
    // the main page and one per subcommand, no temporary file left behind
    let files = std::fs::read_dir(&folder).unwrap().count();
    assert_eq!(files, names.len() + 1);
}
