//! `eigentherm quench` on the command line: one-line errors, and an end-to-end run on a
//! generated file.

use eigentherm::model::{build_chain, write_file, Boundary, ChainModel, ChainSpec, Reflection};
use std::process::Command;

fn run(args: &[&str]) -> (bool, String, String) {
    // Other test threads of this process write HDF5 files while this one forks the binary:
    // the child inherits their descriptors and with them HDF5's exclusive file locks, which
    // would make its read-only open fail. Locking is a multi-process guard we do not need here.
    let out = Command::new(env!("CARGO_BIN_EXE_eigentherm"))
        .env("HDF5_USE_FILE_LOCKING", "FALSE")
        .args(args)
        .output()
        .expect("the binary runs");
    (
        out.status.success(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn bad_options_give_one_line_errors() {
    // DESIGN.md: bad input ends with a non-zero exit and one line `error: ...` (no source needed)
    for (opt, val, what) in [
        ("--times", "lin:5:1:10", "times"),
        ("--times", "log:0:1:10", "times"),
        ("--state", "product:uxz", "state"),
        ("--state", "neel", "state"),
    ] {
        let mut args = vec![
            "quench",
            "missing.h5",
            "--observable",
            "sz_site",
            "--state",
            "product:x+",
        ];
        if opt == "--state" {
            args[5] = val;
        } else {
            args.extend([opt, val]);
        }
        let (ok, _, err) = run(&args);
        assert!(!ok, "{val}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
        assert!(err.starts_with("error: ") && err.contains(what), "{err}");
    }
    let (ok, _, err) = run(&[
        "quench",
        "missing.h5",
        "--observable",
        "sz_site",
        "--state",
        "product:x+",
        "--drop-weight",
        "1.5",
    ]);
    assert!(!ok && err.starts_with("error: ") && err.contains("drop-weight"));
}

#[test]
fn end_to_end_on_a_generated_chain() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("mfi6.h5");
    let sectors = build_chain(&crate::util::mixed_field_spec(6)).unwrap();
    write_file(&path, &sectors).unwrap();
    let p = path.to_str().unwrap();
    // a product state that is not reflection symmetric has weight in both parity sectors
    let (ok, out, err) = run(&[
        "quench",
        p,
        "--observable",
        "sz_site",
        "--state",
        "product:uudddd",
        "--times",
        "lin:0:10:11",
        "--json",
    ]);
    assert!(ok, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let f = &v["files"][0];
    let secs = f["sectors"].as_array().unwrap();
    assert_eq!(secs.len(), 2);
    // sector weights of a normalised state add up to 1 (the embeddings form an isometry onto
    // the full space; linear algebra)
    let w: f64 = secs.iter().map(|s| s["weight"].as_f64().unwrap()).sum();
    assert!((w - 1.0).abs() < 1e-10);
    // ⟨σᶻ_centre⟩ at t = 0: the stored operator is the symmetrised (σᶻ₃ + σᶻ₄)/2, and the
    // state has site 3 and site 4 down: −1 (definition of the product state)
    let t0 = f["combined"]["trace"][0]["value"].as_f64().unwrap();
    assert!((t0 + 1.0).abs() < 1e-10, "{t0}");
    // the same state stored by the generator (domain wall: sites 1..=3 up) gives the same
    // combined trace as the product state built here (both are Pᵀψ; exact identity)
    let trace = |spec: &str| -> Vec<f64> {
        let (ok, out, err) = run(&[
            "quench",
            p,
            "--observable",
            "sz_site",
            "--state",
            spec,
            "--times",
            "lin:0:10:11",
            "--json",
        ]);
        assert!(ok, "{err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        v["files"][0]["combined"]["trace"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x["value"].as_f64().unwrap())
            .collect()
    };
    let a = trace("stored:domain_wall_z");
    let b = trace("product:uuuddd");
    assert_eq!(a.len(), 11);
    for (x, y) in a.iter().zip(&b) {
        assert!((x - y).abs() < 1e-10);
    }
}

#[test]
fn sector_decomposition_matches_the_unresolved_chain() {
    // The same chain with the reflection resolved (two sectors, combined through the
    // embeddings) and ignored (one sector, the full space): the whole-state figures agree,
    // D_eff = 1/Σ_s w̃_s²/D_eff,s, σ² = Σ_s w̃_s² σ²_s and the trace (exact identities for an
    // observable that is block diagonal in the sectors; linear algebra)
    let dir = tempfile::tempdir().unwrap();
    let run_with = |reflection: Reflection, name: &str| -> serde_json::Value {
        let path = dir.path().join(name);
        let sectors = build_chain(&ChainSpec {
            model: ChainModel::MixedFieldIsing {
                j: 1.0,
                g: 0.9045,
                h: 0.8090,
            },
            sites: 7,
            boundary: Boundary::Open,
            reflection,
            site: None,
            sz: None,
            disorder: None,
        })
        .unwrap();
        write_file(&path, &sectors).unwrap();
        let (ok, out, err) = run(&[
            "quench",
            path.to_str().unwrap(),
            "--observable",
            "sz_site",
            "--state",
            "product:uudduud",
            "--times",
            "lin:0:20:41",
            "--drop-weight",
            "0",
            "--json",
        ]);
        assert!(ok, "{err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        v["files"][0].clone()
    };
    let resolved = run_with(Reflection::Resolve, "res.h5");
    let ignored = run_with(Reflection::Ignore, "ign.h5");
    assert_eq!(resolved["sectors"].as_array().unwrap().len(), 2);
    assert_eq!(ignored["sectors"].as_array().unwrap().len(), 1);
    let (a, b) = (&resolved["overall"], &ignored["overall"]);
    let f = |v: &serde_json::Value, k: &str| v[k].as_f64().unwrap();
    for k in [
        "energy",
        "d_eff",
        "diagonal_ensemble",
        "sigma2",
        "canonical",
    ] {
        let (x, y) = (f(a, k), f(b, k));
        assert!((x - y).abs() <= 1e-9 * (1.0 + y.abs()), "{k}: {x} vs {y}");
    }
    // the bound holds for the whole state (Short 2011, from memory; module doc of quench)
    assert!(f(a, "sigma2") <= f(a, "bound"));
    let ta = &resolved["combined"]["trace"];
    let tb = &ignored["sectors"][0]["report"]["trace"];
    for j in 0..41 {
        let (x, y) = (f(&ta[j], "value"), f(&tb[j], "value"));
        assert!((x - y).abs() < 1e-10, "t index {j}: {x} vs {y}");
    }
}

#[test]
fn study_with_a_state_reports_quench_dynamics() {
    // `study --state`: the quench runs on every file and lands in results.json and in the
    // report section "Quench dynamics" (checks of the contract; the bound is Short 2011,
    // from memory, and D_eff ≥ 1 holds for any probability vector, 1/Σp² ≥ 1)
    let dir = tempfile::tempdir().unwrap();
    let paths = mixed_field_chains(dir.path(), &[6, 8]);
    let files: Vec<String> = paths
        .iter()
        .map(|p| p.to_str().unwrap().to_string())
        .collect();
    let out = dir.path().join("study");
    let mut args = vec!["study"];
    args.extend(files.iter().map(|s| s.as_str()));
    args.extend([
        "--observable",
        "sz_site",
        "--state",
        "product:y+",
        "--times",
        "lin:0:10:21",
        "--out",
        out.to_str().unwrap(),
    ]);
    let (ok, _, err) = run(&args);
    assert!(ok, "{err}");
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("results.json")).unwrap()).unwrap();
    let q = v["quench"].as_array().unwrap();
    assert_eq!(q.len(), 1);
    assert_eq!(q[0]["state"], "product:y+");
    let runs = q[0]["runs"].as_array().unwrap();
    assert_eq!(runs.len(), 2);
    let mut d_effs = Vec::new();
    for r in runs {
        let o = &r["overall"];
        let (s2, b, d) = (
            o["sigma2"].as_f64().unwrap(),
            o["bound"].as_f64().unwrap(),
            o["d_eff"].as_f64().unwrap(),
        );
        assert!(s2 <= b && d >= 1.0, "{o}");
        // every spin along +y has E = 0: ⟨σᶻσᶻ⟩ = ⟨σˣ⟩ = ⟨σᶻ⟩ = 0 (definition of the state)
        assert!(o["energy"].as_f64().unwrap().abs() < 1e-10);
        d_effs.push(d);
    }
    // the larger chain spreads the state over more eigenstates (measured D_eff 20.0 at L = 6
    // and 63.0 at L = 8; common practice, no source)
    assert!(d_effs[1] > d_effs[0]);
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(html.contains("Quench dynamics"));
    assert!(html.contains("Quench from product:y+"));
    let svgs: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with("quench_") && n.ends_with(".svg"))
        .collect();
    assert_eq!(svgs.len(), 2, "{svgs:?}");
    assert!(out.join("quench_product_y.csv").exists());
}

#[test]
fn study_with_several_observables_matches_single_observable_runs() {
    // `study` computes each file's coefficients cₙ = ⟨n|ψ⟩ (and every observable's Aₙₙ) once
    // per state and sector and reuses them for every observable; the numbers and figures
    // must be exactly those of one run per observable (same arithmetic; no source needed)
    use eigentherm::analysis::quench::{state::StateSpec, QuenchOptions, TimeGrid};
    use eigentherm::pipeline::quench::QuenchRequest;
    use eigentherm::pipeline::scaling::ScalingRequest;
    use eigentherm::pipeline::sector::SectorSettings;
    use eigentherm::pipeline::study::{study, StudyRequest};
    use eigentherm::pipeline::Inputs;
    use eigentherm::window::{Window, WindowSpec};
    let dir = tempfile::tempdir().unwrap();
    let files = mixed_field_chains(dir.path(), &[6, 8]);
    let states = ["product:x+".to_string(), "product:y+".to_string()];
    let run = |observables: &[&str], out: &str| -> (serde_json::Value, std::path::PathBuf) {
        let out = dir.path().join(out);
        let observables: Vec<String> = observables.iter().map(|s| s.to_string()).collect();
        let budget = eigentherm::project::Budget::default();
        let req = StudyRequest {
            scaling: ScalingRequest {
                inputs: Inputs::files(files.clone()),
                sector: None,
                observables: observables.clone(),
                settings: SectorSettings {
                    levels_window: WindowSpec::Fraction(Window::LEVELS),
                    window: WindowSpec::Fraction(Window::MATRIX_ELEMENTS),
                    offdiagonal: Default::default(),
                    budget,
                    class: Default::default(),
                    thermo: Default::default(),
                },
                combine_sectors: false,
            },
            quench: Some(QuenchRequest {
                inputs: Inputs::files(files.clone()),
                sector: None,
                observables,
                states: states
                    .iter()
                    .map(|s| (s.clone(), StateSpec::parse(s).unwrap()))
                    .collect(),
                grid: TimeGrid::parse("lin:0:10:21").unwrap(),
                // the default drop leaves a scattered set of kept states; one pass forms the
                // kept-state matrices of all the observables
                opts: QuenchOptions {
                    drop_weight: eigentherm::analysis::quench::DEFAULT_DROP_WEIGHT,
                    ..QuenchOptions::default()
                },
                budget,
            }),
            times_label: "lin:0:10:21".to_string(),
        };
        let res = study(&req).unwrap();
        eigentherm::report::study::write_folder(&res, &out).unwrap();
        (serde_json::to_value(&res.quench).unwrap(), out)
    };
    let all = ["sz_site", "sx_site", "bond_energy"];
    let (multi, multi_dir) = run(&all, "multi");
    let q = multi.as_array().unwrap();
    // one entry per (observable, state), observables outermost, as before
    assert_eq!(q.len(), 6);
    for (k, e) in q.iter().enumerate() {
        assert_eq!(e["observable"], all[k / 2]);
        assert_eq!(e["state"], states[k % 2].as_str());
        assert_eq!(e["runs"].as_array().unwrap().len(), 2);
    }
    let figures = |d: &std::path::Path, obs: &str| -> Vec<(String, String)> {
        let mut v: Vec<(String, String)> = std::fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| n.starts_with("quench_") && n.ends_with(".svg") && n.contains(obs))
            .map(|n| {
                let text = std::fs::read_to_string(d.join(&n)).unwrap();
                (n, text)
            })
            .collect();
        v.sort();
        v
    };
    for (k, obs) in all.iter().enumerate() {
        let (single, single_dir) = run(&[obs], obs);
        // identical numbers, to the last bit (serde_json compares the f64 values)
        assert_eq!(single.as_array().unwrap()[..], q[2 * k..2 * k + 2], "{obs}");
        // identical figures: trace and fluctuations for both states
        let (a, b) = (figures(&single_dir, obs), figures(&multi_dir, obs));
        assert_eq!(
            a.len(),
            4,
            "{obs}: {:?}",
            a.iter().map(|x| &x.0).collect::<Vec<_>>()
        );
        assert_eq!(a, b, "{obs}");
    }
}

use crate::util::mixed_field_chains;

/// Largest difference between the numbers of two JSON documents of the same shape,
/// relative to the larger magnitude or to 10⁻⁶ when both are smaller (values that are
/// zero but for rounding); `f64::INFINITY` when anything else differs.
fn max_rel_diff(a: &serde_json::Value, b: &serde_json::Value) -> f64 {
    use serde_json::Value;
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
            (x - y).abs() / x.abs().max(y.abs()).max(1e-6)
        }
        (Value::Array(x), Value::Array(y)) if x.len() == y.len() => x
            .iter()
            .zip(y)
            .map(|(u, v)| max_rel_diff(u, v))
            .fold(0.0, f64::max),
        (Value::Object(x), Value::Object(y)) if x.len() == y.len() => x
            .iter()
            .map(|(k, u)| y.get(k).map_or(f64::INFINITY, |v| max_rel_diff(u, v)))
            .fold(0.0, f64::max),
        (x, y) if x == y => 0.0,
        _ => f64::INFINITY,
    }
}

