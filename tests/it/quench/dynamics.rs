//! Quench dynamics checked against analytic results and exact identities.

use eigentherm::analysis::quench::{self, state, QuenchOptions, SectorQuench, TimeGrid};
use eigentherm::data::{c64, ColumnSource, Csr, Matrix, OpData, Operator};
use eigentherm::linalg::eigh_real;
use eigentherm::pipeline::quench::SectorInput;
use eigentherm::project::Budget;
use faer::Mat;

/// One sector's quench of one operator, through the passes over the eigenvectors
/// (`pipeline::quench::quench_sector`) under the default budget.
fn quench_sector(
    src: &dyn ColumnSource,
    energies: &[f64],
    op: &Operator,
    psi: &[c64],
    times: &[f64],
    opts: &QuenchOptions,
) -> SectorQuench {
    let ops = [op];
    let input = SectorInput {
        src,
        energies,
        ops: &ops,
        psi,
        check: None,
    };
    eigentherm::pipeline::quench::quench_sector(&input, times, opts, &Budget::default())
        .map_err(|(_, e)| e)
        .unwrap()
        .pop()
        .unwrap()
}

/// σˣ (real) or σʸ (complex) on `site` (0-based bit) of an L-site chain, CSR, in the basis
/// where bit i = 1 is spin up on site i+1.
fn flip_csr(l: usize, site: usize) -> Csr<f64> {
    let dim = 1usize << l;
    Csr {
        nrows: dim,
        ncols: dim,
        indptr: (0..=dim).collect(),
        indices: (0..dim).map(|s| s ^ (1 << site)).collect(),
        data: vec![1.0; dim],
    }
}

fn sigma_y_csr(l: usize, site: usize) -> Csr<c64> {
    // ⟨↑|σʸ|↓⟩ = −i, ⟨↓|σʸ|↑⟩ = +i (σʸ = [[0, −i], [i, 0]] in the (↑, ↓) order; textbook)
    let dim = 1usize << l;
    Csr {
        nrows: dim,
        ncols: dim,
        indptr: (0..=dim).collect(),
        indices: (0..dim).map(|s| s ^ (1 << site)).collect(),
        data: (0..dim)
            .map(|s| {
                if s & (1 << site) != 0 {
                    c64::new(0.0, -1.0) // row is up, column is down
                } else {
                    c64::new(0.0, 1.0)
                }
            })
            .collect(),
    }
}

#[test]
fn rabi_oscillation_of_a_two_level_system() {
    // H = (Δ/2)σᶻ + (Ω/2)σˣ from |↑⟩: ⟨σᶻ(t)⟩ = 1 − 2 (Ω/Ω_R)² sin²(Ω_R t/2),
    // Ω_R = √(Δ² + Ω²) (Rabi formula; textbook, e.g. Sakurai, Modern Quantum Mechanics)
    let (delta, omega) = (0.7, 1.3);
    // basis order: index 0 = ↓ (σᶻ = −1), index 1 = ↑ (σᶻ = +1)
    let h = Mat::from_fn(2, 2, |i, j| match (i, j) {
        (0, 0) => -delta / 2.0,
        (1, 1) => delta / 2.0,
        _ => omega / 2.0,
    });
    let (e, v) = eigh_real(h.as_ref()).unwrap();
    let sz = Operator::Real(OpData::Diagonal(vec![-1.0, 1.0]));
    let psi = [c64::new(0.0, 0.0), c64::new(1.0, 0.0)];
    let times = TimeGrid::parse("lin:0:20:201").unwrap().points();
    let r = quench_sector(
        &Matrix::Real(v),
        &e,
        &sz,
        &psi,
        &times,
        &QuenchOptions::default(),
    )
    .report;
    let wr = (delta * delta + omega * omega).sqrt();
    let mut worst = 0.0f64;
    for p in &r.trace {
        let want = 1.0 - 2.0 * (omega / wr).powi(2) * (wr * p.t / 2.0).sin().powi(2);
        worst = worst.max((p.value - want).abs());
    }
    assert!(
        worst < 1e-12,
        "largest deviation from the Rabi formula {worst:e}"
    );
    // diagonal ensemble = time average of the Rabi formula = 1 − (Ω/Ω_R)² (textbook)
    assert!((r.diagonal_ensemble - (1.0 - (omega / wr).powi(2))).abs() < 1e-12);
    // energy ⟨ψ|H|ψ⟩ = Δ/2 (definition)
    assert!((r.energy - delta / 2.0).abs() < 1e-12);
}

