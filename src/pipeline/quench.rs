//! The quench over the sectors of one file: the initial state split over the sectors, the
//! dynamics of each sector with weight, and their combination.
//!
//! The state SPEC (see [`crate::analysis::quench::state`]): `stored:NAME`, `index:K`,
//! `product:LETTERS` (letters `u d + - r l`, site 1 first) or `product:x+` (every site along
//! +x; also `x-`, `y±`, `z±`). A full-space state (`product:`, or `index:` when the file has
//! embeddings) is decomposed over the sectors with their `embedding` (`c = Pᵀψ`); each sector
//! with weight is analyzed with its normalised component, and the sector results are combined
//! with their weights. The combination is the dynamics of the sector-block-diagonal part
//! `Σ_s P_s A P_s` of the observable — which is the operator itself for the observables stored
//! per sector.

use super::Inputs;
use crate::analysis::quench::outcome::{FileResult, SectorResult};
use crate::analysis::quench::{
    self, state::StateSpec, QuenchOptions, QuenchReport, SectorData, SectorPart, SectorQuench,
    TimeGrid, Work,
};
use crate::data::{c64, ColumnSource, Csr, Operator};
use crate::error::{escape, Error, Result};
use crate::input::validate::{self, CrossProbe};
use crate::input::{EigenFile, Overrides, Sector};
use crate::project::{self, Budget, StageTiming};
use std::path::Path;

/// What to run on one file (see [`quench_file`]).
#[derive(Debug, Clone)]
pub struct Job<'a> {
    /// Observable names (one result per observable, in this order).
    pub observables: &'a [String],
    /// The state SPEC as given.
    pub state: &'a str,
    /// The parsed state.
    pub spec: &'a StateSpec,
    /// Only this sector (default: every sector).
    pub sector: Option<&'a str>,
    /// Time grid.
    pub grid: TimeGrid,
    /// Analysis options.
    pub opts: &'a QuenchOptions,
    /// Memory budget and parallelism of the passes over the eigenvectors and of the
    /// analysis (`--memory`).
    pub budget: Budget,
}

/// The quench of several states and observables on several files.
#[derive(Debug, Clone)]
pub struct QuenchRequest {
    /// Input files.
    pub inputs: Inputs,
    /// Only this sector (default: every sector where the state has weight).
    pub sector: Option<String>,
    /// Observable names (at least one).
    pub observables: Vec<String>,
    /// The initial states: the SPEC as given and parsed.
    pub states: Vec<(String, StateSpec)>,
    /// The time grid.
    pub grid: TimeGrid,
    /// Analysis options.
    pub opts: QuenchOptions,
    /// Memory budget and parallelism of the passes over the eigenvectors and of the
    /// analysis (`--memory`).
    pub budget: Budget,
}

/// Runs [`quench_file`] for every state and file: the results in the order state, file,
/// observable.
pub fn quench_all(req: &QuenchRequest) -> Result<Vec<FileResult>> {
    let mut out = Vec::new();
    let pb = crate::progress::bar(
        (req.states.len() * req.inputs.files.len()) as u64,
        "quenches",
    );
    for (state, spec) in &req.states {
        let job = Job {
            observables: &req.observables,
            state,
            spec,
            sector: req.sector.as_deref(),
            grid: req.grid,
            opts: &req.opts,
            budget: req.budget,
        };
        for f in &req.inputs.files {
            crate::progress::check_interrupt()?;
            pb.set_message(format!("{state} in {}", f.display()));
            out.extend(quench_file(f, &req.inputs.overrides, &job)?);
            pb.inc(1);
        }
    }
    pb.finish_and_clear();
    Ok(out)
}

/// Sector components `(sector, c_s)` of a state.
type Components<'a> = Vec<(&'a Sector, Vec<c64>)>;

