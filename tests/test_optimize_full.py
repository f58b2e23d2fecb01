"""Full (ASE BFGS) optimisation, the ASE calculator's forces, and the optimize command's exits.

Outside references:
- forces are minus the energy gradient: central differences F ≈ −[E(x+h) − E(x−h)]/2h
  (ase.calculators.test.calculate_numerical_forces does exactly this), and the energy
  change along a path is minus the work of the forces (trapezoid rule, error O(h³));
- ASE's unit system: eV and Å (ase.units, CODATA);
- a full optimisation from an ideal Td start on a symmetric surface stays Td (the
  gradient of an invariant function is itself symmetric — Cotton, Chemical
  Applications of Group Theory, 3rd ed., ch. 4 idea of invariance; from memory), and
  its minimum is stationary along the breathing coordinate too (calculus).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

from dsplit.cli import main
from dsplit.spec import MethodSpec

TIF4 = dict(metal="Ti", geometry="tetrahedral", ligands={"fluorido": 4}, oxidation_state=4, bond_length=1.74)
HF_MINIMAL = MethodSpec(theory="HF", basis="sto-3g", solvent="none", density_fitting=False)


def _setup(cx, method=HF_MINIMAL):
    from dsplit.qc.setup import resolve_method

    return resolve_method(cx, method, threads=1)


def test_full_keeps_td_and_is_a_breathing_minimum(tmp_path):
    from dsplit.geometry.build import ComplexRequest, build_complex
    from dsplit.qc.optimize import GRADIENT_THRESHOLD, ligand_sets, optimize_full, set_gradient

    cx = build_complex(ComplexRequest(name="tif4", **TIF4))
    full = optimize_full(cx, _setup(cx), tmp_path / "full")
    assert full.converged, full.failure
    assert full.start_group == "Td" and full.final_group == "Td" and full.symmetry_kept
    assert full.trajectory.is_file() and full.energy_change < 0
    d = list(full.steps[-1].distances.values())
    assert max(d) - min(d) < 1e-3
    # the unconstrained minimum is also stationary along the symmetric breathing coordinate
    from dsplit.qc.ase_calculator import nuclear_gradient

    g = set_gradient(full.final, ligand_sets(full.final), nuclear_gradient(full.calculation))
    assert abs(g[0]) <= GRADIENT_THRESHOLD


def test_ase_calculator_forces_match_central_differences(build, tmp_path):
    """Open-shell gradient (UHF doublet, d1 VF4) against ASE's own central differences."""
    from ase.calculators.test import calculate_numerical_forces

    from dsplit.qc.ase_calculator import DsplitCalculator

    cx = build("V", "tetrahedral", {"fluorido": 4}, oxidation_state=4, bond_length=1.80)
    setup = _setup(cx, MethodSpec(theory="HF", basis="sto-3g", solvent="none", density_fitting=False))
    atoms = cx.atoms.copy()
    rng = np.random.default_rng(7)
    atoms.positions[1:] += rng.normal(scale=0.04, size=(4, 3))  # break the symmetry: non-trivial forces
    atoms.calc = DsplitCalculator(cx, setup, tmp_path)  # later SCFs start from the previous checkpoint
    analytic = atoms.get_forces()[2, 2]  # one fluorine, z (eV/Å); each component costs two SCFs
    numeric = calculate_numerical_forces(atoms, eps=2e-3, iatoms=[2], icarts=[2])[0, 0]
    assert abs(analytic) > 0.05  # really non-zero
    assert analytic == pytest.approx(numeric, abs=2e-3)  # FD error O(eps²) + SCF noise ~1e-5 eV/Å


