"""The Comparison stage: ligand-field predictions for a complex and the checks
that hold the computed splitting against them.

Predictions (from the geometry alone, and from the computed Δ): d-set order and
degeneracies (angular overlap model, models.aom); Δt/Δo = 4/9 for the same
ligand and distance (AOM and point charges alike; e.g. Figgis & Hitchman,
Ligand Field Theory and Its Applications, 2000 — from memory); CFSE of the
high- and low-spin configurations in units of Δ and in energy; unpaired
electrons and spin-only moments μ = √(n(n+2)) μB; the expected ground spin state.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from dsplit.models import checks as ck
from dsplit.models.aom import aom_levels
from dsplit.models.filling import configurations, spin_only_moment
from dsplit.models.fit import fit_aom
from dsplit.units import hartree_to_ev


def _check_doc(c: ck.Check) -> dict[str, Any]:
    return {"name": c.name, "verdict": c.verdict, "numbers": c.numbers, "detail": c.detail}


def four_ninths_from_aom() -> float:
    """Δt/Δo from the general AOM matrix (σ-only, same eσ): evaluated, not typed in."""
    from dsplit.geometry.polyhedra import polyhedron

    w_oh, _ = aom_levels(polyhedron("octahedral").directions, 1.0, 0.0)
    w_td, _ = aom_levels(polyhedron("tetrahedral").directions, 1.0, 0.0)
    return float((w_td[-1] - w_td[0]) / (w_oh[-1] - w_oh[0]))


def _best_delta_ev(splitting: dict[str, Any], recommended: dict[str, Any] | None = None
                   ) -> tuple[str | None, float | None]:
    """The recommended Δ; without one the state estimator, else the excitation one (never the orbital one)."""
    if recommended and recommended.get("delta_eV") is not None:
        return str(recommended.get("estimator")), float(recommended["delta_eV"])
    for name in ("state", "excitation"):
        v = (splitting.get(name) or {}).get("delta_eV")
        if v is not None:
            return name, float(v)
    return None, None


def _computed_sets(table, splitting: dict[str, Any]) -> tuple[list[str] | None, list[int] | None, str]:
    """Computed d-set order and degeneracies, and where they come from.

    Closed shells: the manifold's degenerate sets.  Open shells: the order from the
    restricted-open orbitals (sets by d character); the degeneracy pattern only when the
    density keeps the framework's symmetry (an open-shell state of a degenerate term splits
    its sets, which is physics, not a failed check).
    """
    if len(table.channels) == 1:
        sets = sorted(table.channels[0].manifold.sets, key=lambda s: s.energy)
        return [str(s.irrep) for s in sets], [int(s.degeneracy) for s in sets], "manifold sets"
    ro = (splitting.get("orbital") or {}).get("restricted_open_sets")
    order = [s["label"] for s in sorted(ro, key=lambda s: s["energy_eV"])] if ro else None
    degs = None
    if table.framework_group in ("", table.point_group):
        sets = sorted(table.channels[-1].manifold.sets, key=lambda s: s.energy)
        degs = [int(s.degeneracy) for s in sets]
    return order, degs, "restricted-open orbitals"


def compare(spec, cx, calc, table, splitting: dict[str, Any], recommended: dict[str, Any] | None = None,
            ligand_field: dict[str, Any] | None = None) -> tuple[dict[str, Any], list[dict[str, Any]]]:
    """(models, checks) documents for result.json.

    ``recommended``: the one recommended Δ (analysis.multiplet_estimate.recommend); every
    estimator is checked against it.  ``ligand_field``: the multiplet fit; its five fitted d
    levels and vectors over-determine the AOM, so the AOM fit is made to them when present.
    """
    sets = cx.d_sets
    model_e = np.array([s.energy for s in sets])
    degs = np.array([s.degeneracy for s in sets])
    source, delta_ev = _best_delta_ev(splitting, recommended)
    predictions: dict[str, Any] = {
        "set_order": [s.label for s in sets], "degeneracies": [int(g) for g in degs],
        "delta_t_over_delta_o": four_ninths_from_aom(),
    }
    if cx.geometry == "octahedral" and delta_ev is not None:
        predictions["delta_t_same_ligand_eV"] = predictions["delta_t_over_delta_o"] * delta_ev
    confs = configurations(model_e, degs, cx.d_count)
    two_set = len(sets) == 2
    gap_model = float(model_e[-1] - model_e[0])
    cfse = {}
    for c in (confs[0], confs[-1]):
        units = c.cfse / gap_model if two_set and gap_model else None
        cfse["HS" if c is confs[0] else "LS"] = {
            "configuration": " ".join(f"{s.label}^{n}" for s, n in zip(sets, c.occupations)),
            "cfse_delta_units": units,
            "cfse_eV": units * delta_ev if (units is not None and delta_ev is not None) else None,
            "extra_pairs": c.extra_pairs, "unpaired": c.unpaired,
            "spin_only_moment_muB": spin_only_moment(c.unpaired)}
    predictions["cfse"] = cfse
    predictions["expected_ground_multiplicity"] = _expected_multiplicity(cx)

    fit_doc, fit = _aom_fit(cx, table, splitting, delta_ev, ligand_field)
    models = {"predictions": predictions, "aom_fit": fit_doc, "delta_source": source}

    checks: list[ck.Check] = []
    comp_labels, comp_degs, where = _computed_sets(table, splitting)
    c = ck.compare_set_order([s.label for s in sets], comp_labels)
    checks.append(ck.Check(c.name, c.verdict, c.numbers, f"{c.detail} ({where})"))
    if comp_degs is None:
        checks.append(ck.Check("degeneracy pattern", ck.NOT_APPLICABLE, {},
                               f"the open-shell density has {table.point_group} symmetry, lower than the "
                               f"framework's {table.framework_group}: its sets split"))
    else:
        checks.append(ck.compare_degeneracy_pattern([int(g) for g in degs], comp_degs))
    checks.append(ck.estimators_agree({k: (splitting.get(k) or {}).get("delta_eV")
                                       for k in ("state", "excitation", "multiplet")}))
    checks += _against_recommended(splitting, recommended, table.open_shell)
    checks.append(ck.fit_residual_check(fit))
    checks.append(ck.four_ninths_check(None, None))
    spin_states = None
    checks.append(ck.spin_state_check(spin_states, predictions["expected_ground_multiplicity"]))
    for band in spec.experiment.measured_bands_cm1[:1]:  # the first measured band against each Δ
        for name in ("orbital", "state", "excitation", "multiplet"):
            v = (splitting.get(name) or {}).get("delta_cm1")
            c = ck.measured_band_check(v, band)
            checks.append(ck.Check(f"measured band vs {name}", c.verdict, c.numbers, c.detail))
    return models, [_check_doc(c) for c in checks]


def _against_recommended(splitting: dict[str, Any], recommended: dict[str, Any] | None,
                         open_shell: bool) -> list[ck.Check]:
    """Every other estimator's Δ against the recommended one (within 15 %, common practice)."""
    if not recommended or recommended.get("delta_cm1") is None:
        return []
    chosen, ref = recommended["estimator"], float(recommended["delta_cm1"])
    out = []
    for name in ("orbital", "state", "excitation", "multiplet"):
        entry = splitting.get(name) or {}
        if name == chosen or not entry:
            continue
        label = f"{name} Δ vs recommended ({chosen})"
        if name == "orbital" and open_shell:
            out.append(ck.Check(label, ck.NOT_APPLICABLE, {"delta_cm1": entry.get("delta_cm1"), "recommended_cm1": ref},
                                "an open-shell orbital gap is not a state energy (it may be twice the band or more)"))
            continue
        c = ck.estimators_agree({name: entry.get("delta_cm1"), chosen: ref})
        out.append(ck.Check(label, c.verdict, c.numbers, c.detail))
    return out


