"""The calculation engine converges and verifies d configurations (small basis, small complexes).

Expected configurations are textbook ligand-field facts (e.g. Housecroft & Sharpe, Inorganic
Chemistry, d-block chapters — from memory): TiCl4 d0; Cr(CO)6 low-spin d6 t2g^6; VF4 d1 e^1;
[CrF6]3− d3 t2g^3; [FeCl4]− high-spin d5 e^2 t2^3.
"""

from __future__ import annotations

import numpy as np
import pytest

from dsplit.qc.engine import run_calculation
from dsplit.qc.ladder import STABILITY_TOL
from dsplit.qc.setup import resolve_method
from dsplit.spec import MethodSpec
from tests.conftest import make


def _run(cx, theory="HF", basis="sto-3g", solvent="none", tmp=None, **kw):
    setup = resolve_method(cx, MethodSpec(theory=theory, basis=basis, solvent=solvent, grid_level=1), threads=1)
    return run_calculation(cx, setup, tmp, **kw)


CASES = [
    ("Ti", 4, "tetrahedral", {"chlorido": 4}, "HF", "e^0 t2^0"),
    ("Cr", 0, "octahedral", {"carbonyl": 6}, "B3LYP", "t2g^6 eg^0"),
    ("V", 4, "tetrahedral", {"fluorido": 4}, "B3LYP", "e^1 t2^0"),
    ("Cr", 3, "octahedral", {"fluorido": 6}, "HF", "t2g^3 eg^0"),
    ("Fe", 3, "tetrahedral", {"chlorido": 4}, "HF", "e^2 t2^3"),
]


@pytest.mark.parametrize("metal,ox,geometry,ligands,theory,conf", CASES,
                         ids=[f"{c[0]}{c[1]}-{c[2]}" for c in CASES])
def test_converges_and_verifies(tmp_path, metal, ox, geometry, ligands, theory, conf):
    cx = make(metal, geometry, ligands, oxidation_state=ox)
    calc = _run(cx, theory=theory, tmp=tmp_path)
    assert calc.converged, calc.notes
    assert calc.configuration_verified, (calc.configuration_found, calc.notes)
    assert calc.configuration_found == conf
    assert calc.stability_lowest is not None
    if conf != "e^1 t2^0":  # non-degenerate ground terms are stable minima; the d1 Td 2E term is
        # orbitally degenerate and so has flat or negative directions (Jahn–Teller; common practice)
        assert calc.stability_lowest > -STABILITY_TOL
    ss, _ = calc.spin_square()
    s = (cx.multiplicity - 1) / 2
    assert abs(ss - s * (s + 1)) < 0.1  # little spin contamination for these cases (common practice)
    assert (tmp_path / "scf.log").exists() and (tmp_path / "scf.chk").exists()


def test_excited_target_is_steered_and_verified(tmp_path):
    # d1 VF4 asked for the excited configuration t2^1: the SCF lands in e^1 first and is steered
    cx = make("V", "tetrahedral", {"fluorido": 4}, oxidation_state=4, configuration="e^0 t2^1")
    calc = _run(cx, theory="B3LYP", tmp=tmp_path)
    assert calc.ok, (calc.configuration_found, calc.notes)
    assert calc.configuration_found == "e^0 t2^1"
    assert calc.targeting in ("irrep_nelec", "maximum-overlap")
    assert any("landed in e^1 t2^0" in n for n in calc.notes)
    ground = _run(make("V", "tetrahedral", {"fluorido": 4}, oxidation_state=4), theory="B3LYP")
    assert calc.energy_hartree > ground.energy_hartree  # an excited configuration lies above


def test_checkpoint_restart_takes_fewer_cycles(tmp_path):
    cx = make("Ti", "tetrahedral", {"chlorido": 4}, oxidation_state=4)
    first = _run(cx, tmp=tmp_path / "a")
    again = _run(cx, tmp=tmp_path / "b", start_from=first.chk_path)
    assert any("started from checkpoint" in n for n in again.notes)
    assert sum(r.cycles for r in again.rungs) < sum(r.cycles for r in first.rungs)
    assert abs(again.energy_hartree - first.energy_hartree) < 1e-6
    # another geometry of the same atoms: the stored orbitals are re-orthonormalised, not thrown away
    stretched = make("Ti", "tetrahedral", {"chlorido": 4}, oxidation_state=4,
                     bond_length=cx.metal_ligand_distances()["chlorido"] + 0.15)
    moved = _run(stretched, tmp=tmp_path / "c", start_from=first.chk_path)
    assert moved.ok
    assert any("started from checkpoint" in n for n in moved.notes), moved.notes


def test_pyscf_reference_energies():
    # Published reference values, from memory: Szabo & Ostlund, Modern Quantum Chemistry (1989):
    # H2 at R = 1.4 bohr, STO-3G: E(RHF) = −1.1167 Eh (§3.5.2); H2O STO-3G at R(OH) = 1.809 bohr,
    # ∠HOH = 104.52°: E(RHF) = −74.963 Eh (Table 3.13).  Tolerance 1 mEh (the tables give 3–4 decimals).
    from pyscf import gto, scf

    h2 = gto.M(atom="H 0 0 0; H 0 0 1.4", unit="Bohr", basis="sto-3g", verbose=0)
    assert abs(scf.RHF(h2).kernel() - (-1.1167)) < 1e-3
    r, a = 1.809, np.radians(104.52 / 2)
    h2o = gto.M(atom=[("O", (0, 0, 0)), ("H", (r * np.sin(a), 0, r * np.cos(a))),
                      ("H", (-r * np.sin(a), 0, r * np.cos(a)))], unit="Bohr", basis="sto-3g", verbose=0)
    assert abs(scf.RHF(h2o).kernel() - (-74.963)) < 1e-3


