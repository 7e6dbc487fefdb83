//! Level statistics on random-matrix spectra of known character.

use eigentherm::analysis::levels::{
    analyze, spacing_ratios, surmise, Ensemble, LevelOptions, LevelReport,
};
use eigentherm::linalg::{eigvalsh_complex, eigvalsh_real};
use eigentherm::model::rmt;
use eigentherm::window::{Window, WindowSpec};
use std::sync::OnceLock;

fn default_window() -> WindowSpec {
    WindowSpec::Fraction(Window::LEVELS)
}

/// Eigenvalues of an n×n Gaussian β-ensemble (β = 1 GOE, β = 2 GUE) from its tridiagonal
/// model: diagonal N(0, 2), off-diagonal χ_{(n−k)β}, k = 1 … n − 1, whose eigenvalues have
/// exactly the GOE/GUE joint law (Dumitriu & Edelman, J. Math. Phys. 43, 5830 (2002)).
/// Eigenvalues by Sturm-sequence bisection. Used instead of dense matrices because the
/// dense eigensolver runs for minutes at dimension 2000 in the unoptimised test profile
/// (faer's generic kernels are compiled at this crate's opt-level); the dense recipe is
/// kept in the `#[ignore]`d tests below.
fn beta_hermite_levels(n: usize, beta: f64, seed: u64) -> Vec<f64> {
    use rand::Rng;
    use rand_distr::{ChiSquared, Distribution, StandardNormal};
    let mut rng = rmt::rng(seed);
    let a: Vec<f64> = (0..n)
        .map(|_| 2f64.sqrt() * rng.sample::<f64, _>(StandardNormal))
        .collect();
    let b2: Vec<f64> = (1..n)
        .map(|k| {
            ChiSquared::new((n - k) as f64 * beta)
                .unwrap()
                .sample(&mut rng)
        })
        .collect();
    // Sturm count: number of eigenvalues below x
    let count = |x: f64| -> usize {
        let mut c = 0;
        let mut q = a[0] - x;
        if q < 0.0 {
            c += 1;
        }
        for i in 1..n {
            let d = if q == 0.0 { f64::EPSILON } else { q };
            q = a[i] - x - b2[i - 1] / d;
            if q < 0.0 {
                c += 1;
            }
        }
        c
    };
    let bound = (0..n)
        .map(|i| {
            let l = if i > 0 { b2[i - 1].sqrt() } else { 0.0 };
            let r = if i + 1 < n { b2[i].sqrt() } else { 0.0 };
            a[i].abs() + l + r
        })
        .fold(0.0, f64::max);
    (0..n)
        .map(|k| {
            let (mut lo, mut hi) = (-bound, bound);
            while hi - lo > 1e-13 * bound {
                let mid = 0.5 * (lo + hi);
                if count(mid) > k {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            0.5 * (lo + hi)
        })
        .collect()
}

fn goe_levels(n: usize, seed: u64) -> Vec<f64> {
    beta_hermite_levels(n, 1.0, seed)
}

/// GOE of dimension 2000 (fixed seed) and its report, shared by the tests below.
fn goe_2000() -> &'static LevelReport {
    static R: OnceLock<LevelReport> = OnceLock::new();
    R.get_or_init(|| {
        analyze(
            &goe_levels(2000, 11),
            &default_window(),
            &LevelOptions::default(),
        )
        .unwrap()
    })
}

fn gue_2000() -> &'static LevelReport {
    static R: OnceLock<LevelReport> = OnceLock::new();
    R.get_or_init(|| {
        let e = beta_hermite_levels(2000, 2.0, 12);
        analyze(&e, &default_window(), &LevelOptions::default()).unwrap()
    })
}

#[test]
fn tridiagonal_model_matches_dense_eigensolver() {
    // Dumitriu & Edelman (2002): the model's eigenvalues are those of the tridiagonal matrix;
    // check the bisection against faer's dense solver on a small case (exact linear algebra)
    use rand::Rng;
    let _ = rmt::rng(0).random::<f64>();
    let e = beta_hermite_levels(40, 1.0, 99);
    assert!(e.windows(2).all(|w| w[0] <= w[1]));
    // rebuild the same matrix with the same seed and compare
    use rand_distr::{ChiSquared, Distribution, StandardNormal};
    let mut rng = rmt::rng(99);
    let a: Vec<f64> = (0..40)
        .map(|_| 2f64.sqrt() * rng.sample::<f64, _>(StandardNormal))
        .collect();
    let b: Vec<f64> = (1..40)
        .map(|k| {
            ChiSquared::new((40 - k) as f64)
                .unwrap()
                .sample(&mut rng)
                .sqrt()
        })
        .collect();
    let m = faer::Mat::<f64>::from_fn(40, 40, |i, j| {
        if i == j {
            a[i]
        } else if i == j + 1 {
            b[j]
        } else if j == i + 1 {
            b[i]
        } else {
            0.0
        }
    });
    let dense = eigvalsh_real(m.as_ref()).unwrap();
    for (x, y) in e.iter().zip(&dense) {
        assert!((x - y).abs() < 1e-9, "{x} vs {y}");
    }
}

