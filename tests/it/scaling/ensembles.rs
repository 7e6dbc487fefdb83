//! Disorder ensembles in `scaling` and `study`: realization-averaged rows against averages
//! computed here from each realization's own `levels`/`diagonal` output (figures verified
//! against NumPy elsewhere), and the study's ensemble tables and figures.

use crate::util::run_binary;

fn json(args: &[&str]) -> serde_json::Value {
    let (code, out, err) = run_binary(args);
    assert_eq!(code, Some(0), "{args:?}: {err}");
    serde_json::from_str(&out).unwrap()
}

/// Writes random-field XXZ files (Δ = 1, J₂ = 0, S^z = 0) of `sizes` × `strengths`.
fn ensemble_files(
    dir: &std::path::Path,
    sizes: &[&str],
    strengths: &[&str],
    n: &str,
) -> Vec<String> {
    let mut files = Vec::new();
    for l in sizes {
        for w in strengths {
            let f = dir
                .join(format!("rf_l{l}_w{w}.h5"))
                .to_str()
                .unwrap()
                .to_string();
            let args = [
                "generate",
                "--model",
                "xxz",
                "--j2",
                "0",
                "--sites",
                l,
                "--sz",
                "0",
                "--disorder",
                w,
                "--realizations",
                n,
                "--out",
                &f,
            ];
            let (code, _, err) = run_binary(&args);
            assert_eq!(code, Some(0), "{err}");
            files.push(f);
        }
    }
    files
}

/// Mean, and sample standard deviation (n − 1) over √n.
fn mean_stderr(x: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    let v = x.iter().map(|v| (v - m).powi(2)).sum::<f64>() / (n - 1.0);
    (m, (v / n).sqrt())
}

#[test]
fn averaged_rows_are_realization_means_with_sample_errors() {
    let dir = tempfile::tempdir().unwrap();
    let files = ensemble_files(dir.path(), &["8", "10"], &["2"], "5");
    let mut args = vec!["scaling", "--observable", "sz_site", "--json"];
    args.extend(files.iter().map(String::as_str));
    let sc = json(&args);
    let rows = sc["rows"].as_array().unwrap();
    // one averaged row per size, not one per realization
    assert_eq!(rows.len(), 2, "{rows:?}");
    for (row, file) in rows.iter().zip(&files) {
        assert_eq!(row["realizations"], 5);
        assert_eq!(row["disorder"], 2.0);
        let lev = json(&["levels", "--json", file]);
        let dia = json(&["diagonal", "--observable", "sz_site", "--json", file]);
        let r: Vec<f64> = lev["sectors"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["mean_r"].as_f64().unwrap())
            .collect();
        let fv: Vec<f64> = dia["sectors"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["observables"][0]["fluct_variance"].as_f64().unwrap())
            .collect();
        let rv: Vec<f64> = dia["sectors"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["observables"][0]["residual_variance"].as_f64().unwrap())
            .collect();
        // sample mean and s/√n of independent realizations (common practice, no source)
        for (key, x) in [
            ("mean_r", &r),
            ("fluct_variance", &fv),
            ("residual_variance", &rv),
        ] {
            let (m, e) = mean_stderr(x);
            let got = row[key].as_f64().unwrap();
            let got_e = row[format!("{key}_stderr")].as_f64().unwrap();
            assert!((got - m).abs() <= 1e-12 * m.abs(), "{key}: {got} vs {m}");
            assert!(
                (got_e - e).abs() <= 1e-9 * e,
                "{key} stderr: {got_e} vs {e}"
            );
        }
        let samples: Vec<f64> = row["fluct_variance_samples"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        // the scaling pass sums Aₙₙ block by block, `diagonal` in one pass: equal to rounding
        for (a, b) in samples.iter().zip(&fv) {
            assert!((a - b).abs() <= 1e-12 * b.abs(), "{a} vs {b}");
        }
    }
    // the ensembles and their form factors come along
    assert_eq!(sc["ensembles"].as_array().unwrap().len(), 2);
}

#[test]
fn study_of_an_ensemble_writes_averaged_tables_and_figures() {
    let dir = tempfile::tempdir().unwrap();
    let files = ensemble_files(dir.path(), &["8", "10"], &["0.5", "6"], "4");
    let out = dir.path().join("study");
    let mut args = vec![
        "study",
        "--observable",
        "sz_site",
        "--out",
        out.to_str().unwrap(),
    ];
    args.extend(files.iter().map(String::as_str));
    let (code, _, err) = run_binary(&args);
    assert_eq!(code, Some(0), "{err}");
    for f in [
        "ensembles.csv",
        "ensembles.md",
        "ensembles.tex",
        "crossover.svg",
        "form_factor_w_0_5.svg",
        "form_factor_w_6.svg",
    ] {
        assert!(out.join(f).exists(), "{f} missing: {err}");
    }
    let csv = std::fs::read_to_string(out.join("ensembles.csv")).unwrap();
    assert_eq!(csv.lines().count(), 5, "{csv}");
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("Disorder ensembles"));
    let scaling = std::fs::read_to_string(out.join("scaling.csv")).unwrap();
    assert!(scaling.lines().next().unwrap().contains("thouless_tau"));
    // four averaged rows (two sizes × two strengths), no per-realization rows
    assert_eq!(scaling.lines().count(), 5, "{scaling}");
}

