"""`dsplit build` end to end on the shipped demo inputs."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from dsplit.cli import main

INPUTS = sorted(p for p in (Path(__file__).parent.parent / "inputs").glob("*.toml")
                if not p.name.startswith("study-"))  # study files are tested in test_study_*


@pytest.mark.parametrize("spec", INPUTS, ids=[p.stem for p in INPUTS])
def test_demo_inputs_build(tmp_path, spec):
    out = tmp_path / "g.xyz"
    result = CliRunner().invoke(main, ["build", str(spec), "-o", str(out), "--json"])
    assert result.exit_code == 0, result.output
    summary = json.loads(result.output)
    for key in ("formula", "charge", "d_electrons", "multiplicities", "point_group", "exact_point_group",
                "metal_ligand_distances"):
        assert key in summary
    assert summary["multiplicities"] == sorted(summary["multiplicities"])
    assert out.exists()


def test_flags_without_spec_and_isomer_list(tmp_path):
    r = CliRunner().invoke(main, ["build", "--metal", "Co", "--oxidation-state", "3", "--geometry", "octahedral",
                                  "--ligands", "ammine=4,chlorido=2", "--isomers", "--json"])
    assert r.exit_code == 0, r.output
    assert sorted(row["isomer"] for row in json.loads(r.output)) == ["cis", "trans"]


def test_build_and_help_do_not_import_pyscf(tmp_path):
    # the speed rule of the project: `dsplit --help` and `dsplit build` never import PySCF
    spec = INPUTS[0]
    code = (
        "import sys; from dsplit.cli import main\n"
        f"sys.argv=['dsplit','build',{str(spec)!r},'-o',{str(tmp_path / 'x.xyz')!r},'--json']\n"
        "try:\n    main()\nexcept SystemExit:\n    pass\n"
        "assert not any(m == 'pyscf' or m.startswith('pyscf.') for m in sys.modules), 'pyscf imported'\n"
    )
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr


def test_ligand_library_listing():
    r = CliRunner().invoke(main, ["ligands", "--json"])
    rows = json.loads(r.output)
    keys = {row["key"] for row in rows}
    assert {"fluorido", "chlorido", "bromido", "iodido", "oxido", "hydroxido", "aqua", "ammine", "carbonyl",
            "cyanido", "isothiocyanato", "point"} <= keys


def test_tables_are_not_cut_when_output_is_piped(monkeypatch):
    # rich cuts cells to "…" at its 80-column fallback when stdout is not a terminal; a chemist
    # piping a table into a file must get whole cells (common practice for command-line tools)
    from dsplit.chem.ligands import library

    monkeypatch.delenv("COLUMNS", raising=False)  # an exported $COLUMNS is the user's choice and wins
    r = CliRunner().invoke(main, ["ligands"])
    assert r.exit_code == 0
    assert "…" not in r.output
    for lg in library().values():
        assert "…" not in lg.geometry_source + lg.role
        assert lg.key in r.output and lg.role in r.output
