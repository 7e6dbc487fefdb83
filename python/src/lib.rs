//! `eigentherm._native`: the eigentherm library's pipelines called from Python.
//!
//! Every function takes the command line's options as keyword arguments (same names, `-`
//! as `_`; `--class` is `symmetry_class`), fills the library's flag structs
//! ([`eigentherm::pipeline::flags`]) — the same resolution as the binary's, so defaults,
//! checks and error messages are the binary's — runs the pipeline without the GIL, and
//! returns the result serialised exactly as `--json` prints it (a JSON string; the Python
//! package parses it and turns tables into NumPy columns). `project` returns the window
//! matrix as a NumPy array instead.
//!
//! Errors raise `eigentherm.Error` (a `ValueError`) whose message is the line the binary
//! prints after `error: `, with `exit_code` the binary's exit status (1 or 2).

mod run;

use eigentherm::pipeline::flags::{
    self, DynamicsFlags, ElementsFlags, EntanglementFlags, GaugeFlags, InputFlags, LevelsFlags,
    QuenchFlags, ScalingFlags, StudyFlags, ThermoFlags,
};
use eigentherm::pipeline::matrix::{window_matrix, MatrixRequest};
use eigentherm::window::Window;
use numpy::{PyArray1, PyArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use run::{json, or_raise, run_detached, Error};
use std::path::PathBuf;

/// The options every function shares, passed by the Python layer as one dict `shared`
/// (`eigentherm/__init__.py` moves them there from the keyword arguments): the input flags
/// ([`INPUT_KEYS`]) and, for the functions that take them, the thermal source
/// ([`THERMO_KEYS`]). One list, read once, instead of the same keywords in every signature.
struct Shared {
    input: InputFlags,
    thermo: ThermoFlags,
}

/// Keywords of [`InputFlags`] (the binary's dataset-path flags, `--memory`, `--ensemble-by`).
const INPUT_KEYS: [&str; 9] = [
    "memory",
    "energies_path",
    "eigenvectors_path",
    "layout",
    "observable_path",
    "state_path",
    "attribute",
    "hamiltonian_path",
    "ensemble_by",
];

/// Keywords of [`ThermoFlags`] (`--thermo`, `--kpm-*`).
const THERMO_KEYS: [&str; 4] = ["thermo", "kpm_moments", "kpm_vectors", "kpm_seed"];

/// The shared options of `files` from the dict `shared`; a key that is not one of
/// [`INPUT_KEYS`] or [`THERMO_KEYS`] is a `TypeError`, a value of the wrong type too.
fn shared_flags(
    files: Vec<PathBuf>,
    shared: Option<&Bound<'_, PyDict>>,
    takes_thermo: bool,
) -> PyResult<Shared> {
    let mut input = InputFlags {
        files,
        ..Default::default()
    };
    let mut thermo = ThermoFlags::default();
    let Some(d) = shared else {
        return Ok(Shared { input, thermo });
    };
    for (k, v) in d.iter() {
        let key: String = k.extract()?;
        if v.is_none() {
            continue;
        }
        if !takes_thermo && THERMO_KEYS.contains(&key.as_str()) {
            return Err(pyo3::exceptions::PyTypeError::new_err(format!(
                "unexpected keyword argument '{key}' (this function has no thermal source)"
            )));
        }
        match key.as_str() {
            "memory" => input.memory = Some(v.extract()?),
            "energies_path" => input.energies_path = Some(v.extract()?),
            "eigenvectors_path" => input.eigenvectors_path = Some(v.extract()?),
            "layout" => input.layout = Some(v.extract()?),
            "observable_path" => input.observable_paths = v.extract()?,
            "state_path" => input.state_paths = v.extract()?,
            "attribute" => input.attributes = v.extract()?,
            "hamiltonian_path" => input.hamiltonian_path = Some(v.extract()?),
            "ensemble_by" => input.ensemble_by = Some(v.extract()?),
            "thermo" => thermo.thermo = Some(v.extract()?),
            "kpm_moments" => thermo.kpm_moments = Some(v.extract()?),
            "kpm_vectors" => thermo.kpm_vectors = Some(v.extract()?),
            "kpm_seed" => thermo.kpm_seed = Some(v.extract()?),
            _ => {
                return Err(pyo3::exceptions::PyTypeError::new_err(format!(
                    "unexpected shared option '{key}' (known: {}, {})",
                    INPUT_KEYS.join(", "),
                    THERMO_KEYS.join(", ")
                )))
            }
        }
    }
    Ok(Shared { input, thermo })
}

/// Level statistics of every selected sector (`eigentherm levels FILE... --json`).
#[pyfunction]
#[pyo3(signature = (files, *, sector=None, window=None, energy_window=None, symmetry_class=None, unfold=None, unfold_degree=None, bins=None, sff_eta=None, thouless_tolerance=None, degeneracy_tol=None, min_levels=None, shared=None))]
#[allow(clippy::too_many_arguments)]
fn levels(
    py: Python<'_>,
    files: Vec<PathBuf>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    symmetry_class: Option<String>,
    unfold: Option<String>,
    unfold_degree: Option<usize>,
    bins: Option<usize>,
    sff_eta: Option<f64>,
    thouless_tolerance: Option<f64>,
    degeneracy_tol: Option<f64>,
    min_levels: Option<usize>,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let f = LevelsFlags {
        input: shared_flags(files, shared.as_ref(), false)?.input,
        sector,
        window,
        energy_window,
        class: symmetry_class,
        unfold,
        unfold_degree,
        bins,
        sff_eta,
        thouless_tolerance,
        degeneracy_tol,
        min_levels,
    };
    run_detached(py, move || json(&f.request()?.run()?))
}

/// The flags of `diagonal` and `offdiagonal`.
#[allow(clippy::too_many_arguments)]
fn elements_flags(
    files: Vec<PathBuf>,
    observable: Vec<String>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    symmetry_class: Option<String>,
    shared: Shared,
) -> ElementsFlags {
    ElementsFlags {
        input: InputFlags {
            files,
            ..shared.input
        },
        sector,
        window,
        energy_window,
        observables: observable,
        class: symmetry_class,
        thermo: shared.thermo,
    }
}

/// Diagonal matrix elements (`eigentherm diagonal FILE... --json`).
#[pyfunction]
#[pyo3(signature = (files, *, observable=Vec::new(), sector=None, window=None, energy_window=None, symmetry_class=None, predictions=None, per_state=false, shared=None))]
#[allow(clippy::too_many_arguments)]
fn diagonal(
    py: Python<'_>,
    files: Vec<PathBuf>,
    observable: Vec<String>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    symmetry_class: Option<String>,
    predictions: Option<String>,
    per_state: bool,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let input = shared_flags(Vec::new(), shared.as_ref(), true)?;
    let f = elements_flags(
        files,
        observable,
        sector,
        window,
        energy_window,
        symmetry_class,
        input,
    );
    run_detached(py, move || {
        let policy = flags::predictions(predictions.as_deref())?;
        json(&eigentherm::pipeline::elements::diagonal(
            &f.request()?,
            policy,
            per_state,
        )?)
    })
}

/// Off-diagonal matrix elements (`eigentherm offdiagonal FILE... --json`).
#[pyfunction]
#[pyo3(signature = (files, *, observable=Vec::new(), sector=None, window=None, energy_window=None, symmetry_class=None, omega_max=None, shared=None))]
#[allow(clippy::too_many_arguments)]
fn offdiagonal(
    py: Python<'_>,
    files: Vec<PathBuf>,
    observable: Vec<String>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    symmetry_class: Option<String>,
    omega_max: Option<f64>,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let input = shared_flags(Vec::new(), shared.as_ref(), true)?;
    let f = elements_flags(
        files,
        observable,
        sector,
        window,
        energy_window,
        symmetry_class,
        input,
    );
    run_detached(py, move || {
        let opts = flags::offdiagonal(omega_max)?;
        json(&eigentherm::pipeline::elements::offdiagonal(
            &f.request()?,
            &opts,
        )?)
    })
}

/// Quench dynamics (`eigentherm quench FILE... --json`).
#[pyfunction]
#[pyo3(signature = (files, *, observable=Vec::new(), state=Vec::new(), times=None, drop_weight=None, shell_width=None, min_window_weight=None, renormalise=false, sector=None, shared=None))]
#[allow(clippy::too_many_arguments)]
fn quench(
    py: Python<'_>,
    files: Vec<PathBuf>,
    observable: Vec<String>,
    state: Vec<String>,
    times: Option<String>,
    drop_weight: Option<f64>,
    shell_width: Option<f64>,
    min_window_weight: Option<f64>,
    renormalise: bool,
    sector: Option<String>,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let f = QuenchFlags {
        input: shared_flags(files, shared.as_ref(), false)?.input,
        sector,
        observables: observable,
        dynamics: DynamicsFlags {
            states: state,
            times,
            drop_weight,
        },
        shell_width,
        min_window_weight,
        renormalise,
    };
    run_detached(py, move || {
        let results = eigentherm::pipeline::quench::quench_all(&f.request()?)?;
        json(&serde_json::json!({ "files": results }))
    })
}

/// The flags of the per-sector pipeline (`scaling`, `study`).
#[allow(clippy::too_many_arguments)]
fn scaling_flags(
    shared: Shared,
    observable: Vec<String>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    levels_window: Option<String>,
    omega_max: Option<f64>,
    symmetry_class: Option<String>,
    combine_sectors: bool,
) -> ScalingFlags {
    ScalingFlags {
        input: shared.input,
        sector,
        window,
        energy_window,
        observables: observable,
        levels_window,
        omega_max,
        class: symmetry_class,
        thermo: shared.thermo,
        combine_sectors,
    }
}

/// Finite-size scaling (`eigentherm scaling FILE... --json`).
#[pyfunction]
#[pyo3(signature = (files, *, observable=Vec::new(), sector=None, window=None, energy_window=None, levels_window=None, omega_max=None, symmetry_class=None, combine_sectors=false, shared=None))]
#[allow(clippy::too_many_arguments)]
fn scaling(
    py: Python<'_>,
    files: Vec<PathBuf>,
    observable: Vec<String>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    levels_window: Option<String>,
    omega_max: Option<f64>,
    symmetry_class: Option<String>,
    combine_sectors: bool,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let input = shared_flags(files, shared.as_ref(), true)?;
    let f = scaling_flags(
        input,
        observable,
        sector,
        window,
        energy_window,
        levels_window,
        omega_max,
        symmetry_class,
        combine_sectors,
    );
    run_detached(py, move || {
        let (_, report) = eigentherm::pipeline::scaling::scaling(&f.request()?)?;
        json(&report)
    })
}

/// Every analysis (`eigentherm study FILE... --json`); with `out`, the report folder is
/// written too.
#[pyfunction]
#[pyo3(signature = (files, *, observable=Vec::new(), out=None, figure_format=None, state=Vec::new(), times=None, drop_weight=None, sector=None, window=None, energy_window=None, levels_window=None, omega_max=None, symmetry_class=None, combine_sectors=false, shared=None))]
#[allow(clippy::too_many_arguments)]
fn study(
    py: Python<'_>,
    files: Vec<PathBuf>,
    observable: Vec<String>,
    out: Option<PathBuf>,
    figure_format: Option<String>,
    state: Vec<String>,
    times: Option<String>,
    drop_weight: Option<f64>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    levels_window: Option<String>,
    omega_max: Option<f64>,
    symmetry_class: Option<String>,
    combine_sectors: bool,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let input = shared_flags(files, shared.as_ref(), true)?;
    let f = StudyFlags {
        scaling: scaling_flags(
            input,
            observable,
            sector,
            window,
            energy_window,
            levels_window,
            omega_max,
            symmetry_class,
            combine_sectors,
        ),
        dynamics: DynamicsFlags {
            states: state,
            times,
            drop_weight,
        },
    };
    run_detached(py, move || {
        let formats = flags::figure_formats(figure_format.as_deref())?;
        let results = eigentherm::pipeline::study::study(&f.request()?)?;
        if let Some(dir) = &out {
            eigentherm::report::study::write_folder_as(&results, dir, formats)?;
        }
        json(&results)
    })
}

/// What `project` returns: the matrix, the window's `(lo, hi)` and its energies.
type Projected<'py> = (Bound<'py, PyAny>, (usize, usize), Bound<'py, PyArray1<f64>>);

/// The window matrix `A_W[i, j] = ⟨lo + i|A|lo + j⟩` of one observable in one sector, with
/// the window's state indices `(lo, hi)` and energies: `(matrix, (lo, hi), energies)`.
#[pyfunction]
#[pyo3(signature = (file, observable, *, sector=None, window=None, energy_window=None, shared=None))]
#[allow(clippy::too_many_arguments)]
fn project<'py>(
    py: Python<'py>,
    file: PathBuf,
    observable: String,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    shared: Option<Bound<'py, PyDict>>,
) -> PyResult<Projected<'py>> {
    let input = shared_flags(vec![file], shared.as_ref(), false)?.input;
    let wm = run_detached(py, move || {
        let req = MatrixRequest {
            inputs: input.inputs()?,
            sector,
            observable,
            window: flags::window(
                window.as_deref(),
                energy_window.as_deref(),
                Window::MATRIX_ELEMENTS,
            )?,
            budget: input.budget()?,
        };
        window_matrix(&req)
    })?;
    let w = wm.range.len();
    let matrix = match &wm.matrix {
        eigentherm::data::Matrix::Real(m) => {
            let v: Vec<f64> = (0..w)
                .flat_map(|i| (0..w).map(move |j| m[(i, j)]))
                .collect();
            PyArray1::from_vec(py, v).reshape([w, w])?.into_any()
        }
        eigentherm::data::Matrix::Complex(m) => {
            let v: Vec<numpy::Complex64> = (0..w)
                .flat_map(|i| (0..w).map(move |j| m[(i, j)]))
                .map(|z| numpy::Complex64::new(z.re, z.im))
                .collect();
            PyArray1::from_vec(py, v).reshape([w, w])?.into_any()
        }
    };
    drop(wm.matrix);
    Ok((
        matrix,
        (wm.range.start, wm.range.end),
        PyArray1::from_vec(py, wm.energies),
    ))
}

