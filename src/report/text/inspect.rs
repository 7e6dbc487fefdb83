//! Text of `eigentherm inspect`: per sector its datasets, layout, observables, states,
//! Hamiltonian, attributes and, with `--verify`, the checks.

use crate::pipeline::inspect::{FileSummary, SectorSummary};
use crate::pipeline::{Layout, LayoutSource};
use std::fmt::Write as _;

/// Human-readable summary of one file.
pub fn inspect_text(r: &FileSummary) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}", r.file);
    for s in &r.sectors {
        format_sector(&mut o, s);
    }
    o
}

/// The eigenvector line of a sector (after `eigenvectors  `).
fn vectors_line(r: &SectorSummary) -> String {
    let s = &r.sector;
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
            let (name, axes) = match s.layout {
                Layout::Columns => ("columns", "[dim, n]"),
                Layout::Rows => ("rows", "[n, dim]"),
            };
            let how = match s.layout_source {
                LayoutSource::Assumed => " (assumed)",
                LayoutSource::Residual => " (by the residuals ||Hv - Ev||)",
                LayoutSource::MatFile => " (MATLAB v7.3 file, column-major)",
                _ => "",
            };
            format!(
                "{p}: dimension {dim}{partial}, {el}, layout {name}{how} {axes}, {chunk}{filters}"
            )
        }
        _ => "none stored".to_string(),
    }
}

fn format_sector(o: &mut String, r: &SectorSummary) {
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
    let _ = writeln!(o, "    eigenvectors  {}", vectors_line(r));
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
    for e in &s.external {
        let _ = writeln!(o, "    external link {e} (read-only)");
    }
    let size = s.size.map(|x| x.to_string()).unwrap_or_else(|| "-".into());
    let label = s.label.clone().unwrap_or_else(|| "-".into());
    if let Some(b) = &s.basis {
        let _ = writeln!(o, "    basis         {b}: one configuration per row");
    }
    let mut attrs = format!("size {size}, label {label}");
    if let Some(k) = s.realization {
        attrs.push_str(&format!(", realization {k}"));
    }
    if let Some(w) = s.disorder {
        attrs.push_str(&format!(", disorder {w}"));
    }
    let _ = writeln!(o, "    attributes    {attrs}");
    if let Some(v) = &r.verify {
        match &v.orthonormality {
            Some(c) => {
                let _ = writeln!(
                    o,
                    "    verify        orthonormality max|V^H V - 1| = {:.3e} over {} sampled states{} (tolerance {:e}): {}",
                    c.max_error,
                    c.sample,
                    if c.cross > 0 {
                        format!(", {} of them against all {}", c.cross, c.states)
                    } else {
                        String::new()
                    },
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
