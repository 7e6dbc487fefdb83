//! SVG figures: axis labels, legends, reference lines, log axes, histograms.

use eigentherm::analysis::scaling::{MEAN_R_GOE, MEAN_R_GUE, MEAN_R_POISSON};
use eigentherm::report::plot::{
    density_histogram, sample_curve, sample_curve_log, Axis, Figure, Legend, Series, Style,
};

fn save(name: &str, svg: &str) {
    // Kept for looking at by eye (scripts/check_report_html can render them).
    let dir = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("figures");
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join(name), svg).unwrap();
}

/// The text content of every `<text>` element, trimmed.
fn texts(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|t| {
            let body = t.split_once('>')?.1;
            Some(body.split("</text>").next()?.trim().to_string())
        })
        .collect()
}

/// Every `font-size="..."` in the SVG.
fn font_sizes(svg: &str) -> Vec<f64> {
    svg.split("font-size=\"")
        .skip(1)
        .filter_map(|s| s.split('"').next()?.parse().ok())
        .collect()
}

#[test]
fn scaling_plot_log_log_with_errors_and_references() {
    // Common practice, no source: figure content checks. Data: an ETH-like decay
    // D^(-1/2) (Kim, Ikeda, Huse PRE 90, 052105 (2014), from memory), invented values.
    let dims = [256.0, 1024.0, 4096.0, 16384.0];
    let pts: Vec<(f64, f64)> = dims
        .iter()
        .map(|&d: &f64| (d, 0.8 * d.powf(-0.5)))
        .collect();
    let errs: Vec<f64> = pts.iter().map(|p| 0.1 * p.1).collect();
    let fit = sample_curve_log(|d| 0.8 * d.powf(-0.5), 200.0, 20000.0, 20);
    let fig = Figure::new("D (Hilbert-space dimension)", "mean |ΔAₙₙ|")
        .axes(Axis::Log, Axis::Log)
        .series(Series::points("σᶻ (middle site)", pts).with_errors(errs))
        .series(Series::line("fit ∝ D^(−0.50)", fit).style(Style::Dashed))
        .legend(Legend::UpperRight);
    let svg = fig.to_svg().unwrap();
    save("scaling.svg", &svg);
    assert!(svg.starts_with("<svg"));
    assert!(svg.contains("D (Hilbert-space dimension)"));
    assert!(svg.contains("mean |ΔAₙₙ|"));
    assert!(svg.contains("σᶻ (middle site)"));
    assert!(svg.contains("fit ∝ D^(−0.50)"));
    // Four data markers (legend marker is a fifth circle).
    assert!(svg.matches("<circle").count() >= 4);
    // Readable at column width: every text at least 14 px.
    let sizes = font_sizes(&svg);
    assert!(!sizes.is_empty());
    assert!(sizes.iter().all(|&s| s >= 14.0), "{sizes:?}");
    // Log-axis ticks print decades, e.g. 1000 and 0.01.
    let t = texts(&svg);
    assert!(
        t.iter().any(|x| x == "1000") && t.iter().any(|x| x == "10000"),
        "{t:?}"
    );
    // Fewer than three decades on the y axis (0.006 .. 0.05): 1-2-5 ticks are added.
    assert!(
        t.iter().any(|x| x == "0.02") && t.iter().any(|x| x == "0.01"),
        "{t:?}"
    );
}

#[test]
fn mean_r_plot_with_reference_lines() {
    // References: <r> Poisson 2 ln 2 - 1, GOE 0.5307, GUE 0.5996 (Atas et al., PRL 110,
    // 084101 (2013); the last two from memory).
    let fig = Figure::new("L (sites)", "⟨r̃⟩")
        .series(
            Series::points(
                "even sector",
                vec![(10.0, 0.51), (12.0, 0.525), (14.0, 0.529)],
            )
            .with_errors(vec![0.01, 0.005, 0.002])
            .style(Style::LinePoints),
        )
        .reference(MEAN_R_POISSON, "Poisson 0.386")
        .reference(MEAN_R_GOE, "GOE 0.531")
        .reference(MEAN_R_GUE, "GUE 0.600")
        .legend(Legend::LowerLeft);
    let svg = fig.to_svg().unwrap();
    save("mean_r.svg", &svg);
    for label in [
        "L (sites)",
        "⟨r̃⟩",
        "Poisson 0.386",
        "GOE 0.531",
        "GUE 0.600",
        "even sector",
    ] {
        assert!(svg.contains(label), "{label} missing");
    }
    // Dashed reference lines: three of them at least.
    assert!(svg.matches("<polyline").count() + svg.matches("<line").count() >= 3);
}

