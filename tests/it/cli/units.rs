//! Sizes reach the user in binary units (`3.50 MiB`), never as a raw byte count; JSON keeps
//! the numbers. Binary prefixes: IEC 80000-13; rendering them: common practice, no source.

use eigentherm::provenance::Provenance;
use eigentherm::report::html::Page;

use crate::util::fails_naming;

#[test]
fn report_page_gives_input_sizes_in_binary_units() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("input.h5");
    // 3.5 MiB = 3 670 016 bytes
    std::fs::write(&input, vec![0u8; 3 * 1024 * 1024 + 512 * 1024]).unwrap();
    let mut prov = Provenance::of_this_run(Vec::new());
    prov.add_input(&input).unwrap();
    assert_eq!(prov.inputs[0].bytes, 3_670_016, "JSON keeps the byte count");
    let html = Page::new("sizes", prov).to_html();
    assert!(html.contains("<td class=\"num\">3.50 MiB</td>"), "{html}");
    assert!(!html.contains("3670016"), "a raw byte count on the page");
}

#[test]
fn budget_errors_give_both_sizes_in_binary_units() {
    // the dense 32 × 32 float64 observable of the fixture: 32·32·8 B = 8 KiB
    let line = fails_naming(
        &[
            "diagonal",
            "fixtures/good.h5",
            "--sector",
            "chain",
            "--observable",
            "dense_x",
            "--memory",
            "1K",
        ],
        &["8.00 KiB", "1.00 KiB", "--memory"],
    );
    assert!(!line.contains("8192"), "a raw byte count: {line}");
    assert!(!line.contains("1024"), "a raw byte count: {line}");
}