/// The dense recipe (rmt::goe/gue + linalg::eigvalsh): minutes in the unoptimised test
/// profile, seconds with `cargo test --release -- --ignored`.
#[test]
fn dense_goe_and_gue_mean_ratios() {
    let mut rng = rmt::rng(11);
    let e = eigvalsh_real(rmt::goe(2000, &mut rng).as_ref()).unwrap();
    let r = analyze(&e, &default_window(), &LevelOptions::default()).unwrap();
    // Atas et al. 2013: <r̃>_GOE = 0.5307(1) for large matrices (from memory)
    assert!(
        (r.mean_r - 0.5307).abs() < 3.0 * r.mean_r_stderr,
        "{}",
        r.mean_r
    );
    assert_eq!(r.nearest_ensemble, Ensemble::Goe);
    let e = eigvalsh_complex(rmt::gue(2000, &mut rng).as_ref()).unwrap();
    let r = analyze(&e, &default_window(), &LevelOptions::default()).unwrap();
    // Atas et al. 2013: <r̃>_GUE = 0.5996(1) for large matrices (from memory)
    assert!(
        (r.mean_r - 0.5996).abs() < 3.0 * r.mean_r_stderr,
        "{}",
        r.mean_r
    );
    assert_eq!(r.nearest_ensemble, Ensemble::Gue);
}

fn poisson_20000() -> &'static LevelReport {
    static R: OnceLock<LevelReport> = OnceLock::new();
    R.get_or_init(|| {
        let mut rng = rmt::rng(13);
        let e = rmt::poisson_levels(20000, &mut rng);
        analyze(&e, &default_window(), &LevelOptions::default()).unwrap()
    })
}

/// Mean and naive standard error of r̃ over many independent 3×3 spectra (one ratio each,
/// so the ratios are independent and σ/√N is exact).
fn mean_r_3x3(samples: usize, complex: bool) -> (f64, f64) {
    let mut rng = rmt::rng(if complex { 22 } else { 21 });
    let mut r = Vec::with_capacity(samples);
    for _ in 0..samples {
        let e = if complex {
            eigvalsh_complex(rmt::gue(3, &mut rng).as_ref()).unwrap()
        } else {
            eigvalsh_real(rmt::goe(3, &mut rng).as_ref()).unwrap()
        };
        let (x, skipped) = spacing_ratios(&e);
        assert_eq!((x.len(), skipped), (1, 0));
        r.push(x[0]);
    }
    let n = r.len() as f64;
    let m = r.iter().sum::<f64>() / n;
    let var = r.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (n - 1.0);
    (m, (var / n).sqrt())
}

#[test]
fn goe_3x3_mean_ratio_is_the_surmise_value() {
    let (m, se) = mean_r_3x3(20000, false);
    let want = 4.0 - 2.0 * 3f64.sqrt(); // Atas et al., PRL 110, 084101 (2013): exact for 3×3 GOE
    assert!(
        (m - want).abs() < 3.0 * se,
        "mean r {m} ± {se}, want {want}"
    );
}

#[test]
fn gue_3x3_mean_ratio_is_the_surmise_value() {
    let (m, se) = mean_r_3x3(20000, true);
    let want = 2.0 * 3f64.sqrt() / std::f64::consts::PI - 0.5; // Atas et al. 2013: exact for 3×3 GUE
    assert!(
        (m - want).abs() < 3.0 * se,
        "mean r {m} ± {se}, want {want}"
    );
}

#[test]
fn large_goe_mean_ratio() {
    let r = goe_2000();
    eprintln!(
        "GOE 2000: mean r {} ± {} (naive {})",
        r.mean_r, r.mean_r_stderr, r.mean_r_stderr_naive
    );
    // Atas et al. 2013: <r̃>_GOE = 0.5307(1) for large matrices (from memory)
    assert!(
        (r.mean_r - 0.5307).abs() < 3.0 * r.mean_r_stderr,
        "{}",
        r.mean_r
    );
    assert_eq!(r.states, 1000); // DESIGN.md window semantics: 500..1500
    assert_eq!(r.ratio_class.nearest, Ensemble::Goe);
    assert!(!r.ratio_class.intermediate);
    assert_eq!(r.degenerate_pairs, 0);
    assert!(
        r.warnings.iter().all(|w| !w.contains("superposition")),
        "{:?}",
        r.warnings
    );
}

