//! `eigentherm study`: every analysis on every file, sector and observable — the scaling
//! pipeline and, with initial states, the quenches — as one [`StudyResults`] with its
//! provenance (tool version, command line, parameters, SHA-256 of each input). Writes no
//! files: [`crate::report::study::write_folder`] does.

use super::quench::{quench_all, QuenchRequest};
use super::scaling::{scaling, ScalingRequest};
use crate::analysis::scaling::{DEFAULT_SEED, RESAMPLES};
use crate::analysis::study::{QuenchStudy, StudyResults};
use crate::error::Result;
use crate::provenance::Provenance;

/// What a study runs.
#[derive(Debug, Clone)]
pub struct StudyRequest {
    /// The scaling pipeline (files, sector, observables, windows, budget).
    pub scaling: ScalingRequest,
    /// The quenches (`None` without initial states); its observables are the study's.
    pub quench: Option<QuenchRequest>,
    /// The time grid as given (for the provenance).
    pub times_label: String,
}

/// Runs the study.
pub fn study(req: &StudyRequest) -> Result<StudyResults> {
    let mut prov = Provenance::of_this_run(parameters(req));
    for f in &req.scaling.inputs.files {
        prov.add_input(f)?;
    }
    let (sectors, scaling_report) = scaling(&req.scaling)?;
    let quench = match &req.quench {
        Some(q) => group_quenches(q, quench_all(q)?),
        None => Vec::new(),
    };
    Ok(StudyResults {
        provenance: prov,
        sectors,
        scaling: scaling_report,
        quench,
    })
}

/// One [`QuenchStudy`] per (observable, state), observables outermost, each with its runs
/// in file order.
fn group_quenches(
    q: &QuenchRequest,
    runs: Vec<crate::analysis::quench::outcome::FileResult>,
) -> Vec<QuenchStudy> {
    let mut out = Vec::new();
    for obs in &q.observables {
        for (state, _) in &q.states {
            out.push(QuenchStudy {
                observable: obs.clone(),
                state: state.clone(),
                runs: runs
                    .iter()
                    .filter(|r| &r.observable == obs && &r.state == state)
                    .cloned()
                    .collect(),
            });
        }
    }
    out
}

/// The parameters in force, for the provenance (sorted by name).
fn parameters(req: &StudyRequest) -> Vec<(String, String)> {
    let sc = &req.scaling;
    let st = &sc.settings;
    let mut params = vec![
        ("observables".to_string(), sc.observables.join(", ")),
        ("matrix-element window".to_string(), st.window.label()),
        ("levels window".to_string(), st.levels_window.label()),
        (
            "omega_max".to_string(),
            st.offdiagonal.omega_max.map_or(
                "default: 10 mean level spacings of the window".to_string(),
                |w| w.to_string(),
            ),
        ),
        (
            "memory budget".to_string(),
            crate::project::human_bytes(st.budget.bytes as f64),
        ),
        (
            "sectors".to_string(),
            sc.sector.clone().unwrap_or_else(|| "all".into()),
        ),
        (
            "combine sectors".to_string(),
            sc.combine_sectors.to_string(),
        ),
        (
            "bootstrap".to_string(),
            format!("{RESAMPLES} resamples, seed {DEFAULT_SEED:#x}"),
        ),
    ];
    if let Some(q) = &req.quench {
        let states: Vec<&str> = q.states.iter().map(|(s, _)| s.as_str()).collect();
        params.push(("quench states".to_string(), states.join(", ")));
        params.push(("quench times".to_string(), req.times_label.clone()));
        params.push((
            "quench drop weight".to_string(),
            q.opts.drop_weight.to_string(),
        ));
    }
    params.sort_by(|a, b| a.0.cmp(&b.0));
    params
}