/// The sector components `(sector, c_s)` of the initial state.
fn components<'a>(
    file: &EigenFile,
    sectors: &[&'a Sector],
    spec: &StateSpec,
    explicit_sector: bool,
) -> Result<Components<'a>> {
    let path = file.path();
    let full_space = |index: Option<usize>| -> Result<Option<Components<'a>>> {
        let mut embs: Vec<(&'a Sector, Csr<f64>)> = Vec::new();
        for &s in sectors {
            match file.embedding(s)? {
                Some(p) => embs.push((s, p)),
                None if embs.is_empty() && index.is_some() => return Ok(None),
                None => {
                    if embs.is_empty() && sectors.len() == 1 {
                        return Ok(None);
                    }
                    return Err(Error::dataset(
                        path,
                        format!("{}/embedding", s.group.trim_end_matches('/')),
                        "missing: cannot decompose a full-space state over the sectors without every sector's embedding",
                    ));
                }
            }
        }
        let full_dim = embs[0].1.nrows;
        if let Some((s, p)) = embs.iter().find(|(_, p)| p.nrows != full_dim) {
            return Err(Error::dataset(
                path,
                format!("{}/embedding", s.group.trim_end_matches('/')),
                format!(
                    "full dimension {} differs from {full_dim} in sector '{}'",
                    p.nrows, embs[0].0.name
                ),
            ));
        }
        let psi = state_vector(spec, full_dim).map_err(|e| {
            e.at(
                path,
                format!("{}/embedding", embs[0].0.group.trim_end_matches('/')),
            )
        })?;
        let mut out = Vec::new();
        for (s, p) in &embs {
            if Some(p.ncols) != s.dim {
                return Err(Error::dataset(
                    path,
                    format!("{}/embedding", s.group.trim_end_matches('/')),
                    format!(
                        "has {} columns but the sector dimension is {}",
                        p.ncols,
                        s.dim
                            .map_or("unknown (no eigenvectors)".into(), |d| d.to_string())
                    ),
                ));
            }
            let c = quench::state::restrict(p, &psi)
                .map_err(|e| e.at(path, format!("{}/embedding", s.group.trim_end_matches('/'))))?;
            out.push((*s, c));
        }
        Ok(Some(out))
    };
    match spec {
        StateSpec::Stored { name } => {
            let mut out = Vec::new();
            for &s in sectors {
                if s.states.iter().any(|n| n == name) {
                    out.push((s, file.state(s, name)?.to_complex()));
                } else if explicit_sector {
                    return Err(Error::dataset(
                        path,
                        format!("{}/states/{name}", s.group.trim_end_matches('/')),
                        format!(
                            "no such state (known: {})",
                            if s.states.is_empty() {
                                "none".to_string()
                            } else {
                                let known: Vec<String> =
                                    s.states.iter().map(|n| escape(n)).collect();
                                known.join(", ")
                            }
                        ),
                    ));
                }
            }
            if out.is_empty() {
                return Err(Error::file(
                    path,
                    format!("no sector stores the state 'states/{name}'"),
                ));
            }
            Ok(out)
        }
        StateSpec::Index { index } => {
            if let Some(out) = full_space(Some(*index))? {
                return Ok(out);
            }
            // No embeddings: the index is in the basis of the single selected sector.
            let s = single(sectors, path, "index:K without sector embeddings")?;
            let dim = sector_dim(s, path)?;
            if *index >= dim {
                return Err(Error::usage(format!(
                    "state index:{index}: the sector '{}' has dimension {dim}",
                    s.name
                )));
            }
            let mut c = vec![c64::new(0.0, 0.0); dim];
            c[*index] = c64::new(1.0, 0.0);
            Ok(vec![(s, c)])
        }
        StateSpec::Product { .. } | StateSpec::Uniform { .. } => {
            if let Some(out) = by_configurations(file, sectors, spec)? {
                return Ok(out);
            }
            if let Some(out) = full_space(None)? {
                return Ok(out);
            }
            // No embedding, one sector: its basis is the full computational basis if dim = 2^L.
            let s = single(sectors, path, "a product state without sector embeddings")?;
            let dim = sector_dim(s, path)?;
            let vpath = format!("{}/eigenvectors", s.group.trim_end_matches('/'));
            let need = 16.0 * dim as f64;
            file.limit().check(
                path,
                &vpath,
                &[dim],
                "complex128",
                need,
                "for the product state",
            )?;
            let psi = state_vector(spec, dim).map_err(|e| {
                e.at(
                    path,
                    format!("{}/eigenvectors", s.group.trim_end_matches('/')),
                )
            })?;
            crate::progress::note(&format!(
                "{}: sector '{}' has no embedding; taking its basis as the full σᶻ basis of {} sites",
                path.display(),
                s.name,
                dim.trailing_zeros()
            ));
            Ok(vec![(s, psi)])
        }
    }
}

