"""Which calculations the splitting estimators need, in which order, and what is reused.

    transition        analysis.splitting.choose_transition       (from the ground orbitals)
    restricted open   qc.excited.restricted_open_ground          (open shells: orbital levels, ΔSCF fallback)
    orbital           analysis.splitting.orbital_estimate
    state             qc.excited.run_delta_scf → analysis.splitting.state_estimate
    excitation        qc.excited.run_tda (2, then 6, then 12 roots until a band root shows)
                      → analysis.splitting.excitation_estimate
    multiplet         qc.multiplet.run_multiplet (SA-CASSCF/NEVPT2 over every dⁿ state)
                      → analysis.multiplet_fit (h, B, C) → analysis.multiplet_estimate
    recommended Δ     analysis.multiplet_estimate.recommend (the validated rule)
    fragment levels   qc.fragments.fragment_levels               (level-diagram columns)
    comparison        analysis.comparison.compare                (models, checks, verdicts)

Calculations run in ``qc``; everything else only reads their records.
"""

from __future__ import annotations

import time
from pathlib import Path
from typing import Any, Callable

import numpy as np


def run_estimators(spec, cx, calc, table, folder: Path, progress: Callable | None = None) -> dict[str, Any]:
    """All estimators, the ligand-field comparison and the fragment levels (result.json keys)."""
    from dsplit.analysis import splitting as sp
    from dsplit.analysis.comparison import compare
    from dsplit.analysis.multiplet_estimate import first_band_cm1, recommend
    from dsplit.qc import excited
    from dsplit.qc.fragments import fragment_levels

    t0 = time.perf_counter()
    tr = sp.choose_transition(calc)
    t_ro = time.perf_counter()
    ro = excited.restricted_open_ground(calc, folder, progress) if table.open_shell else None
    splitting: dict[str, Any] = {"orbital": sp.orbital_estimate(calc, table, tr, restricted_open=ro)}
    splitting["orbital"]["seconds"] = time.perf_counter() - t_ro
    if tr is None:
        splitting["state"] = sp.no_band_estimate(calc)
        splitting["excitation"] = sp.no_band_estimate(calc)
    else:
        ro_calc = ro[0] if ro is not None else None
        ro_tr = sp.choose_transition(ro_calc) if ro_calc is not None else None
        record = excited.run_delta_scf(calc, tr, folder, progress, restricted_open=ro_calc,
                                       restricted_open_transition=ro_tr)
        splitting["state"] = sp.state_estimate(calc, record)
        splitting["excitation"] = sp.excitation_estimate(tda_until_band(calc, table, tr), calc, table, tr)
    meaning = sp.band_meaning_doc(calc, tr)
    for name in ("state", "excitation"):
        splitting[name]["measures"] = meaning["text"]
    splitting["orbital"]["measures"] = "one-electron gap between the d sets (not a state energy)"
    multiplet = multiplet_parts(cx, calc, tr, folder, progress)
    splitting["multiplet"] = multiplet.pop("entry")
    donors = [pl.atom_indices[0] for pl in cx.ligands if pl.ligand.donor != "X"]
    levels = fragment_levels(calc, cx.mole_atom_indices(donors),
                             [np.asarray(pl.direction) for pl in cx.ligands if pl.ligand.donor != "X"])
    band = first_band_cm1(multiplet["multiplet_states"], meaning, (splitting["multiplet"] or {}).get("delta_cm1"))
    recommended = recommend(splitting, multiplet["ligand_field"], band, f"{calc.setup.theory}/{calc.setup.basis}")
    models, checks = compare(spec, cx, calc, table, splitting, recommended, multiplet["ligand_field"])
    return {"splitting": splitting, "band_meaning": meaning, "recommended": recommended, **multiplet,
            "measured_fit": measured_band_fit(spec, cx), "models": models, "checks": checks,
            "level_diagram": levels, "splitting_seconds": time.perf_counter() - t0}


