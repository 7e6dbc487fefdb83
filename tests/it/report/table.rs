//! Tables: uncertainty formatting, CSV/Markdown consistency, LaTeX compilation.

use eigentherm::report::table::{format_uncertain, format_value, Cell, Column, Table};

#[test]
fn concise_uncertainty_examples() {
    // Common practice, no source for the notation; the 1-or-2-digit rule (100-354 -> two
    // digits, 355-949 -> one, 950-999 -> round up and keep two) is the Particle Data
    // Group's (Review of Particle Physics, Introduction; from memory).
    let cases: &[(f64, f64, &str)] = &[
        (0.1234, 0.0041, "0.123(4)"),
        (12.345, 1.2, "12.3(12)"),
        (0.38629, 0.0097, "0.386(10)"),
        (0.5307, 0.0001, "0.53070(10)"), // leading digits 100: two digits
        (123.456, 25.0, "123(25)"),
        (-0.5, 0.03, "-0.500(30)"),
        (0.05, 0.3, "0.05(30)"),
        (1.2345e-5, 4.1e-7, "1.23(4)e-05"),
        (12345.0, 1200.0, "1.23(12)e+04"),
        (6.02e23, 3.5e21, "6.020(35)e+23"),
        (9.99996e-5, 1.0e-7, "1.0000(10)e-04"), // mantissa rolls over to 10
        (0.25, 0.0, "0.25"),
        (0.3, f64::NAN, "0.3(?)"),
        (0.3, -1.0, "0.3(?)"),
        (f64::NAN, 0.1, "NaN"),
    ];
    for &(v, e, want) in cases {
        assert_eq!(format_uncertain(v, e), want, "{v} ± {e}");
    }
    // Plain values: 4 significant digits, trailing zeros removed.
    assert_eq!(format_value(0.386294), "0.3863");
    assert_eq!(format_value(2.0), "2");
    assert_eq!(format_value(4096.0), "4096");
    assert_eq!(format_value(1.23456e-5), "1.235e-05");
    assert_eq!(format_value(-0.0), "0");
    assert_eq!(format_value(f64::INFINITY), "inf");
}

fn sample_table() -> Table {
    let mut t = Table::new(vec![
        Column::new("sector", "sector"),
        Column::new("dimension", "D"),
        Column::new("mean_r", "⟨r̃⟩").latex("$\\langle\\tilde r\\rangle$"),
        Column::new("alpha", "α"),
        Column::new("note", "note (50% & more)"),
    ])
    .with_caption("Scaling of fluct_variance: α with σ_α");
    t.push_row(vec![
        "even_k0".into(),
        256usize.into(),
        (0.5271, 0.0042).into(),
        Cell::Value(0.98765),
        "a, \"quoted\" | piped".into(),
    ])
    .unwrap();
    t.push_row(vec![
        "odd".into(),
        4096usize.into(),
        (0.53012, 0.00118).into(),
        (1.2345e-5, 4.1e-7).into(),
        Cell::Empty,
    ])
    .unwrap();
    t
}

#[test]
fn markdown_and_csv_hold_the_same_numbers() {
    // Common practice, no source: the machine (CSV) and human (Markdown) forms agree.
    let t = sample_table();
    let csv = t.to_csv();
    let md = t.to_markdown();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(
        lines[0],
        "sector,dimension,mean_r,mean_r_stderr,alpha,alpha_stderr,note"
    );
    assert_eq!(lines.len(), 3);
    assert!(lines[1].ends_with("\"a, \"\"quoted\"\" | piped\""));
    // Parse the numbers back from CSV and format them for humans: they must appear in the
    // Markdown row of the same index.
    let md_rows: Vec<&str> = md.lines().filter(|l| l.starts_with("| ")).skip(2).collect();
    assert_eq!(md_rows.len(), 2);
    for (i, line) in lines[1..].iter().enumerate() {
        let f: Vec<&str> = line.splitn(7, ',').collect();
        let dim: i64 = f[1].parse().unwrap();
        let r: f64 = f[2].parse().unwrap();
        let re: f64 = f[3].parse().unwrap();
        let a: f64 = f[4].parse().unwrap();
        let md_cells: Vec<&str> = md_rows[i].split(" | ").collect();
        assert_eq!(md_cells[1], dim.to_string());
        assert_eq!(md_cells[2], format_uncertain(r, re));
        let ae = if f[5].is_empty() {
            None
        } else {
            Some(f[5].parse::<f64>().unwrap())
        };
        match ae {
            Some(e) => assert_eq!(md_cells[3], format_uncertain(a, e)),
            None => assert_eq!(md_cells[3], format_value(a)),
        }
    }
    assert!(md.contains("| 0.527(4) |"));
    assert!(md.contains("| 0.5301(12) |"));
    assert!(md.contains("1.23(4)e-05"));
    assert!(md.contains("\\| piped"));
    assert!(md.contains("| --- | ---: | ---: | ---: | --- |"));
}

