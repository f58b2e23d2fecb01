"""Spin-state ladder: a cheap d2 case end to end, contamination rule, units, bad input, exits.

Outside references:
- S(S+1) for 2S+1 = 1, 2, 3, 5: 0, 3/4, 2, 6 (any quantum-mechanics text, from memory);
- 1 kcal = 4.184 kJ exactly (thermochemical calorie, from memory; SI brochure note);
  1 eV ≈ 8065.54 cm⁻¹ and 1 Eh ≈ 2625.50 kJ/mol (CODATA 2018, from memory);
- tetrahedral dⁿ complexes are high spin (Δt ≈ 4/9 Δo is below the pairing energy);
  for e² two electrons in a degenerate set, the triplet lies below the closed-shell
  singlet (Hund's first rule) — Shriver & Atkins, Inorganic Chemistry, ligand-field
  chapter (from memory).
- at fixed geometry, more exact exchange favours high spin (common practice); HF has
  100 % and BHANDHLYP 50 % exact exchange (the functionals' definitions; PySCF/libxc).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from dsplit.cli import main
from dsplit.models.filling import spin_contamination
from dsplit.api.spin import parse_multiplicities, relative_energies

VF4 = ('name = "vf4"\n[complex]\nmetal = "V"\noxidation_state = 3\ngeometry = "tetrahedral"\n'
       'ligands = { fluorido = 4 }\nbond_length = 1.85\n[method]\ntheory = "HF"\nbasis = "sto-3g"\n'
       'density_fitting = false\ngrid_level = 1\n')  # coarse DFT grid: a test of trends, not of numbers


def _spec(tmp_path, text=VF4, extra: str = "") -> str:
    p = tmp_path / "vf4.toml"
    p.write_text(text + extra)
    return str(p)


@pytest.mark.parametrize("mult,expected", [(1, 0.0), (2, 0.75), (3, 2.0), (5, 6.0)])
def test_expected_spin_square(mult, expected):
    assert spin_contamination(expected, mult)[:2] == (pytest.approx(expected), pytest.approx(0.0))


def test_contamination_threshold():
    # 10 % of S(S+1), at least 0.1 (the rule stated in dsplit.api.spin)
    assert spin_contamination(2.15, 3)[2] is False
    assert spin_contamination(2.25, 3)[2] is True
    assert spin_contamination(0.84, 2)[2] is False
    assert spin_contamination(0.90, 2)[2] is True


def test_units():
    r = relative_energies(0.01)
    assert r["relative_kJmol"] / r["relative_kcalmol"] == pytest.approx(4.184, rel=1e-12)
    assert r["relative_kJmol"] == pytest.approx(26.255, abs=1e-3)
    assert r["relative_cm1"] / r["relative_eV"] == pytest.approx(8065.54, rel=1e-5)


def test_multiplicity_list_checked():
    from dsplit.errors import InputError

    assert parse_multiplicities("5,1", 6) == [1, 5]
    assert parse_multiplicities(None, 6) == [1, 3, 5]
    with pytest.raises(InputError, match="--multiplicities"):
        parse_multiplicities("1,4", 6)


@pytest.mark.parametrize("args,field", [(["--multiplicities", "2"], "--multiplicities"),
                                        (["--functionals", "HF,NOT-A-FUNCTIONAL"], "--functionals"),
                                        (["--multiplicities", "one"], "--multiplicities")])
def test_bad_input_exit_2_before_any_scf(tmp_path, args, field):
    out = tmp_path / "run"
    res = CliRunner().invoke(main, ["spin-states", _spec(tmp_path), "--out", str(out), *args])
    assert res.exit_code == 2, res.output
    assert field in res.output
    assert not out.exists() and not list(tmp_path.glob(".run*"))


@pytest.fixture(scope="module")
def vf4_ladder(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("vf4")
    out = tmp / "run"
    res = CliRunner().invoke(main, ["spin-states", _spec(tmp), "--functionals", "HF,BHANDHLYP", "--out", str(out),
                                    "--quiet", "--threads", "1"])
    return res, out


def test_d2_tetrahedral_ladder(vf4_ladder):
    res, out = vf4_ladder
    assert res.exit_code == 0, res.output
    doc = json.loads((out / "result.json").read_text())
    for f in ("spec.json", "geometry.xyz"):
        assert (out / f).is_file()
    states = doc["spin_states"]
    assert [(s["theory"], s["multiplicity"]) for s in states] == [("HF", 1), ("HF", 3), ("BHANDHLYP", 1), ("BHANDHLYP", 3)]
    assert all(s["verified"] and s["converged"] and s["configuration_verified"] for s in states)
    assert all(s["configuration"] == "e^2 t2^0" for s in states)
    assert doc["ground_multiplicity"] == 3 and doc["ground_theory"] == "HF"
    assert doc["checks"][0]["verdict"] == "agrees"
    hf3 = states[1]
    assert hf3["relative_kJmol"] == 0.0 and states[0]["relative_kJmol"] > 0
    assert hf3["spin_square_expected"] == pytest.approx(2.0)
    assert abs(hf3["spin_square_deviation"]) < 0.1 and hf3["spin_contaminated"] is False
    assert set(hf3["distances"]) == {"fluorido"} and hf3["distances"]["fluorido"] == pytest.approx(1.85)
    # reuse: every state after the first starts from a neighbour's checkpoint
    assert all(any("started from checkpoint" in n for n in s["notes"]) for s in states[1:])
    spread = {r["theory"]: r for r in doc["functional_spread"]}
    assert spread["HF"]["exact_exchange"] == 1.0 and spread["BHANDHLYP"]["exact_exchange"] == 0.5
    # more exact exchange favours high spin: ΔE(HS − LS) lower with HF than with BHANDHLYP
    assert spread["HF"]["delta_hs_ls_kJmol"] < spread["BHANDHLYP"]["delta_hs_ls_kJmol"] < 0


def test_unconverged_state_withholds_ground_and_exits_3(tmp_path):
    out = tmp_path / "run"
    res = CliRunner().invoke(main, ["spin-states", _spec(tmp_path, extra="max_cycles = 1\n"), "--out", str(out),
                                    "--quiet", "--threads", "1"])
    assert res.exit_code == 3, res.output
    doc = json.loads((out / "result.json").read_text())
    assert doc["ground_multiplicity"] is None and "ground_withheld" in doc
    assert any(not s["verified"] and s["relative_kJmol"] is None for s in doc["spin_states"])
    assert doc["checks"][0]["verdict"] == "not applicable"


MNF4 = ('name = "mnf4"\n[complex]\nmetal = "Mn"\noxidation_state = 3\ngeometry = "tetrahedral"\n'
        'ligands = { fluorido = 4 }\nbond_length = 1.80\n[method]\ntheory = "HF"\nbasis = "3-21g"\n'
        'density_fitting = false\n')


def test_d4_tetrahedral_is_high_spin(tmp_path):
    """d4 in Td: high spin e²t2² (5) below low spin e⁴ (1) — a real Δ-vs-pairing choice."""
    out = tmp_path / "run"
    res = CliRunner().invoke(main, ["spin-states", _spec(tmp_path, MNF4), "--multiplicities", "1,5", "--out", str(out),
                                    "--quiet", "--threads", "1"])
    assert res.exit_code == 0, res.output
    doc = json.loads((out / "result.json").read_text())
    by_m = {s["multiplicity"]: s for s in doc["spin_states"]}
    assert by_m[1]["configuration"] == "e^4 t2^0" and by_m[5]["configuration"] == "e^2 t2^2"
    assert doc["ground_multiplicity"] == 5 and by_m[1]["relative_kJmol"] > 0
    assert doc["spin_prediction"]["multiplicity"] == 5 and doc["checks"][0]["verdict"] == "agrees"
    assert by_m[5]["spin_square_expected"] == pytest.approx(6.0) and by_m[5]["spin_contaminated"] is False
