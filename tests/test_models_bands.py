"""band_meaning (models/bands.py) against Orgel / Tanabe–Sugano results
(Lever, Inorganic Electronic Spectroscopy, 2nd ed. 1984; Figgis & Hitchman 2000 — from memory)."""

import pytest

from dsplit.models.bands import band_meaning

# Oh: ν1 = Δo for d1, d3, d4 HS, d6 HS, d8, d9
OH_DIRECT = [(1, "high"), (3, "high"), (4, "high"), (6, "high"), (8, "high"), (9, "high")]
# Oh: B enters (T1(F)/T1(P) mixing, or low-spin B and C dependence)
OH_B = [(2, "high"), (7, "high"), (4, "low"), (5, "low"), (6, "low"), (7, "low")]
# Td ~ Oh d¹⁰⁻ⁿ: ν1 = Δt for d1, d2, d4, d6, d7, d9; B enters for d3, d8
TD_DIRECT = [1, 2, 4, 6, 7, 9]
TD_B = [3, 8]


@pytest.mark.parametrize("n,spin", OH_DIRECT)
def test_octahedral_direct(n, spin):
    m = band_meaning(n, "octahedral", spin)
    assert m.measures_delta_directly and not m.racah_b_enters and m.has_spin_allowed_band
    assert "Δo" in m.text


@pytest.mark.parametrize("n,spin", OH_B)
def test_octahedral_racah_b(n, spin):
    m = band_meaning(n, "octahedral", spin)
    assert not m.measures_delta_directly and m.racah_b_enters
    assert "B" in m.text


def test_d2_d7_difference_is_delta():
    # ν(³A2g) − ν(³T2g) = Δo for d2 (both single-configuration states; same sources)
    assert "³A2g" in band_meaning(2, "octahedral").text
    assert "⁴A2g" in band_meaning(7, "octahedral", "high").text


def test_d6_low_spin_mentions_c():
    # d6 LS: ¹A1g → ¹T1g ≈ Δo − C (Tanabe–Sugano strong-field limit; same sources)
    assert "Δo − C" in band_meaning(6, "octahedral", "low").text


@pytest.mark.parametrize("family", ["octahedral", "tetrahedral"])
def test_d5_high_spin_has_no_spin_allowed_band(family):
    m = band_meaning(5, family, "high")
    assert not m.has_spin_allowed_band and not m.measures_delta_directly


@pytest.mark.parametrize("n", TD_DIRECT)
def test_tetrahedral_direct(n):
    m = band_meaning(n, "tetrahedral")
    assert m.measures_delta_directly and "Δt" in m.text


@pytest.mark.parametrize("n", TD_B)
def test_tetrahedral_racah_b(n):
    assert band_meaning(n, "tetrahedral").racah_b_enters


def test_single_spin_state_ignores_spin_argument():
    # Oh d3 and d8 have one spin state in any field (Orgel / Tanabe–Sugano; same sources)
    assert band_meaning(3, "octahedral", "low").measures_delta_directly
    assert band_meaning(8, "octahedral", "low").measures_delta_directly


def test_edges():
    # d0/d10 have no d–d band; low-spin Td not treated; other families have no rule here (common practice)
    assert not band_meaning(0, "octahedral").has_spin_allowed_band
    assert not band_meaning(10, "tetrahedral").has_spin_allowed_band
    assert not band_meaning(6, "tetrahedral", "low").measures_delta_directly
    assert "no rule" in band_meaning(3, "square-planar").text
    with pytest.raises(ValueError):
        band_meaning(3, "octahedral", "medium")