/// Free spins H = h Σσᶻ on L sites: energies h(2·popcount − L), eigenvectors the basis states,
/// sorted ascending.
fn free_spins(l: usize, h: f64) -> (Vec<f64>, Matrix) {
    let dim = 1usize << l;
    let energy = |s: usize| h * (2.0 * s.count_ones() as f64 - l as f64);
    let mut order: Vec<usize> = (0..dim).collect();
    order.sort_by(|&a, &b| energy(a).total_cmp(&energy(b)));
    let e = order.iter().map(|&s| energy(s)).collect();
    let v = Mat::from_fn(dim, dim, |i, k| if order[k] == i { 1.0 } else { 0.0 });
    (e, Matrix::Real(v))
}

#[test]
fn free_spin_precession_from_a_product_state_along_x() {
    // H = h Σσᶻ, every spin along +x: Heisenberg equations give
    // ⟨σˣ_i(t)⟩ = cos(2ht), ⟨σʸ_i(t)⟩ = sin(2ht) (Larmor precession; textbook)
    let (l, h) = (4, 0.8);
    let (e, v) = free_spins(l, h);
    let psi = state::product_state(&[state::Site::PlusX; 4]).unwrap();
    let times = TimeGrid::parse("lin:0:15:151").unwrap().points();
    let opts = QuenchOptions::default();
    let sx = Operator::Real(OpData::Csr(flip_csr(l, 1)));
    let sy = Operator::Complex(OpData::Csr(sigma_y_csr(l, 1)));
    let rx = quench_sector(&v, &e, &sx, &psi, &times, &opts).report;
    let ry = quench_sector(&v, &e, &sy, &psi, &times, &opts).report;
    for (px, py) in rx.trace.iter().zip(&ry.trace) {
        assert!(
            (px.value - (2.0 * h * px.t).cos()).abs() < 1e-12,
            "σˣ at t = {}",
            px.t
        );
        assert!(
            (py.value - (2.0 * h * py.t).sin()).abs() < 1e-12,
            "σʸ at t = {}",
            py.t
        );
    }
    // all 2^L weights equal 2^−L: D_eff = 2^L, E = 0, δE² = L h² (definitions; binomial statistics)
    assert!((rx.d_eff - 16.0).abs() < 1e-10);
    assert!(rx.energy.abs() < 1e-12);
    assert!((rx.energy_width - h * (l as f64).sqrt()).abs() < 1e-12);
    // diagonal ensemble of σˣ vanishes (σˣ has no diagonal elements in the σᶻ eigenbasis)
    assert!(rx.diagonal_ensemble.abs() < 1e-14);
    // β(E = 0) = 0: infinite temperature, where ⟨σᶻ⟩_β = −tanh(βh) = 0 (any statistical mechanics text)
    assert!(rx.beta.unwrap().abs() < 1e-8);
}