def _expected_multiplicity(cx) -> int:
    from dsplit.chem.spin_default import default_multiplicity

    m, _ = default_multiplicity(cx.counts.multiplicities, cx.metal.row, cx.geometry, cx.d_count,
                                cx.oxidation_state, [pl.ligand.key for pl in cx.ligands], cx.d_sets)
    return m


def _aom_fit(cx, table, splitting, delta_ev, ligand_field=None) -> tuple[dict[str, Any], Any]:
    """Fit eσ/eπ: to the multiplet fit's five d levels and vectors when there are some; else two-set
    geometries to the recommended Δ and others to closed-shell orbital levels."""
    from dsplit.units import cm1_to_ev

    dirs = np.array([pl.direction for pl in cx.ligands])
    types = [pl.ligand.key for pl in cx.ligands]
    sets = cx.d_sets
    h = (ligand_field or {}).get("h_cm1")
    if h is not None:
        w, v = np.linalg.eigh(cm1_to_ev(1.0) * np.asarray(h, dtype=float))
        fit = fit_aom(dirs, w, ligand_types=types, reference="mean", vectors=v)
        return _aom_doc(fit, "the five d levels and vectors of the multiplet fit"), fit
    if len(sets) == 2 and delta_ev is not None:
        levels = [0.0] * sets[0].degeneracy + [delta_ev] * sets[1].degeneracy
        source = "state/excitation Δ"
    elif len(table.channels) == 1:
        ch = table.channels[0]
        levels = sorted(hartree_to_ev(float(ch.energies[i])) for i in ch.manifold.indices)
        source = "closed-shell manifold orbital energies"
    else:
        return {"note": "no level set to fit (open shell with more than two d sets)"}, None
    if len(levels) != 5:
        return {"note": f"manifold has {len(levels)} levels, not 5"}, None
    fit = fit_aom(dirs, levels, ligand_types=types, reference="mean")
    return _aom_doc(fit, source), fit


def _aom_doc(fit, source: str) -> dict[str, Any]:
    return {"fitted_to": source, "unit": "eV", "e_sigma": {str(k): v for k, v in fit.e_sigma.items()},
            "e_pi": {str(k): v for k, v in fit.e_pi.items()}, "rms": fit.rms, "separable": fit.separable,
            "overdetermined": fit.overdetermined, "note": fit.note,
            "predicted_levels": [float(x) for x in fit.predicted], "target_levels": [float(x) for x in fit.target]}
