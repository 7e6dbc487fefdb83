//! Figures checked against independent computations in the test: the e^S-rescaled
//! envelope against a direct count of states, the microcanonical value against a direct
//! average, and storage-invariance of the verdicts (real data, the same data stored as
//! complex, the same eigenvectors each multiplied by a phase).

use eigentherm::analysis::diagonal;
use eigentherm::analysis::offdiagonal::{analyze_matrix, OffdiagonalOptions};
use eigentherm::data::{c64, Matrix, SymmetryClass};
use eigentherm::linalg::eigh_real;
use eigentherm::model::rmt::{goe, rng};
use faer::Mat;

/// A GOE matrix's spectrum and the matrix elements of a second GOE matrix in its eigenbasis.
fn goe_problem(n: usize, seed: u64) -> (Vec<f64>, Mat<f64>) {
    let mut r = rng(seed);
    let h = goe(n, &mut r);
    let a = goe(n, &mut r);
    let (e, v) = eigh_real(h.as_ref()).unwrap();
    let av = &a * &v;
    let ann = v.transpose() * av;
    (e, ann)
}

#[test]
fn rescaled_envelope_equals_a_direct_count_of_states() {
    // |f(Ē, ω)|² = e^{S(Ē)} |Aₙₘ|² with S = ln ρ, ρ the Gaussian-smoothed density of states
    // (Srednicki 1999; the tool's definition): recomputed here pair by pair with ρ summed
    // directly over the states (no interpolation table), bin by bin
    let n = 400;
    let (e, a) = goe_problem(n, 21);
    let w = 120..280;
    let r = analyze_matrix(
        "a",
        &e,
        w.clone(),
        "w",
        &Matrix::Real(Mat::from_fn(w.len(), w.len(), |i, j| {
            a[(w.start + i, w.start + j)]
        })),
        &OffdiagonalOptions::default(),
    )
    .unwrap();
    let sigma = r.dos_width;
    let rho = |x: f64| {
        e.iter()
            .map(|&en| (-0.5 * ((x - en) / sigma).powi(2)).exp())
            .sum::<f64>()
            / ((2.0 * std::f64::consts::PI).sqrt() * sigma)
    };
    for b in r.envelope.iter().filter(|b| b.count > 0) {
        let (mut s, mut c) = (0.0, 0usize);
        for m in w.clone() {
            for k in w.start..m {
                let om = e[m] - e[k];
                if om >= b.omega_lo && om < b.omega_hi {
                    s += rho(0.5 * (e[m] + e[k])) * a[(k, m)].powi(2);
                    c += 1;
                }
            }
        }
        if c != b.count {
            continue; // a pair on a bin edge may fall either side in floating point
        }
        let direct = s / c as f64;
        // the tool interpolates S on 257 points: agreement to 1e-3 (an e^{S/2} would be off
        // by a factor of order sqrt(rho) ~ 10)
        assert!(
            (b.f_sq / direct - 1.0).abs() < 1e-3,
            "bin {}..{}: {} vs {direct}",
            b.omega_lo,
            b.omega_hi,
            b.f_sq
        );
    }
}

#[test]
fn microcanonical_value_equals_a_direct_shell_average() {
    // the microcanonical prediction at each bin's mean energy is the mean of Aₙₙ over
    // |Eₙ − Ē| ≤ δ (the tool's definition, README): recomputed directly
    let n = 600;
    let (e, a) = goe_problem(n, 22);
    let d: Vec<f64> = (0..n).map(|k| a[(k, k)] + 0.3 * e[k]).collect();
    let r = diagonal::analyze("a", &e, &d, 200..400, "w", Some(n)).unwrap();
    let delta = r.predictions.microcanonical_half_width;
    assert!(delta > 0.0);
    for b in &r.smooth {
        let shell: Vec<f64> = e
            .iter()
            .zip(&d)
            .filter(|(en, _)| (**en - b.energy).abs() <= delta)
            .map(|(_, x)| *x)
            .collect();
        let direct = shell.iter().sum::<f64>() / shell.len() as f64;
        let got = b.microcanonical.unwrap();
        assert!((got - direct).abs() < 1e-12, "{got} vs {direct}");
    }
}

