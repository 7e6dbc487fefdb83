//! `eigentherm gauge`: χₙ(μ) and Fₙ of every state of two small chains against NumPy
//! (fixture), the GOE mean against the semicircle, integrable against chaotic chains, and
//! one-line errors.

use crate::util::{fails_naming, run_binary};
use eigentherm::analysis::gauge::{GaugeOptions, Partners};
use eigentherm::linalg::eigh_real;
use eigentherm::model::rmt;
use serde_json::Value;

/// Runs `eigentherm ARGS --json` and returns the parsed output.
pub fn json_of(args: &[&str]) -> Value {
    let (code, out, err) = run_binary(args);
    assert_eq!(code, Some(0), "{args:?}: {err}");
    serde_json::from_str(&out).expect("JSON output")
}

fn expected() -> Value {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/fixtures/probes/expected.json"
    ))
    .unwrap();
    serde_json::from_str(&text).unwrap()
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

#[test]
fn every_state_matches_numpy() {
    // χₙ(μ) and Fₙ of every state against direct sums in NumPy 2.4.6 (numpy.linalg.eigh;
    // fixture written by scripts/make_probe_fixtures.py with h5py 3.16.0), to 1e-10
    // relative; once in one block and once in blocks of 64 KiB budget (several block pairs)
    let want = expected();
    for file in ["full_L8.h5", "xxz_L10_sz0.h5"] {
        let path = format!("fixtures/probes/{file}");
        let w = &want[file];
        let mu = w["cutoff"].as_f64().unwrap().to_string();
        for memory in ["1G", "64K"] {
            let v = json_of(&[
                "gauge",
                &path,
                "--perturbation",
                "sz_site",
                "--window",
                "0:1",
                "--cutoff",
                &mu,
                "--memory",
                memory,
                "--json",
            ]);
            let o = &v["sectors"][0]["observables"][0];
            let states = o["per_state"].as_array().unwrap();
            let chi = w["chi"].as_array().unwrap();
            let fid = w["fidelity"].as_array().unwrap();
            assert_eq!(states.len(), chi.len(), "{file}");
            for (k, s) in states.iter().enumerate() {
                let (c, f) = (s["chi"].as_f64().unwrap(), s["fidelity"].as_f64().unwrap());
                let (cw, fw) = (chi[k].as_f64().unwrap(), fid[k].as_f64().unwrap());
                assert!(
                    close(c, cw, 1e-10),
                    "{file} {memory} state {k}: chi {c} vs {cw}"
                );
                assert!(
                    close(f, fw, 1e-10),
                    "{file} {memory} state {k}: F {f} vs {fw}"
                );
            }
            assert!(o["cutoff_rule"].as_str().unwrap().starts_with("given"));
        }
    }
}

#[test]
fn default_cutoff_is_sites_times_spacing() {
    // the default μ = L·ω̄ (Pandey et al., PRX 10, 041017 (2020): μ ∝ L/D), L from the
    // attribute size = 8 of the fixture (definition of this command)
    let v = json_of(&[
        "gauge",
        "fixtures/probes/full_L8.h5",
        "--perturbation",
        "sz_site",
        "--json",
    ]);
    let o = &v["sectors"][0]["observables"][0];
    let spacing = o["mean_level_spacing"].as_f64().unwrap();
    assert!(close(o["cutoff"].as_f64().unwrap(), 8.0 * spacing, 1e-12));
    assert_eq!(o["partners"], "all");
}

