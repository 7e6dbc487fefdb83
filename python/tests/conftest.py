"""Shared fixtures of the Python module's tests: the eigentherm binary (to compare with its
``--json``), the repository's committed fixtures, and two small generated chains.

The binary is ``$EIGENTHERM_BIN``, else ``target/debug/eigentherm`` of the repository (or of
``$CARGO_TARGET_DIR``); ``scripts/test`` sets ``EIGENTHERM_BIN`` to the binary it built with
the same profile as the module, so both run the same compiled code.
"""

import json
import os
import pathlib
import subprocess

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]
FIXTURES = ROOT / "fixtures"


def _binary():
    if os.environ.get("EIGENTHERM_BIN"):
        return pathlib.Path(os.environ["EIGENTHERM_BIN"])
    target = pathlib.Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target"))
    return target / "debug" / "eigentherm"


BIN = _binary()


class Run:
    """One run of the binary: exit status, stdout, stderr."""

    def __init__(self, args):
        if not BIN.exists():
            pytest.fail(f"the eigentherm binary is missing: {BIN} (cargo build, or set EIGENTHERM_BIN)")
        p = subprocess.run([str(BIN), *map(str, args)], capture_output=True, text=True)
        self.code, self.stdout, self.stderr = p.returncode, p.stdout, p.stderr

    def json(self):
        assert self.code == 0, self.stderr
        return json.loads(self.stdout)

    def error_line(self):
        """The message after ``error: `` of the binary's one error line."""
        assert self.code != 0
        lines = [l for l in self.stderr.splitlines() if l.startswith("error: ")]
        assert len(lines) == 1, self.stderr
        return lines[0][len("error: "):]


@pytest.fixture(scope="session")
def cli():
    return Run


@pytest.fixture(scope="session")
def good():
    return FIXTURES / "good.h5"


@pytest.fixture(scope="session")
def chains(tmp_path_factory):
    """Mixed-field Ising chains of 8 and 10 sites (sectors even/odd), written by the binary's
    ``generate`` (the model's own tests check its spectra)."""
    d = tmp_path_factory.mktemp("chains")
    files = []
    for sites in (8, 10):
        out = d / f"mfi_L{sites}.h5"
        r = Run(["generate", "--model", "mixed-field-ising", "--sites", sites, "--out", out])
        assert r.code == 0, r.stderr
        files.append(out)
    return files


def strip(tree, keys):
    """``tree`` without the entries named in ``keys`` at any depth (run-dependent values:
    wall-clock timings, the command line)."""
    if isinstance(tree, dict):
        return {k: strip(v, keys) for k, v in tree.items() if k not in keys}
    if isinstance(tree, list):
        return [strip(v, keys) for v in tree]
    return tree