#[test]
fn complex_storage_and_eigenvector_phases_change_no_verdict() {
    // A real problem stored as complex, or with each eigenvector multiplied by a phase, is
    // the same physics: |Aₙₘ|, r̃ and the class must not change (common practice, no source)
    use eigentherm::model::{build_chain, write_file};
    use eigentherm::pipeline::scaling::{scaling, ScalingRequest};
    use eigentherm::pipeline::sector::SectorSettings;
    use eigentherm::pipeline::Inputs;
    use eigentherm::window::{Window, WindowSpec};
    use rand::Rng;
    let dir = tempfile::tempdir().unwrap();
    let mut sets: Vec<Vec<std::path::PathBuf>> = vec![Vec::new(), Vec::new(), Vec::new()];
    let mut r = rng(5);
    for l in [7, 9] {
        let sectors = build_chain(&crate::util::mixed_field_spec(l)).unwrap();
        for (k, set) in sets.iter_mut().enumerate() {
            let mut s = sectors.clone();
            if k > 0 {
                for sec in &mut s {
                    if let Some(Matrix::Real(v)) = &sec.eigenvectors {
                        let phases: Vec<c64> = (0..v.ncols())
                            .map(|_| {
                                let t = if k == 2 {
                                    r.random_range(0.0..std::f64::consts::TAU)
                                } else {
                                    0.0
                                };
                                c64::new(t.cos(), t.sin())
                            })
                            .collect();
                        sec.eigenvectors = Some(Matrix::Complex(Mat::from_fn(
                            v.nrows(),
                            v.ncols(),
                            |i, j| phases[j] * v[(i, j)],
                        )));
                    }
                }
            }
            let p = dir.path().join(format!("set{k}_L{l}.h5"));
            write_file(&p, &s).unwrap();
            set.push(p);
        }
    }
    let run = |files: &Vec<std::path::PathBuf>| {
        let req = ScalingRequest {
            inputs: Inputs::files(files.clone()),
            sector: None,
            observables: vec!["sz_site".into(), "sx_site".into()],
            settings: SectorSettings {
                levels_window: WindowSpec::Fraction(Window::LEVELS),
                window: WindowSpec::Fraction(Window::MATRIX_ELEMENTS),
                offdiagonal: Default::default(),
                budget: eigentherm::project::Budget::new(1 << 30),
                class: Default::default(),
                thermo: Default::default(),
            },
            combine_sectors: false,
        };
        scaling(&req).unwrap()
    };
    let (a0, s0) = run(&sets[0]);
    for set in &sets[1..] {
        let (a, s) = run(set);
        for (x, y) in a.iter().zip(&a0) {
            assert_eq!(
                x.class.symmetry_class,
                SymmetryClass::Orthogonal,
                "{}",
                x.class.class_source
            );
            assert_eq!(x.levels.mean_r, y.levels.mean_r);
            assert_eq!(x.levels.nearest_ensemble, y.levels.nearest_ensemble);
        }
        for (x, y) in s.rows.iter().zip(&s0.rows) {
            let close = |p: f64, q: f64| (p - q).abs() <= 1e-9 * q.abs().max(1e-300);
            assert!(close(x.diag_offdiag_ratio, y.diag_offdiag_ratio), "{x:?}");
            assert!(close(x.gaussian_ratio, y.gaussian_ratio));
            assert!(close(x.residual_variance, y.residual_variance));
            assert_eq!(x.symmetry_class, SymmetryClass::Orthogonal);
        }
        for (x, y) in s.verdicts.iter().zip(&s0.verdicts) {
            assert_eq!(x.verdict.verdict, y.verdict.verdict, "{}", x.family);
        }
    }
}