/// Mean of χₙ(μ) over a GOE window against the semicircle (see the test below).
fn goe_chi_prediction(e_n: f64, n: usize, mu: f64) -> f64 {
    // ⟨χₙ⟩ = ⟨|Vₙₘ|²⟩ ∫ ρ(E) ω²/(ω² + μ²)² dE with ρ(E) = (2(N−1)/(πR²))√(R² − E²),
    // R = √(2N), ⟨|Vₙₘ|²⟩ = 1/2; midpoint rule on 200000 points
    let r = (2.0 * n as f64).sqrt();
    let k = 200_000;
    let h = 2.0 * r / k as f64;
    (0..k)
        .map(|i| {
            let e = -r + (i as f64 + 0.5) * h;
            let rho =
                2.0 * (n - 1) as f64 / (std::f64::consts::PI * r * r) * (r * r - e * e).sqrt();
            let w2 = (e_n - e).powi(2);
            0.5 * rho * w2 / (w2 + mu * mu).powi(2) * h
        })
        .sum()
}

#[test]
fn goe_mean_norm_follows_the_semicircle() {
    // H and V independent GOE matrices (N = 600, off-diagonal variance 1/2): in H's
    // eigenbasis Vₙₘ is again Gaussian with ⟨V²ₙₘ⟩ = 1/2 (orthogonal invariance, Mehta,
    // Random Matrices 2004), so ⟨χₙ(μ)⟩ = ½ Σₘ ω²/(ω²+μ²)², the sum over the levels taken
    // with the semicircle density (derived here; the level-correlation correction is
    // −1/(2π² K²) relative for μ = K spacings, 5e-4 at K = 10, from the 1/(π²s²) tail of the
    // GOE cluster function). Six realizations (sectors r0..r5); the window mean of χₙ/χ_pred
    // per realization, checked within 4 standard errors of their mean (spread/√6).
    // Sierant, Maksymov, Kuś, Zakrzewski, PRE 99, 050102 (2019) give the distribution of the
    // μ → 0 fidelity susceptibility; this test checks the regularised mean instead.
    let (n, reps) = (600, 6);
    let mut r = rmt::rng(1402);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("goe.h5");
    {
        let f = crate::util::create_h5(&path);
        for k in 0..reps {
            let (e, vecs) = eigh_real(rmt::goe(n, &mut r).as_ref()).unwrap();
            let vop = rmt::goe(n, &mut r);
            let g = f.create_group(&format!("r{k}")).unwrap();
            g.new_dataset_builder()
                .with_data(&ndarray::Array1::from(e.clone()))
                .create("energies")
                .unwrap();
            let vv = ndarray::Array2::from_shape_fn((n, n), |(i, j)| vecs[(i, j)]);
            let d = g
                .new_dataset_builder()
                .with_data(&vv)
                .create("eigenvectors")
                .unwrap();
            d.new_attr::<hdf5::types::VarLenUnicode>()
                .create("layout")
                .unwrap()
                .write_scalar(&"columns".parse::<hdf5::types::VarLenUnicode>().unwrap())
                .unwrap();
            let vo = ndarray::Array2::from_shape_fn((n, n), |(i, j)| vop[(i, j)]);
            g.new_dataset_builder()
                .with_data(&vo)
                .create("observables/v")
                .unwrap();
        }
    }
    let p = path.to_str().unwrap();
    let v = json_of(&[
        "gauge",
        p,
        "--perturbation",
        "v",
        "--window",
        "0.3:0.7",
        "--cutoff",
        "10*spacing",
        "--json",
    ]);
    let mut means = Vec::new();
    for s in v["sectors"].as_array().unwrap() {
        let o = &s["observables"][0];
        let mu = o["cutoff"].as_f64().unwrap();
        let states = o["per_state"].as_array().unwrap();
        let ratio: Vec<f64> = states
            .iter()
            .map(|s| {
                s["chi"].as_f64().unwrap()
                    / goe_chi_prediction(s["energy"].as_f64().unwrap(), n, mu)
            })
            .collect();
        means.push(ratio.iter().sum::<f64>() / ratio.len() as f64);
        // the typical value lies below the mean (Jensen) and carries a finite error
        assert!(o["chi"]["geometric_mean"].as_f64().unwrap() < o["chi"]["mean"].as_f64().unwrap());
        assert!(o["chi"]["geometric_mean_stderr"].as_f64().unwrap() > 0.0);
    }
    let m = means.iter().sum::<f64>() / reps as f64;
    let sd = (means.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (reps - 1) as f64).sqrt();
    let err = sd / (reps as f64).sqrt();
    eprintln!("GOE: mean chi / semicircle prediction = {m:.4} ± {err:.4} ({means:?})");
    assert!((m - 1.0).abs() < 4.0 * err.max(1e-3), "{m} ± {err}");
    assert!(err < 0.03, "{err}");
}