#[test]
fn goe_quench_equilibrates_to_the_diagonal_ensemble() {
    use rand::Rng;
    use rand_distr::StandardNormal;
    let n = 300;
    let mut rng = eigentherm::model::rmt::rng(2024);
    let h = eigentherm::model::rmt::goe(n, &mut rng);
    let (e, v) = eigh_real(h.as_ref()).unwrap();
    let mut psi: Vec<c64> = (0..n)
        .map(|_| c64::new(rng.sample(StandardNormal), 0.0))
        .collect();
    let norm: f64 = psi.iter().map(|x| x.norm_sqr()).sum::<f64>().sqrt();
    psi.iter_mut().for_each(|x| *x /= norm);
    // fixed diagonal operator ±1 alternating
    let d: Vec<f64> = (0..n)
        .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
        .collect();
    let op = Operator::Real(OpData::Diagonal(d));
    let times = TimeGrid::parse("lin:0:4000:2001").unwrap().points();
    let r = quench_sector(
        &Matrix::Real(v),
        &e,
        &op,
        &psi,
        &times,
        &QuenchOptions::default(),
    )
    .report;
    // Σ|cₙ|² = 1 for a normalised state and an orthonormal basis (exact identity, VᴴV = 1)
    assert!((r.norm - 1.0).abs() < 1e-12, "norm {}", r.norm);
    assert!(r.weight_kept > 1.0 - 1e-10);
    // σ² ≤ ((λmax − λmin)/2)²/D_eff (Short, New J. Phys. 13, 053009 (2011); Reimann,
    // PRL 101, 190403 (2008); from memory; proof in the module doc)
    assert!(r.bound.satisfied && r.sigma2 <= r.bound.bound);
    let ts = r.trace_statistics.unwrap();
    eprintln!(
        "GOE quench: D_eff {:.1}, A_DE {:.5}, time mean {:.5}, σ² {:.4e}, time variance {:.4e}, σ²_ETH {:.4e}, bound {:.4e}",
        r.d_eff, r.diagonal_ensemble, ts.mean, r.sigma2, ts.variance, r.sigma2_eth, r.bound.bound
    );
    // the long-time mean of ⟨A(t)⟩ is the diagonal-ensemble value (dephasing, non-degenerate
    // GOE spectrum; Reimann 2008, from memory); the tolerance is a few standard errors of a
    // time mean over [2000, 4000] of a trace with variance σ² and correlation time ~ 1/bandwidth
    // (common practice, no source)
    assert!(
        (ts.mean - r.diagonal_ensemble).abs() < 0.2 * r.sigma2.sqrt(),
        "time mean {} vs A_DE {}",
        ts.mean,
        r.diagonal_ensemble
    );
    // and its time variance approaches σ² (non-degenerate gaps; Reimann 2008, from memory)
    assert!(
        (ts.variance / r.sigma2 - 1.0).abs() < 0.3,
        "time variance {} vs σ² {}",
        ts.variance,
        r.sigma2
    );
    // GOE eigenvectors: |Aₙₘ|² carries no structure in ω, so the envelope estimate is close
    // to σ² (Mehta 2004: invariant ensemble; tolerance common practice, no source)
    assert!((r.sigma2_eth / r.sigma2 - 1.0).abs() < 0.2);
}

