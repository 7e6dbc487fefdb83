//! Checks of the random-matrix sectors: ensemble moments, level-spacing ratios, eigenbasis
//! quality, and the fixed observables.

use eigentherm::data::{Matrix, OpData, Operator};
use eigentherm::linalg;
use eigentherm::model::{build_random, rmt, RandomEnsemble, RandomSpec};

fn spec(ensemble: RandomEnsemble, dim: usize, seed: u64) -> RandomSpec {
    RandomSpec {
        ensemble,
        dim,
        seed,
    }
}

/// Mean of r̃ = min(s_i, s_{i+1})/max(s_i, s_{i+1}) over the middle half of the spectrum.
fn mean_r(e: &[f64]) -> f64 {
    let n = e.len();
    let s: Vec<f64> = e[n / 4..3 * n / 4]
        .windows(2)
        .map(|w| w[1] - w[0])
        .collect();
    let r: Vec<f64> = s
        .windows(2)
        .map(|w| w[0].min(w[1]) / w[0].max(w[1]))
        .collect();
    r.iter().sum::<f64>() / r.len() as f64
}

#[test]
fn spacing_ratios_match_the_ensembles() {
    // Atas, Bogomolny, Giraud, Roux, PRL 110, 084101 (2013): ⟨r̃⟩ = 0.5307 (GOE), 0.5996 (GUE)
    // (from memory), 2 ln 2 − 1 = 0.38629 (Poisson). Pooled over 4 seeds of N = 300 (about
    // 600 ratios; standard error ≈ 0.01), tolerance 0.03. The sector builder only rescales
    // these matrices by 1/√N, which leaves r̃ unchanged.
    let cases = [
        (RandomEnsemble::Goe, 0.5307, 0.03),
        (RandomEnsemble::Gue, 0.5996, 0.03),
        (RandomEnsemble::Poisson, 2.0 * 2f64.ln() - 1.0, 0.03),
    ];
    for (ens, want, tol) in cases {
        let mut total = 0.0;
        for seed in 1..=4 {
            let mut rng = rmt::rng(seed);
            let e = match ens {
                RandomEnsemble::Goe => linalg::eigvalsh_real(rmt::goe(300, &mut rng).as_ref()),
                RandomEnsemble::Gue => linalg::eigvalsh_complex(rmt::gue(300, &mut rng).as_ref()),
                RandomEnsemble::Poisson => Ok(rmt::poisson_levels(300, &mut rng)),
            }
            .unwrap();
            total += mean_r(&e);
        }
        let r = total / 4.0;
        eprintln!("{ens:?}: <r> = {r:.4}");
        assert!(
            (r - want).abs() < tol,
            "{ens:?}: <r> = {r}, expected {want}"
        );
    }
}

#[test]
fn gaussian_ensembles_have_the_textbook_variance_ratio() {
    // Mehta, Random Matrices (2004): GOE var(H_ii)/var(H_ij) = 2; GUE var(H_ii)/⟨|H_ij|²⟩ = 1;
    // 300 diagonal samples give a relative error of about 8 %, so 30 % is a loose bound
    for (ens, want) in [(RandomEnsemble::Goe, 2.0), (RandomEnsemble::Gue, 1.0)] {
        let s = build_random(&spec(ens, 300, 3)).unwrap();
        let (diag, off) = match s.hamiltonian.as_ref().unwrap() {
            Operator::Real(OpData::Dense(h)) => {
                let n = h.nrows();
                let d = (0..n).map(|i| h[(i, i)].powi(2)).sum::<f64>() / n as f64;
                let mut o = 0.0;
                for i in 0..n {
                    for j in 0..i {
                        o += h[(i, j)].powi(2);
                    }
                }
                (d, o / (n * (n - 1) / 2) as f64)
            }
            Operator::Complex(OpData::Dense(h)) => {
                let n = h.nrows();
                let d = (0..n).map(|i| h[(i, i)].re.powi(2)).sum::<f64>() / n as f64;
                let mut o = 0.0;
                for i in 0..n {
                    for j in 0..i {
                        o += h[(i, j)].norm_sqr();
                    }
                }
                (d, o / (n * (n - 1) / 2) as f64)
            }
            _ => panic!("dense Hamiltonian expected"),
        };
        // Mehta (2004), semicircle of radius √2 after the 1/√N scaling: ⟨E²⟩ = R²/4 = 1/2
        // (+ 1/(2N) at finite N for the GOE); 5 % tolerance
        let e2 = s.energies.iter().map(|e| e * e).sum::<f64>() / s.energies.len() as f64;
        assert!((e2 - 0.5).abs() < 0.025, "{ens:?}: <E²> = {e2}");
        let ratio = diag / off;
        assert!((ratio - want).abs() < 0.3 * want, "{ens:?}: ratio {ratio}");
    }
}