def test_pcm_forces_integrate_to_the_energy_change(build, tmp_path):
    """PCM water: E(x + h·d) − E(x) = −∫F·d ds ≈ −h·(F(x) + F(x + h·d))·d/2 (trapezoid, error O(h³)).

    Two PCM SCFs check every force component along one random direction d at once.
    """
    from dsplit.qc.ase_calculator import DsplitCalculator

    cx = build("Ti", "tetrahedral", {"fluorido": 4}, oxidation_state=4, bond_length=1.80)
    setup = _setup(cx, MethodSpec(theory="HF", basis="sto-3g", solvent="water", density_fitting=False))
    atoms = cx.atoms.copy()
    rng = np.random.default_rng(11)
    atoms.positions[1:] += rng.normal(scale=0.04, size=(4, 3))
    atoms.calc = DsplitCalculator(cx, setup, tmp_path)
    d = rng.normal(size=atoms.positions.shape)
    d /= np.linalg.norm(d)
    h = 0.01  # Å
    e0, f0 = atoms.get_potential_energy(), atoms.get_forces()
    atoms.positions += h * d
    e1, f1 = atoms.get_potential_energy(), atoms.get_forces()
    work = -h * float(np.sum((f0 + f1) * d)) / 2  # eV
    assert abs(e1 - e0) > 1e-3  # eV: a real energy change
    assert e1 - e0 == pytest.approx(work, abs=5e-5)  # eV; trapezoid error ~h³·E‴/12 ≪ 1e-5 eV


def _write_spec(tmp_path, **extra_method) -> str:
    method = {"theory": '"HF"', "basis": '"sto-3g"', "solvent": '"none"', "density_fitting": "false",
              **extra_method}
    body = "\n".join(f"{k} = {v}" for k, v in method.items())
    path = tmp_path / "tif4.toml"
    path.write_text('name = "tif4"\n[complex]\nmetal = "Ti"\noxidation_state = 4\ngeometry = "tetrahedral"\n'
                    f'ligands = {{ fluorido = 4 }}\nbond_length = 1.78\n[method]\n{body}\n')
    return str(path)


def test_step_limit_is_reported_with_exit_3(tmp_path):
    out = tmp_path / "run"
    res = CliRunner().invoke(main, ["optimize", _write_spec(tmp_path), "--max-steps", "1", "--out", str(out),
                                            "--quiet", "--threads", "1"])
    assert res.exit_code == 3, res.output
    doc = json.loads((out / "result.json").read_text())
    opt = doc["optimization"]
    assert opt["converged"] is False and opt["steps"] == 1 and "not converged" in opt["failure"]
    assert (out / "opt.traj").is_file() and (out / "geometry.xyz").is_file() and (out / "spec.json").is_file()


def test_full_refused_without_solvent_gradient(tmp_path, monkeypatch):
    import dsplit.qc.optimize as opt

    monkeypatch.setattr(opt, "solvent_gradient_available", lambda setup: setup.solvent.is_gas_phase)
    out = tmp_path / "run"
    res = CliRunner().invoke(main, ["optimize", _write_spec(tmp_path, solvent='"water"'), "--full", "--out", str(out)])
    assert res.exit_code == 2 and "--full" in res.output
    assert not out.exists()


def test_pcm_gradient_is_available_in_this_pyscf():
    """PySCF ≥ 2.5 ships pyscf.solvent.grad.pcm (the PCM object's nuc_grad_method)."""
    from dsplit.qc.optimize import solvent_gradient_available
    from dsplit.qc.solvents import resolve_solvent

    class _S:
        solvent = resolve_solvent("water", 0)

    assert solvent_gradient_available(_S())


def test_point_donors_refused(tmp_path):
    spec = tmp_path / "pc.toml"
    spec.write_text('name = "pc"\n[complex]\nmetal = "Ti"\noxidation_state = 3\ngeometry = "octahedral"\n'
                    'ligands = { point = 6 }\n[method]\nbasis = "sto-3g"\n')
    res = CliRunner().invoke(main, ["optimize", str(spec), "--out", str(tmp_path / "run")])
    assert res.exit_code == 2 and "complex.ligands" in res.output
