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
"""

from __future__ import annotations

STRONG_FIELD = frozenset({"cyanido", "carbonyl"})
HALIDE_LIKE = frozenset({"fluorido", "chlorido", "bromido", "iodido", "oxido", "point"})


def default_multiplicity(multiplicities: list[int], row: int, geometry: str, d_count: int,
                         oxidation_state: int, ligand_keys: list[str]) -> tuple[int, str]:
    """(multiplicity, reason) for the ligand-field expectation."""
    low, high = multiplicities[0], multiplicities[-1]
    if low == high:
        return low, "only one multiplicity is possible"
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
