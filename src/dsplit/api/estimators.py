"""Which calculations the splitting estimators need, in which order, and what is reused.

    transition        analysis.splitting.choose_transition       (from the ground orbitals)
    restricted open   qc.excited.restricted_open_ground          (open shells: orbital levels, ΔSCF fallback)
    orbital           analysis.splitting.orbital_estimate
    state             qc.excited.run_delta_scf → analysis.splitting.state_estimate
    excitation        qc.excited.run_tda (2, then 6, then 12 roots until a band root shows)
                      → analysis.splitting.excitation_estimate
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
    donors = [pl.atom_indices[0] for pl in cx.ligands if pl.ligand.donor != "X"]
    levels = fragment_levels(calc, cx.mole_atom_indices(donors),
                             [np.asarray(pl.direction) for pl in cx.ligands if pl.ligand.donor != "X"])
    models, checks = compare(spec, cx, calc, table, splitting)
    return {"splitting": splitting, "band_meaning": meaning, "models": models, "checks": checks,
            "level_diagram": levels, "splitting_seconds": time.perf_counter() - t0}


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