/// A product state's components in sectors whose basis vectors are single configurations
/// (a `basis` dataset, no embedding): `c_k = ψ(b_k) = Π_i φ_i(bit_i(b_k))` for the
/// configuration `b_k` of row `k` ([`quench::state::product_amplitudes`]). `None` unless
/// every selected sector has a `basis` and no embedding. The number of sites is the
/// sector's `size` attribute, or the letters of the product state; a state with weight
/// outside the stored sectors is analyzed as its normalised projection, with a warning.
fn by_configurations<'a>(
    file: &EigenFile,
    sectors: &[&'a Sector],
    spec: &StateSpec,
) -> Result<Option<Components<'a>>> {
    let path = file.path();
    let mut out = Vec::with_capacity(sectors.len());
    for &s in sectors {
        if file.has_embedding(s)? {
            return Ok(None);
        }
        let Some(configs) = file.basis(s)? else {
            return Ok(None);
        };
        let bpath = format!("{}/basis", s.group.trim_end_matches('/'));
        let sites = match (spec, s.size) {
            (StateSpec::Product { sites }, size) => {
                if size.is_some_and(|l| l != sites.len()) {
                    return Err(Error::usage(format!(
                        "the product state gives {} sites but sector '{}' has size {}",
                        sites.len(),
                        escape(&s.name),
                        size.unwrap_or(0)
                    )));
                }
                sites.clone()
            }
            (StateSpec::Uniform { site }, Some(l)) => vec![*site; l],
            _ => {
                return Err(Error::dataset(
                    path,
                    &s.group,
                    "a uniform product state over stored basis configurations needs the sector attribute size (the number of sites)",
                ))
            }
        };
        let c =
            quench::state::product_amplitudes(&sites, &configs).map_err(|e| e.at(path, &bpath))?;
        out.push((s, c));
    }
    let total: f64 = out
        .iter()
        .map(|(_, c)| c.iter().map(|x| x.norm_sqr()).sum::<f64>())
        .sum();
    if total < 1.0 - 1e-9 {
        crate::progress::warn(&format!(
            "{}: the product state has weight {total:.6} on the stored basis configurations of the selected sectors; the analysis uses its normalised projection",
            path.display()
        ));
    }
    Ok(Some(out))
}

fn single<'a>(sectors: &[&'a Sector], path: &Path, what: &str) -> Result<&'a Sector> {
    match sectors {
        [s] => Ok(s),
        _ => Err(Error::file(
            path,
            format!(
                "{what} needs one sector: choose it with --sector (known: {})",
                sectors
                    .iter()
                    .map(|s| escape(&s.name))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        )),
    }
}

fn sector_dim(s: &Sector, path: &Path) -> Result<usize> {
    s.dim.ok_or_else(|| {
        Error::dataset(
            path,
            format!("{}/eigenvectors", s.group.trim_end_matches('/')),
            "missing: the quench needs the eigenvectors",
        )
    })
}

/// The full-space vector of an `index:` or `product:` state of dimension `full_dim`.
fn state_vector(spec: &StateSpec, full_dim: usize) -> Result<Vec<c64>> {
    match spec {
        StateSpec::Index { index } => {
            if *index >= full_dim {
                return Err(Error::usage(format!(
                    "state index:{index}: the full dimension is {full_dim}"
                )));
            }
            let mut v = vec![c64::new(0.0, 0.0); full_dim];
            v[*index] = c64::new(1.0, 0.0);
            Ok(v)
        }
        StateSpec::Product { sites } => {
            let l = quench::state::sites_of_dim(full_dim).ok_or_else(|| {
                Error::other(format!(
                    "full dimension {full_dim} is not 2^L: not a spin-1/2 chain"
                ))
            })?;
            if sites.len() != l {
                return Err(Error::usage(format!(
                    "the product state gives {} sites but the chain has {l}",
                    sites.len()
                )));
            }
            quench::state::product_state(sites)
        }
        StateSpec::Uniform { site } => {
            let l = quench::state::sites_of_dim(full_dim).ok_or_else(|| {
                Error::other(format!(
                    "full dimension {full_dim} is not 2^L: not a spin-1/2 chain"
                ))
            })?;
            quench::state::product_state(&vec![*site; l])
        }
        StateSpec::Stored { .. } => Err(Error::other("internal: stored states are per sector")),
    }
}

/// One sector of a quench: the eigenvectors, their energies, the operators, and the
/// state's component in the sector's computational basis.
#[derive(Clone, Copy)]
pub struct SectorInput<'a> {
    /// The eigenvectors (ascending energies).
    pub src: &'a dyn ColumnSource,
    /// The ascending energies of the `src.n_states()` eigenvectors.
    pub energies: &'a [f64],
    /// The operators (one result each, in this order).
    pub ops: &'a [&'a Operator],
    /// The state in the sector's computational basis.
    pub psi: &'a [c64],
    /// The second half of the input check of the eigenvectors (file, sector and the probe
    /// states of [`crate::input::validate::require_sample`]), done on the state pass's way.
    pub check: Option<(&'a EigenFile, &'a Sector, &'a CrossProbe)>,
}