#[test]
fn large_gue_mean_ratio() {
    let r = gue_2000();
    eprintln!(
        "GUE 2000: mean r {} ± {}; KS P {} GOE {} GUE {}",
        r.mean_r, r.mean_r_stderr, r.ks_poisson, r.ks_goe, r.ks_gue
    );
    // Atas et al. 2013: <r̃>_GUE = 0.5996(1) for large matrices (from memory)
    assert!(
        (r.mean_r - 0.5996).abs() < 3.0 * r.mean_r_stderr,
        "{}",
        r.mean_r
    );
    assert_eq!(r.ratio_class.nearest, Ensemble::Gue);
    // Mehta (2004): GUE Wigner surmise fits GUE spacings better than the GOE one
    assert!(r.ks_gue < r.ks_goe, "{} vs {}", r.ks_gue, r.ks_goe);
    assert_eq!(r.nearest_ensemble, Ensemble::Gue);
}

#[test]
fn poisson_mean_ratio() {
    let r = poisson_20000();
    eprintln!("Poisson 20000: mean r {} ± {}", r.mean_r, r.mean_r_stderr);
    // Atas et al. 2013; Oganesyan & Huse, PRB 75, 155111 (2007): 2 ln 2 − 1
    let want = 2.0 * std::f64::consts::LN_2 - 1.0;
    assert!(
        (r.mean_r - want).abs() < 3.0 * r.mean_r_stderr,
        "{}",
        r.mean_r
    );
    assert_eq!(r.ratio_class.nearest, Ensemble::Poisson);
}

#[test]
fn unfolded_goe_spacings_are_wigner_not_poisson() {
    let r = goe_2000();
    eprintln!(
        "GOE 2000: KS P {} GOE {} GUE {}",
        r.ks_poisson, r.ks_goe, r.ks_gue
    );
    // Mehta (2004): GOE spacings follow the Wigner surmise (it differs from the exact
    // large-N law by ~1 % at most); KS noise for 1000 spacings is ~1.4/√1000 ≈ 0.045
    assert!(r.ks_goe < 0.05, "KS to GOE {}", r.ks_goe);
    assert!(
        r.ks_goe < r.ks_poisson / 3.0,
        "{} vs {}",
        r.ks_goe,
        r.ks_poisson
    );
    assert_eq!(r.nearest_ensemble, Ensemble::Goe);
}

#[test]
fn unfolded_poisson_spacings_are_exponential() {
    let r = poisson_20000();
    eprintln!(
        "Poisson: KS P {} GOE {} GUE {}",
        r.ks_poisson, r.ks_goe, r.ks_gue
    );
    // Mehta (2004): uncorrelated levels have P(s) = e^(−s); KS noise for 10⁴ spacings ≈ 0.014
    assert!(r.ks_poisson < 0.02, "KS to Poisson {}", r.ks_poisson);
    assert!(
        r.ks_poisson < r.ks_goe / 3.0,
        "{} vs {}",
        r.ks_poisson,
        r.ks_goe
    );
    assert_eq!(r.nearest_ensemble, Ensemble::Poisson);
}

#[test]
fn form_factor_plateau_is_one() {
    // common practice, no source: with K = |Σρ e^(−2πiετ)|²/Σρ², K → 1 at long times
    // for non-degenerate levels
    for (name, r) in [("GOE", goe_2000()), ("Poisson", poisson_20000())] {
        let f = &r.form_factor;
        eprintln!("{name}: plateau {} onset {:?}", f.plateau, f.plateau_onset);
        assert!(
            (f.plateau - 1.0).abs() < 0.1,
            "{name}: plateau {}",
            f.plateau
        );
    }
    // Mehta (2004), from memory: GOE K(τ) = 2τ − τ ln(1 + 2τ) reaches 0.8 at τ ≈ 0.73;
    // the measured onset must lie on the ramp's end, not at early times
    let onset = goe_2000().form_factor.plateau_onset.unwrap();
    assert!(onset > 0.3 && onset < 2.0, "GOE onset {onset}");
    // the ramp: at τ ≈ 0.1 the GOE K is ≈ 0.02, far below the plateau
    let early = goe_2000()
        .form_factor
        .table
        .iter()
        .find(|p| p.tau > 0.08)
        .unwrap();
    assert!(early.k < 0.5, "GOE K({}) = {}", early.tau, early.k);
}

#[test]
fn poisson_number_variance_is_l() {
    // Mehta (2004): Σ²(L) = L for uncorrelated levels; sampling error for 10⁴ levels ≈ 5 % at L = 8
    let r = poisson_20000();
    for p in &r.number_variance {
        let s2 = p.sigma2.unwrap();
        eprintln!("Poisson Σ²({}) = {s2}", p.l);
        assert!((s2 - p.l).abs() < 0.15 * p.l, "Σ²({}) = {s2}", p.l);
    }
}

