//! The study's `report.html`: verdicts first, then the level statistics, the scaling
//! table, the matrix-element figures and the quenches, with the provenance.

use crate::analysis::scaling::RULE;
use crate::analysis::study::{QuenchStudy, StudyResults};
use crate::provenance::Provenance;
use crate::report::html::{Page, Section, Summary};
use crate::report::study::figures::Named;
use crate::report::study::tables::{ensemble_table, levels_table};
use crate::report::table::Table;

pub fn html_page(
    results: &StudyResults,
    prov: Provenance,
    figures: &[Named],
    table: &Table,
) -> Page {
    let mut h = Page::new("eigentherm study", prov);
    h.rule = Some(RULE.to_string());
    for v in &results.scaling.verdicts {
        h.summary
            .push(Summary::from_report(v.family.clone(), &v.verdict));
    }
    let find = |prefix: &'static str| {
        figures
            .iter()
            .filter(move |(n, _, _)| n.starts_with(prefix))
    };
    let mut lev = Section::new("Level statistics").text(
        "Each sector's spectrum, in the levels window: mean ratio of consecutive spacings and the unfolded spacing \
         distribution. Chaotic (GOE/GUE-like) statistics in every sector are a precondition for ETH.",
    );
    lev = lev.table(levels_table(&results.sectors));
    let mut warn = Vec::new();
    for a in &results.sectors {
        for w in &a.levels.warnings {
            warn.push(format!("{}: {w}", a.label));
        }
    }
    if !warn.is_empty() {
        lev = lev.text(format!("Warnings — {}", warn.join(" · ")));
    }
    if let Some(a) = results.sectors.first() {
        lev = lev.text(format!(
            "Classification rule: nearest reference by ⟨r̃⟩ (midpoints 0.4585 and 0.5652 between Poisson 0.3863, \
             GOE 0.5307 and GUE 0.5996; Atas et al. 2013) and, separately, smallest Kolmogorov–Smirnov distance \
             of the unfolded spacings to the Poisson and Wigner-surmise distributions. Unfolding: {}. Every \
             verdict concerns one finite spectrum: it suggests, it does not prove, chaos or integrability.",
            a.levels.unfolding.method
        ));
    }
    for (_, f, c) in find("mean_r").chain(find("spacings_")) {
        lev = lev.figure(f, c.clone());
    }
    h.sections.push(lev);
    if let Some(sec) = ensemble_section(results, figures) {
        h.sections.push(sec);
    }
    let mut sc = Section::new("Finite-size scaling")
        .text(results.scaling.method.clone())
        .table(table.clone());
    for (_, f, c) in find("fluct_") {
        sc = sc.figure(f, c.clone());
    }
    h.sections.push(sc);
    let mut dg = Section::new("Diagonal matrix elements and thermal predictions");
    for (_, f, c) in find("diagonal_") {
        dg = dg.figure(f, c.clone());
    }
    h.sections.push(dg);
    let mut od = Section::new("Off-diagonal matrix elements");
    for (_, f, c) in find("envelope_") {
        od = od.figure(f, c.clone());
    }
    h.sections.push(od);
    h
}

/// The report section "Disorder ensembles" (none without realizations).
fn ensemble_section(results: &StudyResults, figures: &[Named]) -> Option<Section> {
    let ens = &results.scaling.ensembles;
    if ens.is_empty() {
        return None;
    }
    let mut sec = Section::new("Disorder ensembles").text(
        "Sectors with a realization attribute are grouped by size, disorder strength and label; every \
         figure is the realization average with the sample-to-sample standard error s/√n (realizations are \
         independent). The crossover figure shows ⟨r̃⟩ against disorder strength per size; the form-factor \
         figures the realization-averaged connected spectral form factor with its band, and the Thouless \
         time where it joins the random-matrix curve.",
    );
    if let Ok(t) = ensemble_table(ens) {
        sec = sec.table(t);
    }
    if let Some(scan) = &results.scaling.disorder_scan {
        sec = sec.text(scan.rule.clone());
    }
    for (_, f, c) in figures
        .iter()
        .filter(|(n, _, _)| n == "crossover" || n.starts_with("form_factor_"))
    {
        sec = sec.figure(f, c.clone());
    }
    Some(sec)
}

/// The report section "Quench dynamics" (none without quenches).
pub fn quench_section(
    quench: &[QuenchStudy],
    figures: &[Named],
    tables: Vec<(String, Table)>,
) -> Option<Section> {
    if quench.is_empty() {
        return None;
    }
    let mut sec = Section::new("Quench dynamics").text(
        "Each initial state |ψ⟩ = Σₙ cₙ|n⟩ evolves as Σₙ cₙ e^(−iEₙt)|n⟩. A state given in the full \
         computational basis is split over the sectors through their embeddings and the sector \
         results are combined with their weights. If the observable thermalizes, ⟨A(t)⟩ relaxes to \
         the diagonal-ensemble value, which agrees with the microcanonical and canonical values at \
         the state's energy, and the temporal fluctuations σ² shrink as 1/D_eff with system size.",
    );
    for (_, t) in tables {
        sec = sec.table(t);
    }
    for (_, f, c) in figures.iter().filter(|(n, _, _)| n.starts_with("quench_")) {
        sec = sec.figure(f, c.clone());
    }
    Some(sec)
}
