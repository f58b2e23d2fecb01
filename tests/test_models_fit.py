"""AOM fits (models/fit.py) to levels built from textbook closed forms, and honest failure modes."""

import numpy as np
import pytest

from dsplit.models.aom import aom_levels
from dsplit.models.fit import expand_sets, fit_aom

OCT = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
TET = np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]], float)
SQP = OCT[:4]


def test_square_planar_recovers_both():
    # Levels from the textbook square-planar AOM expressions x²−y² = 3eσ, z² = eσ, xy = 4eπ,
    # xz/yz = 2eπ (Figgis & Hitchman 2000 — from memory), shifted by an arbitrary constant.
    es, ep = 0.9, 0.2
    levels = np.array([3 * es, es, 4 * ep, 2 * ep, 2 * ep]) - 7.0
    fit = fit_aom(SQP, levels)
    assert fit.separable and fit.note == ""
    assert fit.e_sigma[0] == pytest.approx(es, abs=1e-8) and fit.e_pi[0] == pytest.approx(ep, abs=1e-8)
    assert fit.rms < 1e-10


def test_octahedral_only_delta_is_determined():
    # Oh gives one number, Δo = 3eσ − 4eπ (Figgis & Hitchman 2000 — from memory):
    # eσ and eπ are not separable; the fit must say so and reproduce Δo.
    delta = 1.7
    fit = fit_aom(OCT, expand_sets([-0.4 * delta, 0.6 * delta], [3, 2]))
    assert not fit.separable
    assert "e_pi" in fit.note and len(fit.determined) == 1
    combo, value = fit.determined[0]
    # the determined combination is proportional to 3eσ − 4eπ
    assert combo["e_sigma[0]"] / combo["e_pi[0]"] == pytest.approx(-3 / 4)
    assert 3 * fit.e_sigma[0] - 4 * fit.e_pi[0] == pytest.approx(delta)
    assert fit.fixed == {"e_pi[0]": 0.0} and fit.rms < 1e-10


def test_octahedral_with_fixed_e_pi():
    # Fixing eπ makes Oh separable: eσ = (Δo + 4eπ)/3 (same source)
    fit = fit_aom(OCT, expand_sets([-0.4, 0.6], [3, 2]), fix_e_pi=0.1)
    assert fit.separable
    assert fit.e_sigma[0] == pytest.approx((1.0 + 0.4) / 3)


def test_tetrahedral_lowest_reference():
    # Td e = 8/3 eπ, t2 = 4/3 eσ + 8/9 eπ (same source): again only Δt is determined.
    es, ep = 1.2, 0.3
    levels = expand_sets([8 / 3 * ep, 4 / 3 * es + 8 / 9 * ep], [2, 3])
    fit = fit_aom(TET, levels, reference="lowest", fix_e_pi=ep)
    assert fit.separable and fit.e_sigma[0] == pytest.approx(es)
    assert fit.predicted == pytest.approx(levels - levels.min(), abs=1e-10)


def test_two_types_trans_octahedron():
    # trans-MA4B2 (D4h): xy = 4eπA, xz/yz = 2eπA + 2eπB, z² = eσA + 2eσB, x²−y² = 3eσA
    # (AOM sums, Figgis & Hitchman 2000 — from memory): 3 level differences, 4 parameters.
    esa, epa, esb, epb = 1.0, 0.2, 0.6, 0.1
    levels = np.array([4 * epa, 2 * epa + 2 * epb, 2 * epa + 2 * epb, esa + 2 * esb, 3 * esa])
    types = ["A"] * 4 + ["B"] * 2
    loose = fit_aom(OCT, levels, types)
    assert not loose.separable and len(loose.determined) == 3
    # With eπB fixed, sorted levels alone allow levels to swap (z² ↔ x²−y², xy ↔ xz/yz): several sets
    # fit exactly and the result must say so.
    fixed = fit_aom(OCT, levels, types, fix_e_pi={"B": epb})
    assert fixed.separable and fixed.rms < 1e-10
    sols = [(fixed.e_sigma["A"], fixed.e_sigma["B"])]
    sols += [(a["e_sigma[A]"], a["e_sigma[B]"]) for a in fixed.alternatives]
    assert len(sols) >= 2 and "ambiguous" in fixed.note
    assert any(np.allclose(s, (esa, esb), atol=1e-7) for s in sols)
    # The d vectors of each level (here the real orbitals themselves, in the order
    # xy, xz, yz, z², x²−y² of `levels`) decide it.
    vecs = np.eye(5)[:, [0, 3, 1, 2, 4]]
    exact = fit_aom(OCT, levels, types, fix_e_pi={"B": epb}, vectors=vecs)
    assert exact.separable and not exact.alternatives
    assert exact.e_sigma == pytest.approx({"A": esa, "B": esb}, abs=1e-10)
    assert exact.e_pi["A"] == pytest.approx(epa, abs=1e-10)
    # Vectors fix the assignment but add no number here (the D4h matrix is diagonal):
    # still 3 combinations for 4 parameters.
    both = fit_aom(OCT, levels, types, vectors=vecs)
    assert not both.separable and len(both.determined) == 3


def test_generic_geometry_absolute_with_shift():
    # A low-symmetry five-ligand set: noise-free model levels + a constant must give back the
    # parameters and the constant (common practice: a fit of exact data returns its parameters).
    rng = np.random.default_rng(1)
    dirs = rng.normal(size=(5, 3))
    w, _ = aom_levels(dirs, 1.0, 0.25)
    fit = fit_aom(dirs, w + 7.0, reference="absolute", fit_shift=True)
    assert fit.separable
    assert (fit.e_sigma[0], fit.e_pi[0], fit.shift) == pytest.approx((1.0, 0.25, 7.0), abs=1e-7)


def test_misfit_is_reported():
    # Levels no single-type octahedral AOM can give (three distinct values) leave a residual.
    fit = fit_aom(OCT, [0.0, 0.0, 0.3, 1.0, 1.0])
    assert fit.rms > 0.05
    assert np.sqrt(np.mean(fit.residuals**2)) == pytest.approx(fit.rms)


def test_bad_input():
    # five levels and a known reference are required (common practice: reject, never guess)
    with pytest.raises(ValueError):
        fit_aom(OCT, [0.0, 1.0])
    with pytest.raises(ValueError):
        fit_aom(OCT, [0.0] * 5, reference="median")


def test_vectors_give_the_off_diagonal_information():
    # Two ligand types on a low-symmetry set: with the d vectors of each level (scaled, as
    # partial d characters would be) the matrix fit returns all four parameters
    # (common practice: a fit of exact data returns its parameters).
    rng = np.random.default_rng(7)
    dirs = rng.normal(size=(6, 3))
    types = ["A", "A", "A", "B", "B", "B"]
    w, c = aom_levels(dirs, [1.0, 1.0, 1.0, 0.5, 0.5, 0.5], [0.2, 0.2, 0.2, -0.05, -0.05, -0.05])
    fit = fit_aom(dirs, w, types, vectors=c * 0.8)
    assert fit.separable and fit.rms < 1e-12
    assert fit.e_sigma == pytest.approx({"A": 1.0, "B": 0.5}, abs=1e-10)
    assert fit.e_pi == pytest.approx({"A": 0.2, "B": -0.05}, abs=1e-10)