#[test]
fn latex_table_uses_booktabs_and_compiles() {
    // Common practice, no source: booktabs rules and escaped text; compiled with pdflatex
    // when it is installed.
    let t = sample_table();
    let tex = t.to_latex();
    for rule in ["\\toprule", "\\midrule", "\\bottomrule", "\\caption{"] {
        assert!(tex.contains(rule), "{rule} missing:\n{tex}");
    }
    assert!(tex.contains("$0.527(4)$"));
    assert!(tex.contains("$1.23(4)\\times10^{-5}$"));
    assert!(tex.contains("50\\% \\& more"));
    assert!(tex.contains("\\begin{tabular}{lrrrl}"));
    assert!(!tex.contains('α'), "unescaped unicode:\n{tex}");

    let problems = crate::util::latex_table_problems(&tex);
    assert!(problems.is_empty(), "{problems:?}\n{tex}");
    // Without a caption the table is a bare tabular, to be put inside a `table` environment.
    let mut bare = t.clone();
    bare.caption = None;
    let bare = bare.to_latex();
    assert!(!bare.contains("\\begin{table}") && !bare.contains("\\caption"));
    crate::util::compile_latex_table(&bare);
}

#[test]
fn the_latex_checker_finds_what_pdflatex_would_reject() {
    // Common practice, no source: the parser that stands in for pdflatex must reject a
    // wrong cell count, unbalanced braces and math, and escaped pipes.
    let good =
        "\\begin{tabular}{lr}\n\\toprule\na & $1$ \\\\\n\\midrule\n\\bottomrule\n\\end{tabular}\n";
    assert!(crate::util::latex_table_problems(good).is_empty());
    for bad in [
        good.replace("a & $1$", "a & $1$ & b"),
        good.replace("$1$", "${1$"),
        good.replace("$1$", "$1"),
        good.replace("a &", "a\\textbar{} &"),
        good.replace("a &", "\\~{r} &"),
    ] {
        assert!(
            !crate::util::latex_table_problems(&bad).is_empty(),
            "accepted:\n{bad}"
        );
    }
}

#[test]
fn html_table_escapes() {
    // Common practice, no source.
    let h = sample_table().to_html();
    assert!(h.contains("<caption>"));
    assert!(h.contains("&quot;quoted&quot;"));
    assert!(h.contains("<td class=\"num\">0.527(4)</td>"));
    assert!(Table::new(vec![Column::new("a", "a")])
        .push_row(vec![Cell::Empty, Cell::Empty])
        .is_err());
}

#[test]
fn csv_text_that_looks_like_a_formula_stays_text() {
    // OWASP "CSV Injection" guidance (from memory): prefix cells starting with = + - @ (or
    // tab, CR) with an apostrophe. Numbers, including negative ones, are written unchanged.
    let mut t = Table::new(vec![
        Column::new("model", "Model"),
        Column::new("value", "Value"),
    ]);
    t.push_row(vec!["=HYPERLINK(\"x\",\"y\")".into(), (-0.5).into()])
        .unwrap();
    t.push_row(vec!["@sum".into(), (-2i64).into()]).unwrap();
    t.push_row(vec!["plain-name".into(), 1.5.into()]).unwrap();
    let csv = t.to_csv();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[1], "\"'=HYPERLINK(\"\"x\"\",\"\"y\"\")\",-0.5");
    assert_eq!(lines[2], "'@sum,-2");
    assert_eq!(lines[3], "plain-name,1.5");
}
