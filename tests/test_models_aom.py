"""AOM special cases from the general matrix (models/aom.py), checked against textbook values."""

import numpy as np
import pytest

from dsplit.models.aom import D_ORBITALS, aom_matrix
from dsplit.models.levels import aom_sets

OCT = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
TET = np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]], float)
SQP = OCT[:4]
TBP = np.array([[0, 0, 1], [0, 0, -1], [1, 0, 0], [-0.5, np.sqrt(3) / 2, 0], [-0.5, -np.sqrt(3) / 2, 0]])
ES, EP = 1.3, 0.27


def diag(directions):
    v = aom_matrix(directions, ES, EP)
    assert np.allclose(v, np.diag(np.diag(v)), atol=1e-12)  # real d orbitals diagonalise these fields
    return dict(zip(D_ORBITALS, np.diag(v)))


def test_octahedral():
    # Oh: eg = 3eσ, t2g = 4eπ (Schäffer & Jørgensen 1965; Figgis & Hitchman 2000, ch. 5 — from memory)
    d = diag(OCT)
    assert d["z2"] == pytest.approx(3 * ES) and d["x2-y2"] == pytest.approx(3 * ES)
    for k in ("xy", "xz", "yz"):
        assert d[k] == pytest.approx(4 * EP)


def test_tetrahedral():
    # Td: e = 8/3 eπ, t2 = 4/3 eσ + 8/9 eπ (Figgis & Hitchman 2000, ch. 5 — from memory)
    d = diag(TET)
    assert d["z2"] == pytest.approx(8 / 3 * EP) and d["x2-y2"] == pytest.approx(8 / 3 * EP)
    for k in ("xy", "xz", "yz"):
        assert d[k] == pytest.approx(4 / 3 * ES + 8 / 9 * EP)


def test_square_planar():
    # D4h square plane: x²−y² = 3eσ, z² = eσ, xy = 4eπ, xz/yz = 2eπ (Figgis & Hitchman 2000 — from memory)
    d = diag(SQP)
    assert d["x2-y2"] == pytest.approx(3 * ES)
    assert d["z2"] == pytest.approx(ES)
    assert d["xy"] == pytest.approx(4 * EP)
    assert d["xz"] == pytest.approx(2 * EP) and d["yz"] == pytest.approx(2 * EP)


def test_trigonal_bipyramid_sigma():
    # D3h, σ only: z² = 11/4 eσ, (xy, x²−y²) = 9/8 eσ, (xz, yz) = 0 (Figgis & Hitchman 2000 — from memory)
    sets = aom_sets(TBP, 1.0, 0.0)
    assert [s.degeneracy for s in sets] == [2, 2, 1]
    assert [s.energy for s in sets] == pytest.approx([0.0, 9 / 8, 11 / 4], abs=1e-12)
    assert set(sets[0].orbitals) == {"xz", "yz"} and set(sets[1].orbitals) == {"xy", "x2-y2"}


@pytest.mark.parametrize("es,ep", [(1.0, 0.0), (1.0, 0.25), (0.8, -0.1)])
def test_four_ninths_from_general_matrix(es, ep):
    # Δt/Δo = 4/9 for the same ligand and distance (Figgis & Hitchman 2000, ch. 2/5 — from memory);
    # in the AOM it holds for any eσ, eπ since Δt = (4/9)(3eσ − 4eπ).
    wo = np.linalg.eigvalsh(aom_matrix(OCT, es, ep))
    wt = np.linalg.eigvalsh(aom_matrix(TET, es, ep))
    d_o = np.mean(wo[3:]) - np.mean(wo[:3])
    d_t = np.mean(wt[2:]) - np.mean(wt[:2])
    assert d_o == pytest.approx(3 * es - 4 * ep)
    assert d_t / d_o == pytest.approx(4 / 9)