#[test]
fn ensemble_by_names_the_parameter_attribute_or_turns_averaging_off() {
    let dir = tempfile::tempdir().unwrap();
    let files = ensemble_files(dir.path(), &["8"], &["2"], "3");
    let f = files[0].as_str();
    // another attribute as the parameter: the realizations of one file are averaged, the
    // parameter (absent here) is null
    let by_size = json(&["levels", "--json", "--ensemble-by", "no_such_attribute", f]);
    let e = by_size["ensembles"].as_array().unwrap();
    assert_eq!(e.len(), 1);
    assert!(e[0]["disorder"].is_null());
    assert_eq!(e[0]["realizations"], 3);
    // none: every realization on its own
    let off = json(&[
        "scaling",
        "--observable",
        "sz_site",
        "--json",
        "--ensemble-by",
        "none",
        f,
    ]);
    assert_eq!(off["rows"].as_array().unwrap().len(), 3);
    assert!(off.get("ensembles").is_none());
    let (code, _, err) = run_binary(&["levels", "--ensemble-by", "", f]);
    assert_eq!(code, Some(2), "{err}");
    assert!(err.contains("--ensemble-by"), "{err}");
}

#[test]
fn diagonal_and_offdiagonal_average_their_figures_over_realizations() {
    let dir = tempfile::tempdir().unwrap();
    let files = ensemble_files(dir.path(), &["8"], &["2"], "4");
    for (cmd, figure) in [
        ("diagonal", "fluct_variance"),
        ("offdiagonal", "gaussian_ratio"),
    ] {
        let out = json(&[cmd, "--observable", "sz_site", "--json", &files[0]]);
        let per: Vec<f64> = out["sectors"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["observables"][0][figure].as_f64().unwrap())
            .collect();
        assert_eq!(per.len(), 4);
        let e = &out["ensembles"].as_array().unwrap()[0];
        assert_eq!(e["realizations"], 4);
        let f = e["figures"]
            .as_array()
            .unwrap()
            .iter()
            .find(|f| f["figure"] == figure)
            .unwrap();
        // sample mean and s/√n of independent realizations (common practice, no source)
        let (m, se) = mean_stderr(&per);
        assert!(
            (f["mean"].as_f64().unwrap() - m).abs() <= 1e-14 * m.abs(),
            "{cmd}"
        );
        assert!(
            (f["stderr"].as_f64().unwrap() - se).abs() <= 1e-12 * se,
            "{cmd}"
        );
        assert_eq!(f["samples"].as_array().unwrap().len(), 4);
    }
}