#[test]
fn spacing_histogram_with_surmises() {
    // Wigner surmise GOE P(s) = (π s/2) exp(−π s²/4) and Poisson P(s) = e^(−s) (Mehta,
    // Random Matrices, 3rd ed. 2004). Histogram of Poisson spacings drawn from a seeded
    // generator; the density integrates to the fraction inside the range.
    use rand::Rng;
    let mut r = eigentherm::model::rmt::rng(3);
    let s: Vec<f64> = (0..5000).map(|_| -(1.0 - r.random::<f64>()).ln()).collect();
    let bins = density_histogram(&s, 0.0, 4.0, 40);
    let area: f64 = bins.iter().map(|b| b.value * (b.hi - b.lo)).sum();
    let inside = s.iter().filter(|&&x| x < 4.0).count() as f64 / s.len() as f64;
    assert!((area - inside).abs() < 1e-12);
    // The first bin [0, 0.1) of e^{-s} holds 1 - e^{-0.1} = 0.0952 of the mass: density
    // 0.952; 5000 samples give a relative error ~ 5 %.
    assert!((bins[0].value - 0.952).abs() < 0.15, "{}", bins[0].value);
    let pi = std::f64::consts::PI;
    let fig = Figure::new("s (unfolded spacing)", "P(s)")
        .histogram("spacings", bins)
        .series(Series::line(
            "Poisson e^(−s)",
            sample_curve(|x| (-x).exp(), 0.0, 4.0, 100),
        ))
        .series(Series::line(
            "GOE surmise",
            sample_curve(|x| pi * x / 2.0 * (-pi * x * x / 4.0).exp(), 0.0, 4.0, 100),
        ));
    let svg = fig.to_svg().unwrap();
    save("spacings.svg", &svg);
    assert!(svg.contains("s (unfolded spacing)") && svg.contains("P(s)"));
    assert!(svg.contains("GOE surmise") && svg.contains("spacings"));
    assert!(svg.matches("<rect").count() >= 40);
}

#[test]
fn lin_log_axes_and_bad_input() {
    // Common practice, no source: non-positive values cannot sit on a log axis; they are
    // left out, and a figure with nothing to draw is an error, not a panic.
    let fig = Figure::new("ω", "|f(ω)|²")
        .axes(Axis::Linear, Axis::Log)
        .series(Series::line(
            "envelope",
            vec![(0.0, 1e-3), (1.0, 3e-4), (2.0, 0.0), (3.0, 1e-5)],
        ));
    let svg = fig.to_svg().unwrap();
    save("envelope.svg", &svg);
    let t = texts(&svg);
    assert!(
        t.iter().any(|x| x == "|f(ω)|²") && t.iter().any(|x| x == "ω"),
        "{t:?}"
    );
    let bad = Figure::new("x", "y")
        .axes(Axis::Log, Axis::Log)
        .series(Series::points("", vec![(-1.0, 2.0), (0.0, 1.0)]));
    let err = bad.to_svg().unwrap_err().to_string();
    assert!(err.contains("no point to plot"), "{err}");
    assert!(Figure::new("x", "y")
        .x_range(1.0, 1.0)
        .series(Series::points("", vec![(1.0, 1.0)]))
        .to_svg()
        .is_err());
}

/// The `y` attribute of the `<text>` element whose content is `label`.
fn text_y(svg: &str, label: &str) -> f64 {
    svg.split("<text")
        .skip(1)
        .find_map(|t| {
            let (attrs, body) = t.split_once('>')?;
            if body.split("</text>").next()?.trim() != label {
                return None;
            }
            let y = attrs.split(" y=\"").nth(1)?.split('"').next()?;
            y.parse().ok()
        })
        .unwrap_or_else(|| panic!("no text '{label}'"))
}

