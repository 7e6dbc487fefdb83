//! Layout of the figures as written: no two texts overlap, neither a legend box nor a
//! text covers a data marker, no text covers a curve. Checked on every SVG of a small
//! study (a chaotic and an integrable chain, with a quench) and on a ⟨r̃⟩ figure with the
//! demo's values.

use crate::util::{mixed_field_chains, mixed_field_spec, run_binary};
use eigentherm::analysis::scaling::{MEAN_R_GOE, MEAN_R_GUE, MEAN_R_POISSON};
use eigentherm::model::{build_chain, write_file, ChainModel, ChainSpec};
use eigentherm::report::plot::{Figure, Legend, Series, Style};

/// The value of attribute `name` in the attributes text of one element.
fn attr<'a>(attrs: &'a str, name: &str) -> Option<&'a str> {
    let key = format!(" {name}=\"");
    attrs.split(&key).nth(1)?.split('"').next()
}

fn num(attrs: &str, name: &str) -> Option<f64> {
    attr(attrs, name)?.parse().ok()
}

/// Every element `<tag ...>` as (byte offset, attributes text, content up to `</tag>`).
fn elements<'a>(svg: &'a str, tag: &str) -> Vec<(usize, &'a str, &'a str)> {
    let open = format!("<{tag} ");
    let close = format!("</{tag}>");
    svg.match_indices(&open)
        .filter_map(|(at, _)| {
            let rest = &svg[at + open.len() - 1..];
            let end = rest.find('>')?;
            let attrs = &rest[..end];
            let body = rest[end + 1..].split(&close).next().unwrap_or("");
            Some((at, attrs, body.trim()))
        })
        .collect()
}

/// An estimated box (x0, y0, x1, y1) of each `<text>`: width = characters × 0.6 ×
/// font-size, height = font-size, placed by x, y, text-anchor, the baseline shift dy
/// (0.76em: top at y; 0.5ex: centred; -0.5ex: bottom at y) and a rotation by 270°
/// (common practice, no source: an estimate of a sans-serif font's extent).
fn text_boxes(svg: &str) -> Vec<(String, [f64; 4])> {
    elements(svg, "text")
        .into_iter()
        .filter(|(_, _, body)| !body.is_empty())
        .map(|(_, a, body)| {
            let (x, y) = (num(a, "x").unwrap(), num(a, "y").unwrap());
            let fs = num(a, "font-size").unwrap();
            let w = body.chars().count() as f64 * 0.6 * fs;
            let along = match attr(a, "text-anchor") {
                Some("middle") => -0.5 * w,
                Some("end") => -w,
                _ => 0.0,
            };
            let across = match attr(a, "dy") {
                Some("0.76em") => 0.0,
                Some("-0.5ex") => -fs,
                _ => -0.5 * fs,
            };
            let b = if attr(a, "transform").is_some_and(|t| t.starts_with("rotate(270")) {
                // rotated: the text runs upwards from (x, y), its top towards x
                [x + across, y - along - w, x + across + fs, y - along]
            } else {
                [x + along, y + across, x + along + w, y + across + fs]
            };
            (body.to_string(), b)
        })
        .collect()
}

/// Pairs of texts whose boxes overlap by more than one pixel each way.
fn overlapping_texts(svg: &str) -> Vec<String> {
    let boxes = text_boxes(svg);
    let mut out = Vec::new();
    for (i, (ta, a)) in boxes.iter().enumerate() {
        for (tb, b) in &boxes[i + 1..] {
            let dx = a[2].min(b[2]) - a[0].max(b[0]);
            let dy = a[3].min(b[3]) - a[1].max(b[1]);
            if dx > 1.0 && dy > 1.0 {
                out.push(format!("{ta:?} / {tb:?}"));
            }
        }
    }
    out
}

/// The legend box: the `<rect>` with the grey border `#A0A0A0`, as (byte offset, x0, y0,
/// x1, y1).
fn legend_box(svg: &str) -> Option<(usize, [f64; 4])> {
    let (at, a, _) = elements(svg, "rect")
        .into_iter()
        .find(|(_, a, _)| attr(a, "stroke") == Some("#A0A0A0"))?;
    let (x, y) = (num(a, "x")?, num(a, "y")?);
    let (w, h) = (num(a, "width")?, num(a, "height")?);
    Some((at, [x, y, x + w, y + h]))
}

/// Data marker centres: `<circle>` centres and `<polygon>` (triangle) centroids written
/// before the legend box (the legend's own samples come after it).
fn data_markers(svg: &str) -> Vec<(f64, f64)> {
    let end = legend_box(svg).map_or(usize::MAX, |l| l.0);
    let mut out: Vec<(f64, f64)> = elements(svg, "circle")
        .into_iter()
        .filter(|&(at, _, _)| at < end)
        .map(|(_, a, _)| (num(a, "cx").unwrap(), num(a, "cy").unwrap()))
        .collect();
    for (_, a, _) in elements(svg, "polygon")
        .into_iter()
        .filter(|&(at, _, _)| at < end)
    {
        let p: Vec<f64> = attr(a, "points")
            .unwrap()
            .split([' ', ','])
            .filter_map(|v| v.parse().ok())
            .collect();
        let n = (p.len() / 2) as f64;
        let cx = p.iter().step_by(2).sum::<f64>() / n;
        let cy = p.iter().skip(1).step_by(2).sum::<f64>() / n;
        out.push((cx, cy));
    }
    out
}

