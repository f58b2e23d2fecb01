"""The ``multiplet`` estimator and the one recommended Δ, from records (pure).

multiplet: the ligand-field Hamiltonian (h, B, C) fitted to every dⁿ state of the SA-CASSCF/
NEVPT2 calculation (analysis.multiplet_fit; the ab initio ligand-field route of Atanasov,
Ganyushin, Sivalingam & Neese, Struct. Bond. 143, 149 (2012)); Δ is the fitted gap between the
band's d sets (the transition's lower and upper set; highest − lowest when no band was chosen).
It needs no pure component and no band test, so it works in any point group.

recommended: one Δ per report, by a rule read off the project's validation at the default
method (benchmarks/validation.py; the measured mean absolute errors are in VALIDATION below):
the estimator with the smallest error there among those that gave a value here, the multiplet
one only when its fit residual is small against Δ.  The spread of the other state-based
estimators is its uncertainty; the orbital gap is never recommended (it is no state energy).
"""

from __future__ import annotations

from typing import Any

from dsplit.units import cm1_to_ev, cm1_to_hartree, hartree_to_kjmol

#: mean absolute percent error against measured first bands, per estimator, at the default method
#: (benchmarks/validation.py def2-SVP; the table and its run are quoted in the README)
VALIDATION: dict[str, Any] = {
    "method": "B3LYP/def2-SVP, PCM water",
    # measured 2026-12-04, 12 complexes d1–d8 (benchmarks/validation.py docstring has the table)
    "mean_abs_percent": {"multiplet": 10.4, "state": 13.8, "excitation": 37.6, "orbital": 148.2},
    "complexes": 12,
    "source": "benchmarks/validation.py",
}
#: the multiplet Δ is recommended only when its fit reproduces the computed states this well
RESIDUAL_FRACTION_MAX = 0.10
STATE_ESTIMATORS = ("multiplet", "state", "excitation")
#: states this close to the lowest belong to the ground term (split by a symmetry below the donor set's:
#: 3–5 cm⁻¹ for ³T1g of [V(H2O)6]3+ in Th); d–d bands lie far above (common practice)
GROUND_TERM_CM1 = 1000.0
#: order used when the validation has no number for an estimator (the multiplet one sees every state)
FALLBACK_ORDER = ("multiplet", "state", "excitation")


def energy_block_cm1(cm1: float | None) -> dict[str, float | None]:
    if cm1 is None:
        return {"delta_eV": None, "delta_cm1": None, "delta_kJmol": None}
    return {"delta_eV": cm1_to_ev(cm1), "delta_cm1": float(cm1), "delta_kJmol": hartree_to_kjmol(cm1_to_hartree(cm1))}


def band_gap_cm1(fit, d_sets, transition) -> float | None:
    """Fitted gap between the transition's d sets (or highest − lowest set), cm⁻¹."""
    if fit is None:
        return None
    energies = fit.set_energies_cm1
    if transition is not None:
        lower, upper = d_sets[transition.lower].label, d_sets[transition.upper].label
        if lower in energies and upper in energies:
            return float(energies[upper] - energies[lower])
    return float(max(energies.values()) - min(energies.values())) if len(energies) >= 2 else None


def multiplet_estimate(record, fit, fit_casscf, d_sets, transition, measures: str,
                       reason: str | None = None) -> dict[str, Any]:
    """The splitting.multiplet entry: Δ from the NEVPT2 fit (CASSCF beside), or no value and why."""
    if record is None or fit is None:
        notes = [reason or "no multiplet calculation"]
        if record is not None:
            notes += list(record.warnings) + list(record.notes)
        return {**energy_block_cm1(None), "method": getattr(record, "method", None),
                "converged": getattr(record, "converged", None),
                "configuration_verified": getattr(record, "verified", None) if record is not None else None,
                "measures": measures, "notes": notes}
    delta = band_gap_cm1(fit, d_sets, transition)
    notes = list(record.notes) + list(fit.notes)
    if fit_casscf is None:
        notes.append("CASSCF-only fit not available")
    return {**energy_block_cm1(delta), "casscf_delta_cm1": band_gap_cm1(fit_casscf, d_sets, transition),
            "method": record.method, "energies_from": fit.source, "converged": record.converged,
            "configuration_verified": record.verified, "solvent": record.solvent,
            "residual_cm1": fit.residual_cm1, "measures": measures,
            "notes": notes, "seconds": record.timings.get("total")}


