//! SVG figures converted to PDF (vector, with the glyphs used embedded as subset fonts,
//! for LaTeX) and to PNG (raster at a scale, for slides), in pure Rust: the SVG is parsed
//! once into a `usvg` tree, which `svg2pdf` writes as one PDF page and `resvg` renders.
//!
//! Text needs a font: the system's fonts are loaded once (fontconfig's folders) and the
//! generic `sans-serif` of the figures is mapped to the first installed of
//! [`SANS_FAMILIES`]. Without any of them the conversion is refused (the figures would lose
//! their labels); `scripts/setup` installs `fonts-dejavu-core` as root on Debian.

use crate::error::{Error, Result};
use std::sync::{Arc, OnceLock};

/// Families tried, in order, for the figures' `sans-serif`.
pub const SANS_FAMILIES: [&str; 6] = [
    "DejaVu Sans",
    "Liberation Sans",
    "Noto Sans",
    "FreeSans",
    "Arial",
    "Helvetica",
];

/// The fonts, loaded once; `None` when no family of [`SANS_FAMILIES`] is installed.
fn fonts() -> Option<Arc<resvg::usvg::fontdb::Database>> {
    static DB: OnceLock<Option<Arc<resvg::usvg::fontdb::Database>>> = OnceLock::new();
    DB.get_or_init(|| {
        let mut db = resvg::usvg::fontdb::Database::new();
        db.load_system_fonts();
        let family = SANS_FAMILIES.iter().find(|f| {
            db.faces()
                .any(|face| face.families.iter().any(|(name, _)| name == *f))
        })?;
        db.set_sans_serif_family(*family);
        Some(Arc::new(db))
    })
    .clone()
}

/// Whether PDF and PNG figures can be written (a font of [`SANS_FAMILIES`] is installed).
pub fn available() -> bool {
    fonts().is_some()
}

fn tree(svg: &str) -> Result<resvg::usvg::Tree> {
    let db = fonts().ok_or_else(|| {
        Error::other(format!(
            "no font for the figures' text is installed (looked for {}); install one (Debian: apt-get install fonts-dejavu-core) or write SVG only (--figure-format svg)",
            SANS_FAMILIES.join(", ")
        ))
    })?;
    let opts = resvg::usvg::Options {
        fontdb: db,
        ..Default::default()
    };
    resvg::usvg::Tree::from_str(svg, &opts).map_err(|e| Error::other(format!("figure SVG: {e}")))
}

/// A figure's PDF and PNG bytes (each when asked for).
pub type Twins = (Option<Vec<u8>>, Option<Vec<u8>>);

/// The twins of one figure from one parse of its SVG: the PDF when `pdf`, the PNG at
/// `png_scale` when given.
pub fn twins(svg: &str, pdf: bool, png_scale: Option<f32>) -> Result<Twins> {
    let t = tree(svg)?;
    let p = if pdf { Some(pdf_of(&t)?) } else { None };
    let g = match png_scale {
        Some(s) => Some(png_of(&t, s)?),
        None => None,
    };
    Ok((p, g))
}

/// The figure as a one-page PDF of the SVG's size (fonts embedded as subsets).
pub fn to_pdf(svg: &str) -> Result<Vec<u8>> {
    pdf_of(&tree(svg)?)
}

fn pdf_of(t: &resvg::usvg::Tree) -> Result<Vec<u8>> {
    svg2pdf::to_pdf(
        t,
        svg2pdf::ConversionOptions::default(),
        svg2pdf::PageOptions::default(),
    )
    .map_err(|e| Error::other(format!("figure PDF: {e}")))
}

/// The figure as a PNG at `scale` times the SVG's size, on white.
pub fn to_png(svg: &str, scale: f32) -> Result<Vec<u8>> {
    png_of(&tree(svg)?, scale)
}

fn png_of(t: &resvg::usvg::Tree, scale: f32) -> Result<Vec<u8>> {
    let size = t
        .size()
        .to_int_size()
        .scale_by(scale)
        .ok_or_else(|| Error::other("figure PNG: empty size"))?;
    let mut pixmap = resvg::tiny_skia::Pixmap::new(size.width(), size.height())
        .ok_or_else(|| Error::other("figure PNG: size too large"))?;
    pixmap.fill(resvg::tiny_skia::Color::WHITE);
    resvg::render(
        t,
        resvg::tiny_skia::Transform::from_scale(scale, scale),
        &mut pixmap.as_mut(),
    );
    pixmap
        .encode_png()
        .map_err(|e| Error::other(format!("figure PNG: {e}")))
}

#[cfg(test)]
mod tests {
    use super::*;

    const SVG: &str = r#"<svg xmlns="http://www.w3.org/2000/svg" width="120" height="40" viewBox="0 0 120 40"><rect x="10" y="10" width="20" height="20" fill="black"/><text x="40" y="28" font-family="sans-serif" font-size="14">E / J</text></svg>"#;

    #[test]
    fn pdf_and_png_of_a_small_figure() {
        if !available() {
            eprintln!("SKIP: no font of {SANS_FAMILIES:?} installed");
            return;
        }
        // format signatures (PDF 1.7 and PNG specifications, common practice)
        let pdf = to_pdf(SVG).unwrap();
        assert!(pdf.starts_with(b"%PDF-"));
        assert!(
            pdf.windows(9).any(|w| w == b"/FontFile"),
            "the font is embedded"
        );
        let png = to_png(SVG, 2.0).unwrap();
        assert!(png.starts_with(b"\x89PNG\r\n\x1a\n"));
        // IHDR width and height (big-endian at bytes 16..24): twice the SVG's 120 x 40
        assert_eq!(u32::from_be_bytes(png[16..20].try_into().unwrap()), 240);
        assert_eq!(u32::from_be_bytes(png[20..24].try_into().unwrap()), 80);
    }
}