/// Segments of the curves (`<polyline>`s 2 px wide) written before the legend box.
fn curve_segments(svg: &str) -> Vec<((f64, f64), (f64, f64))> {
    let end = legend_box(svg).map_or(usize::MAX, |l| l.0);
    let mut out = Vec::new();
    for (_, a, _) in elements(svg, "polyline")
        .into_iter()
        .filter(|&(at, a, _)| at < end && attr(a, "stroke-width") == Some("2"))
    {
        let p: Vec<f64> = attr(a, "points")
            .unwrap()
            .split([' ', ','])
            .filter_map(|v| v.parse().ok())
            .collect();
        let pts: Vec<(f64, f64)> = p.chunks(2).map(|c| (c[0], c[1])).collect();
        out.extend(pts.windows(2).map(|w| (w[0], w[1])));
    }
    out
}

/// True when the segment a–b has a point inside the box (Liang–Barsky clipping; common
/// practice, no source).
fn meets(b: &[f64; 4], a: (f64, f64), c: (f64, f64)) -> bool {
    let (dx, dy) = (c.0 - a.0, c.1 - a.1);
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    for (p, q) in [
        (-dx, a.0 - b[0]),
        (dx, b[2] - a.0),
        (-dy, a.1 - b[1]),
        (dy, b[3] - a.1),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return false;
            }
        } else if p < 0.0 {
            t0 = t0.max(q / p);
        } else {
            t1 = t1.min(q / p);
        }
    }
    t0 <= t1
}

fn inside(b: &[f64; 4], (x, y): (f64, f64)) -> bool {
    x >= b[0] && x <= b[2] && y >= b[1] && y <= b[3]
}

/// Every layout problem of one SVG.
fn problems(name: &str, svg: &str) -> Vec<String> {
    let mut out: Vec<String> = overlapping_texts(svg)
        .into_iter()
        .map(|p| format!("{name}: texts overlap: {p}"))
        .collect();
    let markers = data_markers(svg);
    if let Some((_, b)) = legend_box(svg) {
        for &m in markers.iter().filter(|&&m| inside(&b, m)) {
            out.push(format!("{name}: the legend covers the marker at {m:?}"));
        }
    }
    // no text (a reference label, say) sits on a data marker or a curve either
    let curves = curve_segments(svg);
    for (text, b) in text_boxes(svg) {
        for &m in markers.iter().filter(|&&m| inside(&b, m)) {
            out.push(format!(
                "{name}: the text {text:?} covers the marker at {m:?}"
            ));
        }
        if let Some((p, q)) = curves.iter().find(|&&(p, q)| meets(&b, p, q)) {
            out.push(format!(
                "{name}: the text {text:?} covers the curve {p:?}–{q:?}"
            ));
        }
    }
    out
}

fn save(name: &str, svg: &str) {
    // Kept for looking at by eye.
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("figures_layout");
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join(name), svg).unwrap();
}

#[test]
fn demo_mean_r_legend_leaves_the_points_free() {
    // ⟨r̃⟩ of the demo's two chains (values of one demo run at L = 9, 11, 13, rounded; no
    // reference values) with the Poisson/GOE/GUE lines (Atas et al. 2013, from memory);
    // the same figure as the study's, built here so that it needs no demo run.
    let series = [
        ("mixed-field-ising even", [0.502, 0.504, 0.530], 0.02),
        ("mixed-field-ising odd", [0.537, 0.515, 0.525], 0.02),
        ("transverse-field-ising even", [0.355, 0.415, 0.404], 0.02),
        ("transverse-field-ising odd", [0.385, 0.373, 0.391], 0.02),
    ];
    let mut fig = Figure::new("L (sites)", "⟨r̃⟩")
        .reference(MEAN_R_POISSON, "Poisson")
        .reference(MEAN_R_GOE, "GOE")
        .reference(MEAN_R_GUE, "GUE")
        .y_range(0.3, 0.65)
        .legend(Legend::LowerRight);
    for (k, (label, r, err)) in series.iter().enumerate() {
        let pts = [9.0, 11.0, 13.0].into_iter().zip(*r).collect();
        fig = fig.series(
            Series::points(*label, pts)
                .with_errors(vec![*err; 3])
                .style(Style::LinePoints)
                .color(k),
        );
    }
    let svg = fig.to_svg().unwrap();
    save("demo_mean_r.svg", &svg);
    let bad = problems("demo mean_r", &svg);
    assert!(bad.is_empty(), "{bad:#?}");
    // the legend is there, with every entry
    assert!(svg.contains("#A0A0A0"));
    for (label, _, _) in series {
        assert!(svg.contains(label), "{label}");
    }
}