/// Adiabatic gauge potential norm and fidelity susceptibility of each eigenstate
/// (`eigentherm gauge FILE... --perturbation NAME... --json`).
#[pyfunction]
#[pyo3(signature = (files, *, perturbation=Vec::new(), sector=None, window=None, energy_window=None, cutoff=None, partners=None, shared=None))]
#[allow(clippy::too_many_arguments)]
fn gauge(
    py: Python<'_>,
    files: Vec<PathBuf>,
    perturbation: Vec<String>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    cutoff: Option<String>,
    partners: Option<String>,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let input = shared_flags(files, shared.as_ref(), false)?.input;
    let f = GaugeFlags {
        input,
        sector,
        window,
        energy_window,
        perturbations: perturbation,
        cutoff,
        partners,
    };
    run_detached(py, move || {
        let (req, opts) = f.request()?;
        json(&eigentherm::pipeline::gauge::gauge(&req, &opts)?)
    })
}

/// Entanglement entropy of each eigenstate for a cut of the chain
/// (`eigentherm entanglement FILE... --json`).
#[pyfunction]
#[pyo3(signature = (files, *, sector=None, window=None, energy_window=None, cut=None, shared=None))]
#[allow(clippy::too_many_arguments)]
fn entanglement(
    py: Python<'_>,
    files: Vec<PathBuf>,
    sector: Option<String>,
    window: Option<String>,
    energy_window: Option<String>,
    cut: Option<usize>,
    shared: Option<Bound<'_, PyDict>>,
) -> PyResult<String> {
    let input = shared_flags(files, shared.as_ref(), false)?.input;
    let f = EntanglementFlags {
        input,
        sector,
        window,
        energy_window,
        cut,
    };
    run_detached(py, move || {
        json(&eigentherm::pipeline::entanglement::entanglement(
            &f.request()?,
        )?)
    })
}

/// Sets the number of worker threads of the matrix products and parallel loops (the
/// binary's `--threads`); only before the first analysis of the process.
#[pyfunction]
fn set_threads(n: usize) -> PyResult<()> {
    or_raise(flags::set_threads(Some(n)))
}

/// The module.
#[pymodule]
#[pyo3(name = "_native")]
fn native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("Error", m.py().get_type::<Error>())?;
    m.add("version", env!("CARGO_PKG_VERSION"))?;
    m.add_function(wrap_pyfunction!(levels, m)?)?;
    m.add_function(wrap_pyfunction!(diagonal, m)?)?;
    m.add_function(wrap_pyfunction!(offdiagonal, m)?)?;
    m.add_function(wrap_pyfunction!(quench, m)?)?;
    m.add_function(wrap_pyfunction!(scaling, m)?)?;
    m.add_function(wrap_pyfunction!(study, m)?)?;
    m.add_function(wrap_pyfunction!(project, m)?)?;
    m.add_function(wrap_pyfunction!(gauge, m)?)?;
    m.add_function(wrap_pyfunction!(entanglement, m)?)?;
    m.add_function(wrap_pyfunction!(set_threads, m)?)?;
    Ok(())
}
