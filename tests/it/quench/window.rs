//! Quenches on a partial eigenbasis: the state's weight on the stored eigenstates and the
//! refusal below `--min-window-weight`.

use crate::util::run_binary;
use eigentherm::data::{Matrix, Vector};
use eigentherm::model::build_chain;

#[test]
fn quench_is_refused_below_the_window_weight() {
    // the captured weight Σₙ |⟨n|ψ⟩|² over the stored states, computed here from the
    // eigenvectors (definition), against the pipeline's `captured`; the refusal happens
    // exactly below the threshold (common practice, no source)
    let dir = tempfile::tempdir().unwrap();
    let full = build_chain(&crate::util::mixed_field_spec(9))
        .unwrap()
        .into_iter()
        .find(|s| s.group == "even")
        .unwrap();
    let n = full.energies.len();
    let (lo, hi) = ((0.3 * n as f64) as usize, (0.7 * n as f64) as usize);
    let mut part = full.clone();
    part.energies = full.energies[lo..hi].to_vec();
    part.eigenvectors = full.eigenvectors.as_ref().map(|v| v.columns(lo..hi));
    let path = dir.path().join("slice9.h5");
    eigentherm::model::write_file(&path, &[part]).unwrap();
    let psi = match &full.states.iter().find(|(k, _)| k == "neel_z").unwrap().1 {
        Vector::Real(v) => v.clone(),
        Vector::Complex(_) => panic!("real state expected"),
    };
    let Some(Matrix::Real(v)) = full.eigenvectors.as_ref() else {
        panic!("real eigenvectors expected")
    };
    let norm: f64 = psi.iter().map(|x| x * x).sum();
    let captured: f64 = (lo..hi)
        .map(|j| {
            (0..v.nrows())
                .map(|i| v[(i, j)] * psi[i])
                .sum::<f64>()
                .powi(2)
        })
        .sum::<f64>()
        / norm;
    assert!(captured > 0.05 && captured < 0.95, "{captured}");
    let file = path.to_str().unwrap();
    let run = |extra: &[&str]| {
        let mut args = vec![
            "quench",
            file,
            "--observable",
            "sz_site",
            "--state",
            "stored:neel_z",
            "--times",
            "lin:0:10:11",
            "--json",
        ];
        args.extend_from_slice(extra);
        run_binary(&args)
    };
    let above = format!("{}", captured * 1.001);
    let below = format!("{}", captured * 0.999);
    let (code, _, err) = run(&["--min-window-weight", &above]);
    assert_eq!(code, Some(1), "{err}");
    let line = err.lines().last().unwrap();
    assert!(
        line.starts_with("error: ")
            && line.contains("eigenvectors")
            && line.contains("--renormalise"),
        "{line}"
    );
    assert_eq!(err.lines().filter(|l| l.starts_with("error")).count(), 1);
    let (code, out, err) = run(&["--min-window-weight", &below]);
    assert_eq!(code, Some(0), "{err}");
    let json: serde_json::Value = serde_json::from_str(&out).unwrap();
    let got = json["files"][0]["sectors"][0]["captured"].as_f64().unwrap();
    assert!((got - captured).abs() < 1e-10, "{got} vs {captured}");
    let (code, _, err) = run(&["--min-window-weight", &above, "--renormalise"]);
    assert_eq!(code, Some(0), "{err}");
}