def measured_band_fit(spec, cx) -> dict[str, Any] | None:
    """The spec's measured bands fitted with the dⁿ ligand-field model (Δ, B, C/B held), or why not."""
    from dsplit.errors import InputError
    from dsplit.models.band_fit import fit_bands

    bands = list(spec.experiment.measured_bands_cm1)
    if not bands:
        return None
    try:
        fit = fit_bands(cx.d_count, cx.polyhedron, bands, metal=cx.metal.symbol, oxidation_state=cx.oxidation_state,
                        field_name="experiment.measured_bands_cm1")
    except (InputError, ValueError) as exc:
        return {"bands_cm1": bands, "error": str(exc)}
    return {"bands_cm1": bands, **fit.to_dict()}


MULTIPLET_MEASURES = ("Δ of the ligand-field Hamiltonian (h, B, C) fitted to every computed dⁿ state; "
                      "no single determinant stands for the band")


def multiplet_parts(cx, calc, tr, folder: Path, progress: Callable | None = None) -> dict[str, Any]:
    """The multiplet calculation and its fits: {entry (splitting.multiplet), ligand_field, multiplet_states}."""
    from dsplit.analysis.multiplet_estimate import multiplet_estimate, multiplet_state_rows
    from dsplit.analysis.multiplet_fit import UnderdeterminedFit, describe_states, fit_ligand_field
    from dsplit.errors import InputError
    from dsplit.models.multiplet import FrameSymmetry
    from dsplit.qc.multiplet import run_multiplet
    from dsplit.symmetry import detect_point_group

    out: dict[str, Any] = {"ligand_field": None, "multiplet_states": []}
    if cx.d_count in (0, 10):
        out["entry"] = multiplet_estimate(None, None, None, cx.d_sets, tr, MULTIPLET_MEASURES,
                                          f"d{cx.d_count}: no d–d states")
        return out
    try:
        record = run_multiplet(calc, folder=folder, progress=progress)
    except (ValueError, InputError) as exc:
        out["entry"] = multiplet_estimate(None, None, None, cx.d_sets, tr, MULTIPLET_MEASURES, str(exc))
        return out
    fits: dict[str, Any] = {}
    reason = None
    if record.converged and record.verified:
        for energy in ("nevpt2", "casscf"):
            try:
                fits[energy] = fit_ligand_field(record, cx.d_sets, energy, metal=cx.metal.symbol,
                                                oxidation_state=cx.oxidation_state)
            except UnderdeterminedFit as exc:
                reason = f"the computed states do not fix the ligand-field matrix ({exc})"
            except ValueError as exc:  # e.g. no NEVPT2 energies: the CASSCF fit stands in
                reason = str(exc)
    else:
        reason = "the multiplet calculation did not converge or was not verified: " + "; ".join(record.warnings)
    fit = fits.get("nevpt2") or fits.get("casscf")
    out["entry"] = multiplet_estimate(record, fit, fits.get("casscf"), cx.d_sets, tr, MULTIPLET_MEASURES, reason)
    if fit is not None:
        out["ligand_field"] = fit.to_dict()
        sym = detect_point_group(calc.complex.atoms.get_chemical_symbols(), calc.complex.atoms.positions)
        states = describe_states(record, cx.d_sets, FrameSymmetry(sym.group, sym.ops, sym.linear),
                                 energy=fit.source.lower())
        out["multiplet_states"] = multiplet_state_rows(states, f"{record.method} ({fit.source})", calc.multiplicity)
    return out


def tda_until_band(calc, table, tr, root_counts: tuple[int, ...] | None = None) -> list:
    """TDA records for growing root counts until one holds a root of the d–d band (or PySCF fails)."""
    from dsplit.analysis import splitting as sp
    from dsplit.qc import excited

    block = excited.tda_block(calc, tr)
    records = []
    for n in root_counts or sp.ROOT_COUNTS:
        rec = excited.run_tda(calc, n, block)
        records.append(rec)
        if rec.error is not None or sp.has_band_root(rec, calc, table, tr):
            break
    return records