#[test]
fn a_small_memory_budget_gives_the_same_figures_or_one_line() {
    // --memory bounds the quench: a budget too small to keep the eigenvectors forms the
    // kept-state matrices from block pairs with smaller blocks and reports the same figures
    // (the same matrix elements summed in another order: rounding only; common practice, no
    // source); a budget below the kept-state matrix itself stops with one line naming it
    // (dimensions 136 and 120 at L = 8: the matrices take about 220 KB and 170 KB)
    let dir = tempfile::tempdir().unwrap();
    let path = &mixed_field_chains(dir.path(), &[8])[0];
    let p = path.to_str().unwrap();
    let run_with = |memory: Option<&str>| {
        let mut args = vec![
            "quench",
            p,
            "--observable",
            "sz_site",
            "--state",
            "product:uuuudddd",
            "--times",
            "lin:0:10:21",
            "--json",
        ];
        if let Some(m) = memory {
            args.extend(["--memory", m]);
        }
        run(&args)
    };
    let (ok, full, err) = run_with(None);
    assert!(ok, "{err}");
    let (ok, small, err) = run_with(Some("300K"));
    assert!(ok, "{err}");
    let full: serde_json::Value = serde_json::from_str(&full).unwrap();
    let small: serde_json::Value = serde_json::from_str(&small).unwrap();
    let d = max_rel_diff(&full, &small);
    assert!(d < 1e-9, "largest relative difference {d:e}");
    let (ok, _, err) = run_with(Some("100K"));
    assert!(!ok);
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(
        err.starts_with("error: ") && err.contains("memory budget"),
        "{err}"
    );
}

