"""eigentherm from Python: level statistics and eigenstate-thermalization (ETH) analyses of
HDF5 exact-diagonalization eigenbases, computed by the eigentherm library (Rust, through PyO3).

Each analysis function takes a file path (or a list of them) and the command line's options
as keyword arguments (``--omega-max`` is ``omega_max``, ``--class`` is ``symmetry_class``;
repeatable flags take a string or a list) and returns what ``eigentherm COMMAND --json``
prints for the same files and options, as Python objects, with two conversions
(:func:`to_json` undoes both):

* a list of numbers becomes a NumPy array (``int64`` when every entry is an integer,
  otherwise ``float64``; JSON ``null`` — a NaN — becomes ``nan``);
* a list of records whose fields are all numbers, strings, booleans or ``null`` (a histogram,
  the smooth A(E), an envelope, a quench trace, the scaling rows) becomes a :class:`Table`:
  a dict of columns, each a NumPy array (strings stay lists), with ``to_frame()``.

Errors raise :class:`Error` (a ``ValueError``) carrying exactly the one-line message the
binary prints after ``error:``. Calls run without the GIL; Ctrl-C stops a call at the next
block of eigenvectors or sector and raises ``KeyboardInterrupt``. Warnings and notes go to
the process's stderr, as the binary's do. Results are numerical evidence about finite
systems, not proofs: every verdict carries its rule, thresholds and caveats.
"""

import inspect as _inspect
import json as _json
import os as _os

import numpy as _np

from . import _native
from ._native import Error

__version__ = _native.version

__all__ = [
    "Error",
    "Table",
    "levels",
    "diagonal",
    "offdiagonal",
    "quench",
    "scaling",
    "study",
    "gauge",
    "entanglement",
    "project",
    "set_threads",
    "to_json",
    "to_frame",
]


class Table(dict):
    """A table of an eigentherm result: column name -> NumPy array (strings: a list).

    ``len(table)`` is the number of columns; ``table.rows`` the number of rows.
    """

    def __init__(self, columns, rows):
        super().__init__(columns)
        self.rows = rows

    def records(self):
        """The rows as the list of dicts the binary's JSON holds."""
        cols = {k: to_json(v) for k, v in self.items()}
        return [{k: cols[k][i] for k in cols} for i in range(self.rows)]

    def to_frame(self):
        """The table as a pandas DataFrame (needs pandas)."""
        return _pandas().DataFrame(dict(self))

    to_pandas = to_frame

    def __repr__(self):
        return f"Table({self.rows} rows: {', '.join(self)})"


def _pandas():
    try:
        import pandas
    except ImportError as e:  # pragma: no cover - depends on the environment
        raise ImportError("to_frame() needs pandas: pip install pandas") from e
    return pandas


def _is_number(x):
    return isinstance(x, (int, float)) and not isinstance(x, bool)


def _numbers(values):
    """A NumPy array of a list of numbers and nulls (at least one number), else None."""
    if not values or not all(v is None or _is_number(v) for v in values):
        return None
    if all(v is None for v in values):
        return None
    if all(isinstance(v, int) and not isinstance(v, bool) for v in values):
        return _np.array(values, dtype=_np.int64)
    return _np.array([_np.nan if v is None else v for v in values], dtype=_np.float64)


def _column(values):
    arr = _numbers(values)
    if arr is not None:
        return arr
    if all(isinstance(v, bool) for v in values):
        return _np.array(values, dtype=bool)
    return list(values)


def _is_table(values):
    if not values or not all(isinstance(v, dict) for v in values):
        return False
    keys = list(values[0])
    return all(list(v) == keys for v in values) and all(
        not isinstance(x, (dict, list)) for v in values for x in v.values()
    )


def _tabulate(value):
    """The JSON value with lists of numbers as arrays and tables of records as Tables."""
    if isinstance(value, dict):
        return {k: _tabulate(v) for k, v in value.items()}
    if isinstance(value, list):
        arr = _numbers(value)
        if arr is not None:
            return arr
        if _is_table(value):
            return Table({k: _column([r[k] for r in value]) for k in value[0]}, len(value))
        return [_tabulate(v) for v in value]
    return value


