"""d-block metals: group number, known oxidation states, dⁿ counting.

dⁿ for a metal of group g (IUPAC groups 3–12) in oxidation state x is n = g − x
(the ionic model: all valence s electrons are counted into d on ionisation of a
complexed metal; common practice, e.g. any inorganic chemistry textbook).

Oxidation states: the ones known in ordinary chemistry, from the element
chapters of Greenwood & Earnshaw, *Chemistry of the Elements*, 2nd ed. (1997),
from memory; rare and exotic states outside 0…8 are left out.
"""

from __future__ import annotations

from dataclasses import dataclass

from ase.data import atomic_numbers, chemical_symbols

from dsplit.errors import InputError

# symbol: (group, known oxidation states)
_D_BLOCK: dict[str, tuple[int, tuple[int, ...]]] = {
    "Sc": (3, (1, 2, 3)),
    "Ti": (4, (0, 2, 3, 4)),
    "V": (5, (0, 1, 2, 3, 4, 5)),
    "Cr": (6, (0, 1, 2, 3, 4, 5, 6)),
    "Mn": (7, (0, 1, 2, 3, 4, 5, 6, 7)),
    "Fe": (8, (0, 1, 2, 3, 4, 5, 6)),
    "Co": (9, (0, 1, 2, 3, 4, 5)),
    "Ni": (10, (0, 1, 2, 3, 4)),
    "Cu": (11, (0, 1, 2, 3, 4)),
    "Zn": (12, (2,)),
    "Y": (3, (3,)),
    "Zr": (4, (0, 2, 3, 4)),
    "Nb": (5, (1, 2, 3, 4, 5)),
    "Mo": (6, (0, 1, 2, 3, 4, 5, 6)),
    "Tc": (7, (0, 1, 2, 3, 4, 5, 6, 7)),
    "Ru": (8, (0, 1, 2, 3, 4, 5, 6, 7, 8)),
    "Rh": (9, (0, 1, 2, 3, 4, 5, 6)),
    "Pd": (10, (0, 1, 2, 3, 4)),
    "Ag": (11, (1, 2, 3)),
    "Cd": (12, (2,)),
    "Hf": (4, (2, 3, 4)),
    "Ta": (5, (1, 2, 3, 4, 5)),
    "W": (6, (0, 1, 2, 3, 4, 5, 6)),
    "Re": (7, (0, 1, 2, 3, 4, 5, 6, 7)),
    "Os": (8, (0, 1, 2, 3, 4, 5, 6, 7, 8)),
    "Ir": (9, (0, 1, 2, 3, 4, 5, 6)),
    "Pt": (10, (0, 1, 2, 4, 5, 6)),
    "Au": (11, (1, 2, 3, 5)),
    "Hg": (12, (1, 2)),
}


@dataclass(frozen=True)
class Metal:
    """A d-block metal with its IUPAC group and known oxidation states."""

    symbol: str
    group: int
    oxidation_states: tuple[int, ...]

    @property
    def atomic_number(self) -> int:
        return atomic_numbers[self.symbol]

    @property
    def row(self) -> int:
        """3 for 3d, 4 for 4d, 5 for 5d metals."""
        z = self.atomic_number
        return 3 if z <= 30 else 4 if z <= 48 else 5

    def d_count(self, oxidation_state: int) -> int:
        """n in dⁿ = group − oxidation state (ionic model)."""
        return self.group - oxidation_state


def metal(symbol: str, field: str = "complex.metal") -> Metal:
    """Look up a d-block metal by symbol (case-insensitive); InputError otherwise."""
    sym = symbol.strip().capitalize()
    if sym not in atomic_numbers or sym == "X":
        raise InputError(field, f"unknown element '{symbol}'; give a d-block metal symbol such as Fe, Cr, Ni")
    if sym not in _D_BLOCK:
        allowed = ", ".join(_D_BLOCK)
        raise InputError(field, f"'{sym}' is not a d-block metal; allowed: {allowed}")
    group, states = _D_BLOCK[sym]
    return Metal(sym, group, states)


def check_oxidation_state(m: Metal, oxidation_state: int, field: str = "complex.oxidation_state") -> None:
    """Raise InputError unless ``oxidation_state`` is a known state of the metal."""
    if oxidation_state not in m.oxidation_states:
        states = ", ".join(f"{s:+d}" if s else "0" for s in m.oxidation_states)
        raise InputError(field, f"{m.symbol} does not occur as {oxidation_state:+d}; known states: {states}")


def is_element(symbol: str) -> bool:
    return symbol in chemical_symbols[1:]


D_BLOCK_SYMBOLS: tuple[str, ...] = tuple(_D_BLOCK)