#[test]
fn close_reference_labels_do_not_overlap() {
    // Common practice, no source: a quench trace relaxing to three nearly equal long-time
    // values (invented numbers); the three labels must be at least one text height (the
    // 14.5 px font) apart and keep the top-to-bottom order of their lines.
    let trace: Vec<(f64, f64)> = (0..=50)
        .map(|k| {
            let t = k as f64 * 0.4;
            (t, 0.2 + 0.3 * (-t / 3.0).exp() * (2.0 * t).cos())
        })
        .collect();
    let fig = Figure::new("t (ħ / energy unit)", "⟨A(t)⟩")
        .legend(Legend::UpperRight)
        .reference(0.2010, "diagonal ensemble")
        .reference(0.2000, "microcanonical")
        .reference(0.2005, "canonical")
        .series(Series::line("L = 12", trace));
    let svg = fig.to_svg().unwrap();
    save("close_references.svg", &svg);
    let de = text_y(&svg, "diagonal ensemble");
    let can = text_y(&svg, "canonical");
    let mc = text_y(&svg, "microcanonical");
    // higher value, higher on the page (smaller y)
    assert!(de < can && can < mc, "{de} {can} {mc}");
    assert!(can - de >= 14.5 && mc - can >= 14.5, "{de} {can} {mc}");
    // and every label stays inside the figure
    for y in [de, can, mc] {
        assert!(y > 0.0 && y < 360.0, "{y}");
    }

    // Well separated references keep their labels beside their own lines: the label
    // spacing equals the line spacing (to pixel rounding).
    let fig = Figure::new("t", "⟨A(t)⟩")
        .y_range(0.0, 1.0)
        .reference(0.8, "upper")
        .reference(0.3, "lower")
        .series(Series::line("", vec![(0.0, 0.5), (1.0, 0.5)]));
    let svg = fig.to_svg().unwrap();
    let (up, low) = (text_y(&svg, "upper"), text_y(&svg, "lower"));
    let fig_far = Figure::new("t", "⟨A(t)⟩")
        .y_range(0.0, 1.0)
        .reference(0.8, "upper")
        .reference(0.7, "lower")
        .series(Series::line("", vec![(0.0, 0.5), (1.0, 0.5)]));
    let svg_far = fig_far.to_svg().unwrap();
    let low2 = text_y(&svg_far, "lower");
    // moving a line by 0.4 of the axis moves its label by 0.4 of the plot height, and
    // the unmoved label stays put
    assert_eq!(text_y(&svg_far, "upper"), up);
    let per_unit = (low - low2) / 0.4;
    assert!(per_unit > 200.0 && per_unit < 320.0, "{per_unit}");
    assert!(low - up > 100.0);
}

#[test]
fn label_spreading_keeps_order_separation_and_bounds() {
    use eigentherm::report::plot::spread_labels;
    // Common practice, no source: properties of the placement, checked directly.
    // Far apart: unchanged.
    assert_eq!(
        spread_labels(&[10.0, 50.0, 90.0], 17.0, 0.0, 100.0),
        vec![10.0, 50.0, 90.0]
    );
    // Three equal wishes: stacked upwards from the wish, in the given order.
    assert_eq!(
        spread_labels(&[50.0, 50.0, 50.0], 17.0, 0.0, 100.0),
        vec![16.0, 33.0, 50.0]
    );
    // Crowded at the bottom, wishes out of order: pushed inside the bounds, order kept.
    let p = spread_labels(&[99.0, 98.0, 97.0], 17.0, 0.0, 100.0);
    assert_eq!(p, vec![63.0, 80.0, 97.0]);
    // Crowded at the top: pushed down inside the bounds.
    let p = spread_labels(&[3.0, 4.0, 5.0], 17.0, 0.0, 100.0);
    assert_eq!(p, vec![0.0, 17.0, 34.0]);
    // More labels than fit: packed from the top, still `sep` apart.
    let p = spread_labels(&[5.0; 8], 17.0, 0.0, 100.0);
    assert_eq!(p[0], 0.0);
    assert!(p.windows(2).all(|w| w[1] - w[0] == 17.0));
    // A chain reaction: merging one pair makes it overlap the previous label.
    let p = spread_labels(&[30.0, 40.0, 41.0], 17.0, 0.0, 200.0);
    assert_eq!(p, vec![7.0, 24.0, 41.0]);
    let mut s = p.clone();
    s.sort_by(f64::total_cmp);
    assert!(s.windows(2).all(|w| w[1] - w[0] >= 17.0 - 1e-12), "{p:?}");
    assert!(p[0] < p[1] && p[1] < p[2]);
}

#[test]
fn tick_labels_near_zero_read_zero() {
    // common practice, no source: a tick at a multiple of the step that should be 0 but
    // carries rounding noise (e.g. -5.551e-17 from -0.3 + 3 · 0.1) is printed as 0; scan
    // ranges straddling zero so that some of them hit the noise without the snapping
    let mut with_zero = 0;
    for k in 1..40 {
        let lo = -0.1 * k as f64 - 0.013 * k as f64;
        let hi = 0.07 * k as f64 + 0.011;
        let fig = Figure::new("x", "y")
            .series(Series::points("a", vec![(0.0, lo), (1.0, hi)]))
            .y_range(lo, hi);
        let svg = fig.to_svg().unwrap();
        for t in texts(&svg) {
            let bad = t.contains("e-1") || t.contains("e-2") || t.contains("e-3");
            assert!(!bad, "range [{lo}, {hi}]: tick label {t:?}");
            with_zero += usize::from(t == "0");
        }
    }
    assert!(
        with_zero > 20,
        "a tick at zero in most ranges ({with_zero})"
    );
}
