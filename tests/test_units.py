"""Unit conversions (dsplit/units.py) against CODATA recommended values.

CODATA 2018 / 2022 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021); Mohr et al., CODATA 2022):
E_h = 27.21138624598 eV, E_h/hc = 219474.63136 cm⁻¹, E_h·N_A = 2625.4996 kJ/mol,
1 eV/hc = 8065.543937 cm⁻¹ (values from memory, agreeing to the digits given here).
"""

import pytest

from dsplit import units

REL = 1e-9


def test_hartree():
    assert units.hartree_to_ev(1.0) == pytest.approx(27.21138624598, rel=REL)
    assert units.hartree_to_cm1(1.0) == pytest.approx(219474.6313632, rel=REL)
    assert units.hartree_to_kjmol(1.0) == pytest.approx(2625.4996394799, rel=REL)


def test_ev_and_wavelength():
    assert units.ev_to_cm1(1.0) == pytest.approx(8065.543937, rel=REL)
    # λ = 1/ν̃: 20 000 cm⁻¹ = 500 nm (definition)
    assert units.cm1_to_nm(20000.0) == pytest.approx(500.0, rel=1e-12)
    assert units.nm_to_cm1(500.0) == pytest.approx(20000.0, rel=1e-12)


def test_round_trips():
    # inverse conversions compose to the identity (common practice)
    for f, g in [(units.hartree_to_ev, units.ev_to_hartree), (units.hartree_to_cm1, units.cm1_to_hartree),
                 (units.hartree_to_kjmol, units.kjmol_to_hartree), (units.ev_to_cm1, units.cm1_to_ev)]:
        assert g(f(0.37)) == pytest.approx(0.37, rel=1e-14)


def test_to_cm1_and_bohr():
    assert units.to_cm1(1.0, "eV") == pytest.approx(8065.543937, rel=REL)
    assert units.to_cm1(400.0, "nm") == pytest.approx(25000.0)
    with pytest.raises(ValueError):
        units.to_cm1(1.0, "furlong")
    # a0 = 0.52917721054 Å (CODATA 2022; 2018: 0.529177210903 — from memory)
    assert units.BOHR_IN_ANGSTROM == pytest.approx(0.52917721054, rel=1e-9)