#[test]
fn dropping_small_weights_keeps_the_trace_within_its_bound() {
    // |⟨A(t)⟩ − ⟨A(t)⟩_K| ≤ ‖A‖(2√δ + δ) (Cauchy–Schwarz; linear algebra)
    use rand::Rng;
    let n = 120;
    let mut rng = eigentherm::model::rmt::rng(5);
    let h = eigentherm::model::rmt::goe(n, &mut rng);
    let (e, v) = eigh_real(h.as_ref()).unwrap();
    // a state concentrated on a few eigenstates, with a small tail
    let coeffs_eig: Vec<f64> = (0..n)
        .map(|k| (-(k as f64 - 60.0).powi(2) / 8.0).exp() + 1e-4 * rng.random::<f64>())
        .collect();
    let psi: Vec<c64> = (0..n)
        .map(|i| c64::new((0..n).map(|k| v[(i, k)] * coeffs_eig[k]).sum(), 0.0))
        .collect();
    let op = Operator::Real(OpData::Diagonal(
        (0..n).map(|i| ((i as f64) * 0.37).cos()).collect(),
    ));
    let times = TimeGrid::parse("lin:0:50:101").unwrap().points();
    let src = Matrix::Real(v);
    let full = QuenchOptions {
        drop_weight: 0.0,
        ..QuenchOptions::default()
    };
    let cut = QuenchOptions {
        drop_weight: 1e-4,
        ..QuenchOptions::default()
    };
    let a = quench_sector(&src, &e, &op, &psi, &times, &full).report;
    let b = quench_sector(&src, &e, &op, &psi, &times, &cut).report;
    assert!(b.kept < a.kept && b.weight_kept >= 1.0 - 1e-4);
    // the row-cut bound uses ‖A_KK‖ ≤ ‖A‖ = max|cos| ≤ 1: check with ‖A‖ ≤ 1 directly
    let delta = 1.0 - b.weight_kept;
    let bound = 2.0 * delta.sqrt() + delta;
    for (x, y) in a.trace.iter().zip(&b.trace) {
        assert!((x.value - y.value).abs() <= bound + 1e-12);
    }
}

/// Quench of a full-space product state in a reflection-resolved chain: per-sector analysis
/// and the sector combination. Returns (combined DE, combined canonical, σ² weighted over the
/// sectors, combined time mean, combined D_eff-weighted report of the heaviest sector).
fn chain_quench(
    model: eigentherm::model::ChainModel,
    l: usize,
    obs: &str,
    psi: &[c64],
) -> (quench::Combined, Vec<(f64, quench::QuenchReport)>) {
    use eigentherm::model::{build_chain, Boundary, ChainSpec, Reflection};
    let sectors = build_chain(&ChainSpec {
        model,
        sites: l,
        boundary: Boundary::Open,
        reflection: Reflection::Resolve,
        site: None,
        sz: None,
        disorder: None,
    })
    .unwrap();
    let times = TimeGrid::parse("lin:0:200:801").unwrap().points();
    let opts = QuenchOptions::default();
    let mut out = Vec::new();
    let mut diags = Vec::new();
    for s in &sectors {
        let c = state::restrict(s.embedding.as_ref().unwrap(), psi).unwrap();
        let w: f64 = c.iter().map(|x| x.norm_sqr()).sum();
        if w < 1e-14 {
            continue;
        }
        let op = &s.observables.iter().find(|o| o.name == obs).unwrap().op;
        let v = s.eigenvectors.as_ref().unwrap();
        let sq = quench_sector(v, &s.energies, op, &c, &times, &opts);
        diags.push((s.energies.clone(), sq.diag_all));
        out.push((w, sq.report));
    }
    let parts: Vec<quench::SectorPart> = out
        .iter()
        .zip(&diags)
        .map(|((w, r), (e, d))| quench::SectorPart {
            weight: *w,
            energies: e,
            diag_all: d,
            report: r,
        })
        .collect();
    let comb = quench::combine(&parts, &opts).unwrap();
    (comb, out)
}

