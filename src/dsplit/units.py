"""Energy and wavelength conversions for reports, from CODATA constants in scipy.constants.

Inside dsplit energies are in Hartree (E_h).  The factors below are the CODATA
recommended values shipped with scipy (scipy.constants.physical_constants):
E_h in eV, E_h/(hc) in m⁻¹, E_h·N_A in J/mol, e·V/(hc) in m⁻¹.  A wavenumber
ν̃ and a vacuum wavelength λ are related by λ = 1/ν̃.
"""

from __future__ import annotations

from scipy import constants as _c

_HARTREE_EV: float = _c.physical_constants["Hartree energy in eV"][0]
_HARTREE_INV_M: float = _c.physical_constants["hartree-inverse meter relationship"][0]
_HARTREE_J: float = _c.physical_constants["Hartree energy"][0]
_EV_INV_M: float = _c.physical_constants["electron volt-inverse meter relationship"][0]
#: Bohr radius in Ångström (a0 / 1 Å), for point-charge energies with lengths in Å.
BOHR_IN_ANGSTROM: float = _c.physical_constants["Bohr radius"][0] / _c.angstrom


def hartree_to_ev(e: float) -> float:
    """E_h → eV (× E_h/eV)."""
    return e * _HARTREE_EV


def ev_to_hartree(e: float) -> float:
    """eV → E_h."""
    return e / _HARTREE_EV


def hartree_to_cm1(e: float) -> float:
    """E_h → cm⁻¹ (× E_h/(hc), m⁻¹ → cm⁻¹)."""
    return e * _HARTREE_INV_M * _c.centi


def cm1_to_hartree(nu: float) -> float:
    """cm⁻¹ → E_h."""
    return nu / (_HARTREE_INV_M * _c.centi)


def hartree_to_kjmol(e: float) -> float:
    """E_h → kJ/mol (× E_h·N_A)."""
    return e * _HARTREE_J * _c.N_A / _c.kilo


def kjmol_to_hartree(e: float) -> float:
    """kJ/mol → E_h."""
    return e * _c.kilo / (_HARTREE_J * _c.N_A)


def ev_to_cm1(e: float) -> float:
    """eV → cm⁻¹ (× e·1 V/(hc))."""
    return e * _EV_INV_M * _c.centi


def cm1_to_ev(nu: float) -> float:
    """cm⁻¹ → eV."""
    return nu / (_EV_INV_M * _c.centi)


def cm1_to_nm(nu: float) -> float:
    """Wavenumber in cm⁻¹ → vacuum wavelength in nm (λ = 1/ν̃)."""
    return 1.0 / (nu / _c.centi) / _c.nano


def nm_to_cm1(lam: float) -> float:
    """Vacuum wavelength in nm → wavenumber in cm⁻¹ (ν̃ = 1/λ)."""
    return 1.0 / (lam * _c.nano) * _c.centi


_TO_CM1 = {
    "cm-1": lambda v: v,
    "nm": nm_to_cm1,
    "ev": ev_to_cm1,
    "hartree": hartree_to_cm1,
    "kj/mol": lambda v: hartree_to_cm1(kjmol_to_hartree(v)),
}


def to_cm1(value: float, unit: str) -> float:
    """Any of 'cm-1', 'nm', 'eV', 'hartree', 'kJ/mol' → cm⁻¹ (case-insensitive)."""
    try:
        return float(_TO_CM1[unit.lower()](value))
    except KeyError:
        raise ValueError(f"unknown unit {unit!r}; use one of {sorted(_TO_CM1)}") from None