def test_ladder_climbs_when_diis_runs_out(tmp_path):
    # A plain-DIIS budget below what this open-shell run needs: DIIS must fail and a later rung
    # (level shift + damping, Newton, fractional start) converge to the same state.
    cx = make("Fe", "tetrahedral", {"chlorido": 4}, oxidation_state=3)
    free = _run(cx)
    need = free.rungs[0].cycles
    assert free.rungs[0].rung == "diis" and free.rungs[0].converged
    setup = resolve_method(cx, MethodSpec(theory="HF", basis="sto-3g", solvent="none", max_cycles=max(3, need // 2)),
                           threads=1)
    capped = run_calculation(cx, setup, tmp_path)
    assert not capped.rungs[0].converged
    assert capped.ok
    assert any(r.converged and r.rung != "diis" for r in capped.rungs)
    assert abs(capped.energy_hartree - free.energy_hartree) < 1e-6


def test_reorthonormalised_checkpoint_density_counts_electrons(tmp_path):
    # Löwdin orthonormalisation restores the electron count (Löwdin, J. Chem. Phys. 18, 365 (1950))
    from dsplit.qc.engine import reorthonormalised_density
    from dsplit.qc.setup import build_mole, make_mean_field

    cx = make("Ti", "tetrahedral", {"chlorido": 4}, oxidation_state=4)
    first = _run(cx, tmp=tmp_path / "a")
    stretched = make("Ti", "tetrahedral", {"chlorido": 4}, oxidation_state=4,
                     bond_length=cx.metal_ligand_distances()["chlorido"] + 0.3)
    setup = resolve_method(stretched, MethodSpec(theory="HF", basis="sto-3g", solvent="none"))
    mol, _ = build_mole(stretched, setup)
    mf = make_mean_field(mol, stretched, setup, restricted=True)
    dm = reorthonormalised_density(mf, first.chk_path)
    assert dm is not None and dm.shape == (mol.nao_nr(),) * 2
    assert abs(np.trace(dm @ mol.intor("int1e_ovlp")) - mol.nelectron) < 1e-8
    other = make("Ti", "tetrahedral", {"fluorido": 4}, oxidation_state=4)  # other atoms: does not fit
    mol2, _ = build_mole(other, setup)
    assert reorthonormalised_density(make_mean_field(mol2, other, setup, restricted=True), first.chk_path) is None


def test_failed_rung_hands_on_its_smallest_gradient_orbitals(monkeypatch):
    # A DIIS rung stopped after two cycles whose |g| rose (1.8 → 2.1 measured): the next rung must
    # start from the cycle with the smallest orbital gradient, not from the last one.
    from dsplit.qc import ladder
    from dsplit.qc.setup import build_mole, make_mean_field

    cx = make("Fe", "tetrahedral", {"chlorido": 4}, oxidation_state=3)
    setup = resolve_method(cx, MethodSpec(theory="HF", basis="sto-3g", solvent="none"), threads=1)
    mol, _ = build_mole(cx, setup, 6)
    seen: list[tuple[float, np.ndarray, np.ndarray]] = []
    record = ladder._BestSoFar.record

    def spy(self, envs):
        seen.append((float(envs["norm_gorb"]), envs["mo_coeff"], envs["mo_occ"]))
        record(self, envs)

    monkeypatch.setattr(ladder._BestSoFar, "record", spy)
    starts: list[float] = []
    mf = make_mean_field(mol, cx, setup, restricted=False)
    mf, records = ladder.run_ladder(
        mf, None, progress=lambda rung, cycle, e, de: starts.append(e) if rung == "level-shift" and cycle == 1 else None,
        rungs=("diis", "level-shift"), cycle_caps={"diis": 2})
    assert records[0].rung == "diis" and not records[0].converged and records[1].converged
    diis_cycles = seen[:2]
    best = min(diis_cycles, key=lambda s: s[0])
    assert best is not diis_cycles[-1]  # the case this test is about: the gradient rose in the last cycle
    # the level-shift rung's first cycle, redone by hand from the best DIIS orbitals, gives the same energy
    ref = make_mean_field(mol, cx, setup, restricted=False)
    ref.level_shift, ref.damp, ref.max_cycle = 0.3, 0.3, 1
    ref.kernel(ref.make_rdm1(best[1], best[2]))
    assert abs(starts[0] - ref.e_tot) < 1e-8


def test_converged_rung_records_the_gradient_of_its_last_cycle():
    # The recorded |g| of a converged rung is taken from its last SCF cycle instead of a fresh Fock
    # build; it must agree with the gradient of the final orbitals to well below PySCF's convergence
    # threshold on |g| (√conv_tol, PySCF's default conv_tol_grad; pyscf.scf.hf.kernel).
    from dsplit.qc import ladder
    from dsplit.qc.setup import build_mole, make_mean_field

    cx = make("Ti", "tetrahedral", {"chlorido": 4}, oxidation_state=4)
    setup = resolve_method(cx, MethodSpec(theory="HF", basis="sto-3g", solvent="none"), threads=1)
    mol, _ = build_mole(cx, setup)
    mf, records = ladder.run_ladder(make_mean_field(mol, cx, setup, restricted=True), None, rungs=("diis",))
    assert records[-1].converged
    fresh = ladder._grad_norm(mf)
    threshold = np.sqrt(mf.conv_tol)
    assert records[-1].gradient_norm < threshold and fresh < threshold
    assert abs(records[-1].gradient_norm - fresh) < 0.1 * threshold
