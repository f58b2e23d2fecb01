"""The spectrochemical series (Tsuchida) and a weak/strong-field choice for default spin.

Order of increasing Δ for a given metal ion, as given in Shriver & Atkins,
Inorganic Chemistry (and Miessler & Tarr, Inorganic Chemistry) — from memory:

    I⁻ < Br⁻ < SCN⁻(S) < Cl⁻ < F⁻ < OH⁻ < H₂O < NCS⁻(N) < NH₃ < CN⁻ < CO

Oxido (O²⁻) is placed between hydroxido and aqua: its place is less settled
(strong π donor) and is marked uncertain.  'point' (a bare point charge) has no
place in the series.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

#: Weakest field first.  'thiocyanato' is S-bonded SCN⁻, 'isothiocyanato' N-bonded NCS⁻.
SPECTROCHEMICAL_SERIES: tuple[str, ...] = (
    "iodido",
    "bromido",
    "thiocyanato",
    "chlorido",
    "fluorido",
    "hydroxido",
    "oxido",
    "aqua",
    "isothiocyanato",
    "ammine",
    "cyanido",
    "carbonyl",
)

#: Keys whose place is less certain than the rest (see module docstring).
UNCERTAIN_PLACE: frozenset[str] = frozenset({"oxido"})

#: Default boundary (common practice): π-acceptor ligands from here on make a
#: first-row M(II) ion low spin; ammine and weaker ones leave it high spin.
DEFAULT_STRONG_FROM = "cyanido"


def series_rank(key: str) -> int:
    """0-based position in SPECTROCHEMICAL_SERIES (ValueError if not in it)."""
    try:
        return SPECTROCHEMICAL_SERIES.index(key)
    except ValueError:
        raise ValueError(f"ligand {key!r} is not in the spectrochemical series") from None


def order_by_field(keys: Iterable[str]) -> list[str]:
    """The given (known) ligand keys sorted from weakest to strongest field."""
    return sorted(set(keys), key=series_rank)


@dataclass(frozen=True)
class FieldClass:
    """Weak/strong-field verdict for a ligand set."""

    strength: str  # 'weak', 'strong' or 'unknown'
    spin: str | None  # default spin choice: 'high', 'low', or None if unknown
    mean_rank: float | None
    detail: str


def classify_ligand_set(ligands: Iterable[str], strong_from: str = DEFAULT_STRONG_FROM) -> FieldClass:
    """Weak (→ high spin) or strong (→ low spin) field for a list of ligand keys.

    One entry per coordinated ligand.  The set is strong-field when the mean
    series rank exceeds the rank of the ligand just below ``strong_from``
    (common practice; a rank-based stand-in for Jørgensen's rule of average
    environment for mixed-ligand complexes, from memory).
    """
    keys = list(ligands)
    if not keys:
        return FieldClass("unknown", None, None, "no ligands given")
    unknown = sorted({k for k in keys if k not in SPECTROCHEMICAL_SERIES})
    if unknown:
        return FieldClass("unknown", None, None, f"not in the spectrochemical series: {', '.join(unknown)}")
    mean = sum(series_rank(k) for k in keys) / len(keys)
    cut = series_rank(strong_from) - 1.0
    strong = mean > cut
    detail = (
        f"mean series rank {mean:.2f} {'>' if strong else '≤'} {cut:.1f} "
        f"(strong field from {strong_from})"
    )
    if UNCERTAIN_PLACE & set(keys):
        detail += "; oxido's place in the series is uncertain"
    return FieldClass("strong" if strong else "weak", "low" if strong else "high", mean, detail)