def to_json(value):
    """The object a function returned as the plain JSON value the binary prints (arrays as
    lists, NaN as None, Tables as lists of records), e.g. to compare or to ``json.dump``."""
    if isinstance(value, Table):
        return value.records()
    if isinstance(value, dict):
        return {k: to_json(v) for k, v in value.items()}
    if isinstance(value, _np.ndarray):
        if value.dtype.kind == "f":
            return [None if _np.isnan(x) else float(x) for x in value.tolist()]
        return value.tolist()
    if isinstance(value, list):
        return [to_json(v) for v in value]
    return value


def to_frame(value):
    """A pandas DataFrame of a :class:`Table`, or of a list of result dicts (one row each,
    with their scalar fields: e.g. ``to_frame(levels(f)["sectors"])``)."""
    if isinstance(value, Table):
        return value.to_frame()
    rows = [
        {k: v for k, v in r.items() if not isinstance(v, (dict, list, Table, _np.ndarray))}
        for r in value
    ]
    return _pandas().DataFrame(rows)


def _files(files):
    if isinstance(files, (str, bytes, _os.PathLike)):
        return [_os.fsdecode(files)]
    return [_os.fsdecode(f) for f in files]


def _listed(value):
    if value is None:
        return []
    if isinstance(value, (str, _os.PathLike)):
        return [_os.fsdecode(value)]
    return [_os.fsdecode(v) if isinstance(v, _os.PathLike) else v for v in value]


# The options every function shares, passed to the native module as one dict `shared`
# (python/src/lib.rs: INPUT_KEYS, THERMO_KEYS).
_INPUT_KEYS = ("memory", "energies_path", "eigenvectors_path", "layout", "observable_path",
               "state_path", "attribute", "hamiltonian_path", "ensemble_by")
_THERMO_KEYS = ("thermo", "kpm_moments", "kpm_vectors", "kpm_seed")


def _pairs(value):
    """A dict {NAME: PATH} or a list of "NAME=PATH" strings, as the list."""
    if isinstance(value, dict):
        return [f"{k}={_os.fsdecode(v) if isinstance(v, _os.PathLike) else v}"
                for k, v in value.items()]
    return _listed(value)


def _options(options):
    for key in ("observable", "state", "perturbation"):
        if key in options:
            options[key] = _listed(options[key])
    for key in ("observable_path", "state_path", "attribute"):
        if options.get(key) is not None:
            options[key] = _pairs(options[key])
    if options.get("out") is not None:
        options["out"] = _os.fsdecode(options["out"])
    return options


def _wrap(native, doc, thermo=False):
    keys = _INPUT_KEYS + (_THERMO_KEYS if thermo else ())

    def call(files, **options):
        options = _options(options)
        shared = {k: options.pop(k) for k in keys if k in options}
        out = native(_files(files), shared=shared, **options)
        return _tabulate(_json.loads(out))

    call.__name__ = native.__name__
    call.__qualname__ = native.__name__
    call.__doc__ = doc
    try:
        sig = _inspect.signature(native)
        params = [p for p in sig.parameters.values() if p.name != "shared"]
        params += [_inspect.Parameter(k, _inspect.Parameter.KEYWORD_ONLY, default=None)
                   for k in keys]
        call.__signature__ = sig.replace(parameters=params)
    except (ValueError, TypeError):  # pragma: no cover - older interpreters
        pass
    return call