#[test]
fn goe_number_variance_is_logarithmic() {
    // Mehta (2004): GOE Σ²(L) ≈ (2/π²)(ln(2πL) + γ + 1 − π²/8) for large L, far below Poisson
    let r = goe_2000();
    let p = r.number_variance.iter().find(|p| p.l == 4.0).unwrap();
    let s2 = p.sigma2.unwrap();
    eprintln!("GOE Σ²(4) = {s2}, asymptote {}", p.goe_asymptote);
    assert!(
        (s2 - p.goe_asymptote).abs() < 0.35 * p.goe_asymptote,
        "{s2}"
    );
}

#[test]
fn exact_degeneracies_are_counted_not_fatal() {
    // common practice, no source: every level of a GOE spectrum three times gives spacings
    // 0, 0, s, 0, 0, s, ...; pairs (0, 0) have max = 0 and are skipped, the others give r̃ = 0.
    let base = goe_levels(300, 5);
    let e: Vec<f64> = base.iter().flat_map(|&x| [x, x, x]).collect();
    let w = WindowSpec::Fraction(Window { lo: 0.0, hi: 1.0 });
    let r = analyze(&e, &w, &LevelOptions::default()).unwrap();
    assert_eq!(r.states, 900);
    assert_eq!(r.degenerate_pairs, 600);
    // 899 spacings → 898 consecutive pairs; the (0, 0) pairs are the 300 inside each triple
    assert_eq!(r.skipped_ratios, 300);
    assert_eq!(r.ratios, 598);
    assert_eq!(r.mean_r, 0.0);
    assert!(
        r.warnings.iter().any(|w| w.contains("degenerate")),
        "{:?}",
        r.warnings
    );
    assert!(r.warnings.iter().any(|w| w.contains("skipped")));
}

#[test]
fn union_of_two_goe_spectra_is_flagged() {
    // a model of two unresolved symmetry sectors: two independent GOE spectra superposed.
    // Expected <r̃> for two equal superposed GOE spectra ≈ 0.42–0.45, well below 0.5307
    // (Giraud, Macé, Vernier, Alet, PRX 12, 011006 (2022), from memory)
    let mut e = goe_levels(1000, 31);
    e.extend(goe_levels(1000, 32));
    e.sort_by(f64::total_cmp);
    let r = analyze(&e, &default_window(), &LevelOptions::default()).unwrap();
    eprintln!(
        "two GOE: mean r {} ± {}, small-spacing density {}, warnings {:?}",
        r.mean_r, r.mean_r_stderr, r.small_spacing_density, r.warnings
    );
    assert!(r.mean_r < 0.5307 - 0.05, "{}", r.mean_r);
    assert!(r.ratio_class.intermediate);
    assert!(
        r.warnings.iter().any(|w| w.contains("superposition")),
        "{:?}",
        r.warnings
    );
}

#[test]
fn too_few_levels_warns_with_the_threshold() {
    // common practice, no source: < 100 levels gives large errors (threshold stated)
    let e = goe_levels(120, 3);
    let r = analyze(&e, &default_window(), &LevelOptions::default()).unwrap();
    assert_eq!(r.states, 60);
    assert!(
        r.warnings
            .iter()
            .any(|w| w.contains("only 60 levels") && w.contains("100")),
        "{:?}",
        r.warnings
    );
}

#[test]
fn bad_spectra_are_errors_not_panics() {
    let w = default_window();
    let o = LevelOptions::default();
    assert!(analyze(&[0.0, f64::NAN, 1.0, 2.0, 3.0], &w, &o).is_err());
    assert!(analyze(&[], &w, &o).is_err());
    assert!(analyze(&[1.0; 50], &w, &o).is_err());
    let e = WindowSpec::EnergyDensity(Window {
        lo: 0.5,
        hi: 0.5000001,
    });
    assert!(analyze(&goe_levels(50, 1), &e, &o).is_err());
    // unsorted input is sorted with a warning, and gives the same mean ratio
    let mut x = goe_levels(200, 2);
    let sorted = analyze(&x, &w, &o).unwrap();
    x.reverse();
    let r = analyze(&x, &w, &o).unwrap();
    assert!(r.warnings.iter().any(|w| w.contains("sorted")));
    assert_eq!(r.mean_r, sorted.mean_r);
}

#[test]
fn ratio_histogram_follows_the_goe_surmise() {
    // Atas et al. 2013: the large-N GOE density of r̃ is within a few per cent of the surmise
    let r = goe_2000();
    let n: usize = r.ratio_histogram.iter().map(|b| b.count).sum();
    assert_eq!(n, r.ratios);
    let dev = r
        .ratio_histogram
        .iter()
        .map(|b| (b.density - b.goe).abs() * (b.hi - b.lo))
        .sum::<f64>();
    let dev_poisson = r
        .ratio_histogram
        .iter()
        .map(|b| (b.density - b.poisson).abs() * (b.hi - b.lo))
        .sum::<f64>();
    assert!(
        dev < dev_poisson / 2.0,
        "L1 GOE {dev}, Poisson {dev_poisson}"
    );
    let _ = surmise::MEAN_R_GOE;
}

