//! The tables of a study: the scaling table, the level statistics of each sector and one
//! quench table per initial state.

use crate::analysis::ensemble::EnsembleAverage;
use crate::analysis::scaling::ScalingReport;
use crate::analysis::sector::SectorAnalysis;
use crate::analysis::study::QuenchStudy;
use crate::error::Result;
use crate::report::study::figures::{quench_families, quench_scale, slug, snap_zero};
use crate::report::table::{Cell, Column, Table};

/// The scaling table as a [`crate::report::table::Table`]: one row per scaling row, with
/// the model, sector, observable and support in columns of their own (the CSV keys are the
/// JSON keys of [`crate::analysis::scaling::Row`]).
pub fn scaling_table(report: &ScalingReport) -> Result<Table> {
    let ensembles = report
        .rows
        .iter()
        .any(|r| r.disorder.is_some() || r.realizations > 1);
    let mut cols = vec![
        Column::new("model", "model"),
        Column::new("sector", "sector"),
        Column::new("observable", "observable"),
        Column::new("support", "support"),
        Column::new("size", "L").latex("$L$"),
        Column::new("dimension", "D").latex("$D$"),
        Column::new("mean_r", "⟨r̃⟩").latex("$\\langle\\tilde r\\rangle$"),
        Column::new("fluct_variance", "fluct. variance"),
        Column::new("diff_mean_abs", "⟨|ΔA|⟩").latex("$\\langle|\\Delta A|\\rangle$"),
        Column::new("low_omega_variance", "low-ω ⟨|A_nm|²⟩")
            .latex("low-$\\omega$ $\\langle|A_{nm}|^2\\rangle$"),
        Column::new("gaussian_ratio", "Γ").latex("$\\Gamma$"),
        Column::new("diag_offdiag_ratio", "diag/offdiag"),
        Column::new("thouless_tau", "τ_Th / t_H").latex("$\\tau_{\\mathrm{Th}}/t_H$"),
        Column::new("thouless_g", "g").latex("$g$"),
    ];
    if ensembles {
        cols.insert(4, Column::new("disorder", "W").latex("$W$"));
        cols.insert(5, Column::new("realizations", "n").latex("$n$"));
    }
    let mut t = Table::new(cols);
    for r in &report.rows {
        let u = |v: f64, e: f64| -> Cell {
            if v.is_finite() {
                Cell::from((v, e))
            } else {
                Cell::Empty
            }
        };
        let mut cells = vec![
            Cell::from(r.model.clone()),
            Cell::from(r.sector.as_str()),
            Cell::from(r.observable.as_str()),
            Cell::from(r.support.clone()),
            r.size.map(|s| Cell::Int(s as i64)).unwrap_or(Cell::Empty),
            Cell::Int(r.dimension.round() as i64),
            u(r.mean_r, r.mean_r_stderr),
            u(r.fluct_variance, r.fluct_variance_stderr),
            u(r.diff_mean_abs, r.diff_mean_abs_stderr),
            u(r.low_omega_variance, r.low_omega_variance_stderr),
            u(r.gaussian_ratio, r.gaussian_ratio_stderr),
            u(r.diag_offdiag_ratio, r.diag_offdiag_ratio_stderr),
            Cell::from(r.thouless_tau),
            Cell::from(r.thouless_g),
        ];
        if ensembles {
            cells.insert(4, Cell::from(r.disorder));
            cells.insert(5, Cell::from(r.realizations));
        }
        t.push_row(cells)?;
    }
    Ok(t)
}

/// The exponent table: one row per fitted figure of a family (`figure ∝ D^(−α)`), with
/// α and its standard error, the fit's degrees of freedom and the α ETH predicts
/// ([`crate::analysis::scaling::FigureFit::eth_alpha`]); the CSV keys are the JSON keys of
/// `fits[]`.
pub fn exponent_table(report: &ScalingReport) -> Result<Table> {
    let disorder = report.fits.iter().any(|f| f.disorder.is_some());
    let mut cols = vec![
        Column::new("model", "model"),
        Column::new("sector", "sector"),
        Column::new("observable", "observable"),
        Column::new("support", "support"),
        Column::new("figure", "figure"),
        Column::new("alpha", "α").latex("$\\alpha$"),
        Column::new("dof", "dof"),
        Column::new("eth_alpha", "α (ETH)").latex("$\\alpha_{\\mathrm{ETH}}$"),
    ];
    if disorder {
        cols.insert(4, Column::new("disorder", "W").latex("$W$"));
    }
    let mut t = Table::new(cols);
    for f in &report.fits {
        let mut cells = vec![
            Cell::from(f.model.clone()),
            Cell::from(f.sector.as_str()),
            Cell::from(f.observable.as_str()),
            Cell::from(f.support.clone()),
            Cell::from(f.figure.as_str()),
            Cell::from((f.alpha, f.alpha_stderr)),
            Cell::from(f.dof),
            Cell::Value(f.eth_alpha),
        ];
        if disorder {
            cells.insert(4, Cell::from(f.disorder));
        }
        t.push_row(cells)?;
    }
    Ok(t)
}

