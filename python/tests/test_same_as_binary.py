"""Each function returns what ``eigentherm COMMAND FILE... --json`` prints for the same files
and options: the whole JSON tree, every float equal to the last bit (``to_json`` undoes the
module's two conversions, lists of numbers to arrays and tables of records to ``Table``).

Source of the expected values: the binary itself, built from the same library (common
practice for bindings, no other source); the physics of each figure is checked by the Rust
test suite.
"""

import math

import numpy as np

import eigentherm

# run-dependent entries, left out of both trees: wall-clock times of the passes and the
# command line recorded in a study's provenance
VOLATILE = {"timing", "command_line"}


def same_tree(a, b, path="$"):
    """a and b equal, floats compared bit for bit (``float.hex``)."""
    assert type(a) is type(b) or (isinstance(a, (int, float)) and isinstance(b, (int, float))), (
        f"{path}: {type(a).__name__} != {type(b).__name__}"
    )
    if isinstance(a, dict):
        assert list(a) == list(b), f"{path}: keys {list(a)} != {list(b)}"
        for k in a:
            same_tree(a[k], b[k], f"{path}.{k}")
    elif isinstance(a, list):
        assert len(a) == len(b), f"{path}: {len(a)} != {len(b)} entries"
        for i, (x, y) in enumerate(zip(a, b)):
            same_tree(x, y, f"{path}[{i}]")
    elif isinstance(a, float) or isinstance(b, float):
        assert float(a).hex() == float(b).hex(), f"{path}: {a!r} != {b!r}"
    else:
        assert a == b, f"{path}: {a!r} != {b!r}"


def check(cli, args, result):
    from conftest import strip

    expected = strip(cli(args + ["--json"]).json(), VOLATILE)
    got = strip(eigentherm.to_json(result), VOLATILE)
    same_tree(got, expected)
    return expected


def test_levels_equals_the_binary_to_the_last_bit(cli, good):
    r = eigentherm.levels(good)
    expected = check(cli, ["levels", good], r)
    # the acceptance figure itself, named: mean_r of every sector, bit for bit
    for s, e in zip(r["sectors"], expected["sectors"]):
        assert isinstance(s["mean_r"], float)
        assert s["mean_r"].hex() == e["mean_r"].hex()
    # tables of records come as NumPy columns
    hist = r["sectors"][0]["ratio_histogram"]
    assert isinstance(hist, eigentherm.Table) and hist.rows == 20
    assert all(isinstance(v, np.ndarray) for v in hist.values())


def test_levels_options_map_to_the_flags(cli, good):
    r = eigentherm.levels(
        good, sector="chain", window="0.1:0.9", unfold="kernel:24", bins=10, sff_eta=0.4,
        thouless_tolerance=0.1,
    )
    check(
        cli,
        ["levels", good, "--sector", "chain", "--window", "0.1:0.9", "--unfold", "kernel:24",
         "--bins", "10", "--sff-eta", "0.4", "--thouless-tolerance", "0.1"],
        r,
    )


def test_diagonal_and_offdiagonal_equal_the_binary(cli, good):
    r = eigentherm.diagonal(good, sector="chain", observable=["sz", "dense_x"])
    check(cli, ["diagonal", good, "--sector", "chain", "--observable", "sz",
                      "--observable", "dense_x"], r)
    r = eigentherm.offdiagonal(good, sector="chain", observable="hop", omega_max=2.5,
                               window="0.2:0.8")
    check(cli, ["offdiagonal", good, "--sector", "chain", "--observable", "hop",
                      "--omega-max", "2.5", "--window", "0.2:0.8"], r)


def test_quench_equals_the_binary_and_gives_arrays(cli, chains):
    f = chains[0]
    r = eigentherm.quench(f, sector="even", observable="sz_site", state="stored:neel_z",
                          times="lin:0:20:41")
    check(cli, ["quench", f, "--sector", "even", "--observable", "sz_site",
                      "--state", "stored:neel_z", "--times", "lin:0:20:41"], r)


def test_scaling_and_study_equal_the_binary(cli, chains, tmp_path):
    r = eigentherm.scaling(chains, observable="sz_site")
    check(cli, ["scaling", *chains, "--observable", "sz_site"], r)
    out = tmp_path / "report"
    r = eigentherm.study(chains, observable="sz_site", out=out)
    check(cli, ["study", *chains, "--observable", "sz_site", "--out",
                      tmp_path / "report-cli"], r)
    assert (out / "results.json").exists()


def test_null_becomes_nan_and_back():
    # JSON null (how the binary writes a NaN figure) is nan inside a float array and None
    # again through to_json (common practice, no source)
    arr = eigentherm._tabulate([1.5, None, 2])
    assert arr.dtype == np.float64 and math.isnan(arr[1])
    assert eigentherm.to_json(arr) == [1.5, None, 2.0]


def test_gauge_equals_the_binary(cli, chains):
    f = chains[0]
    r = eigentherm.gauge(f, perturbation="sz_site", sector="even", cutoff="12*spacing",
                         partners="window")
    check(cli, ["gauge", f, "--perturbation", "sz_site", "--sector", "even", "--cutoff",
                "12*spacing", "--partners", "window"], r)
    r = eigentherm.gauge(chains, perturbation=["sz_site", "sx_site"])
    check(cli, ["gauge", *chains, "--perturbation", "sz_site", "--perturbation", "sx_site"], r)


def test_entanglement_equals_the_binary(cli, tmp_path):
    # an S^z = 0 sector with its basis configurations (entanglement needs them)
    f = tmp_path / "xxz8.h5"
    r = cli(["generate", "--model", "xxz", "--sites", 8, "--sz", 0, "--reflection", "break",
             "--out", f])
    assert r.code == 0, r.stderr
    check(cli, ["entanglement", f], eigentherm.entanglement(f))
    check(cli, ["entanglement", f, "--cut", 3, "--window", "0.2:0.8"],
          eigentherm.entanglement(f, cut=3, window="0.2:0.8"))


def test_shared_options_equal_the_binary_flags(cli, chains, tmp_path):
    f = chains[0]
    # the thermal source (diagonal, offdiagonal, scaling, study)
    r = eigentherm.diagonal(f, observable="sz_site", thermo="kpm", kpm_moments=64,
                            kpm_vectors=4, kpm_seed=3)
    check(cli, ["diagonal", f, "--observable", "sz_site", "--thermo", "kpm", "--kpm-moments",
                "64", "--kpm-vectors", "4", "--kpm-seed", "3"], r)
    # ensemble grouping, attributes and a state at another path
    r = eigentherm.levels(f, ensemble_by="none", attribute={"model": "renamed"})
    check(cli, ["levels", f, "--ensemble-by", "none", "--attribute", "model=renamed"], r)
    r = eigentherm.quench(f, sector="even", observable="sz_site", state="stored:alt",
                          state_path={"alt": "states/neel_z"}, times="lin:0:5:6")
    check(cli, ["quench", f, "--sector", "even", "--observable", "sz_site", "--state",
                "stored:alt", "--state-path", "alt=states/neel_z", "--times", "lin:0:5:6"], r)


def test_thermal_options_are_refused_where_there_is_no_thermal_source(good):
    import pytest

    with pytest.raises(TypeError):
        eigentherm.levels(good, thermo="kpm")
    with pytest.raises(TypeError):
        eigentherm.quench(good, observable="sz", state="index:0", kpm_moments=8)