def multiplet_state_rows(states, method: str, ground_multiplicity: int) -> list[dict[str, Any]]:
    """result.json ``multiplet_states``: every computed state above the lowest, with spin-allowedness."""
    rows = []
    for s in sorted(states, key=lambda s: s.energy_cm1):
        row = s.to_dict(method)
        row["spin_allowed"] = s.multiplicity == ground_multiplicity
        row["configurations"] = ", ".join(f"{c['configuration']} {c['weight']:.2f}" for c in row["configurations"])
        rows.append(row)
    return rows


def first_band_cm1(state_rows: list[dict[str, Any]], band_meaning: dict[str, Any],
                   delta_cm1: float | None) -> tuple[float | None, str]:
    """(first spin-allowed band, where it comes from): the lowest spin-allowed excited multiplet
    state; else Δ itself when the band measures Δ directly (d1, d3, d8 Oh …)."""
    allowed = [r["energy_cm1"] for r in state_rows if r.get("spin_allowed") and r["energy_cm1"] > GROUND_TERM_CM1]
    if allowed:
        return float(min(allowed)), "lowest spin-allowed excited state of the multiplet calculation"
    if delta_cm1 is not None and band_meaning.get("measures_delta_directly"):
        return float(delta_cm1), "the first band measures Δ directly for this dⁿ"
    return None, "no spin-allowed band computed"


def _multiplet_usable(entry: dict[str, Any]) -> tuple[bool, str]:
    d, res = entry.get("delta_cm1"), entry.get("residual_cm1")
    if d is None:
        return False, "; ".join(entry.get("notes") or ["no value"])
    if res is not None and abs(d) > 0 and res > RESIDUAL_FRACTION_MAX * abs(d):
        return False, (f"fit residual {res:.0f} cm⁻¹ is more than {RESIDUAL_FRACTION_MAX:.0%} of Δ: the dⁿ "
                       "ligand-field model does not describe these states well")
    return True, ""


def recommend(splitting: dict[str, Any], ligand_field: dict[str, Any] | None, band: tuple[float | None, str],
              method: str, validation: dict[str, Any] = VALIDATION) -> dict[str, Any]:
    """The one recommended Δ with its rule, uncertainty and the withheld estimators (result.json key)."""
    mae = validation.get("mean_abs_percent") or {}
    ranked = sorted(FALLBACK_ORDER, key=lambda k: (mae.get(k) is None, mae.get(k) or 0.0, FALLBACK_ORDER.index(k)))
    withheld, usable = [], {}
    for name in STATE_ESTIMATORS:
        entry = splitting.get(name) or {}
        if name == "multiplet" and entry:
            ok, why = _multiplet_usable(entry)
        else:
            ok = entry.get("delta_cm1") is not None
            why = "; ".join(str(n) for n in entry.get("notes") or []) or "no value"
        if ok:
            usable[name] = float(entry["delta_cm1"])
        elif entry:
            withheld.append({"estimator": name, "reason": why})
    chosen = next((k for k in ranked if k in usable), None)
    if chosen is None:
        return {"estimator": None, **energy_block_cm1(None), "uncertainty_cm1": None, "B_cm1": None,
                "first_band_cm1": band[0], "first_band_source": band[1], "withheld": withheld,
                "rule": "no state-based estimator gave a value: no Δ is recommended (the orbital gap is not one)"}
    if mae.get(chosen) is not None:
        why = (f"smallest mean absolute error ({mae[chosen]:.0f} %) against measured first bands among the "
               f"estimators with a value, in the project's validation at {validation['method']}")
        if validation.get("method") and validation["method"].split(",")[0] != method:
            why += f" (this run uses {method})"
    else:
        why = ("every dⁿ state fitted at once (no single determinant has to stand for the band)" if chosen ==
               "multiplet" else f"first available of {', '.join(FALLBACK_ORDER)} (no validation figure yet)")
    others = [v for k, v in usable.items() if k != chosen]
    spread = max(abs(v - usable[chosen]) for v in others) if others else None
    b = (ligand_field or {}).get("B_cm1") if chosen == "multiplet" or ligand_field else None
    return {"estimator": chosen, **energy_block_cm1(usable[chosen]), "uncertainty_cm1": spread,
            "uncertainty_from": [k for k in usable if k != chosen], "B_cm1": b,
            "first_band_cm1": band[0], "first_band_source": band[1], "withheld": withheld, "rule": why}
