"""Every bad input: one error line naming the field, exit code 2, nothing written.

The allowed ranges are the project's own rules (issue text); the chemistry facts
(d-block membership, oxidation states, spin parity) are textbook facts, from memory.
"""

from __future__ import annotations

import os
import subprocess
import sys
import textwrap

import pytest
from click.testing import CliRunner

from dsplit.cli import main

GOOD = {
    "metal": '"Fe"', "oxidation_state": "2", "geometry": '"octahedral"', "ligands": "{ aqua = 6 }",
}


def _spec(tmp_path, extra_top: str = "", **complex_fields) -> str:
    fields = {**GOOD, **complex_fields}
    body = "\n".join(f"{k} = {v}" for k, v in fields.items() if v is not None)
    text = f'name = "bad-one"\n{extra_top}\n[complex]\n{body}\n'
    path = tmp_path / "spec.toml"
    path.write_text(text)
    return str(path)


CASES = [
    ("unknown element", {"metal": '"Xq"'}, "complex.metal"),
    ("not d-block", {"metal": '"Na"'}, "complex.metal"),
    ("unknown ligand", {"ligands": "{ unobtainium = 6 }"}, "complex.ligands"),
    ("impossible oxidation state", {"oxidation_state": "9"}, "complex.oxidation_state"),
    ("wrong ligand count", {"ligands": "{ aqua = 4 }"}, "complex.ligands"),
    ("no such isomer", {"ligands": "{ aqua = 4, chlorido = 2 }", "isomer": '"fac"'}, "complex.isomer"),
    ("zero distance", {"bond_length": "0.0"}, "complex.bond_length"),
    ("distance too long", {"bond_length": "4.5"}, "complex.bond_length"),
    ("distance too short", {"bond_length": "0.9"}, "complex.bond_length"),
    ("atoms collide", {"geometry": '"trigonal-bipyramidal"', "ligands": "{ ammine = 5 }", "bond_length": "1.0"},
     "complex.bond_length"),
    ("multiplicity parity", {"multiplicity": "2"}, "complex.multiplicity"),
    ("multiplicity too high", {"multiplicity": "7"}, "complex.multiplicity"),
    ("unknown key", {"colour": '"blue"'}, "complex.colour"),
    ("wrong type", {"oxidation_state": '"two"'}, "complex.oxidation_state"),
    ("unknown geometry", {"geometry": '"hexagonal"'}, "complex.geometry"),
    ("configuration misfit", {"configuration": '"t2g^3 eg^2"'}, "complex.configuration"),
]


@pytest.mark.parametrize("label,fields,field", CASES, ids=[c[0] for c in CASES])
def test_bad_complex_fields(tmp_path, label, fields, field):
    spec = _spec(tmp_path, **fields)
    out = tmp_path / "out.xyz"
    result = CliRunner().invoke(main, ["build", spec, "-o", str(out)])
    assert result.exit_code == 2, result.output
    lines = [ln for ln in result.output.strip().splitlines() if ln]
    assert len(lines) == 1 and field in lines[0]
    assert not out.exists()
    assert sorted(os.listdir(tmp_path)) == ["spec.toml"]


def test_malformed_toml(tmp_path):
    path = tmp_path / "spec.toml"
    path.write_text('name = "x"\n[complex\nmetal = "Fe"\n')
    result = CliRunner().invoke(main, ["build", str(path)])
    assert result.exit_code == 2 and "malformed TOML" in result.output


def test_unknown_top_level_and_method_keys(tmp_path):
    spec = _spec(tmp_path, extra_top="[solver]\nfast = true\n")
    assert CliRunner().invoke(main, ["build", spec]).exit_code == 2
    path = tmp_path / "m.toml"
    path.write_text(textwrap.dedent('''
        [complex]
        metal = "Fe"
        oxidation_state = 2
        geometry = "octahedral"
        ligands = { aqua = 6 }
        [method]
        theory = "B3LYP"
        speed = "max"
    '''))
    result = CliRunner().invoke(main, ["build", str(path)])
    assert result.exit_code == 2 and "method.speed" in result.output


@pytest.mark.parametrize("name", ["../escape", "a/b", "/abs", "..", "<b>x</b>"])
def test_names_that_would_escape_are_refused(tmp_path, name):
    path = tmp_path / "n.toml"
    path.write_text(f'name = "{name}"\n[complex]\nmetal = "Fe"\noxidation_state = 2\n'
                    'geometry = "octahedral"\nligands = {{ aqua = 6 }}\n')
    result = CliRunner().invoke(main, ["build", str(path)])
    assert result.exit_code == 2 and "name" in result.output


def test_exit_code_through_the_console_script(tmp_path):
    spec = _spec(tmp_path, metal='"Na"')
    proc = subprocess.run([sys.executable, "-m", "dsplit.cli", "build", spec], capture_output=True, text=True,
                          cwd=tmp_path)
    assert proc.returncode == 2
    assert proc.stderr.count("\n") == 1 and "complex.metal" in proc.stderr
    assert sorted(os.listdir(tmp_path)) == ["spec.toml"]