#[test]
fn json_has_the_stable_keys_and_text_states_references() {
    use eigentherm::analysis::levels::{LevelsOutput, SectorLevels};
    use eigentherm::report::text::levels_text as render_text;
    // DESIGN.md stable keys (common practice, no source)
    let r = analyze(
        &goe_levels(400, 8),
        &default_window(),
        &LevelOptions::default(),
    )
    .unwrap();
    let out = LevelsOutput {
        options: LevelOptions::default(),
        sectors: vec![SectorLevels {
            file: "a.h5".into(),
            name: "even".into(),
            sector: "even".into(),
            class: eigentherm::data::ClassInfo::of_field(eigentherm::data::Field::Real),
            realization: None,
            disorder: None,
            report: r,
        }],
        ensembles: Vec::new(),
        disorder_scan: None,
    };
    let v = serde_json::to_value(&out).unwrap();
    let s = &v["sectors"][0];
    for key in [
        "file",
        "name",
        "states",
        "window",
        "mean_r",
        "mean_r_stderr",
        "nearest_ensemble",
        "degenerate_pairs",
        "ks_poisson",
        "ks_goe",
        "ks_gue",
    ] {
        assert!(!s[key].is_null(), "missing key {key}");
    }
    assert_eq!(s["states"], 200);
    assert_eq!(s["window"], "0.25:0.75");
    assert!(["poisson", "goe", "gue"].contains(&s["nearest_ensemble"].as_str().unwrap()));
    let text = render_text(&out.sectors);
    for want in [
        "0.3863",
        "0.5307",
        "0.5996",
        "verdict:",
        "Finite size",
        "0.4585",
        "0.5652",
    ] {
        assert!(text.contains(want), "text lacks {want}:\n{text}");
    }
}

// ---- kernel (density-of-states) unfolding ----

use eigentherm::analysis::levels::{unfold, UnfoldMethod};

fn kernel_opts(k: f64) -> LevelOptions {
    LevelOptions {
        unfold: UnfoldMethod::Kernel { spacings: k },
        ..LevelOptions::default()
    }
}

/// 20000 independent levels with the exponential density e^(−E) (E = −ln(1 − u), u uniform):
/// Poisson statistics on a density that falls by a factor 3 across the window 0.25:0.75.
fn poisson_exponential(seed: u64) -> Vec<f64> {
    use rand::Rng;
    let mut rng = rmt::rng(seed);
    let mut e: Vec<f64> = (0..20000)
        .map(|_| -(1.0 - rng.random::<f64>()).ln())
        .collect();
    e.sort_by(f64::total_cmp);
    e
}

/// 20000 independent levels with the semicircle density ∝ √(1 − E²) (rejection sampling).
fn poisson_semicircle(seed: u64) -> Vec<f64> {
    use rand::Rng;
    let mut rng = rmt::rng(seed);
    let mut e: Vec<f64> = (0..20000)
        .map(|_| loop {
            let x = 2.0 * rng.random::<f64>() - 1.0;
            let y: f64 = rng.random();
            if x * x + y * y <= 1.0 {
                break x;
            }
        })
        .collect();
    e.sort_by(f64::total_cmp);
    e
}

#[test]
fn kernel_unfolded_goe_is_wigner_with_unit_spacing_and_the_same_ratio() {
    let e = goe_levels(2000, 11);
    let r = analyze(&e, &default_window(), &kernel_opts(32.0)).unwrap();
    eprintln!(
        "GOE 2000, kernel: mean spacing {} KS P {} GOE {} GUE {}",
        r.unfolding.mean_unfolded_spacing, r.ks_poisson, r.ks_goe, r.ks_gue
    );
    // common practice, no source: N̄ follows the staircase, so the unfolded levels of the
    // window span (nearly) as many units as there are spacings; GOE staircases fluctuate by
    // O(log n) levels (Mehta 2004), so 1 % over 1000 spacings is ample
    assert!(
        (r.unfolding.mean_unfolded_spacing - 1.0).abs() < 0.01,
        "{}",
        r.unfolding.mean_unfolded_spacing
    );
    assert_eq!(r.unfolding.negative_spacings, 0);
    // Atas et al., PRL 110, 084101 (2013): ⟨r̃⟩ needs no unfolding, so it is the same number
    // whatever the unfolding, and it is the GOE value 0.5307 within its error
    assert_eq!(r.mean_r, goe_2000().mean_r);
    assert_eq!(r.mean_r_stderr, goe_2000().mean_r_stderr);
    assert!(
        (r.mean_r - 0.5307).abs() < 3.0 * r.mean_r_stderr,
        "{}",
        r.mean_r
    );
    // Mehta (2004): GOE spacings follow the Wigner surmise; KS noise for 1000 spacings ≈ 0.045
    assert!(r.ks_goe < 0.05, "KS to GOE {}", r.ks_goe);
    assert!(r.ks_goe < r.ks_poisson / 3.0);
    assert_eq!(r.nearest_ensemble, Ensemble::Goe);
    assert!(r.warnings.is_empty(), "{:?}", r.warnings);
}

