"""Degenerate-set grouping and d compositions (models/levels.py)."""

import numpy as np
import pytest

from dsplit.models.levels import aom_sets, group_levels, set_energies

OCT = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)


def test_octahedral_sets():
    # Oh: t2g = {xy, xz, yz} below eg = {z², x²−y²} for eσ > (4/3)eπ (Figgis & Hitchman 2000 — from memory)
    sets = aom_sets(OCT, 1.0, 0.1)
    assert [s.degeneracy for s in sets] == [3, 2]
    assert set(sets[0].orbitals) == {"xy", "xz", "yz"}
    assert set(sets[1].orbitals) == {"z2", "x2-y2"}
    assert sets[1].composition["z2"] == pytest.approx(0.5)
    assert sum(sets[0].composition.values()) == pytest.approx(1.0)


def test_rotated_octahedron_sets_keep_pattern():
    # A rotated octahedron has the same 3 + 2 pattern (Oh is Oh in any frame; common practice),
    # but the t2g set now mixes all five real d orbitals.
    rot = np.linalg.qr(np.random.default_rng(3).normal(size=(3, 3)))[0]
    sets = aom_sets(OCT @ rot.T, 1.0, 0.1)
    assert [s.degeneracy for s in sets] == [3, 2]
    assert sets[0].energy == pytest.approx(0.4) and sets[1].energy == pytest.approx(3.0)
    assert len(sets[0].orbitals) > 3


def test_tolerance_and_order():
    # chaining within a tolerance, ascending sets (common practice)
    sets = group_levels(np.array([2.0, 1.0, 1.0 + 1e-9, 5.0, 2.0]))
    assert [(s.degeneracy, s.energy) for s in sets] == [(2, pytest.approx(1.0)), (2, 2.0), (1, 5.0)]
    assert [s.degeneracy for s in group_levels(np.array([1.0, 1.1, 3.0]), tol=0.2)] == [2, 1]
    e, g = set_energies(sets)
    assert list(g) == [2, 2, 1] and e[-1] == 5.0