#[test]
fn near_integrable_chain_grows_faster_than_chaotic() {
    // LeBlond, Sels, Polkovnikov, Rigol, PRB 104, L201117 (2021): near the onset of chaos
    // (weakly broken integrability) the typical fidelity susceptibility grows up to ω̄⁻² ∝ D²,
    // against ∝ D in the chaotic regime. XXZ (Δ = 0.55) with next-nearest-neighbour
    // coupling J₂ = 0.05 (near integrable) and 0.5 (chaotic), S^z = 0, reflection and spin
    // flip resolved (sector even_flip_even), V = szsz_bond, L = 12 and 14. Measured
    // 2026-12-03 (this test's output): d ln F_typ / d ln D = 1.55 (J₂ = 0.05) and 0.98
    // (J₂ = 0.5); at J₂ = 0 (integrable point itself) 0.84, and χ_typ at μ = L·ω̄ grows
    // about as D/L for all three at these sizes (README, gauge).
    let dir = tempfile::tempdir().unwrap();
    let mut slope = Vec::new();
    for j2 in ["0.05", "0.5"] {
        let mut pts = Vec::new();
        for l in [12, 14] {
            let path = dir.path().join(format!("xxz_{j2}_{l}.h5"));
            let p = path.to_str().unwrap();
            let ls = l.to_string();
            let (code, _, err) = run_binary(&[
                "generate", "--model", "xxz", "--sites", &ls, "--sz", "0", "--delta", "0.55",
                "--j2", j2, "--out", p,
            ]);
            assert_eq!(code, Some(0), "{err}");
            let v = json_of(&[
                "gauge",
                p,
                "--perturbation",
                "szsz_bond",
                "--sector",
                "even_flip_even",
                "--window",
                "0.25:0.75",
                "--json",
            ]);
            let s = &v["sectors"][0];
            let o = &s["observables"][0];
            let f = o["fidelity"]["geometric_mean"].as_f64().unwrap();
            let c = o["chi"]["geometric_mean"].as_f64().unwrap();
            let d = s["dim"].as_f64().unwrap();
            eprintln!("j2 = {j2}, L = {l}, D = {d}: F_typ = {f:.4e}, chi_typ = {c:.4e}");
            pts.push((d.ln(), f.ln()));
        }
        slope.push((pts[1].1 - pts[0].1) / (pts[1].0 - pts[0].0));
    }
    eprintln!(
        "d ln F_typ / d ln D: near integrable {:.3}, chaotic {:.3}",
        slope[0], slope[1]
    );
    assert!(slope[0] > slope[1] + 0.3, "{slope:?}");
    assert!((slope[1] - 1.0).abs() < 0.3, "chaotic F_typ ∝ D: {slope:?}");
}

#[test]
fn missing_perturbation_is_one_line() {
    // one-line errors (project rule, no source)
    fails_naming(
        &[
            "gauge",
            "fixtures/probes/full_L8.h5",
            "--perturbation",
            "nope",
        ],
        &["full_L8.h5", "nope"],
    );
    fails_naming(
        &[
            "gauge",
            "fixtures/probes/full_L8.h5",
            "--perturbation",
            "sz_site",
            "--cutoff",
            "-2",
        ],
        &["--cutoff"],
    );
}

#[test]
fn options_default_to_all_partners() {
    // the documented defaults (definition of this command)
    assert_eq!(GaugeOptions::default().partners, Partners::All);
}