#[test]
fn kernel_unfolds_dense_goe_matrix_spectra() {
    // the GOE matrix of src/model/rmt.rs, diagonalised densely (dimension 1000, window of 500)
    let mut rng = rmt::rng(21);
    let e = eigvalsh_real(rmt::goe(1000, &mut rng).as_ref()).unwrap();
    for m in [
        UnfoldMethod::Kernel { spacings: 32.0 },
        UnfoldMethod::Kernel { spacings: 8.0 },
        // fixed width: 8 mean spacings of the window
        UnfoldMethod::KernelEnergy {
            sigma: 8.0 * (e[750] - e[250]) / 500.0,
        },
    ] {
        let o = LevelOptions {
            unfold: m,
            ..LevelOptions::default()
        };
        let r = analyze(&e, &default_window(), &o).unwrap();
        eprintln!(
            "dense GOE 1000, {m}: mean spacing {} KS P {} GOE {}",
            r.unfolding.mean_unfolded_spacing, r.ks_poisson, r.ks_goe
        );
        // common practice, no source: unit mean unfolded spacing (see above)
        assert!(
            (r.unfolding.mean_unfolded_spacing - 1.0).abs() < 0.02,
            "{m}"
        );
        // Mehta (2004): Wigner surmise; the 99 % KS quantile for 500 spacings is 1.63/√500 ≈ 0.073
        assert!(r.ks_goe < 0.073, "{m}: KS to GOE {}", r.ks_goe);
        assert!(r.ks_goe < r.ks_poisson / 3.0, "{m}");
        assert_eq!(r.nearest_ensemble, Ensemble::Goe, "{m}");
        // Atas et al. (2013): GOE ⟨r̃⟩ = 0.5307, with no unfolding involved
        assert!(
            (r.mean_r - 0.5307).abs() < 3.0 * r.mean_r_stderr,
            "{}",
            r.mean_r
        );
    }
}

#[test]
fn kernel_unfolds_poisson_levels_on_a_varying_density_to_exponential_spacings() {
    for (name, e) in [
        ("exponential", poisson_exponential(41)),
        ("semicircle", poisson_semicircle(42)),
    ] {
        let r = analyze(&e, &default_window(), &kernel_opts(32.0)).unwrap();
        eprintln!(
            "Poisson on a {name} density, kernel: mean spacing {} KS P {} GOE {} <r> {} ± {}",
            r.unfolding.mean_unfolded_spacing, r.ks_poisson, r.ks_goe, r.mean_r, r.mean_r_stderr
        );
        // common practice, no source: unit mean unfolded spacing; the Poisson staircase
        // fluctuates by ~√n levels over n, i.e. ~1 % over the 10⁴ spacings of the window
        assert!(
            (r.unfolding.mean_unfolded_spacing - 1.0).abs() < 0.03,
            "{name}: {}",
            r.unfolding.mean_unfolded_spacing
        );
        // Mehta (2004): uncorrelated levels have P(s) = e^(−s). KS noise for 10⁴ spacings is
        // ≈ 0.009 (mean) to 0.016 (99 %); a kernel of 32 spacings adds ≈ 0.003 (measured,
        // see the unfold module documentation)
        assert!(
            r.ks_poisson < 0.02,
            "{name}: KS to Poisson {}",
            r.ks_poisson
        );
        assert!(r.ks_poisson < r.ks_goe / 5.0, "{name}");
        assert_eq!(r.nearest_ensemble, Ensemble::Poisson, "{name}");
        // Atas et al. (2013): Poisson ⟨r̃⟩ = 2 ln 2 − 1 whatever the density
        let want = 2.0 * std::f64::consts::LN_2 - 1.0;
        assert!(
            (r.mean_r - want).abs() < 3.0 * r.mean_r_stderr,
            "{name}: {}",
            r.mean_r
        );
    }
}