#[test]
fn study_figures_have_free_legends_and_separate_texts() {
    // Layout checks (common practice, no source) on every figure of a small study.
    let dir = tempfile::tempdir().unwrap();
    let mut files = mixed_field_chains(dir.path(), &[6, 8, 10]);
    for l in [6, 8, 10] {
        let spec = ChainSpec {
            model: ChainModel::TransverseFieldIsing { j: 1.0, g: 0.9045 },
            ..mixed_field_spec(l)
        };
        let path = dir.path().join(format!("tfi{l}.h5"));
        write_file(&path, &build_chain(&spec).unwrap()).unwrap();
        files.push(path);
    }
    let out = dir.path().join("study");
    let mut args: Vec<String> = vec!["study".into()];
    args.extend(files.iter().map(|p| p.to_str().unwrap().to_string()));
    args.extend(
        [
            "--observable",
            "sz_site",
            "--state",
            "product:y+",
            "--times",
            "lin:0:20:101",
            "--out",
            out.to_str().unwrap(),
        ]
        .map(String::from),
    );
    let argv: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
    let (code, _, err) = run_binary(&argv);
    assert_eq!(code, Some(0), "{err}");
    let mut names: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .filter_map(|e| {
            let n = e.ok()?.file_name().to_string_lossy().into_owned();
            n.ends_with(".svg").then_some(n)
        })
        .collect();
    names.sort();
    // the study draws ⟨r̃⟩, spacings, diagonal, envelope, fluctuation and quench figures
    for stem in [
        "mean_r",
        "spacings_",
        "diagonal_",
        "envelope_",
        "quench_trace_",
    ] {
        assert!(
            names.iter().any(|n| n.starts_with(stem)),
            "{stem}: {names:?}"
        );
    }
    let mut bad = Vec::new();
    for n in &names {
        let svg = std::fs::read_to_string(out.join(n)).unwrap();
        save(n, &svg);
        bad.extend(problems(n, &svg));
        if n.starts_with("diagonal_") {
            bad.extend(diagonal_problems(n, &svg));
        }
        // the envelope marks the mean level spacing of its largest size (every sector
        // here has an off-diagonal analysis; common practice, no source)
        if n.starts_with("envelope_") && !svg.contains("Δ̄") {
            bad.push(format!("{n}: no mean-level-spacing line"));
        }
    }
    assert!(bad.is_empty(), "{bad:#?}");
}

/// What is wrong with a diagonal figure (common practice, no source): the analysis window
/// must be shaded (a `<rect>` of the band fill `#DEE8F2` inside the plot, narrower than it
/// when the window is a part of the spectrum), and the canonical line (dashed, black,
/// 2 px) must come after every marker, i.e. on top of them.
fn diagonal_problems(name: &str, svg: &str) -> Vec<String> {
    let mut out = Vec::new();
    let bands: Vec<_> = elements(svg, "rect")
        .into_iter()
        .filter(|(_, a, _)| attr(a, "fill") == Some("#DEE8F2"))
        .collect();
    // the legend sample of the band is a second rect of the same fill, 20 px wide
    let band = bands
        .iter()
        .find(|(_, a, _)| num(a, "width").is_some_and(|w| w > 21.0));
    match band {
        None => out.push(format!("{name}: no shaded window")),
        Some((_, a, _)) => {
            let w = num(a, "width").unwrap();
            // the demo-like window 0.4:0.6 (the default) is a fifth of the states, near
            // the middle: clearly narrower than the plot (about 360 px wide)
            if w > 300.0 {
                out.push(format!("{name}: the window band is {w} px wide"));
            }
        }
    }
    let canonical: Vec<usize> = elements(svg, "polyline")
        .into_iter()
        .chain(elements(svg, "path"))
        .filter(|(_, a, _)| {
            attr(a, "stroke") == Some("#000000") && attr(a, "stroke-width") == Some("2")
        })
        .map(|(at, _, _)| at)
        .collect();
    if canonical.is_empty() {
        out.push(format!("{name}: no canonical line"));
    }
    // the legend's samples come after the data; the line's own segments are before them
    let legend = legend_box(svg).map_or(usize::MAX, |l| l.0);
    let data_markers_last = ["circle", "polygon"]
        .iter()
        .flat_map(|t| elements(svg, t))
        .map(|(at, _, _)| at)
        .filter(|&at| at < legend)
        .max()
        .unwrap_or(0);
    if let Some(&first) = canonical.iter().filter(|&&at| at < legend).min() {
        if first < data_markers_last {
            out.push(format!("{name}: the canonical line is drawn under markers"));
        }
    }
    out
}