#[test]
fn eigenbases_are_exact() {
    // linear algebra, no source: ‖Hv − Ev‖ ≈ 0 and VᴴV = 1
    for ens in [RandomEnsemble::Goe, RandomEnsemble::Gue] {
        let s = build_random(&spec(ens, 80, 5)).unwrap();
        let v = s.eigenvectors.as_ref().unwrap();
        let h = match s.hamiltonian.as_ref().unwrap() {
            Operator::Real(OpData::Dense(h)) => Matrix::Real(h.clone()).to_complex(),
            Operator::Complex(OpData::Dense(h)) => h.clone(),
            _ => panic!("dense Hamiltonian expected"),
        };
        let vc = v.to_complex();
        let hv = &h * &vc;
        let vhv = vc.adjoint() * &vc;
        for a in 0..80 {
            for i in 0..80 {
                assert!((hv[(i, a)] - vc[(i, a)] * s.energies[a]).norm() < 1e-10);
                let want = if a == i { 1.0 } else { 0.0 };
                assert!((vhv[(i, a)].re - want).abs() < 1e-10 && vhv[(i, a)].im.abs() < 1e-10);
            }
        }
    }
    // Poisson: diagonal Hamiltonian, identity eigenvectors, ascending levels in [0, 1)
    let s = build_random(&spec(RandomEnsemble::Poisson, 50, 5)).unwrap();
    if let Some(Matrix::Real(v)) = &s.eigenvectors {
        for i in 0..50 {
            for j in 0..50 {
                assert_eq!(v[(i, j)], if i == j { 1.0 } else { 0.0 });
            }
        }
    }
    assert!(s.energies.windows(2).all(|w| w[0] <= w[1]));
    assert!(s.energies.iter().all(|&e| (0.0..1.0).contains(&e)));
}

#[test]
fn observables_are_fixed_and_seeds_reproduce() {
    // common practice, no source: same seed → same matrix; dense_rand does not depend on the seed
    let a = build_random(&spec(RandomEnsemble::Goe, 30, 1)).unwrap();
    let b = build_random(&spec(RandomEnsemble::Goe, 30, 1)).unwrap();
    let c = build_random(&spec(RandomEnsemble::Goe, 30, 2)).unwrap();
    assert_eq!(a.energies, b.energies);
    assert_ne!(a.energies, c.energies);
    let dense = |s: &eigentherm::model::SectorData| match &s.observables[1].op {
        Operator::Real(OpData::Dense(m)) => m.clone(),
        _ => panic!("dense_rand should be dense"),
    };
    let (da, dc) = (dense(&a), dense(&c));
    for i in 0..30 {
        for j in 0..30 {
            assert_eq!(da[(i, j)], dc[(i, j)]);
            assert_eq!(da[(i, j)], da[(j, i)]);
        }
    }
    match &a.observables[0].op {
        Operator::Real(OpData::Diagonal(d)) => {
            assert_eq!(a.observables[0].name, "diag_pm");
            assert_eq!(&d[..4], &[1.0, -1.0, 1.0, -1.0]);
        }
        _ => panic!("diag_pm should be diagonal"),
    }
    assert!(build_random(&spec(RandomEnsemble::Goe, 1, 1)).is_err());
}