/// What an error of [`quench_sector`] concerns.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Stage {
    /// The eigenvectors (the passes over them, shared by the operators).
    Eigenvectors,
    /// The analysis of the operator with this index.
    Observable(usize),
    /// An error that already names its file and dataset (the input check).
    Located,
}

/// One sector's quench for every operator of `input`: the state pass
/// ([`project::state_pass`]: `cₙ = vₙᴴψ` and `Aₙₙ` of every operator, the eigenvectors kept
/// in memory when the budget allows), the kept states ([`quench::kept_states`] with
/// `opts.drop_weight`), the kept-state matrices of all operators in one more pass
/// ([`project::kept_matrices`]), then [`quench::analyze`] per operator with the budget's
/// parallelism and the memory the matrices leave as scratch. Each operator's range
/// ([`quench::operator_range`]) tightens its bound unless `opts` gives one.
pub fn quench_sector(
    input: &SectorInput<'_>,
    times: &[f64],
    opts: &QuenchOptions,
    budget: &Budget,
) -> std::result::Result<Vec<SectorQuench>, (Stage, Error)> {
    let vec_err = |e| (Stage::Eigenvectors, e);
    let src = input.src;
    if input.energies.len() != src.n_states() {
        return Err(vec_err(Error::other(format!(
            "quench: {} energies but {} eigenvectors",
            input.energies.len(),
            src.n_states()
        ))));
    }
    let mut timing = StageTiming::default();
    let probe = input.check.map(|(_, _, p)| p.columns.as_ref());
    let mut pass = project::state_pass(src, input.ops, (input.psi, probe), budget, &mut timing)
        .map_err(vec_err)?;
    if let Some((file, sector, probe)) = input.check {
        validate::require_probe(file, sector, probe, pass.probe_overlaps.as_ref())
            .map_err(|e| (Stage::Located, e))?;
    }
    let weights: Vec<f64> = pass.coefficients.iter().map(|c| c.norm_sqr()).collect();
    let kept = quench::kept_states(&weights, opts.drop_weight);
    let matrices = project::kept_matrices(
        src,
        input.ops,
        &kept.indices,
        &mut pass,
        budget,
        &mut timing,
    )
    .map_err(vec_err)?;
    let work = Work {
        par: budget.par,
        scratch_bytes: budget.bytes.saturating_sub(matrices.bytes()),
    };
    let mut out = Vec::with_capacity(input.ops.len());
    for (k, ((op, a_kk), diag_all)) in input
        .ops
        .iter()
        .zip(&matrices.matrices)
        .zip(std::mem::take(&mut pass.diagonals))
        .enumerate()
    {
        let mut opts = opts.clone();
        if opts.operator_range.is_none() {
            opts.operator_range = quench::operator_range(op);
        }
        let data = SectorData {
            energies: input.energies,
            diag_all: &diag_all,
            coeffs: &pass.coefficients,
            kept: &kept.indices,
            a_kk,
        };
        let report =
            quench::analyze(&data, times, &opts, work).map_err(|e| (Stage::Observable(k), e))?;
        out.push(SectorQuench { report, diag_all });
    }
    Ok(out)
}

