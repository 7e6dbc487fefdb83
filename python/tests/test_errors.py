"""Bad input raises eigentherm.Error with exactly the message the binary prints after
``error: `` (and its exit status as ``exit_code``); the interpreter keeps running.
Source of the expected messages: the binary (common practice, no other source)."""

import pytest

import eigentherm
from conftest import FIXTURES

BAD = FIXTURES / "bad"


@pytest.mark.parametrize(
    "name",
    ["nan_energies.h5", "not_hdf5.h5", "no_sector.h5", "shape_vectors.h5", "int_energies.h5"],
)
def test_bad_file_raises_the_binary_message(cli, name):
    f = BAD / name
    r = cli(["levels", f, "--json"])
    with pytest.raises(eigentherm.Error) as e:
        eigentherm.levels(f)
    assert str(e.value) == r.error_line()
    assert e.value.exit_code == r.code


@pytest.mark.parametrize(
    "name", ["not_hermitian.h5", "shape_observable.h5", "csr_bad_index.h5", "csr_missing.h5",
             "string_observable.h5", "not_orthonormal.h5", "inf_vectors.h5"],
)
def test_bad_observable_raises_the_binary_message(cli, name):
    f = BAD / name
    r = cli(["diagonal", f, "--json"])
    with pytest.raises(eigentherm.Error) as e:
        eigentherm.diagonal(f)
    assert str(e.value) == r.error_line()
    assert e.value.exit_code == r.code


def test_bad_options_give_the_flag_messages(cli, good):
    cases = [
        (["levels", good, "--window", "0.9:0.1"], lambda: eigentherm.levels(good, window="0.9:0.1")),
        (["levels", good, "--unfold", "spline"], lambda: eigentherm.levels(good, unfold="spline")),
        (["levels", good, "--thouless-tolerance=-1"],
         lambda: eigentherm.levels(good, thouless_tolerance=-1.0)),
        (["levels", good, "--memory", "lots"], lambda: eigentherm.levels(good, memory="lots")),
        (["quench", good, "--observable", "sz"], lambda: eigentherm.quench(good, observable="sz")),
        (["levels", FIXTURES / "missing.h5"], lambda: eigentherm.levels(FIXTURES / "missing.h5")),
        (["gauge", good, "--perturbation", "sz", "--partners", "some"],
         lambda: eigentherm.gauge(good, perturbation="sz", partners="some")),
        (["entanglement", good, "--window", "0.7:0.2"],
         lambda: eigentherm.entanglement(good, window="0.7:0.2")),
    ]
    for args, call in cases:
        r = cli(args + ["--json"])
        with pytest.raises(eigentherm.Error) as e:
            call()
        assert str(e.value) == r.error_line(), args
    # still alive, and a good call still works
    assert eigentherm.levels(good, sector="chain")["sectors"][0]["name"] == "chain"


def test_wrong_python_types_raise_type_errors(good):
    with pytest.raises(TypeError):
        eigentherm.levels(good, bins="many")
    with pytest.raises(TypeError):
        eigentherm.levels(good, no_such_option=1)