#[test]
fn kernel_follows_the_local_density() {
    // common practice, no source: after unfolding, the mean spacing is 1 everywhere in the
    // window, although the raw mean spacing grows by a factor 3 across it (exponential
    // density e^(−E): the quantiles 0.25 and 0.75 have densities 0.75 and 0.25), and by a
    // factor ≈ 2 between the first and the last third (densities ≈ 2/3 and 1/3 there)
    let e = poisson_exponential(43);
    let range = 5000..15000;
    let (u, info) =
        unfold::unfold(&e, range.clone(), UnfoldMethod::Kernel { spacings: 32.0 }).unwrap();
    assert_eq!(u.len(), 10000);
    assert_eq!(info.negative_spacings, 0);
    let third = |v: &[f64], k: usize| -> f64 {
        let s: Vec<f64> = v.windows(2).map(|w| w[1] - w[0]).collect();
        let t = s.len() / 3;
        s[k * t..(k + 1) * t].iter().sum::<f64>() / t as f64
    };
    let raw = &e[range];
    let raw_ratio = third(raw, 2) / third(raw, 0);
    assert!(raw_ratio > 1.8 && raw_ratio < 2.2, "raw ratio {raw_ratio}");
    // the mean of ~3300 exponential spacings has a standard error of ≈ 0.017: 4 σ
    for k in 0..3 {
        let m = third(&u, k);
        assert!(
            (m - 1.0).abs() < 0.07,
            "third {k}: mean unfolded spacing {m}"
        );
    }
    // the polynomial does the same on this smooth density
    let (p, _) = unfold::unfold(&e, 5000..15000, UnfoldMethod::Polynomial { degree: 5 }).unwrap();
    for k in 0..3 {
        let m = third(&p, k);
        assert!((m - 1.0).abs() < 0.07, "poly third {k}: {m}");
    }
}

#[test]
fn both_unfoldings_agree_on_the_nearest_ensemble() {
    // Mehta (2004): each spectrum is nearest to its own ensemble's spacing law, whichever
    // way it is unfolded; ⟨r̃⟩ and its class do not depend on the unfolding (Atas et al. 2013)
    let cases = [
        ("GOE", goe_levels(2000, 11), Ensemble::Goe),
        ("GUE", beta_hermite_levels(2000, 2.0, 12), Ensemble::Gue),
        ("Poisson exp", poisson_exponential(44), Ensemble::Poisson),
        (
            "Poisson semicircle",
            poisson_semicircle(45),
            Ensemble::Poisson,
        ),
    ];
    for (name, e, want) in cases {
        let poly = analyze(&e, &default_window(), &LevelOptions::default()).unwrap();
        let kern = analyze(&e, &default_window(), &kernel_opts(32.0)).unwrap();
        eprintln!(
            "{name}: poly KS {:.4} {:.4} {:.4}, kernel KS {:.4} {:.4} {:.4}",
            poly.ks_poisson, poly.ks_goe, poly.ks_gue, kern.ks_poisson, kern.ks_goe, kern.ks_gue
        );
        assert_eq!(poly.nearest_ensemble, want, "{name} poly");
        assert_eq!(kern.nearest_ensemble, want, "{name} kernel");
        assert_eq!(poly.mean_r, kern.mean_r, "{name}");
        assert_eq!(poly.ratio_class.nearest, kern.ratio_class.nearest, "{name}");
        assert_eq!(poly.unfolding.spec, "poly:5");
        assert_eq!(kern.unfolding.spec, "kernel:32");
    }
}

#[test]
fn unfolding_json_names_method_and_parameters() {
    // DESIGN.md: keys are added, none renamed (common practice, no source)
    let e = goe_levels(400, 8);
    let poly = analyze(&e, &default_window(), &LevelOptions::default()).unwrap();
    let kern = analyze(&e, &default_window(), &kernel_opts(6.0)).unwrap();
    let fixed = analyze(
        &e,
        &default_window(),
        &LevelOptions {
            unfold: UnfoldMethod::KernelEnergy { sigma: 0.5 },
            ..LevelOptions::default()
        },
    )
    .unwrap();
    let p = serde_json::to_value(&poly.unfolding).unwrap();
    let k = serde_json::to_value(&kern.unfolding).unwrap();
    let f = serde_json::to_value(&fixed.unfolding).unwrap();
    for v in [&p, &k, &f] {
        for key in [
            "method",
            "spec",
            "degree",
            "kernel_width_spacings",
            "kernel_width_energy",
            "levels",
            "rms_residual",
            "negative_spacings",
            "mean_unfolded_spacing",
        ] {
            assert!(v.get(key).is_some(), "missing {key} in {v}");
        }
    }
    assert_eq!(p["spec"], "poly:5");
    assert_eq!(p["degree"], 5);
    assert!(p["kernel_width_spacings"].is_null());
    assert_eq!(k["spec"], "kernel:6");
    assert!(k["degree"].is_null());
    assert_eq!(k["kernel_width_spacings"], 6.0);
    assert_eq!(k["kernel_neighbours"], 12);
    assert!(k["method"].as_str().unwrap().contains("Gaussian"));
    assert_eq!(f["spec"], "kernel-energy:0.5");
    assert_eq!(f["kernel_width_energy"], 0.5);
    assert_eq!(f["kernel_sigma_range"][0], 0.5);
    // the options record the method too
    let o = serde_json::to_value(kernel_opts(6.0)).unwrap();
    assert_eq!(o["unfold"]["method"], "kernel");
    assert_eq!(o["unfold"]["spacings"], 6.0);
}