levels = _wrap(
    _native.levels,
    """Level statistics of every selected sector: ``eigentherm levels FILE... --json``.

    Options: sector, window (default "0.25:0.75"), energy_window, symmetry_class
    ("orthogonal", "unitary", "auto"), memory ("6G"), unfold ("poly:5", "kernel:32",
    "kernel-energy:SIGMA"), unfold_degree, bins, sff_eta, thouless_tolerance, degeneracy_tol,
    min_levels, and the shared options: memory, the dataset paths energies_path,
    eigenvectors_path, layout, observable_path, state_path, hamiltonian_path (a path or, for
    observable_path/state_path, a dict {NAME: PATH}), attribute ({NAME: VALUE} or a list of
    "[FILE:]NAME=VALUE") and ensemble_by. Every function takes them.
    """,
)
diagonal = _wrap(
    _native.diagonal,
    """Diagonal matrix elements: ``eigentherm diagonal FILE... --json``.

    Options: observable (name or list; default every observable), sector, window (default
    "0.4:0.6"), energy_window, symmetry_class, predictions ("all", "window", "auto"), the
    thermal source thermo ("auto", "full", "kpm", "stored") with kpm_moments, kpm_vectors,
    kpm_seed, and the shared options.
    """,
    thermo=True,
)
offdiagonal = _wrap(
    _native.offdiagonal,
    """Off-diagonal matrix elements: ``eigentherm offdiagonal FILE... --json``.

    Options: observable, sector, window, energy_window, symmetry_class, omega_max, thermo,
    kpm_moments, kpm_vectors, kpm_seed, and the shared options.
    """,
    thermo=True,
)
quench = _wrap(
    _native.quench,
    """Quench dynamics: ``eigentherm quench FILE... --json``.

    Options: observable (at least one), state (SPEC or list, at least one: "stored:NAME",
    "index:K", "product:LETTERS", "product:x+"), times ("lin:T0:T1:N" or "log:T0:T1:N"),
    drop_weight, shell_width, min_window_weight, renormalise, sector, and the shared options.
    """,
)
scaling = _wrap(
    _native.scaling,
    """Finite-size scaling across files and sectors: ``eigentherm scaling FILE... --json``.

    Options: observable (at least one), sector, window, energy_window, levels_window,
    omega_max, symmetry_class, combine_sectors (bool), thermo, kpm_moments, kpm_vectors,
    kpm_seed, and the shared options.
    """,
    thermo=True,
)
study = _wrap(
    _native.study,
    """Every analysis: ``eigentherm study FILE... --json`` (``results.json``).

    With ``out=DIR`` the report folder is written as by the binary's ``--out DIR``; without,
    nothing is written. Options as for :func:`scaling`, plus out, state, times, drop_weight.
    ``provenance.command_line`` is this Python process's command line.
    """,
    thermo=True,
)

gauge = _wrap(
    _native.gauge,
    """Adiabatic gauge potential norm and fidelity susceptibility of each eigenstate:
    ``eigentherm gauge FILE... --perturbation NAME... --json``.

    Options: perturbation (name or list, at least one), sector, window (default "0.4:0.6"),
    energy_window, cutoff (an energy, or "K*spacing"), partners ("all", "window"), and the
    shared options.
    """,
)
entanglement = _wrap(
    _native.entanglement,
    """Entanglement entropy of each eigenstate for a cut of the chain:
    ``eigentherm entanglement FILE... --json``.

    Options: sector, window (default "0.4:0.6"), energy_window, cut (sites of subsystem A;
    default L/2), and the shared options.
    """,
)


def project(file, observable, *, return_window=False, **options):
    """The matrix elements ``A[i, j] = <lo+i|A|lo+j>`` of one observable between the states
    of a window (ascending energy order) as a W x W NumPy array (float64, or complex128 for
    complex data), projected by the library under the memory budget.

    Options: sector (required when the file holds several), window (default "0.4:0.6"),
    energy_window, memory (the W x W matrix must fit; otherwise :class:`Error`), and the
    dataset paths. With ``return_window=True`` returns ``(matrix, (lo, hi), energies)``:
    the window is states ``lo .. hi-1``. Peak memory is about twice the matrix (the
    library's and the array's copy).
    """
    options = _options(options)
    shared = {k: options.pop(k) for k in _INPUT_KEYS if k in options}
    matrix, window, energies = _native.project(
        _os.fsdecode(file), observable, shared=shared, **options
    )
    if return_window:
        return matrix, window, energies
    return matrix


def set_threads(n):
    """Worker threads of the products and parallel loops (the binary's ``--threads``); call
    once, before the first analysis of the process."""
    _native.set_threads(n)
