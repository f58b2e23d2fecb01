"""`dsplit compute` refuses bad method input before any SCF: exit 2, nothing written.

The rules are the project's own (issue text); that 6-31G has no platinum functions is a fact of
the Pople basis family (basis-set exchange listings: 6-31G covers H–Zn), common practice.
"""

from __future__ import annotations

import os

import pytest
from click.testing import CliRunner

from dsplit.cli import main

BASE = ["compute", "--metal", "Ti", "--oxidation-state", "4", "--geometry", "octahedral", "--ligands",
        "fluorido=6", "--quiet"]

CASES = [
    ("basis lacks element", ["--metal", "Pt", "--oxidation-state", "4", "--basis", "6-31g"], "method.basis"),
    ("unknown basis", ["--basis", "no-such-basis"], "method.basis"),
    ("unknown functional", ["--theory", "B3LYPX"], "method.theory"),
    ("unknown solvent", ["--solvent", "unobtainol"], "method.solvent"),
    ("negative dielectric", ["--solvent", "-3"], "method.solvent"),
    ("impossible multiplicity", ["--multiplicity", "3"], "complex.multiplicity"),
    ("memory too small", ["--memory", "10"], "--memory"),
]


@pytest.mark.parametrize("label,extra,field", CASES, ids=[c[0] for c in CASES])
def test_compute_bad_input(tmp_path, label, extra, field):
    out = tmp_path / "run"
    result = CliRunner().invoke(main, BASE + extra + ["--out", str(out)])
    assert result.exit_code == 2, result.output
    lines = [ln for ln in result.output.strip().splitlines() if ln.strip()]
    assert len(lines) == 1 and field in lines[0], result.output
    assert os.listdir(tmp_path) == []


def test_configuration_that_does_not_fit(tmp_path):
    spec = tmp_path / "s.toml"
    spec.write_text('name = "x"\n[complex]\nmetal = "Ti"\noxidation_state = 3\ngeometry = "octahedral"\n'
                    'ligands = { fluorido = 6 }\nconfiguration = "t2g^1 eg^1"\n')
    result = CliRunner().invoke(main, ["compute", str(spec), "--out", str(tmp_path / "run"), "--quiet"])
    assert result.exit_code == 2 and "complex.configuration" in result.output
    assert sorted(os.listdir(tmp_path)) == ["s.toml"]
