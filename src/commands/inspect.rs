//! `eigentherm inspect`: lists the sectors, datasets and attributes of files and,
//! with `--verify`, checks the eigenbasis (orthonormality on a sample of states,
//! residuals ‖Hv − Ev‖ where a Hamiltonian is stored). The summary itself is built
//! by [`crate::input::inspect`]; this module only formats it.

use crate::commands::common::InputArgs;
use crate::error::{Error, Result};
use crate::input::inspect::{FileReport, SectorReport};
use crate::input::EigenFile;
use std::fmt::Write as _;

/// Options of `eigentherm inspect`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input files and dataset path overrides.
    #[command(flatten)]
    pub input: InputArgs,
    /// Inspect only this sector.
    #[arg(long, value_name = "NAME")]
    pub sector: Option<String>,
    /// Check orthonormality (and residuals ‖Hv − Ev‖ where a Hamiltonian is stored) on a sample of states.
    #[arg(long)]
    pub verify: bool,
    /// Print JSON to stdout instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Runs `eigentherm inspect`. With `--verify`, a failed check ends with an error
/// (non-zero exit) after the summary has been printed.
pub fn run(args: &Args) -> Result<()> {
    let ov = args.input.paths.overrides()?;
    let mut reports = Vec::new();
    for path in &args.input.files {
        let file = EigenFile::open(path, &ov)?;
        reports.push(crate::input::inspect::inspect(
            &file,
            args.sector.as_deref(),
            args.verify,
        )?);
    }
    if args.json {
        let v = serde_json::json!({ "files": reports });
        let s = serde_json::to_string_pretty(&v)
            .map_err(|e| Error::other(format!("cannot format JSON: {e}")))?;
        println!("{s}");
    } else {
        for r in &reports {
            print!("{}", format_text(r));
        }
    }
    for r in &reports {
        for s in &r.sectors {
            if let Some(v) = &s.verify {
                if let Some(c) = v.orthonormality.as_ref().filter(|c| !c.pass) {
                    return Err(Error::dataset(
                        &r.file,
                        s.sector.eigenvectors_path.clone().unwrap_or_default(),
                        format!(
                            "eigenvectors are not orthonormal: max |V^H V - 1| = {:.3e} over {} sampled states exceeds {:e}",
                            c.max_error, c.sample, c.tolerance
                        ),
                    ));
                }
                if let Some(c) = v.residual.as_ref().filter(|c| !c.pass) {
                    return Err(Error::dataset(
                        &r.file,
                        s.sector.eigenvectors_path.clone().unwrap_or_default(),
                        format!(
                            "residual ||H v - E v|| = {:.3e} (state {}) exceeds {:.3e}",
                            c.max_residual, c.worst_state, c.threshold
                        ),
                    ));
                }
            }
        }
    }
    Ok(())
}

/// Human-readable summary of one file.
pub fn format_text(r: &FileReport) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}", r.file);
    for s in &r.sectors {
        format_sector(&mut o, s);
    }
    o
}

fn format_sector(o: &mut String, r: &SectorReport) {
    let s = &r.sector;
    let _ = writeln!(o, "  sector {} (group {})", s.name, s.group);
    let _ = writeln!(
        o,
        "    energies      {}: {} states, {}, range [{:.6}, {:.6}]{}",
        s.energies_path,
        s.n_states,
        s.energies_element,
        r.energy_min,
        r.energy_max,
        if r.sorted {
            ""
        } else {
            " (not ascending: sorted on reading)"
        }
    );
    match (&s.eigenvectors_path, s.dim, s.element) {
        (Some(p), Some(dim), Some(el)) => {
            let chunk = match &s.chunk {
                Some(c) => format!(
                    "chunks [{}]",
                    c.iter()
                        .map(|x| x.to_string())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                None => "contiguous".to_string(),
            };
            let filters = if s.filters.is_empty() {
                String::new()
            } else {
                format!(", {}", s.filters.join(", "))
            };
            let partial = if s.n_states < dim {
                format!(" (partial: {} of {dim} states)", s.n_states)
            } else {
                String::new()
            };
            let _ = writeln!(
                o,
                "    eigenvectors  {p}: dimension {dim}{partial}, {el}, layout {}, {chunk}{filters}",
                s.layout
            );
        }
        _ => {
            let _ = writeln!(o, "    eigenvectors  none stored");
        }
    }
    if s.observables.is_empty() {
        let _ = writeln!(o, "    observables   none");
    } else {
        let _ = writeln!(o, "    observables");
        for ob in &s.observables {
            let _ = writeln!(
                o,
                "      {:<14}{}, {} ({})",
                ob.name, ob.form, ob.element, ob.path
            );
        }
    }
    if !s.state_info.is_empty() {
        let _ = writeln!(o, "    states");
        for st in &s.state_info {
            let _ = writeln!(o, "      {:<14}{} ({})", st.name, st.element, st.path);
        }
    }
    match &s.hamiltonian {
        Some(h) => {
            let _ = writeln!(
                o,
                "    hamiltonian   {}, {} ({})",
                h.form, h.element, h.path
            );
        }
        None => {
            let _ = writeln!(o, "    hamiltonian   none");
        }
    }
    let size = s.size.map(|x| x.to_string()).unwrap_or_else(|| "-".into());
    let label = s.label.clone().unwrap_or_else(|| "-".into());
    let _ = writeln!(o, "    attributes    size {size}, label {label}");
    if let Some(v) = &r.verify {
        match &v.orthonormality {
            Some(c) => {
                let _ = writeln!(
                    o,
                    "    verify        orthonormality max|V^H V - 1| = {:.3e} over {} sampled states (tolerance {:e}): {}",
                    c.max_error,
                    c.sample,
                    c.tolerance,
                    if c.pass { "pass" } else { "FAIL" }
                );
            }
            None => {
                let _ = writeln!(
                    o,
                    "    verify        orthonormality not checked (no eigenvectors)"
                );
            }
        }
        let _ = writeln!(
            o,
            "    verify        {} operators and states read: finite, Hermitian, well-formed: pass",
            v.operators_checked
        );
        match &v.residual {
            Some(c) => {
                let _ = writeln!(
                    o,
                    "    verify        residual max||H v - E v|| = {:.3e} over {} sampled states (threshold {:.3e}): {}",
                    c.max_residual,
                    c.sample,
                    c.threshold,
                    if c.pass { "pass" } else { "FAIL" }
                );
            }
            None => {
                let _ = writeln!(
                    o,
                    "    verify        residual not checked (no Hamiltonian stored)"
                );
            }
        }
    }
}
