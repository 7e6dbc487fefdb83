//! The study's tables for files without a `model` attribute: separate model, sector,
//! observable columns, the exponent table in three formats, LaTeX that parses (and
//! compiles where pdflatex is installed), CSV keys equal to the JSON keys.

use crate::util::{compile_latex_table, latex_table_problems, mixed_field_spec, run_binary};
use eigentherm::model::{build_chain, write_file};

/// Splits one CSV line (RFC 4180 quoting) into its fields.
fn csv_fields(line: &str) -> Vec<String> {
    let (mut out, mut cur, mut quoted) = (Vec::new(), String::new(), false);
    let mut it = line.chars().peekable();
    while let Some(c) = it.next() {
        match (c, quoted) {
            ('"', true) if it.peek() == Some(&'"') => {
                cur.push('"');
                it.next();
            }
            ('"', _) => quoted = !quoted,
            (',', false) => out.push(std::mem::take(&mut cur)),
            _ => cur.push(c),
        }
    }
    out.push(cur);
    out
}

#[test]
fn tables_of_a_model_less_study() {
    // Checks of the README's table contract (common practice, no source).
    let dir = tempfile::tempdir().unwrap();
    let mut args: Vec<String> = vec!["study".into()];
    for l in [6, 8, 10] {
        let mut sectors = build_chain(&mixed_field_spec(l)).unwrap();
        for s in &mut sectors {
            s.attributes.retain(|(k, _)| k != "model");
        }
        let path = dir.path().join(format!("chain{l}.h5"));
        write_file(&path, &sectors).unwrap();
        args.push(path.to_str().unwrap().into());
    }
    let out = dir.path().join("study");
    args.extend(["--observable", "sz_site", "--out", out.to_str().unwrap()].map(String::from));
    let argv: Vec<&str> = args.iter().map(|s| s.as_str()).collect();
    let (code, _, err) = run_binary(&argv);
    assert_eq!(code, Some(0), "{err}");
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("results.json")).unwrap()).unwrap();
    let read = |name: &str| std::fs::read_to_string(out.join(name)).unwrap();

    for (stem, key) in [("scaling", "rows"), ("exponents", "fits")] {
        let csv = read(&format!("{stem}.csv"));
        let md = read(&format!("{stem}.md"));
        let tex = read(&format!("{stem}.tex"));
        let records = json["scaling"][key].as_array().unwrap();
        assert!(!records.is_empty(), "{stem}: no {key}");
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines.len(), records.len() + 1, "{stem}.csv");
        let header = csv_fields(lines[0]);
        for col in ["model", "sector", "observable"] {
            assert!(header.iter().any(|h| h == col), "{stem}.csv lacks {col}");
        }
        // every CSV column is a JSON key of the record, and equal to it where it is text or an integer
        for (line, rec) in lines[1..].iter().zip(records) {
            let cells = csv_fields(line);
            assert_eq!(cells.len(), header.len());
            for (h, c) in header.iter().zip(&cells) {
                assert!(rec.get(h).is_some(), "{stem}.csv column {h} is no JSON key");
                assert!(
                    !c.starts_with(['\'', '-']) || c.parse::<f64>().is_ok(),
                    "{h}: {c}"
                );
                match &rec[h] {
                    serde_json::Value::String(s) => assert_eq!(c, s, "{h}"),
                    serde_json::Value::Null => assert_eq!(c, "", "{h}"),
                    v if v.is_u64() => assert_eq!(c, &v.to_string(), "{h}"),
                    v => {
                        // equal up to the last bit: serde_json's default parser may round
                        // the JSON text one unit off
                        if let (Some(x), Ok(y)) = (v.as_f64(), c.parse::<f64>()) {
                            assert!(
                                (x - y).abs() <= 4.0 * f64::EPSILON * x.abs(),
                                "{h}: {x} {y}"
                            );
                        }
                    }
                }
            }
        }
        assert!(!header.iter().any(|h| h.ends_with("_err")), "{header:?}");
        assert!(md.lines().count() >= records.len() + 2, "{stem}.md");
        let problems = latex_table_problems(&tex);
        assert!(problems.is_empty(), "{stem}.tex: {problems:?}\n{tex}");
        assert!(
            !tex.contains("\\begin{table}"),
            "{stem}.tex is a bare tabular"
        );
        compile_latex_table(&tex);
    }
    let tex = read("scaling.tex");
    assert!(tex.contains("$\\langle\\tilde r\\rangle$"), "{tex}");
    // the exponent table holds α ± σ, the degrees of freedom and the ETH value of each fit
    let exps = read("exponents.csv");
    let header = csv_fields(exps.lines().next().unwrap());
    for col in ["figure", "alpha", "alpha_stderr", "dof", "eth_alpha"] {
        assert!(header.iter().any(|h| h == col), "exponents.csv lacks {col}");
    }
    for f in json["scaling"]["fits"].as_array().unwrap() {
        // ETH: variances ∝ 1/D, |ΔA| ∝ 1/√D (Srednicki 1999; from memory)
        let want = if f["figure"] == "diff_mean_abs" {
            0.5
        } else {
            1.0
        };
        assert_eq!(f["eth_alpha"].as_f64(), Some(want), "{f}");
        assert!(f["model"].is_null());
    }
}
