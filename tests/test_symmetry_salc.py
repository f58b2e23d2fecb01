"""Ligand σ/π SALC symmetries and metal s, p, d irreps.

Expected decompositions: F. A. Cotton, *Chemical Applications of Group Theory*,
3rd ed., ch. 8 (hybrid orbitals and MO theory of ML_n) — from memory; the metal
columns follow from the x, y, z / quadratic-function columns of the character
tables in its Appendix IIA — from memory.
"""
from __future__ import annotations

import os
import sys

import numpy as np
import pytest

sys.path.insert(0, os.path.dirname(__file__))
from test_symmetry_geometry import polyhedron  # noqa: E402

from dsplit.symmetry import detect_point_group, ligand_salcs  # noqa: E402


def salcs(kind):
    s, p = polyhedron(kind)
    return ligand_salcs(detect_point_group(s, p), p[0], p[1:])


@pytest.mark.parametrize("kind,sigma,pi", [
    ("octahedral", {"a1g": 1, "eg": 1, "t1u": 1}, {"t1g": 1, "t2g": 1, "t1u": 1, "t2u": 1}),
    ("tetrahedral", {"a1": 1, "t2": 1}, {"e": 1, "t1": 1, "t2": 1}),
    ("square-planar", {"a1g": 1, "b1g": 1, "eu": 1},
     {"a2g": 1, "b2g": 1, "eg": 1, "a2u": 1, "b2u": 1, "eu": 1}),
    ("trigonal-bipyramidal", {"a1'": 2, "e'": 1, "a2''": 1}, None),
    ("square-pyramidal", {"a1": 2, "b1": 1, "e": 1}, None),
    ("linear", {"a1g": 1, "a2u": 1}, {"e1g": 1, "e1u": 1}),   # σg+ + σu+ ; πg + πu
])
def test_ligand_sets(kind, sigma, pi):
    r = salcs(kind)
    assert r.sigma == sigma
    if pi is not None:
        assert r.pi == pi
    n = len(polyhedron(kind)[1]) - 1
    assert np.isclose(r.sigma_chars[0], n) and np.isclose(r.pi_chars[0], 2 * n)  # dimensions


def test_nonbonding():
    # Oh: ligand π t1g and t2u have no metal s/p/d partner; Td: π t1 (Cotton ch. 8, from memory)
    assert salcs("octahedral").nonbonding_pi == ["t1g", "t2u"]
    assert salcs("octahedral").nonbonding_sigma == []
    assert salcs("tetrahedral").nonbonding_pi == ["t1"]
    assert salcs("square-planar").nonbonding_pi == ["a2g", "b2u"]


@pytest.mark.parametrize("kind,d", [
    ("octahedral", {"eg": 1, "t2g": 1}), ("tetrahedral", {"e": 1, "t2": 1}),
    ("square-planar", {"a1g": 1, "b1g": 1, "b2g": 1, "eg": 1}),
    ("trigonal-bipyramidal", {"a1'": 1, "e'": 1, "e''": 1}),
    ("square-pyramidal", {"a1": 1, "b1": 1, "b2": 1, "e": 1}),
])
def test_metal_d(kind, d):
    assert salcs(kind).metal["d"] == d


def test_octahedral_salc_vectors():
    # a1g SALC = (1/√6) Σ σ_i; eg spans (2z² − x² − y²)- and (x² − y²)-like combinations
    r = salcs("octahedral")
    a1g = r.sigma_vectors["a1g"]
    assert a1g.shape == (1, 6) and np.allclose(np.abs(a1g), 1 / np.sqrt(6))
    eg = r.sigma_vectors["eg"]
    x2y2 = np.array([1, 1, -1, -1, 0, 0]) / 2.0          # donors ±x, ±y, ±z
    z2 = np.array([-1, -1, -1, -1, 2, 2]) / np.sqrt(12)
    proj = eg.T @ eg
    assert np.allclose(proj @ x2y2, x2y2) and np.allclose(proj @ z2, z2)
    t1u = r.sigma_vectors["t1u"]
    assert t1u.shape == (3, 6) and np.allclose(t1u @ t1u.T, np.eye(3))