/// Mixed-field Ising (chaotic) against transverse-field Ising (integrable), open chain of
/// `l` sites, reflection resolved, from every spin along +y: E = 0 exactly (⟨σᶻσᶻ⟩ = ⟨σˣ⟩ =
/// ⟨σᶻ⟩ = 0), the middle of the spectrum (Tr H = 0). Observable σᶻ at the centre site.
fn chaotic_versus_integrable(l: usize) {
    use eigentherm::model::ChainModel;
    let psi = state::product_state(&vec![state::Site::PlusY; l]).unwrap();
    let (mfi, mfi_s) = chain_quench(
        ChainModel::MixedFieldIsing {
            j: 1.0,
            g: 0.9045,
            h: 0.8090,
        },
        l,
        "sz_site",
        &psi,
    );
    let (tfi, tfi_s) = chain_quench(
        ChainModel::TransverseFieldIsing { j: 1.0, g: 0.9045 },
        l,
        "sz_site",
        &psi,
    );
    let late_mean = |c: &quench::Combined| {
        let last = &c.trace[c.trace.len() / 2..];
        last.iter().map(|p| p.value).sum::<f64>() / last.len() as f64
    };
    for (name, c, s) in [("MFI", &mfi, &mfi_s), ("TFI", &tfi, &tfi_s)] {
        eprintln!(
            "L={l} {name}: E {:.4} β {:?} DE {:.5} micro {:?} canonical {:?} late mean {:.5}",
            c.energy,
            c.beta,
            c.diagonal_ensemble,
            c.microcanonical.map(|m| m.value),
            c.canonical,
            late_mean(c)
        );
        for (w, r) in s.iter() {
            eprintln!(
                "   weight {:.4} states {} D_eff {:.1} σ² {:.3e} σ²_ETH {:.3e} bound {:.3e} time variance {:?}",
                w,
                r.states,
                r.d_eff,
                r.sigma2,
                r.sigma2_eth,
                r.bound.bound,
                r.trace_statistics.map(|t| t.variance)
            );
            // σ² ≤ ((λmax − λmin)/2)²/D_eff (Short 2011; Reimann 2008; from memory)
            assert!(r.bound.satisfied);
        }
    }
    // the state is reflection symmetric: all weight in the even sector (exact symmetry)
    assert_eq!(mfi_s.len(), 1);
    assert!((mfi.weight - 1.0).abs() < 1e-12);
    // chaotic chain: diagonal ensemble and late-time mean close to the canonical value at β(E)
    // (ETH; Bañuls, Cirac, Hastings, PRL 106, 050405 (2011), from memory; D'Alessio et al.
    // 2016). Tolerances: measured 0.002 and 0.006 at L = 10, 0.004 and 0.004 at L = 12, set a
    // few times larger (common practice, no source).
    let can = mfi.canonical.unwrap();
    assert!((mfi.diagonal_ensemble - can).abs() < 0.02);
    assert!((late_mean(&mfi) - can).abs() < 0.03);
    // temporal fluctuations far smaller than in the integrable chain from the same state
    // (Beugeling, Moessner, Haque, PRE 89, 042112 (2014), from memory; measured ratio ≈ 9.5
    // at L = 10, ≈ 20 at L = 12: σ² = 2.25e-4 against 4.60e-3)
    let (m, t) = (&mfi_s[0].1, &tfi_s[0].1);
    assert!(
        m.sigma2 < 0.25 * t.sigma2,
        "σ² MFI {} TFI {}",
        m.sigma2,
        t.sigma2
    );
    // the ETH envelope estimate works for the chaotic chain and fails for the integrable one
    // (ETH holds for chaotic, not for integrable systems: D'Alessio et al. 2016; measured
    // ratios 0.98 and 0.12 at L = 10, 1.00 and 0.06 at L = 12; tolerances common practice, no
    // source)
    let rm = m.sigma2_eth_ratio.unwrap();
    let rt = t.sigma2_eth_ratio.unwrap();
    assert!((0.7..1.4).contains(&rm), "MFI σ²_ETH/σ² {rm}");
    assert!(rt < 0.5, "TFI σ²_ETH/σ² {rt}");
}

#[test]
fn chaotic_chain_relaxes_and_fluctuates_less_than_integrable_l10() {
    chaotic_versus_integrable(10);
}

/// L = 12 (dimension 2080 in the even sector; about 20 s of CPU in the dev profile).
/// Measured: MFI D_eff 879, σ² 2.25e-4, σ²_ETH 2.25e-4, bound 1.14e-3, DE 0.0035 against
/// canonical −0.0004; TFI D_eff 26.5, σ² 4.60e-3, σ²_ETH 2.8e-4.
#[test]
fn chaotic_chain_relaxes_and_fluctuates_less_than_integrable_l12() {
    chaotic_versus_integrable(12);
}
