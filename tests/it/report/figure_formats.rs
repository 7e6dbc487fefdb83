//! Every figure of a study has a PDF and a PNG twin (`--figure-format`, default
//! svg,pdf,png). Checks: the PDF and PNG signatures and the PNG's IHDR size (PDF 1.7 and
//! PNG specifications), fonts embedded in the PDF, and a render of one PDF by pdftoppm
//! where it is installed (common practice, no source).

use crate::util::{mixed_field_chains, run_binary};
use std::path::Path;

fn study(dir: &Path, extra: &[&str]) -> (Option<i32>, String, std::path::PathBuf) {
    let files = mixed_field_chains(dir, &[6, 8]);
    let out = dir.join("study");
    let mut args: Vec<&str> = vec!["study"];
    args.extend(files.iter().map(|p| p.to_str().unwrap()));
    args.extend(["--observable", "sz_site", "--out", out.to_str().unwrap()]);
    args.extend(extra);
    let (code, _, err) = run_binary(&args);
    (code, err, out)
}

/// The `width` attribute of an SVG's root element, in pixels.
fn svg_width(svg: &str) -> u32 {
    let at = svg.find("width=\"").unwrap() + 7;
    let end = svg[at..].find('"').unwrap() + at;
    svg[at..end]
        .trim_end_matches("px")
        .parse::<f64>()
        .unwrap()
        .round() as u32
}

#[test]
fn every_figure_has_a_pdf_and_a_png_twin() {
    let dir = tempfile::tempdir().unwrap();
    let (code, err, out) = study(dir.path(), &[]);
    assert_eq!(code, Some(0), "{err}");
    let svgs: Vec<_> = std::fs::read_dir(&out)
        .unwrap()
        .flatten()
        .map(|e| e.path())
        .filter(|p| p.extension().is_some_and(|x| x == "svg"))
        .collect();
    assert!(svgs.len() >= 5, "{svgs:?}");
    if err.contains("figures written as SVG only") {
        eprintln!("SKIP the PDF/PNG checks: no font installed ({err})");
        return;
    }
    for svg in &svgs {
        let pdf = std::fs::read(svg.with_extension("pdf")).unwrap();
        assert!(pdf.starts_with(b"%PDF-"), "{}", svg.display());
        assert!(
            pdf.windows(9).any(|w| w == b"/FontFile"),
            "fonts embedded: {}",
            svg.display()
        );
        let png = std::fs::read(svg.with_extension("png")).unwrap();
        assert!(png.starts_with(b"\x89PNG\r\n\x1a\n"), "{}", svg.display());
        let w = u32::from_be_bytes(png[16..20].try_into().unwrap());
        let want = 2 * svg_width(&std::fs::read_to_string(svg).unwrap());
        assert!(
            w.abs_diff(want) <= 2,
            "{}: PNG width {w}, 2 x SVG {want}",
            svg.display()
        );
    }
    // one PDF rendered by poppler, where installed
    let pdf = svgs[0].with_extension("pdf");
    let page = dir.path().join("page");
    match std::process::Command::new("pdftoppm")
        .args(["-png", "-r", "72", "-singlefile"])
        .arg(&pdf)
        .arg(&page)
        .status()
    {
        Ok(s) => {
            assert!(s.success(), "pdftoppm failed on {}", pdf.display());
            let png = std::fs::read(page.with_extension("png")).unwrap();
            assert!(png.starts_with(b"\x89PNG"));
        }
        Err(_) => eprintln!("SKIP the pdftoppm render: pdftoppm is not installed"),
    }
}

#[test]
fn figure_formats_can_be_chosen_and_a_bad_one_is_a_usage_error() {
    let dir = tempfile::tempdir().unwrap();
    let (code, err, out) = study(dir.path(), &["--figure-format", "svg"]);
    assert_eq!(code, Some(0), "{err}");
    let names: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    assert!(names.iter().any(|n| n.ends_with(".svg")));
    assert!(
        !names
            .iter()
            .any(|n| n.ends_with(".pdf") || n.ends_with(".png")),
        "{names:?}"
    );
    let dir = tempfile::tempdir().unwrap();
    let (code, err, _) = study(dir.path(), &["--figure-format", "pdf,gif"]);
    assert_eq!(code, Some(2), "{err}");
    assert_eq!(
        err.trim_end(),
        "error: --figure-format 'pdf,gif': expected svg, pdf and/or png, comma-separated"
    );
}
