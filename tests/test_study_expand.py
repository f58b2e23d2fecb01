"""Study files: expansion, dropped combinations with reasons, bad input, the dry-run plan (no SCF)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from dsplit.errors import InputError
from dsplit.study.expand import expand, task_name
from dsplit.study.studyfile import load_study

ROOT = Path(__file__).resolve().parent.parent

BASE = """
[base]
name = "b"
[base.complex]
metal = "V"
oxidation_state = 3
geometry = "octahedral"
ligands = { fluorido = 6 }
[base.method]
theory = "HF"
basis = "sto-3g"
solvent = "none"
"""


def study(tmp_path, vary: str, head: str = 'name = "s"') -> Path:
    p = tmp_path / "study.toml"
    p.write_text(f"{head}\n{BASE}\n[vary]\n{vary}\n")
    return p


def test_all_multiplicities_follow_electron_count(tmp_path):
    plan = expand(load_study(study(tmp_path, 'metals = ["V:3", "Mn:2", "Ti:4"]\nmultiplicities = "all"')))
    mults = {}
    for t in plan.tasks:
        mults.setdefault(t.axes["metals"], []).append(int(t.axes["multiplicities"]))
    # 2S+1 allowed for d2: 1, 3; d5: 2, 4, 6; d0: 1 (Hund/Pauli counting, textbook, from memory)
    assert mults == {"V:3": [1, 3], "Mn:2": [2, 4, 6], "Ti:4": [1]}
    assert len({t.run_id for t in plan.tasks}) == len(plan.tasks) == 6
    assert {t.name for t in plan.tasks} == {"s-v3", "s-mn2", "s-ti4"}


def test_invalid_combinations_are_dropped_with_reasons(tmp_path):
    plan = expand(load_study(study(tmp_path, 'geometries = ["octahedral", "tetrahedral"]\n'
                                             'multiplicities = [1, 3, 4]\n'
                                             'methods = ["HF/sto-3g", "NOSUCHFUNCTIONAL/sto-3g"]')))
    assert [(t.axes["geometries"], t.axes["multiplicities"]) for t in plan.tasks] == [("octahedral", "1"),
                                                                                     ("octahedral", "3")]
    reasons = [d.reason for d in plan.dropped]
    assert any("tetrahedral" in r for r in reasons)  # six ligands cannot be tetrahedral
    assert any(r.startswith("complex.multiplicity") for r in reasons)  # d2 cannot be a quartet
    assert any("NOSUCHFUNCTIONAL" in r.upper() for r in reasons)
    assert len(plan.tasks) + len(plan.dropped) == 2 * 3 * 2


@pytest.mark.parametrize("vary, field", [
    ('colours = ["red"]', "vary.colours"),
    ("ligands = []", "vary.ligands"),
    ('multiplicities = "some"', "vary.multiplicities"),
    ('metals = [""]', "vary.metals"),
    ('geometries = ["tetrahedral"]', "vary"),  # every combination dropped: empty expansion
])
def test_bad_study_files(tmp_path, vary, field):
    with pytest.raises(InputError) as exc:
        expand(load_study(study(tmp_path, vary)))
    assert exc.value.field == field


def test_bad_top_level_and_name(tmp_path):
    with pytest.raises(InputError, match="unknown top-level key"):
        load_study(study(tmp_path, "", head='name = "s"\nspeed = 3'))
    with pytest.raises(InputError, match="name"):
        load_study(study(tmp_path, "", head='name = "../up"'))


def test_names_are_bounded_slugs():
    from dsplit.spec import slug_ok

    long = task_name("x" * 70, ["ammine2-chlorido4", "trigonal-bipyramidal"])
    assert len(long) <= 80 and slug_ok(long)
    assert long != task_name("x" * 70, ["ammine2-chlorido4", "trigonal-prismatic"])
    assert slug_ok(task_name("s", ["6-31g*", "a..b"]))


def test_duplicate_values_are_one_task(tmp_path):
    plan = expand(load_study(study(tmp_path, "multiplicities = [3, 3]")))
    assert len(plan.tasks) == 1 and "listed twice" in plan.dropped[0].reason


def test_dry_run_shows_plan_and_writes_nothing(tmp_path):
    from dsplit.cli.archive import study_cmd

    arch = tmp_path / "arch"
    demo = ROOT / "inputs" / "study-ti-colour-screen.toml"
    r = CliRunner().invoke(study_cmd, [str(demo), "--archive", str(arch), "--dry-run"])
    assert r.exit_code == 0, r.output
    assert "8 run(s)" in r.output and "dropped" in r.output and "tetrahedral takes 4" in r.output
    assert not arch.exists()
    r = CliRunner().invoke(study_cmd, [str(demo), "--archive", str(arch), "--dry-run", "--json"])
    doc = json.loads(r.stdout)
    # 2 metals × 2 ligand sets × 2 methods; tetrahedral takes 4 ligands, not 6 (common practice)
    assert len(doc["tasks"]) == 8 and len(doc["dropped"]) == 8


def test_unknown_study_file_and_resume_without_record(tmp_path):
    from dsplit.cli.archive import study_cmd

    r = CliRunner().invoke(study_cmd, [str(tmp_path / "none.toml"), "--archive", str(tmp_path / "a")])
    assert r.exit_code == 2
    r = CliRunner().invoke(study_cmd, [str(study(tmp_path, "")), "--archive", str(tmp_path / "a"), "--resume"])
    assert r.exit_code == 2 and "no earlier run" in r.output
    (tmp_path / "plainfile").write_text("")
    r = CliRunner().invoke(study_cmd, [str(study(tmp_path, "")), "--archive", str(tmp_path / "plainfile")])
    assert r.exit_code == 2 and "is a file" in r.output


def test_per_ligand_distances_follow_the_ligand_set(tmp_path):
    # a distance given per ligand stays with that ligand; a new ligand gets the builder's default
    p = tmp_path / "study.toml"
    p.write_text('name = "s"\n' + BASE.replace('ligands = { fluorido = 6 }',
                                               'ligands = { fluorido = 6 }\nbond_length = { fluorido = 1.93 }')
                 + '\n[vary]\nligands = [{ fluorido = 6 }, { chlorido = 6 }, { fluorido = 4, chlorido = 2 }]\n')
    specs = {t.axes["ligands"]: t.spec for t in expand(load_study(p)).tasks}
    assert specs["fluorido:6"]["complex"]["bond_length"] == {"fluorido": 1.93}
    assert "bond_length" not in specs["chlorido:6"]["complex"]
    assert specs["chlorido:2+fluorido:4"]["complex"]["bond_length"] == {"fluorido": 1.93}
