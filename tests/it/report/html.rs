//! The HTML report: sections, inline SVG, provenance digests, atomic write.

use eigentherm::analysis::scaling::{
    decide, ExponentEvidence, RatioAtSize, RatioEvidence, VerdictInputs, MEAN_R_GOE,
    MEAN_R_POISSON, RULE,
};
use eigentherm::provenance::{sha256_file, shell_quote, Provenance};
use eigentherm::report::html::{Block, Page, Section, Summary};
use eigentherm::report::plot::{Axis, Figure, Series};
use eigentherm::report::table::{Column, Table};

#[test]
fn sha256_of_known_vectors() {
    // FIPS 180-2, Appendix B.1 and the empty-message digest (NIST test vectors).
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("abc.bin");
    std::fs::write(&p, b"abc").unwrap();
    assert_eq!(
        sha256_file(&p).unwrap(),
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    );
    let e = dir.path().join("empty.bin");
    std::fs::write(&e, b"").unwrap();
    assert_eq!(
        sha256_file(&e).unwrap(),
        "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
    );
    // Larger than the 1 MiB read buffer: equals the digest of the concatenation computed
    // in one call (sha2 crate as the reference).
    use sha2::Digest;
    let big: Vec<u8> = (0..3_000_000u32).map(|i| (i % 251) as u8).collect();
    let b = dir.path().join("big.bin");
    std::fs::write(&b, &big).unwrap();
    let want: String = sha2::Sha256::digest(&big)
        .iter()
        .map(|x| format!("{x:02x}"))
        .collect();
    assert_eq!(sha256_file(&b).unwrap(), want);
    let err = sha256_file(dir.path().join("missing.h5"))
        .unwrap_err()
        .to_string();
    assert!(err.contains("missing.h5"), "{err}");
    assert_eq!(shell_quote("--window=0.4:0.6"), "--window=0.4:0.6");
    assert_eq!(shell_quote("it's here"), "'it'\\''s here'");
}

fn demo_report(dir: &std::path::Path) -> Page {
    let input = dir.join("chain_L12.h5");
    std::fs::write(&input, b"not really hdf5, only hashed").unwrap();
    let mut prov = Provenance::of_this_run(vec![
        ("window".into(), "0.4:0.6".into()),
        ("omega_max".into(), "0.5".into()),
    ]);
    prov.add_input(&input).unwrap();

    let verdict = decide(&VerdictInputs {
        symmetry: eigentherm::data::SymmetryClass::Orthogonal,
        unresolved: None,
        gaussianity: Vec::new(),
        mean_r: vec![
            RatioAtSize {
                dimension: 512.0,
                mean_r: 0.52,
                stderr: 0.01,
            },
            RatioAtSize {
                dimension: 2048.0,
                mean_r: 0.529,
                stderr: 0.005,
            },
        ],
        fluctuation: Some(ExponentEvidence::variance(0.95, 0.06)),
        canonical: None,
        low_omega_ratio: Some(RatioEvidence {
            ratio: 2.1,
            stderr: 0.2,
        }),
    });
    let mut table = Table::new(vec![
        Column::new("dimension", "D"),
        Column::new("mean_r", "⟨r̃⟩"),
    ])
    .with_caption("Level statistics <by size>");
    table
        .push_row(vec![512usize.into(), (0.52, 0.01).into()])
        .unwrap();
    table
        .push_row(vec![2048usize.into(), (0.529, 0.005).into()])
        .unwrap();

    let r_fig = Figure::new("D (Hilbert-space dimension)", "⟨r̃⟩")
        .axes(Axis::Log, Axis::Linear)
        .series(Series::points(
            "sector A",
            vec![(512.0, 0.52), (2048.0, 0.529)],
        ))
        .reference(MEAN_R_POISSON, "Poisson")
        .reference(MEAN_R_GOE, "GOE");
    let broken = Figure::new("x", "y").axes(Axis::Log, Axis::Log);

    let mut report = Page::new("eigentherm study: invented chain", prov);
    report
        .summary
        .push(Summary::from_report("chain / sector A / Sz_mid", &verdict));
    report.rule = Some(RULE.to_string());
    report.sections.push(
        Section::new("Level statistics")
            .text("Mean ratio of consecutive spacings & its error.")
            .table(table)
            .figure(&r_fig, "⟨r̃⟩ against dimension with Poisson/GOE references"),
    );
    report
        .sections
        .push(Section::new("Fluctuations").figure(&broken, "a figure with no data"));
    report
}

#[test]
fn html_report_has_every_section_and_inline_svg() {
    // Common practice, no source: structure of a self-contained report.
    let dir = tempfile::tempdir().unwrap();
    let report = demo_report(dir.path());
    let html = report.to_html();
    let order = [
        "<h1>eigentherm study: invented chain</h1>",
        "id=\"summary\"",
        "id=\"provenance\"",
        "<h2>Level statistics</h2>",
        "<h2>Fluctuations</h2>",
    ];
    let mut last = 0;
    for key in order {
        let at = html[last..]
            .find(key)
            .unwrap_or_else(|| panic!("{key} missing or out of order"));
        last += at;
    }
    assert!(html.contains("class=\"verdict thermalizes\""));
    assert!(html.contains("Finite-size evidence only"));
    assert!(html.contains("Verdict rule"));
    // Provenance: tool version, parameters, digest of the input.
    assert!(html.contains(concat!("eigentherm ", env!("CARGO_PKG_VERSION"))));
    assert!(html.contains("0.4:0.6"));
    let digest = sha256_file(dir.path().join("chain_L12.h5")).unwrap();
    assert!(html.contains(&digest));
    // Inline SVG, escaped text, table.
    assert_eq!(html.matches("<svg").count(), 1);
    assert!(html.contains("</svg>"));
    assert!(html.contains("&amp; its error"));
    assert!(html.contains("Level statistics &lt;by size&gt;"));
    assert!(html.contains("<td class=\"num\">0.529(5)</td>"));
    // The undrawable figure is shown, not dropped.
    assert!(html.contains("class=\"figure-missing\""));
    assert!(matches!(
        report.sections[1].blocks[0],
        Block::MissingFigure { .. }
    ));
    // Self-contained: no script, no external resource.
    assert!(!html.contains("<script"));
    assert!(!html.contains("src=\"http"));
    assert!(!html.contains("href=\"http"));
    assert!(!html.contains("<link"));
}

#[test]
fn report_is_written_atomically_and_reproducibly() {
    // Common practice, no source: same inputs give the same bytes (no time stamp).
    let dir = tempfile::tempdir().unwrap();
    let report = demo_report(dir.path());
    let out = dir.path().join("report.html");
    report.write(&out).unwrap();
    let first = std::fs::read(&out).unwrap();
    report.write(&out).unwrap();
    assert_eq!(first, std::fs::read(&out).unwrap());
    assert_eq!(first, report.to_html().into_bytes());
    // No temporary file left behind.
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names.len(), 2, "{names:?}");
    // A copy for scripts/check_report_html, without the deliberately missing figure.
    let mut good = report.clone();
    good.sections.truncate(1);
    good.write(std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("report-example.html"))
        .unwrap();
    let bad = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("report-broken.html");
    report.write(bad).unwrap();
    // Writing into a folder that does not exist is an error naming the path.
    let err = report
        .write(dir.path().join("no/such/dir/report.html"))
        .unwrap_err()
        .to_string();
    assert!(err.contains("no/such/dir"), "{err}");
}
