"""The three estimators on a small fast complex.

Outside facts: for d1 the single d–d band measures Δ (one-electron case, any ligand-field
textbook); high-spin d5 has no spin-allowed d–d band (Orgel diagrams, any textbook).
"""

from __future__ import annotations

import pytest

from dsplit.analysis.orbitals import build_orbital_table
from dsplit.analysis.splitting import choose_transition, estimate_splitting, state_estimator
from dsplit.qc.engine import run_calculation
from dsplit.qc.setup import resolve_method
from dsplit.spec import MethodSpec, Spec
from tests.conftest import make


def _calc(cx, tmp, theory="HF", basis="sto-3g", solvent="none"):
    setup = resolve_method(cx, MethodSpec(theory=theory, basis=basis, solvent=solvent, grid_level=1), threads=2)
    return run_calculation(cx, setup, tmp, stability=False)


@pytest.fixture(scope="module")
def vf4(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("vf4")
    cx = make("V", "tetrahedral", {"fluorido": 4}, oxidation_state=4)
    calc = _calc(cx, tmp, theory="B3LYP")
    table = build_orbital_table(calc)
    spec = Spec(name="vf4", complex=None)
    return cx, calc, table, estimate_splitting(spec, cx, calc, table, tmp)


def test_three_estimators_run_and_are_consistent(vf4):
    cx, calc, table, out = vf4
    assert calc.ok
    split = out["splitting"]
    # state: Δ is exactly the difference of the two configuration energies it came from
    st = split["state"]
    assert st["configuration_verified"] and st["excited_configuration"] == "e^0 t2^1"
    assert st["delta_eV"] > 0
    from dsplit.models.units import hartree_to_ev

    assert abs(st["delta_eV"] - hartree_to_ev(st["energy_excited_hartree"] - st["energy_ground_hartree"])) < 1e-9
    # excitation: the d–d roots are symmetry-labelled and their hole/particle are e → t2
    ex = split["excitation"]
    dd = [r for r in ex["roots"] if r["ligand_field_band"]]
    assert dd and all(r["symmetry"] and r["d_d"] for r in dd)
    assert any("e→t2" in p for p in dd[0]["pairs"])
    assert abs(ex["delta_eV"] - dd[0]["energy_eV"]) < 0.05
    # orbital: open shell, so restricted-open value with α/β beside and a warning
    orb = split["orbital"]
    assert set(orb["per_spin"]) == {"alpha", "beta"} and "warning" in orb
    assert orb["delta_eV"] is not None and orb["delta_eV"] > 0
    # d1: the first band measures Δ directly (one-electron case)
    assert out["band_meaning"]["measures_delta_directly"]


def test_checks_have_verdicts(vf4):
    _, _, _, out = vf4
    names = {c["name"]: c["verdict"] for c in out["checks"]}
    assert names["set order"] == "agrees"  # Td: e below t2 (textbook)
    # d1 in Td is a 2E term: its open-shell density is less symmetric than the framework, so the
    # sets split and the degeneracy check is not applicable (Jahn–Teller; common practice)
    assert names["degeneracy pattern"] == "not applicable"
    assert set(names.values()) <= {"agrees", "differs", "not applicable"}


def test_no_spin_allowed_band_for_high_spin_d5(tmp_path):
    # high-spin d5 (6A1) has no spin-allowed d–d band (Orgel diagram, textbook): state estimator withheld
    cx = make("Fe", "tetrahedral", {"chlorido": 4}, oxidation_state=3)
    calc = _calc(cx, tmp_path)
    assert calc.ok and choose_transition(calc) is None


# The spectrochemical order of the state estimator (F⁻ < H2O < NH3 < CN⁻ for Cr(III)) is checked by
# benchmarks/spectrochemical_order.py: minimal-basis HF, the only method cheap enough for the
# default run, puts F⁻ above H2O (3.59 vs 2.96 eV, HF/STO-3G PCM) and fails for cyanide.


def test_failed_unrestricted_state_is_redone_restricted_open(vf4, tmp_path, monkeypatch):
    # The unrestricted excited SCF is made to fail; the estimator must redo the ΔSCF restricted-open
    # and report E_RO(excited) − E_RO(ground).  For d1 there is one unpaired electron in both states,
    # so unrestricted and restricted-open ΔSCF differ only by spin polarisation: within 0.15 eV
    # (common practice).
    from dataclasses import replace

    from dsplit.analysis import splitting
    from dsplit.models.units import hartree_to_ev

    cx, calc, _, out = vf4
    u_delta = out["splitting"]["state"]["delta_eV"]
    real = splitting.run_excited

    def failing_unrestricted(ground, *args, **kw):
        run = real(ground, *args, **kw)
        return replace(run, converged=False) if ground.unrestricted else run

    monkeypatch.setattr(splitting, "run_excited", failing_unrestricted)
    ro = splitting.restricted_open_ground(calc, tmp_path)
    assert ro[0] is not None and ro[1].endswith("ROKS")
    st = splitting.state_estimator(calc, choose_transition(calc), tmp_path, restricted_open=ro)
    assert st["configuration_verified"] and "restricted open" in st["method"]
    assert abs(st["energy_ground_hartree"] - ro[0].energy_hartree) < 1e-12
    assert abs(st["delta_eV"] - hartree_to_ev(st["energy_excited_hartree"] - st["energy_ground_hartree"])) < 1e-9
    assert abs(st["delta_eV"] - u_delta) < 0.15
    # without a restricted-open ground the failure stays a failure: no value
    st2 = splitting.state_estimator(calc, choose_transition(calc), tmp_path)
    assert st2["delta_eV"] is None and not st2["converged"]


def test_hole_under_ligand_levels_is_flagged(tmp_path):
    # cis-[CrCl2(NH3)4]+ (B3LYP/STO-3G, gas phase): the unrestricted α t2g hole lies under filled Cl 3p
    # levels of its own Cs block (measured: −0.287 Eh under −0.249/−0.246 Eh), the situation whose
    # unrestricted ΔSCF swaps hole and ligand orbitals at def2-SVP.  The estimator must find those
    # orbitals (filled, above the hole, outside the d manifold, same block) and say so with its value.
    from dsplit.analysis import splitting
    from dsplit.qc.targeting import orbital_symmetries

    cx = make("Cr", "octahedral", {"chlorido": 2, "ammine": 4}, oxidation_state=3, isomer="cis")
    calc = _calc(cx, tmp_path, theory="B3LYP")
    assert calc.ok and calc.unrestricted
    tr = choose_transition(calc)
    buried = splitting.hole_under_filled_ligands(calc, tr)
    e, occ = calc.mf.mo_energy[tr.spin], calc.mf.mo_occ[tr.spin]
    syms = orbital_symmetries(calc.mf, calc.mf.mo_coeff[tr.spin])
    assert buried and all(e[m] > e[tr.hole] and occ[m] == 1 and syms[m] == syms[tr.hole] for m in buried)
    assert not set(buried) & {m for p in calc.picks[tr.spin] for m in p.mo_indices}
    st = splitting.state_estimator(calc, tr, tmp_path)
    assert any(n.startswith("caution: the unrestricted hole lies under") for n in st["notes"])


def test_top_hole_is_not_flagged(vf4):
    from dsplit.analysis import splitting

    _, calc, _, out = vf4
    assert splitting.hole_under_filled_ligands(calc, choose_transition(calc)) == []
    assert not any(n.startswith("caution") for n in out["splitting"]["state"]["notes"])