#[test]
fn a_state_at_a_custom_path_gives_the_figures_of_the_same_state_under_states() {
    // The same vector read from states/psi and from /initial/psi through --state-path must
    // give the same figures (exact identity, common practice, no source); data from
    // scripts/make_compound_fixtures.py (numpy 2.4.6, h5py 3.16.0).
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("custom_state.h5");
    std::fs::copy("fixtures/compounds/r_i.h5", &path).unwrap();
    {
        let f = hdf5::File::open_rw(&path).unwrap();
        let psi: Vec<eigentherm::data::c64> = f.dataset("states/psi").unwrap().read_raw().unwrap();
        f.create_group("initial")
            .unwrap()
            .new_dataset_builder()
            .with_data(&psi)
            .create("psi")
            .unwrap();
    }
    let p = path.to_str().unwrap();
    let quench = |extra: &[&str]| {
        let mut args = vec!["quench", p, "--observable", "hop", "--json"];
        args.extend(extra);
        let (ok, out, err) = run(&args);
        assert!(ok, "{err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        v["files"][0]["overall"].clone()
    };
    let reference = quench(&["--state", "stored:psi"]);
    for spec in ["alt=/initial/psi", "alt=initial/psi"] {
        let got = quench(&["--state", "stored:alt", "--state-path", spec]);
        assert_eq!(max_rel_diff(&reference, &got), 0.0, "{spec}");
    }
    // an absolute path that does not exist is an input error naming it
    let (ok, _, err) = run(&[
        "quench",
        p,
        "--observable",
        "hop",
        "--state",
        "stored:alt",
        "--state-path",
        "alt=/nowhere/psi",
    ]);
    assert!(!ok);
    assert!(
        err.trim_end()
            .ends_with("/nowhere/psi: missing dataset (state 'alt', --state-path)"),
        "{err}"
    );
    // NAME=PATH is required
    let (ok, _, err) = run(&[
        "quench",
        p,
        "--observable",
        "hop",
        "--state",
        "stored:alt",
        "--state-path",
        "alt",
    ]);
    assert!(!ok);
    assert_eq!(err.trim_end(), "error: --state-path 'alt' is not NAME=PATH");
}

#[test]
fn a_product_state_in_a_sector_with_basis_configurations_needs_no_embedding() {
    // An S^z = 0 sector (dimension 70 of L = 8, not 2^L) written once with its embedding and
    // once with only its `basis` configurations: the Néel state's component is the same
    // vector both ways, so the figures must agree to the bit (exact identity, common
    // practice, no source).
    let dir = tempfile::tempdir().unwrap();
    let spec = ChainSpec {
        model: ChainModel::Xxz {
            j: 1.0,
            delta: 0.55,
            j2: 0.4,
        },
        sites: 8,
        boundary: Boundary::Open,
        reflection: Reflection::Break { field: 0.1 },
        site: None,
        sz: Some(0.0),
        disorder: None,
    };
    let sectors = build_chain(&spec).unwrap();
    assert!(sectors
        .iter()
        .all(|s| s.basis.is_some() && s.embedding.is_some()));
    let with = dir.path().join("with_embedding.h5");
    write_file(&with, &sectors).unwrap();
    let mut bare = sectors.clone();
    for s in &mut bare {
        s.embedding = None;
    }
    let without = dir.path().join("basis_only.h5");
    write_file(&without, &bare).unwrap();
    let overall = |p: &std::path::Path, state: &str| {
        let (ok, out, err) = run(&[
            "quench",
            p.to_str().unwrap(),
            "--observable",
            "sz_site",
            "--state",
            state,
            "--times",
            "lin:0:10:11",
            "--json",
        ]);
        assert!(ok, "{state}: {err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        v["files"][0]["overall"].clone()
    };
    let neel = "product:udududud";
    assert_eq!(
        max_rel_diff(&overall(&with, neel), &overall(&without, neel)),
        0.0
    );
    // a state with weight outside the sector: analysed as its normalised projection, with
    // a warning naming the weight 70/256 = 0.273438 (binomial count, common practice)
    let (ok, _, err) = run(&[
        "quench",
        without.to_str().unwrap(),
        "--observable",
        "sz_site",
        "--state",
        "product:x+",
        "--times",
        "lin:0:10:11",
    ]);
    assert!(ok, "{err}");
    assert!(
        err.contains("weight 0.273438 on the stored basis configurations"),
        "{err}"
    );
    // the wrong number of sites is a usage error
    let (ok, _, err) = run(&[
        "quench",
        without.to_str().unwrap(),
        "--observable",
        "sz_site",
        "--state",
        "product:udud",
    ]);
    assert!(!ok);
    assert!(
        err.contains("the product state gives 4 sites but sector"),
        "{err}"
    );
}
