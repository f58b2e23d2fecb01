"""Free-ion Racah B of 3d ions and the nephelauxetic ratio β = B(complex) / B(free ion).

Values in cm⁻¹ as commonly tabulated from the free-ion spectra (e.g. Lever, Inorganic
Electronic Spectroscopy, 2nd ed., Elsevier 1984, table of free-ion Racah parameters; Griffith,
The Theory of Transition-Metal Ions, 1961) — from memory, rounded; treat them as ±5 %.
d¹ and d⁹ ions have no interelectronic repulsion within dⁿ, so B (and β) is not defined there.
Fe³⁺ and Co³⁺ are left out on purpose: the values recalled for them did not follow the rise of B
with charge seen for V, Cr and Mn, so no number is better than a doubtful one (β is then None).

The table lives in models/ (not chem/) because the band fit in models/ needs it and chem/ sits
above models/ in the import order.
"""

from __future__ import annotations

#: (metal symbol, oxidation state) → free-ion Racah B in cm⁻¹ (from memory, see module docstring)
FREE_ION_B_CM1: dict[tuple[str, int], float] = {
    ("Ti", 2): 718.0,
    ("V", 2): 766.0,
    ("V", 3): 861.0,
    ("Cr", 2): 830.0,
    ("Cr", 3): 918.0,
    ("Mn", 2): 960.0,
    ("Mn", 3): 1140.0,
    ("Fe", 2): 1058.0,
    ("Co", 2): 1115.0,
    ("Ni", 2): 1080.0,
}


def free_ion_b(metal: str, oxidation_state: int) -> float | None:
    """Free-ion B (cm⁻¹) of metal^(oxidation_state)+, or None when the table has no value."""
    return FREE_ION_B_CM1.get((metal.strip().capitalize(), int(oxidation_state)))


def nephelauxetic_ratio(b_cm1: float | None, metal: str | None, oxidation_state: int | None) -> float | None:
    """β = B / B(free ion), or None when B, the ion or its table value is missing."""
    if b_cm1 is None or metal is None or oxidation_state is None:
        return None
    free = free_ion_b(metal, oxidation_state)
    return None if free is None else float(b_cm1) / free
