"""Checks of computed d splittings against ligand-field expectations, with verdicts.

Every helper returns a Check whose verdict is 'agrees', 'differs' or 'not
applicable' (with the reason), never raising on missing data (None or NaN).
Tolerances are the caller's choice; the defaults are common practice.
"""

from __future__ import annotations

import math
from collections.abc import Hashable, Mapping, Sequence
from dataclasses import dataclass, field

from dsplit.models.fit import AOMFit
from dsplit.models.spectrochemical import SPECTROCHEMICAL_SERIES, order_by_field
from dsplit.units import to_cm1

AGREES = "agrees"
DIFFERS = "differs"
NOT_APPLICABLE = "not applicable"
VERDICTS = (AGREES, DIFFERS, NOT_APPLICABLE)

#: Δt/Δo for the same ligand at the same distance (point charges and AOM alike).
FOUR_NINTHS = 4.0 / 9.0


@dataclass(frozen=True)
class Check:
    """One comparison and its verdict."""

    name: str
    verdict: str
    numbers: dict[str, object] = field(default_factory=dict)
    detail: str = ""

    def __post_init__(self) -> None:
        if self.verdict not in VERDICTS:
            raise ValueError(f"verdict must be one of {VERDICTS}")


def _missing(x: object) -> bool:
    return x is None or (isinstance(x, float) and math.isnan(x))


def _na(name: str, reason: str, **numbers: object) -> Check:
    return Check(name, NOT_APPLICABLE, dict(numbers), reason)


def _verdict(ok: bool) -> str:
    return AGREES if ok else DIFFERS


def compare_set_order(
    predicted: Sequence[Hashable] | None, computed: Sequence[Hashable] | None
) -> Check:
    """Same labels of d sets in the same ascending-energy order?"""
    name = "set order"
    if not predicted or not computed:
        return _na(name, "predicted or computed set order missing")
    p, c = list(predicted), list(computed)
    nums = {"predicted": p, "computed": c}
    if sorted(map(str, p)) != sorted(map(str, c)):
        return Check(name, DIFFERS, nums, "the two lists hold different sets")
    ok = p == c
    return Check(name, _verdict(ok), nums, "same order" if ok else "same sets, other order")


def compare_degeneracy_pattern(
    predicted: Sequence[int] | None, computed: Sequence[int] | None
) -> Check:
    """Same degeneracies in ascending-energy order (e.g. [3, 2] for Oh t2g, eg)?"""
    name = "degeneracy pattern"
    if not predicted or not computed:
        return _na(name, "predicted or computed degeneracies missing")
    p, c = [int(x) for x in predicted], [int(x) for x in computed]
    nums = {"predicted": p, "computed": c}
    if sum(c) != 5:
        return _na(name, f"computed degeneracies sum to {sum(c)}, not 5", **nums)
    ok = p == c
    return Check(name, _verdict(ok), nums, "same pattern" if ok else "different splitting pattern")


def estimators_agree(values: Mapping[str, float | None], rel_tol: float = 0.15) -> Check:
    """Δ from several estimators: (max − min)/|mean| ≤ rel_tol?"""
    name = "estimators agree"
    have = {k: float(v) for k, v in values.items() if not _missing(v)}
    skipped = sorted(k for k in values if k not in have)
    if len(have) < 2:
        return _na(name, f"fewer than two estimators have a value (missing: {', '.join(skipped) or 'none'})", **have)
    mean = sum(have.values()) / len(have)
    if mean == 0.0:
        return _na(name, "mean Δ is zero", **have)
    spread = (max(have.values()) - min(have.values())) / abs(mean)
    nums: dict[str, object] = {**have, "relative_spread": spread, "rel_tol": rel_tol}
    detail = f"relative spread {spread:.3f} vs tolerance {rel_tol}"
    if skipped:
        detail += f"; no value from {', '.join(skipped)}"
    return Check(name, _verdict(spread <= rel_tol), nums, detail)