#[test]
fn narrow_kernels_and_spectrum_ends_are_warned_about() {
    // common practice, no source: a kernel narrower than 2 spacings follows single levels;
    // a window reaching the end of the spectrum sees the kernel's end bias
    let e = goe_levels(400, 9);
    let r = analyze(&e, &default_window(), &kernel_opts(1.0)).unwrap();
    assert!(
        r.warnings.iter().any(|w| w.contains("narrower than 2")),
        "{:?}",
        r.warnings
    );
    let all = WindowSpec::Fraction(Window { lo: 0.0, hi: 1.0 });
    let r = analyze(&e, &all, &kernel_opts(4.0)).unwrap();
    assert!(r.unfolding.kernel_end_levels.unwrap() > 0);
    assert!(
        r.warnings
            .iter()
            .any(|w| w.contains("end of the whole spectrum")),
        "{:?}",
        r.warnings
    );
    let r = analyze(&e, &default_window(), &kernel_opts(4.0)).unwrap();
    assert_eq!(r.unfolding.kernel_end_levels, Some(0));
}

/// Realization-averaged connected form factor of 20 spectra of dimension 2000 of the
/// β-ensemble (or of Poisson levels).
fn averaged_k(
    beta: Option<f64>,
    seed: u64,
) -> eigentherm::analysis::levels::thouless::AveragedFormFactor {
    use rand::Rng;
    let opts = LevelOptions::default();
    let reports: Vec<LevelReport> = (0..20)
        .map(|r| {
            let e = match beta {
                Some(b) => beta_hermite_levels(2000, b, seed + r),
                None => {
                    let mut rng = rmt::rng(seed + r);
                    let mut e: Vec<f64> = (0..2000).map(|_| rng.random::<f64>()).collect();
                    e.sort_by(f64::total_cmp);
                    e
                }
            };
            analyze(&e, &default_window(), &opts).unwrap()
        })
        .collect();
    let spectra: Vec<(&[f64], f64)> = reports
        .iter()
        .map(|r| (r.unfolded.as_slice(), r.mean_spacing))
        .collect();
    let reference = if beta == Some(2.0) {
        Ensemble::Gue
    } else {
        Ensemble::Goe
    };
    eigentherm::analysis::levels::thouless::averaged_form_factor(&spectra, &opts, reference)
        .unwrap()
}

#[test]
fn averaged_connected_form_factor_follows_goe_gue_and_poisson() {
    // exact GOE K(τ) = 2τ − τ ln(1 + 2τ) (τ ≤ 1), 2 − τ ln((2τ + 1)/(2τ − 1)) (τ > 1); GUE
    // K = min(τ, 1) (Mehta, Random Matrices, 3rd ed. 2004, ch. 6-7; Haake, Quantum Signatures
    // of Chaos), Poisson K = 1. Compared with the bin nearest each time, within 3 standard
    // errors plus the curve's change across the bin (the bins are 1/8 decade wide).
    for (beta, ens, seed) in [
        (Some(1.0), Ensemble::Goe, 300),
        (Some(2.0), Ensemble::Gue, 400),
        (None, Ensemble::Poisson, 500),
    ] {
        let f = averaged_k(beta, seed);
        assert_eq!(f.realizations, 20);
        for tau in [0.1, 0.5, 1.0, 2.0] {
            let p = f
                .table
                .iter()
                .min_by(|a, b| {
                    (a.tau / tau)
                        .ln()
                        .abs()
                        .total_cmp(&(b.tau / tau).ln().abs())
                })
                .unwrap();
            let slope =
                (ens.form_factor(p.tau * 1.155) - ens.form_factor(p.tau / 1.155)).abs() / 2.0;
            let want = ens.form_factor(p.tau);
            let dev = (p.k_connected - want).abs();
            assert!(
                dev < 3.0 * p.k_connected_stderr + slope,
                "{ens} tau {}: K_c {} +/- {} vs {want}",
                p.tau,
                p.k_connected,
                p.k_connected_stderr
            );
        }
        if ens == Ensemble::Goe {
            // the GOE follows its own curve over the ramp: a Thouless time is found, early
            let th = &f.thouless;
            assert!(th.tau.is_some_and(|t| t < 0.1), "{th:?}");
        }
    }
}
