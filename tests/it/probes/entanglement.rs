//! `eigentherm entanglement`: entropies of every state of two small chains against NumPy
//! (fixture), Page's mean for random states, chaotic against integrable chains, and
//! one-line errors.

use super::gauge::json_of;
use crate::util::{fails_naming, run_binary};
use eigentherm::analysis::entanglement::{fixed_number_mean, page};
use eigentherm::data::Matrix;
use eigentherm::linalg::eigh_complex;
use eigentherm::model::{rmt, write_file, SectorData};
use faer::Mat;
use serde_json::Value;

fn expected() -> Value {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/fixtures/probes/expected.json"
    ))
    .unwrap();
    serde_json::from_str(&text).unwrap()
}

#[test]
fn every_state_matches_numpy_svd() {
    // S_vN and S_2 of every state against numpy.linalg.svd of the state embedded in the
    // full space (NumPy 2.4.6, h5py 3.16.0; scripts/make_probe_fixtures.py), to 1e-10; the
    // S^z sector is cut into its particle-number blocks here, never in the script
    let want = expected();
    for (file, blocks) in [("full_L8.h5", 1), ("xxz_L10_sz0.h5", 6)] {
        let path = format!("fixtures/probes/{file}");
        for memory in ["1G", "64K"] {
            let v = json_of(&[
                "entanglement",
                &path,
                "--window",
                "0:1",
                "--memory",
                memory,
                "--json",
            ]);
            let s = &v["sectors"][0];
            assert_eq!(s["schmidt_blocks"], blocks);
            let states = s["per_state"].as_array().unwrap();
            let (svn, s2) = (
                want[file]["s_vn"].as_array().unwrap(),
                want[file]["s_2"].as_array().unwrap(),
            );
            assert_eq!(states.len(), svn.len());
            for (k, st) in states.iter().enumerate() {
                let a = st["s_vn"].as_f64().unwrap() - svn[k].as_f64().unwrap();
                let b = st["s_2"].as_f64().unwrap() - s2[k].as_f64().unwrap();
                assert!(a.abs() < 1e-10 && b.abs() < 1e-10, "{file} {k}: {a} {b}");
            }
        }
    }
}

#[test]
fn random_states_reproduce_page() {
    // Page, PRL 71, 1291 (1993): the mean entropy of Haar-random states of 2^5 × 2^5 is
    // H(1024) − H(32) − 31/64. 1000 eigenvectors of a GUE matrix of dimension 1024 (Haar
    // distributed, Mehta 2004) stored as a partial eigenbasis of a full L = 10 chain;
    // their mean entropy agrees to 1e-3.
    let (l, n) = (10usize, 1000usize);
    let d = 1 << l;
    let mut r = rmt::rng(1993);
    let (e, v) = eigh_complex(rmt::gue(d, &mut r).as_ref()).unwrap();
    let keep = Mat::from_fn(d, n, |i, j| v[(i, j)]);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("haar.h5");
    write_file(
        &path,
        &[SectorData {
            group: "/".into(),
            energies: e[..n].to_vec(),
            eigenvectors: Some(Matrix::Complex(keep)),
            size: Some(l),
            basis: Some((0..d as u64).collect()),
            ..Default::default()
        }],
    )
    .unwrap();
    let v = json_of(&[
        "entanglement",
        path.to_str().unwrap(),
        "--window",
        "0:1",
        "--json",
    ]);
    let s = &v["sectors"][0];
    let mean = s["mean_s_vn"].as_f64().unwrap();
    let want = page(32, 32);
    eprintln!("Haar states L = 10: mean S = {mean:.6}, Page {want:.6}");
    assert!((mean - want).abs() < 1e-3, "{mean} vs {want}");
    assert!((s["random_state_mean"].as_f64().unwrap() - want).abs() < 1e-12);
    // Page's approximation ln d_A − d_A/(2 d_B) (Page 1993) is close to the exact sum
    assert!((want - (32f64.ln() - 0.5)).abs() < 1e-3);
}

#[test]
fn fixed_number_mean_is_below_page() {
    // Vidmar & Rigol, PRL 119, 220603 (2017): at half filling the fixed-number mean is
    // (L/2) ln 2 with a negative O(1) correction larger than Page's 1/2; a sum of its
    // Dirichlet and Page terms (derived in analysis::entanglement). L = 10, ℓ = 5, N = 5.
    let f = fixed_number_mean(10, 5, 5);
    let p = page(32, 32);
    assert!(f < p && 5.0 * std::f64::consts::LN_2 - f > 0.5, "{f} {p}");
}

#[test]
fn chaotic_chain_approaches_page_and_integrable_stays_below() {
    // Chaotic eigenstates in mid-spectrum have close to the random-state entropy, integrable
    // ones visibly less (Vidmar & Rigol 2017; LeBlond et al. 2019, from memory). Open chains
    // of L = 12, reflection broken (full space, basis written), window 0.45:0.55, half cut:
    // the mixed-field chain (ratio > 0.9) against the transverse-field chain (ratio < 0.85).
    let dir = tempfile::tempdir().unwrap();
    let mut ratio = Vec::new();
    for model in ["mixed-field-ising", "transverse-field-ising"] {
        let path = dir.path().join(format!("{model}.h5"));
        let p = path.to_str().unwrap();
        let (code, _, err) = run_binary(&[
            "generate",
            "--model",
            model,
            "--sites",
            "12",
            "--reflection",
            "break",
            "--out",
            p,
        ]);
        assert_eq!(code, Some(0), "{err}");
        let v = json_of(&["entanglement", p, "--window", "0.45:0.55", "--json"]);
        let x = v["sectors"][0]["ratio"].as_f64().unwrap();
        eprintln!("{model} L = 12: mid-spectrum S / Page = {x:.4}");
        ratio.push(x);
    }
    assert!(ratio[0] > 0.9, "{ratio:?}");
    assert!(ratio[1] < 0.85, "{ratio:?}");
}

#[test]
fn missing_basis_and_bad_cut_are_one_line() {
    // one-line errors (project rule, no source)
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("mfi.h5");
    let p = path.to_str().unwrap();
    let (code, _, err) = run_binary(&[
        "generate",
        "--model",
        "mixed-field-ising",
        "--sites",
        "6",
        "--out",
        p,
    ]);
    assert_eq!(code, Some(0), "{err}");
    fails_naming(&["entanglement", p], &["mfi.h5", "basis", "not stored"]);
    fails_naming(
        &["entanglement", "fixtures/probes/full_L8.h5", "--cut", "8"],
        &["full_L8.h5", "--cut 8", "out of range"],
    );
}
