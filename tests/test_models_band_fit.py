"""Fitting Δ, B (C) of the multiplet model to measured bands (models.band_fit)."""

from __future__ import annotations

import pytest

from dsplit.errors import InputError
from dsplit.geometry.polyhedra import polyhedron
from dsplit.models.band_fit import fit_bands
from dsplit.models.field_shape import polyhedron_shape
from dsplit.models.free_ion import free_ion_b
from dsplit.models.multiplet import multiplet_states

OH = polyhedron_shape(polyhedron("octahedral"))
TD = polyhedron_shape(polyhedron("tetrahedral"))


def test_hexaaquachromium_bands():
    # [Cr(H2O)6]3+: ν1 ≈ 17,400, ν2 ≈ 24,600 cm⁻¹ (Lever, Inorganic Electronic Spectroscopy, 1984 —
    # from memory);
    # ν1 = Δ and ν2 from the Tanabe–Sugano closed form give B = 728.6 cm⁻¹; textbooks quote B ≈ 725 cm⁻¹ and
    # β ≈ 0.79 against free-ion Cr3+ B = 918 cm⁻¹ (from memory).
    fit = fit_bands(3, polyhedron("octahedral"), [17400, 24600], metal="Cr", oxidation_state=3)
    assert fit.delta_cm1 == pytest.approx(17400, abs=1)
    assert fit.b_cm1 == pytest.approx(725, abs=15)
    assert fit.beta == pytest.approx(0.79, abs=0.02)
    assert fit.residual_cm1 < 1.0
    assert fit.assigned == ("⁴T2g", "⁴T1g") and fit.multiplicity == 4
    assert fit.fitted == ("delta", "B") and "C" in fit.held


def test_fit_recovers_model_bands_exactly():
    # bands the model itself made (d² Oh: Δ, B; low-spin d⁶ Oh with three bands: Δ, B and C)
    for d, mult, delta, b, c, nb in ((2, 3, 18500.0, 640.0, 2880.0, 2), (6, 1, 21000.0, 600.0, 2900.0, 3)):
        spec = multiplet_states(OH.matrix(delta), b, c, d, symmetry=OH.symmetry, multiplicities=(mult,))
        bands = [t.energy for t in spec.spin_allowed_bands()[:nb]]
        fit = fit_bands(d, OH, bands, c_over_b=c / b)
        assert fit.delta_cm1 == pytest.approx(delta, rel=1e-6)
        assert fit.b_cm1 == pytest.approx(b, rel=1e-6)
        assert fit.c_cm1 == pytest.approx(c, rel=1e-5 if nb == 3 else 1e-6)
        assert ("C" in fit.fitted) == (nb == 3)
        assert fit.multiplicity == mult and fit.residual_cm1 < 1e-2


def test_single_band_measures_delta_and_leaves_b_open():
    # d¹ (one band ²T2g → ²Eg) and high-spin d⁶ (⁵T2g → ⁵Eg): ν = Δ, B does not enter (Lever 1984 — from memory)
    for d in (1, 6):
        fit = fit_bands(d, OH, [10400])
        assert fit.delta_cm1 == pytest.approx(10400, abs=0.5)
        assert fit.b_cm1 is None and fit.fitted == ("delta",)
        assert "B" in fit.held


def test_tetrahedral_d7_third_band():
    # Td d⁷: ν1 = Δt exactly (⁴A2 → ⁴T2; hole of Oh d³)
    spec = multiplet_states(TD.matrix(4000.0), 750.0, 3375.0, 7, symmetry=TD.symmetry, multiplicities=(4,))
    bands = [t.energy for t in spec.spin_allowed_bands()]
    assert bands[0] == pytest.approx(4000.0)
    fit = fit_bands(7, TD, bands, metal="Co", oxidation_state=2)
    assert fit.delta_cm1 == pytest.approx(4000.0, rel=1e-5)
    assert fit.beta == pytest.approx(750.0 / free_ion_b("Co", 2), rel=1e-5)


def test_implausible_fit_is_flagged():
    # Td Co(II) bands given without the infrared ν1 are misassigned: the fit says so
    fit = fit_bands(7, TD, [5800, 15000])
    assert any("implausible" in n for n in fit.notes)


def test_bad_bands_are_input_errors():
    with pytest.raises(InputError, match="bands"):
        fit_bands(3, OH, [])
    with pytest.raises(InputError, match="positive"):
        fit_bands(3, OH, [-100.0, 2000.0])
    with pytest.raises(InputError, match="at most"):
        fit_bands(1, OH, [10000, 20000])


def test_free_ion_table():
    assert free_ion_b("cr", 3) == 918.0
    assert free_ion_b("Cu", 2) is None  # d⁹: no B within dⁿ
    # the free-ion B grows with the charge of the same metal (the 3d shell contracts; common practice)
    for metal in ("V", "Cr", "Mn"):
        assert free_ion_b(metal, 3) > free_ion_b(metal, 2)