/// One row per ensemble (size, disorder strength): realizations, ⟨r̃⟩ with its
/// sample-to-sample spread and standard error, and the Thouless time of the averaged
/// connected form factor.
pub fn ensemble_table(ensembles: &[EnsembleAverage]) -> Result<Table> {
    let mut t = Table::new(vec![
        Column::new("label", "ensemble"),
        Column::new("size", "L"),
        Column::new("disorder", "W"),
        Column::new("realizations", "n"),
        Column::new("mean_r", "⟨r̃⟩"),
        Column::new("mean_r_spread", "sample sd"),
        Column::new("thouless_tau", "τ_Th / t_H"),
        Column::new("thouless_time", "t_Th"),
        Column::new("heisenberg_time", "t_H"),
        Column::new("thouless_g", "g"),
    ])
    .with_caption(
        "Disorder ensembles: realization average of ⟨r̃⟩ with the sample-to-sample standard error s/√n and the sample standard deviation s; Thouless time of the realization-averaged connected form factor (earliest time from which it stays within the stated tolerance of the GOE/GUE curve up to the Heisenberg time), t_H = 2π/Δ̄, g = log10(t_H/t_Th).",
    );
    for e in ensembles {
        let th = e.form_factor.as_ref().map(|f| &f.thouless);
        t.push_row(vec![
            Cell::from(e.label.as_str()),
            Cell::from(e.size),
            Cell::from(e.disorder),
            Cell::from(e.realizations),
            Cell::from((e.mean_r, e.mean_r_stderr)),
            Cell::from(e.mean_r_spread),
            Cell::from(th.and_then(|t| t.tau)),
            Cell::from(th.and_then(|t| t.time)),
            Cell::from(th.map(|t| t.heisenberg_time)),
            Cell::from(th.and_then(|t| t.g)),
        ])?;
    }
    Ok(t)
}

/// One row per sector: levels, ⟨r̃⟩, KS distances, nearest ensemble, degeneracies.
pub fn levels_table(sectors: &[SectorAnalysis]) -> Table {
    let mut t = Table::new(vec![
        Column::new("sector", "sector"),
        Column::new("dimension", "D"),
        Column::new("levels", "levels in window"),
        Column::new("mean_r", "⟨r̃⟩"),
        Column::new("ks_poisson", "KS Poisson"),
        Column::new("ks_goe", "KS GOE"),
        Column::new("ks_gue", "KS GUE"),
        Column::new("nearest", "nearest (KS)"),
        Column::new("degenerate_pairs", "degenerate pairs"),
    ]);
    for a in sectors {
        let l = &a.levels;
        let _ = t.push_row(vec![
            Cell::from(a.label.as_str()),
            Cell::from(a.dimension),
            Cell::from(l.states),
            Cell::from((l.mean_r, l.mean_r_stderr)),
            Cell::Value(l.ks_poisson),
            Cell::Value(l.ks_goe),
            Cell::Value(l.ks_gue),
            Cell::from(l.nearest_ensemble.to_string()),
            Cell::from(l.degenerate_pairs),
        ]);
    }
    t
}

/// One table per state: (name, table) with a row per observable and file.
pub fn quench_tables(quench: &[QuenchStudy]) -> Result<Vec<(String, Table)>> {
    let mut states: Vec<&str> = quench.iter().map(|q| q.state.as_str()).collect();
    states.dedup();
    let mut seen = Vec::new();
    let mut out = Vec::new();
    for state in states {
        if seen.contains(&state) {
            continue;
        }
        seen.push(state);
        let mut t = Table::new(vec![
            Column::new("observable", "observable"),
            Column::new("model", "model"),
            Column::new("size", "L"),
            Column::new("dimension", "D"),
            Column::new("energy", "E"),
            Column::new("beta", "β(E)"),
            Column::new("d_eff", "D_eff"),
            Column::new("diagonal_ensemble", "diagonal ensemble"),
            Column::new("canonical", "canonical"),
            Column::new("microcanonical", "microcanonical"),
            Column::new("sigma2", "σ²"),
            Column::new("sigma2_eth", "σ²_ETH"),
            Column::new("bound", "bound"),
            Column::new("time_variance", "time variance"),
        ])
        .with_caption(format!(
            "Quench from {state}: energy, inverse temperature, effective dimension, long-time predictions and fluctuations per observable and size (time variance over the second half of the time grid; a prediction below 1e-9 of the largest |⟨A(t)⟩| of its family is round-off of zero and printed as 0)."
        ));
        for q in quench.iter().filter(|q| q.state == state) {
            for (fam, runs) in quench_families(q) {
                let scale = quench_scale(&runs);
                let zero = |v: f64| snap_zero(v, scale);
                for r in runs {
                    let o = &r.overall;
                    t.push_row(vec![
                        Cell::from(q.observable.as_str()),
                        Cell::from(fam.as_str()),
                        Cell::from(r.size),
                        Cell::from(r.dimension),
                        Cell::from(o.energy),
                        Cell::from(o.beta),
                        Cell::from(o.d_eff),
                        Cell::from(zero(o.diagonal_ensemble)),
                        Cell::from(o.canonical.map(zero)),
                        Cell::from(o.microcanonical.map(|m| zero(m.value))),
                        Cell::from(o.sigma2),
                        Cell::from(o.sigma2_eth),
                        Cell::from(o.bound),
                        Cell::from(o.trace_statistics.map(|s| s.variance)),
                    ])?;
                }
            }
        }
        out.push((format!("quench_{}", slug(state)), t));
    }
    Ok(out)
}
