"""The default spin multiplicity when a spec gives none: the ligand-field expectation.

Rules of thumb (common practice, any inorganic chemistry textbook; they are a
starting choice only, ``dsplit spin-states`` compares all multiplicities):
- 4d and 5d metals: low spin (Δ is large, pairing energy small).
- tetrahedral: high spin (Δt ≈ 4/9 Δo is below the pairing energy).
- square-planar d8: low spin (the empty x²−y² level is the reason for the geometry).
- otherwise by the spectrochemical series: low spin when at least half the ligands
  are strong-field (cyanido, carbonyl); also for d6 M(III) and higher unless every
  ligand is a halido or oxido (the textbook high-spin exception is [CoF6]3−);
  high spin otherwise.
"Low spin" is the strong-field limit over the geometry's d sets (fill the sets in
order, Hund's rule inside each set), not the smallest multiplicity: octahedral d3
stays t2g^3 with S = 3/2 and d4 low spin is t2g^4 with S = 1 (textbook).
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from dsplit.chem.counting import DSet

STRONG_FIELD = frozenset({"cyanido", "carbonyl"})
HALIDE_LIKE = frozenset({"fluorido", "chlorido", "bromido", "iodido", "oxido", "point"})


def strong_field_multiplicity(sets: Sequence[DSet], d_count: int) -> int:
    """2S+1 of the strong-field limit: lowest set energy first, Hund inside a set (models.filling.low_spin)."""
    from dsplit.models.filling import low_spin

    return low_spin(np.array([s.energy for s in sets]), np.array([s.degeneracy for s in sets]),
                    d_count).multiplicity


def default_multiplicity(multiplicities: list[int], row: int, geometry: str, d_count: int,
                         oxidation_state: int, ligand_keys: list[str],
                         sets: Sequence[DSet] | None = None) -> tuple[int, str]:
    """(multiplicity, reason) for the ligand-field expectation; ``sets`` (the geometry's d sets)
    give the strong-field multiplicity, without them the smallest one is taken."""
    low, high = multiplicities[0], multiplicities[-1]
    if sets:
        low = strong_field_multiplicity(sets, d_count)
    if len(multiplicities) == 1:
        return low, "only one multiplicity is possible"
    if low == high:
        return low, "weak- and strong-field fillings give the same spin"
    if row > 3:
        return low, f"{row}d metal: low spin expected"
    if geometry == "tetrahedral":
        return high, "tetrahedral: Δt is small, high spin expected"
    if geometry == "square-planar" and d_count == 8:
        return low, "square-planar d8: low spin expected"
    strong = sum(k in STRONG_FIELD for k in ligand_keys)
    if 2 * strong >= len(ligand_keys):
        return low, "strong-field ligand set (spectrochemical series): low spin expected"
    if d_count == 6 and oxidation_state >= 3 and not all(k in HALIDE_LIKE for k in ligand_keys):
        return low, "d6 M(III): low spin expected"
    return high, "weak-field ligand set (spectrochemical series): high spin expected"