def fit_residual_check(fit: AOMFit | None, rel_tol: float = 0.05) -> Check:
    """Fit residual RMS small against the spread of the fitted levels?"""
    name = "AOM fit residual"
    if fit is None:
        return _na(name, "no fit")
    spread = max(fit.target) - min(fit.target)
    if spread <= 0.0:
        return _na(name, "levels do not split", rms=fit.rms)
    if not fit.overdetermined:
        return _na(name, f"the data ({fit.n_data} independent number(s)) fix only as many parameter combinations "
                         f"({fit.rank}) as are fitted: the residual is zero by construction", rms=fit.rms)
    rel = fit.rms / spread
    nums = {"rms": fit.rms, "spread": spread, "relative_rms": rel, "rel_tol": rel_tol}
    detail = f"RMS/spread {rel:.4f} vs tolerance {rel_tol}"
    if not fit.separable:
        detail += f"; {fit.note}"
    return Check(name, _verdict(rel <= rel_tol), nums, detail)


def four_ninths_check(delta_t: float | None, delta_o: float | None, rel_tol: float = 0.15) -> Check:
    """Δt/Δo (same ligand, same distance) within rel_tol of 4/9?"""
    name = "Δt/Δo = 4/9"
    if _missing(delta_t) or _missing(delta_o):
        return _na(name, "Δt or Δo missing", delta_t=delta_t, delta_o=delta_o)
    if delta_o == 0.0:
        return _na(name, "Δo is zero", delta_t=delta_t, delta_o=delta_o)
    ratio = delta_t / delta_o
    dev = abs(ratio - FOUR_NINTHS) / FOUR_NINTHS
    nums = {"delta_t": delta_t, "delta_o": delta_o, "ratio": ratio, "relative_deviation": dev}
    return Check(name, _verdict(dev <= rel_tol), nums, f"ratio {ratio:.3f} vs 4/9 = {FOUR_NINTHS:.3f}")


def spin_state_check(found_multiplicity: int | None, predicted_multiplicity: int | None) -> Check:
    """The lowest computed spin state the predicted one?"""
    name = "ground spin state"
    if found_multiplicity is None or predicted_multiplicity is None:
        return _na(name, "found or predicted multiplicity missing",
                   found=found_multiplicity, predicted=predicted_multiplicity)
    ok = int(found_multiplicity) == int(predicted_multiplicity)
    nums = {"found": int(found_multiplicity), "predicted": int(predicted_multiplicity)}
    return Check(name, _verdict(ok), nums, f"2S+1 found {found_multiplicity}, predicted {predicted_multiplicity}")


def measured_band_check(
    computed: float | None,
    measured: float | None,
    computed_unit: str = "cm-1",
    measured_unit: str = "cm-1",
    tol_percent: float = 15.0,
) -> Check:
    """Computed band vs a measured one (units 'cm-1', 'nm', 'eV', 'hartree', 'kJ/mol')."""
    name = "measured band"
    if _missing(computed) or _missing(measured):
        return _na(name, "computed or measured band missing", computed=computed, measured=measured)
    try:
        c, m = to_cm1(computed, computed_unit), to_cm1(measured, measured_unit)
    except (ValueError, ZeroDivisionError) as exc:
        return _na(name, f"cannot convert: {exc}")
    if m <= 0.0:
        return _na(name, "measured band is not positive", measured_cm1=m)
    err = 100.0 * (c - m) / m
    nums = {"computed_cm1": c, "measured_cm1": m, "percent_error": err, "tol_percent": tol_percent}
    return Check(name, _verdict(abs(err) <= tol_percent), nums, f"{err:+.1f} % (tolerance ±{tol_percent} %)")


def series_order_check(delta_by_ligand: Mapping[str, float | None]) -> Check:
    """Computed Δ per ligand (same metal, same geometry) in spectrochemical order?"""
    name = "spectrochemical order"
    have = {k: float(v) for k, v in delta_by_ligand.items() if not _missing(v) and k in SPECTROCHEMICAL_SERIES}
    outside = sorted(k for k in delta_by_ligand if k not in SPECTROCHEMICAL_SERIES)
    if len(have) < 2:
        return _na(name, "fewer than two ligands of the series have a Δ", **have)
    expected = order_by_field(have)
    found = sorted(have, key=lambda k: have[k])
    ok = found == expected
    nums: dict[str, object] = {**have, "expected": expected, "found": found}
    detail = "same order" if ok else f"found {' < '.join(found)}, expected {' < '.join(expected)}"
    if outside:
        detail += f"; not in the series, left out: {', '.join(outside)}"
    return Check(name, _verdict(ok), nums, detail)