/// Runs the quench on one file for every observable of the job: the state's sector
/// components (through the embeddings for a full-space state), the analysis of each sector
/// with weight, their combination, and the whole-state figures. One result per observable,
/// in the order of `job.observables` (at least one).
///
/// Per sector, the eigenvectors are streamed once for the coefficients `cₙ = ⟨n|ψ⟩` and the
/// diagonal elements of every observable, and the kept-state matrices of all observables
/// come from one more pass, or from the eigenvectors that pass kept ([`quench_sector`]). The
/// results are those of one run per observable. All the observables of a sector are held in
/// memory together, as in the per-sector pipeline of `study`.
pub fn quench_file(path: &Path, overrides: &Overrides, job: &Job<'_>) -> Result<Vec<FileResult>> {
    let (spec, grid, opts) = (job.spec, job.grid, job.opts);
    if job.observables.is_empty() {
        return Err(Error::usage("the quench needs at least one observable"));
    }
    let file = EigenFile::open(path, overrides)?;
    let sectors = file.select(job.sector)?;
    let comps = components(&file, &sectors, spec, job.sector.is_some())?;
    let total: f64 = comps
        .iter()
        .map(|(_, c)| c.iter().map(|x| x.norm_sqr()).sum::<f64>())
        .sum();
    let times = grid.points();
    let nobs = job.observables.len();
    // per observable: sector results and diagonals; shared: spectra
    let mut results: Vec<Vec<SectorResult>> = vec![Vec::new(); nobs];
    let mut diags: Vec<Vec<Vec<f64>>> = vec![Vec::new(); nobs];
    let mut spectra = Vec::new();
    let mut without = Vec::new();
    let mut size = None;
    let mut model = None;
    let mut dimension = 0;
    for (s, c) in comps {
        let weight: f64 = c.iter().map(|x| x.norm_sqr()).sum();
        if weight <= 1e-14 * total.max(f64::MIN_POSITIVE) {
            without.push(s.name.clone());
            continue;
        }
        let group = s.group.trim_end_matches('/');
        let spectrum = file.spectrum(s)?;
        let vectors = file.vectors(s, &spectrum)?;
        // the sample now, the rest of the check on the state pass's way
        let probe = validate::require_sample(&file, s, &vectors)?;
        let obs_path = |name: &str| format!("{group}/observables/{name}");
        let mut ops = Vec::with_capacity(nobs);
        for name in job.observables {
            let op = file.observable(s, name)?;
            project::check_operator(&vectors, &op).map_err(|e| e.at(path, obs_path(name)))?;
            ops.push(op);
        }
        size = size.or(s.size);
        model = model.or_else(|| s.model.clone());
        dimension += s.dim.unwrap_or(0);
        let refs: Vec<&Operator> = ops.iter().collect();
        let input = SectorInput {
            src: &vectors,
            energies: &spectrum.energies,
            ops: &refs,
            psi: &c,
            check: probe.as_ref().map(|p| (&file, s, p)),
        };
        // errors of the shared passes concern the eigenvectors (the operators are checked)
        let quenches =
            quench_sector(&input, &times, opts, &job.budget).map_err(|(st, e)| match st {
                Stage::Eigenvectors => e.at(path, format!("{group}/eigenvectors")),
                Stage::Observable(k) => e.at(path, obs_path(&job.observables[k])),
                Stage::Located => e,
            })?;
        let cap = quenches.first().map_or(1.0, |q| q.report.norm / weight);
        if cap < opts.min_window_weight && !opts.renormalise {
            return Err(Error::other(format!(
                "the stored eigenstates hold only {cap:.4} of the state '{}' in sector '{}' (below --min-window-weight {}): the diagonal ensemble of the normalised projection is not the state's; refused (--renormalise analyzes it anyway)",
                job.state, s.name, opts.min_window_weight
            ))
            .at(path, format!("{group}/eigenvectors")));
        }
        let mut captured = None;
        for (k, sq) in quenches.into_iter().enumerate() {
            let cap = *captured.get_or_insert(sq.report.norm / weight);
            diags[k].push(sq.diag_all);
            results[k].push(SectorResult {
                sector: s.name.clone(),
                name: s.name.clone(),
                weight,
                captured: cap,
                report: sq.report,
            });
        }
        if let Some(cap) = captured.filter(|&c| c < 1.0 - 1e-6) {
            crate::progress::warn(&format!(
                "{}: sector '{}': the stored eigenstates hold only {:.6} of the state's weight (partial eigenbasis); the analysis uses the normalised projection",
                path.display(),
                s.name,
                cap
            ));
        }
        spectra.push(spectrum.energies);
    }
    if results.first().is_none_or(|r| r.is_empty()) {
        return Err(Error::file(
            path,
            format!(
                "the state '{}' has no weight in the selected sectors",
                job.state
            ),
        ));
    }
    let mut out = Vec::with_capacity(nobs);
    for ((name, results), diags) in job.observables.iter().zip(results).zip(diags) {
        let combined = if results.len() > 1 {
            let parts: Vec<SectorPart<'_>> = results
                .iter()
                .zip(&diags)
                .zip(&spectra)
                .map(|((r, d), e)| SectorPart {
                    weight: r.weight,
                    energies: e,
                    diag_all: d,
                    report: &r.report,
                })
                .collect();
            Some(quench::combine(&parts, opts).map_err(|e| e.at(path, "/"))?)
        } else {
            None
        };
        let parts: Vec<(f64, &QuenchReport)> =
            results.iter().map(|r| (r.weight, &r.report)).collect();
        let overall = quench::overall(&parts, combined.as_ref()).map_err(|e| e.at(path, "/"))?;
        out.push(FileResult {
            file: path.display().to_string(),
            observable: name.clone(),
            state: job.state.to_string(),
            state_spec: spec.clone(),
            times: grid,
            options: opts.clone(),
            sectors: results,
            sectors_without_weight: without.clone(),
            combined,
            size,
            model: model.clone(),
            dimension,
            overall,
        });
    }
    Ok(out)
}
