"""Symmetric optimisation: ligand sets, rigid moves that keep the group, and a real minimum.

Outside references:
- orbits of ligands under the point group (trans-[MA4B2] D4h: one A set of 4, one B set
  of 2; cis C2v: A trans to A, A trans to B, B; trigonal bipyramid D3h: axial ×2,
  equatorial ×3; with NH3 the H atoms lower the group, so monatomic A/B are used) —
  Cotton, Chemical Applications of Group Theory, 3rd ed., ch. 3 (from memory).
- a minimum: zero first derivative and higher energy on both sides (calculus); the
  3-point scan checks the optimiser against the energies themselves.
"""

from __future__ import annotations

import numpy as np
import pytest

from dsplit.qc.optimize import GRADIENT_THRESHOLD, ligand_sets, optimize_symmetric, positions_at, set_distances
from dsplit.spec import MethodSpec
from dsplit.symmetry.detect import detect_point_group

# TiF4: d0, neutral, closed shell; HF/STO-3G is a few seconds per step (common practice: tiny test model)
TIF4 = dict(metal="Ti", geometry="tetrahedral", ligands={"fluorido": 4}, oxidation_state=4, bond_length=1.74)
HF_MINIMAL = MethodSpec(theory="HF", basis="sto-3g", solvent="none", density_fitting=False)


def _labels(cx):
    return sorted((s.label, len(s.members)) for s in ligand_sets(cx))


def test_trans_and_cis_sets(build):
    trans = build("Co", "octahedral", {"fluorido": 4, "chlorido": 2}, oxidation_state=3, isomer="trans")
    assert trans.exact_point_group == "D4h"
    assert _labels(trans) == [("chlorido", 2), ("fluorido", 4)]
    cis = build("Co", "octahedral", {"fluorido": 4, "chlorido": 2}, oxidation_state=3, isomer="cis")
    assert cis.exact_point_group == "C2v"
    assert _labels(cis) == [("chlorido", 2), ("fluorido (trans to chlorido)", 2), ("fluorido (trans to fluorido)", 2)]


def test_trigonal_bipyramid_has_axial_and_equatorial(build):
    cx = build("V", "trigonal-bipyramidal", {"fluorido": 5}, oxidation_state=5)
    assert _labels(cx) == [("fluorido (axial)", 2), ("fluorido (equatorial)", 3)]


def test_rigid_moves_keep_the_point_group(build):
    cx = build("Co", "octahedral", {"fluorido": 4, "chlorido": 2}, oxidation_state=3, isomer="cis")
    sets = ligand_sets(cx)
    r = set_distances(cx, sets) + np.array([0.11, -0.07, 0.23])[: len(sets)]
    pos = positions_at(cx, sets, r)
    assert detect_point_group(cx.atoms.get_chemical_symbols(), pos).name == cx.exact_point_group == "C2v"
    for s, rk in zip(sets, r):
        for m in s.members:
            donor = cx.ligands[m].atom_indices[0]
            assert np.linalg.norm(pos[donor]) == pytest.approx(rk, abs=1e-9)


@pytest.fixture(scope="module")
def tif4_opt(tmp_path_factory):
    from dsplit.geometry.build import ComplexRequest, build_complex
    from dsplit.qc.setup import resolve_method

    cx = build_complex(ComplexRequest(name="tif4", **TIF4))
    setup = resolve_method(cx, HF_MINIMAL, threads=1)
    folder = tmp_path_factory.mktemp("tif4-sym")
    return cx, setup, optimize_symmetric(cx, setup, folder)


def test_symmetric_optimum_is_a_minimum(tif4_opt):
    from dsplit.qc.engine import run_calculation

    cx, setup, res = tif4_opt
    assert res.converged, res.failure
    assert res.steps[-1].max_gradient <= GRADIENT_THRESHOLD
    assert res.symmetry_kept and res.final_group == "Td"
    assert res.energy_change < 0
    assert res.trajectory is not None and res.trajectory.is_file()
    assert any("started from checkpoint" in n for n in res.calculation.notes)  # density reused step to step
    sets = ligand_sets(cx)
    r = set_distances(res.final, sets)
    e0 = res.steps[-1].energy_hartree
    h = 0.02  # Å; expected rise ½·k·h² ≈ 1e-3 Eh for k ≈ 4 × 0.5 Eh/Å² (common practice: M–F stretch)
    from ase.io import read

    frames = read(str(res.trajectory), index=":")
    assert len(frames) == len(res.steps)
    for sign in (-1.0, 1.0):
        moved = positions_at(res.final, sets, r + sign * h)
        from dsplit.qc.ase_calculator import complex_at

        calc = run_calculation(complex_at(res.final, moved), setup, start_from=res.calculation.chk_path,
                               stability=False)
        assert calc.ok
        assert calc.energy_hartree > e0 + 1e-5, (sign, calc.energy_hartree - e0)


def test_seeded_start_reaches_the_same_minimum(tif4_opt, tmp_path):
    """Seeding from a neighbour's distances and Hessian (spin ladder reuse) keeps the minimum.

    Check: the seeded run, started from the unseeded result's distance moved by +0.05 Å (a
    neighbouring functional's optimum is this close: measured on the iron(II) aqua ladder), ends
    at the same distance within what the gradient threshold allows (|Δr| ≤ threshold / k with
    k ≥ 1 Eh/Å² for four M–F stretches — common practice, as in the scan above), and its start
    Hessian is the one handed over.
    """
    cx, setup, res = tif4_opt
    assert res.hessian is not None and np.all(np.linalg.eigvalsh(res.hessian) > 0)
    (label, r_opt), = res.steps[-1].distances.items()
    seeded = optimize_symmetric(cx, setup, tmp_path, start_distances={label: r_opt + 0.05},
                                start_hessian=res.hessian)
    assert seeded.converged, seeded.failure
    assert abs(seeded.steps[0].distances[label] - (r_opt + 0.05)) < 1e-12
    assert any("start Hessian from a neighbouring optimisation" in n for n in seeded.notes)
    assert abs(seeded.steps[-1].distances[label] - r_opt) <= 2 * GRADIENT_THRESHOLD / 1.0
