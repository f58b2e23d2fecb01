"""Checks and verdicts (models/checks.py) on model results and literature numbers."""

import math

import numpy as np
import pytest

from dsplit.models.checks import (
    AGREES,
    DIFFERS,
    NOT_APPLICABLE,
    Check,
    compare_degeneracy_pattern,
    compare_set_order,
    estimators_agree,
    fit_residual_check,
    four_ninths_check,
    measured_band_check,
    series_order_check,
    spin_state_check,
)
from dsplit.models.crystal_field import point_charge_levels
from dsplit.models.filling import ground_spin_state
from dsplit.models.aom import aom_levels
from dsplit.models.fit import fit_aom
from dsplit.models.levels import aom_sets

OCT = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
TET = np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]], float) / np.sqrt(3)


def test_verdict_vocabulary():
    # the three verdicts of the project vocabulary (DESIGN.md)
    with pytest.raises(ValueError):
        Check("x", "maybe")


def test_set_order_and_degeneracy():
    # Oh: t2g below eg; Td: e below t2 (Figgis & Hitchman 2000 — from memory)
    oh = [s.degeneracy for s in aom_sets(OCT, 1.0, 0.1)]
    td = [s.degeneracy for s in aom_sets(TET, 1.0, 0.1)]
    assert compare_degeneracy_pattern(oh, [3, 2]).verdict == AGREES
    assert compare_degeneracy_pattern(td, [3, 2]).verdict == DIFFERS
    assert compare_degeneracy_pattern(oh, None).verdict == NOT_APPLICABLE
    assert compare_degeneracy_pattern(oh, [3, 1]).verdict == NOT_APPLICABLE
    assert compare_set_order(["t2g", "eg"], ["t2g", "eg"]).verdict == AGREES
    assert compare_set_order(["t2g", "eg"], ["eg", "t2g"]).verdict == DIFFERS
    assert compare_set_order(["t2g", "eg"], ["e", "t2"]).verdict == DIFFERS
    assert compare_set_order([], ["eg"]).verdict == NOT_APPLICABLE


def test_estimators():
    c = estimators_agree({"orbital": 2.10, "state": 2.12, "excitation": None}, rel_tol=0.05)
    assert c.verdict == AGREES and "excitation" in c.detail
    assert estimators_agree({"orbital": 4.47, "state": 2.12}, rel_tol=0.15).verdict == DIFFERS
    assert estimators_agree({"orbital": 2.0, "state": math.nan}).verdict == NOT_APPLICABLE
    assert estimators_agree({}).verdict == NOT_APPLICABLE


def test_fit_residual():
    # one Δ in Oh fixes one combination (3eσ − 4eπ) of two parameters: the residual is zero by
    # construction, so the check cannot bite and must say "not applicable" (common practice: a fit
    # tests a model only when the data over-determine it)
    one_delta = fit_aom(OCT, [-0.4, -0.4, -0.4, 0.6, 0.6])
    c = fit_residual_check(one_delta)
    assert c.verdict == NOT_APPLICABLE and "zero by construction" in c.detail
    # three distinct levels cannot come from an octahedral AOM: over-determined, and it differs
    bad = fit_aom(OCT, [0.0, 0.0, 0.3, 1.0, 1.0])
    assert bad.overdetermined and fit_residual_check(bad).verdict == DIFFERS
    # levels and d vectors made by the AOM itself (eσ = 1, eπ = 0.2): over-determined, and it agrees
    w, v = aom_levels(OCT, 1.0, 0.2)
    made = fit_aom(OCT, w, vectors=v)
    assert made.overdetermined and fit_residual_check(made).verdict == AGREES
    assert fit_residual_check(None).verdict == NOT_APPLICABLE


def test_four_ninths_from_point_charges():
    # Δt/Δo = 4/9 for point charges (Figgis & Hitchman 2000, ch. 2 — from memory)
    wo, _ = point_charge_levels(2.0 * OCT)
    wt, _ = point_charge_levels(2.0 * TET)
    d_o, d_t = wo[4] - wo[0], wt[4] - wt[0]
    c = four_ninths_check(d_t, d_o, rel_tol=1e-6)
    assert c.verdict == AGREES and c.numbers["ratio"] == pytest.approx(4 / 9)
    assert four_ninths_check(0.6 * d_o, d_o).verdict == DIFFERS
    assert four_ninths_check(None, d_o).verdict == NOT_APPLICABLE
    assert four_ninths_check(d_t, 0.0).verdict == NOT_APPLICABLE


def test_spin_state():
    # [Fe(CN)6]4-: Δo ≈ 33 000 cm⁻¹ > P ≈ 17 600 cm⁻¹ → singlet (Shriver & Atkins /
    # Figgis & Hitchman — from memory, order of magnitude)
    pred = ground_spin_state(np.array([-0.4, 0.6]) * 33000, np.array([3, 2]), 6, 17600).multiplicity
    assert spin_state_check(1, pred).verdict == AGREES
    assert spin_state_check(5, pred).verdict == DIFFERS
    assert spin_state_check(None, pred).verdict == NOT_APPLICABLE


def test_measured_band():
    # [Ti(H2O)6]3+: band maximum ≈ 20 300 cm⁻¹ (≈ 493 nm) (Figgis & Hitchman 2000 — from memory)
    c = measured_band_check(2.4, 20300.0, computed_unit="eV", tol_percent=10)
    assert c.verdict == AGREES and c.numbers["percent_error"] == pytest.approx(-4.64, abs=0.05)
    assert measured_band_check(2.4, 493.0, "eV", "nm").verdict == AGREES
    assert measured_band_check(4.47, 20300.0, "eV").verdict == DIFFERS
    assert measured_band_check(None, 20300.0).verdict == NOT_APPLICABLE
    assert measured_band_check(2.4, 20300.0, "parsec").verdict == NOT_APPLICABLE
    assert measured_band_check(2.4, 0.0, "eV", "nm").verdict == NOT_APPLICABLE


def test_series_order_with_measured_chromium_delta():
    # Δo of CrL6 (cm⁻¹): F⁻ 15 200, H2O 17 400, NH3 21 600, CN⁻ 26 600
    # (Lever 1984 / Shriver & Atkins table of Δo — from memory)
    measured = {"fluorido": 15200.0, "aqua": 17400.0, "ammine": 21600.0, "cyanido": 26600.0}
    assert series_order_check(measured).verdict == AGREES
    swapped = {**measured, "aqua": 22000.0}
    c = series_order_check({**swapped, "point": 1.0})
    assert c.verdict == DIFFERS and "point" in c.detail
    assert series_order_check({"aqua": 1.0}).verdict == NOT_APPLICABLE
