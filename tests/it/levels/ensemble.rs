//! Disorder ensembles: realization averages against NumPy, the U(1)-resolved XXZ chain, and
//! the random-field chain at weak and strong disorder.

use crate::util::run_binary;

fn json(args: &[&str]) -> serde_json::Value {
    let (code, out, err) = run_binary(args);
    assert_eq!(code, Some(0), "{args:?}: {err}");
    serde_json::from_str(&out).unwrap()
}

#[test]
fn realization_averages_equal_numpy() {
    // reference: fixtures/ensemble/expected.json, written by scripts/make_ensemble_fixture.py
    // (NumPy 2.4.6, h5py 3.16.0): per-realization mean r, mean, sd (ddof = 1), sd/√n, and the
    // linearly interpolated crossing of the two sizes
    let want: serde_json::Value =
        serde_json::from_str(include_str!("../../../fixtures/ensemble/expected.json")).unwrap();
    let got = json(&[
        "levels",
        "--json",
        "fixtures/ensemble/ensemble_a.h5",
        "fixtures/ensemble/ensemble_b.h5",
    ]);
    let (w, g) = (
        want["ensembles"].as_array().unwrap(),
        got["ensembles"].as_array().unwrap(),
    );
    assert_eq!(g.len(), w.len());
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs().max(1.0);
    for we in w {
        let ge = g
            .iter()
            .find(|e| e["label"] == we["label"])
            .unwrap_or_else(|| panic!("{} missing", we["label"]));
        assert_eq!(ge["realizations"], 6, "two files, three groups each");
        for key in ["mean_r", "mean_r_spread", "mean_r_stderr"] {
            let (a, b) = (ge[key].as_f64().unwrap(), we[key].as_f64().unwrap());
            assert!(close(a, b), "{}: {key} {a} vs {b}", we["label"]);
        }
        let mut gs: Vec<f64> = ge["mean_r_samples"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        let mut ws: Vec<f64> = we["mean_r_samples"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        gs.sort_by(f64::total_cmp);
        ws.sort_by(f64::total_cmp);
        assert!(gs.iter().zip(&ws).all(|(a, b)| close(*a, *b)));
        // the realization-averaged (connected) form factor: same expected.json (NumPy 2.4.6
        // direct sums over the poly:5-unfolded windows; chebfit for the unfolding), to 1e-9
        let (wt, gt) = (
            we["form_factor"].as_array().unwrap(),
            ge["form_factor"]["table"].as_array().unwrap(),
        );
        assert_eq!(gt.len(), wt.len());
        for (g, w) in gt.iter().zip(wt) {
            for key in ["tau", "k", "k_stderr", "k_connected", "k_connected_stderr"] {
                let (a, b) = (g[key].as_f64().unwrap(), w[key].as_f64().unwrap());
                assert!(
                    (a - b).abs() <= 1e-9 * b.abs().max(1.0),
                    "{} tau {}: {key} {a} vs {b}",
                    we["label"],
                    w["tau"]
                );
            }
        }
    }
    let c = &got["disorder_scan"]["crossings"][0];
    let (a, b) = (
        c["disorder"].as_f64().unwrap(),
        want["crossing"].as_f64().unwrap(),
    );
    assert!(close(a, b), "crossing {a} vs {b}");
    assert!(c["disorder_stderr"].as_f64().unwrap() > 0.0);
}

#[test]
fn u1_resolved_xxz_chain_is_goe_like_without_degeneracies() {
    // Atas et al., PRL 110, 084101 (2013): GOE <r> = 0.5307; the XXZ chain with J₂ ≠ 0 is
    // non-integrable (common practice, e.g. LeBlond et al. PRE 100, 062134 (2019)); resolving
    // S^z, reflection and spin flip leaves no degeneracy
    let dir = tempfile::tempdir().unwrap();
    let f = dir.path().join("xxz14.h5");
    let f = f.to_str().unwrap();
    let (code, _, err) = run_binary(&[
        "generate", "--model", "xxz", "--sites", "14", "--sz", "0", "--j2", "0.5", "--out", f,
    ]);
    assert_eq!(code, Some(0), "{err}");
    let out = json(&["levels", "--json", f]);
    let sectors = out["sectors"].as_array().unwrap();
    assert_eq!(sectors.len(), 4, "reflection x spin flip in S^z = 0");
    // counting, no source: the four sectors add up to C(14, 7) = 3432
    let total: u64 = sectors
        .iter()
        .map(|s| s["total_states"].as_u64().unwrap())
        .sum();
    assert_eq!(total, 3432);
    let (mut sum, mut n) = (0.0, 0.0);
    for s in sectors {
        assert_eq!(s["degenerate_pairs"], 0, "{}", s["name"]);
        let w = s["warnings"].as_array().unwrap();
        assert!(
            !w.iter().any(|w| w.as_str().unwrap().contains("degenera")),
            "{w:?}"
        );
        sum += s["mean_r"].as_f64().unwrap() * s["ratios"].as_f64().unwrap();
        n += s["ratios"].as_f64().unwrap();
    }
    let r = sum / n;
    // the pooled mean over ~1700 ratios has a standard error near 0.008 (blocking): 0.03 is ~4σ
    assert!((r - 0.5307).abs() < 0.03, "pooled <r> = {r}");
    // and the U(1) sector stores its basis configurations
    let ins = run_binary(&["inspect", f]);
    assert_eq!(ins.0, Some(0));
}

#[test]
fn random_field_chain_goes_from_goe_to_poisson() {
    // Atas et al. 2013: GOE 0.5307, Poisson 2 ln 2 − 1 = 0.3863. Random-field XXZ (Δ = 1) in
    // S^z = 0: ergodic at weak disorder, Poisson-like deep in the localized regime (Pal &
    // Huse, PRB 82, 174411 (2010); Luitz, Laflorencie, Alet, PRB 91, 081103 (2015), W_c ≈ 3.7
    // in spin units, i.e. W ≈ 7.4 in the Pauli units of `generate`)
    let dir = tempfile::tempdir().unwrap();
    let mut files = Vec::new();
    for w in ["1", "20"] {
        let f = dir.path().join(format!("rf_w{w}.h5"));
        let f = f.to_str().unwrap().to_string();
        let (code, _, err) = run_binary(&[
            "generate",
            "--model",
            "xxz",
            "--delta",
            "1",
            "--sites",
            "12",
            "--sz",
            "0",
            "--disorder",
            w,
            "--realizations",
            "6",
            "--out",
            &f,
        ]);
        assert_eq!(code, Some(0), "{err}");
        files.push(f);
    }
    let mut args = vec!["levels", "--json"];
    args.extend(files.iter().map(|s| s.as_str()));
    let out = json(&args);
    let e = out["ensembles"].as_array().unwrap();
    assert_eq!(e.len(), 2);
    let (weak, strong) = (&e[0], &e[1]);
    assert_eq!(weak["disorder"], 1.0);
    assert_eq!(weak["realizations"], 6);
    let (rw, sw) = (
        weak["mean_r"].as_f64().unwrap(),
        weak["mean_r_stderr"].as_f64().unwrap(),
    );
    let (rs, ss) = (
        strong["mean_r"].as_f64().unwrap(),
        strong["mean_r_stderr"].as_f64().unwrap(),
    );
    assert!((rw - 0.5307).abs() < 0.02 + 3.0 * sw, "weak {rw} +/- {sw}");
    assert!(
        (rs - 0.3863).abs() < 0.02 + 3.0 * ss,
        "strong {rs} +/- {ss}"
    );
    assert!(sw > 0.0 && ss > 0.0);
}

#[test]
fn inspect_shows_basis_and_realization_attributes() {
    // layout of the README (common practice, no source): generate writes `basis` for an
    // S^z sector and `realization`/`disorder` for each realization
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("rf.h5");
    let (code, _, err) = run_binary(&[
        "generate",
        "--model",
        "xxz",
        "--sites",
        "8",
        "--sz",
        "0",
        "--disorder",
        "2",
        "--realizations",
        "2",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(code, Some(0), "{err}");
    let (code, text, err) = run_binary(&["inspect", out.to_str().unwrap()]);
    assert_eq!(code, Some(0), "{err}");
    assert!(
        text.contains("basis         [70] integer elements (uint64)"),
        "{text}"
    );
    assert!(text.contains("realization 1, disorder 2"), "{text}");
}
