"""result.json: the schema-versioned record of one run, built from the stage objects.

Energies in reports are eV / cm⁻¹ / kJ mol⁻¹ via dsplit.units (CODATA).
Reporting never recomputes physics: every number here comes from a stage result.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from dsplit.units import hartree_to_ev
from dsplit.qc.ladder import STABILITY_TOL

SCHEMA_NAME = "dsplit.result"
SCHEMA_VERSION = 1

CAUTIONS = (
    "Computed values are approximations that depend on the method, basis set, solvent model and geometry; "
    "they are not measurements.",
    "Confirm any spin state, splitting or colour prediction by experiment before relying on it.",
    "Follow local safety rules and licensed practice when making or handling these compounds; many are toxic.",
)


def _num(x: Any) -> Any:
    """JSON-safe numbers: numpy scalars to Python, NaN/inf to None."""
    if isinstance(x, (np.floating, float)):
        x = float(x)
        return None if not math.isfinite(x) else x
    if isinstance(x, np.bool_):
        return bool(x)
    if isinstance(x, np.integer):
        return int(x)
    if isinstance(x, np.ndarray):
        return _num(x.tolist())
    if isinstance(x, dict):
        return {str(k): _num(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_num(v) for v in x]
    return x


def complex_section(cx) -> dict[str, Any]:
    return {
        "formula": cx.formula, "metal": cx.metal.symbol, "oxidation_state": cx.oxidation_state,
        "charge": cx.charge, "d_electrons": cx.d_count, "geometry": cx.geometry, "isomer": cx.isomer,
        "point_group": cx.point_group, "exact_point_group": cx.exact_point_group,
        "multiplicity": cx.multiplicity, "multiplicity_source": cx.multiplicity_source,
        "multiplicities": cx.counts.multiplicities,
        "configuration_target": cx.configuration, "configuration_source": cx.configuration_source,
        "high_spin_configuration": cx.counts.high_spin, "low_spin_configuration": cx.counts.low_spin,
        "d_sets": [{"label": s.label, "orbitals": list(s.orbitals)} for s in cx.d_sets],
        "metal_ligand_distances": cx.metal_ligand_distances(),
        "ligands": [{"ligand": pl.ligand.key, "site": pl.site, "distance": pl.distance,
                     "direction": list(pl.direction)} for pl in cx.ligands],
        "atoms": [{"symbol": s, "position": [float(v) for v in p]}
                  for s, p in zip(cx.atoms.get_chemical_symbols(), cx.atoms.positions)],
        "notes": list(cx.notes),
    }


def method_section(calc) -> dict[str, Any]:
    st = calc.setup
    mf = calc.mf
    reference = type(mf).__name__
    return {
        "theory": st.theory, "exact_exchange": st.exact_exchange, "basis": st.basis, "ecp": st.ecp,
        "density_fitting": st.density_fitting,
        "auxbasis": getattr(getattr(mf, "with_df", None), "auxbasis", None) if st.density_fitting else None,
        "solvent": {"name": st.solvent.name, "epsilon": st.solvent.epsilon, "model": None if
                    st.solvent.is_gas_phase else "PCM (IEF-PCM, PySCF)", "reason": st.solvent.reason},
        "reference": reference, "open_shell": st.open_shell, "grid_level": None if st.is_hf else st.grid_level,
        "threads": st.threads, "memory_mb": st.memory_mb, "nao": int(calc.mol.nao_nr()),
        "symmetry_group_scf": calc.symmetry_group,
    }


def scf_section(calc) -> dict[str, Any]:
    final = next((r for r in reversed(calc.rungs) if r.converged), calc.rungs[-1] if calc.rungs else None)
    return {
        "rung": final.rung if final else None,
        "iterations": sum(r.cycles for r in calc.rungs),
        "gradient_norm": final.gradient_norm if final else None,
        "rungs": [{"rung": r.rung, "converged": r.converged, "cycles": r.cycles, "energy_hartree": r.energy_hartree,
                   "gradient_norm": r.gradient_norm, "seconds": r.seconds} for r in calc.rungs],
        "stability": {"lowest_hessian_eigenvalue": calc.stability_lowest,
                      "instabilities_followed": calc.stability_followed,
                      "stable": None if calc.stability_lowest is None else calc.stability_lowest >= -STABILITY_TOL,
                      "tolerance": STABILITY_TOL},
        "targeting": calc.targeting,
    }


def orbitals_section(calc, table=None) -> list[dict[str, Any]]:
    """Per orbital: index, spin, energy_eV, occupation, irrep_d2h (+ full-group labels and composition)."""
    rows = []
    chans = calc.channels
    names = ["restricted"] if len(chans) == 1 else ["alpha", "beta"]
    for k, (name, (c, occ, e)) in enumerate(zip(names, chans)):
        abel = calc.abelian_labels(k)
        ch = table.channels[k] if table is not None else None
        for i in range(len(e)):
            row = {"index": i, "spin": name, "energy_eV": hartree_to_ev(float(e[i])), "occupation": float(occ[i]),
                   "irrep_d2h": abel[i] if abel is not None and calc.symmetry_group == "D2h" else None,
                   "irrep_subgroup": abel[i] if abel is not None else None}
            if ch is not None:
                comp = ch.composition
                row.update({"irrep": ch.irreps[i], "irrep_weight": ch.irrep_weights[i],
                            "donor_irrep": ch.donor_irreps.get(i),
                            "metal_d": float(comp.metal_d[i]), "metal_s": float(comp.metal_s[i]),
                            "metal_p": float(comp.metal_p[i]), "ligand": float(comp.ligand[i]),
                            "other": float(comp.other[i]),
                            "per_ligand": [float(v) for v in comp.per_ligand[i]],
                            "in_manifold": i in ch.manifold.indices})
            rows.append(row)
    return rows


def manifold_section(table) -> list[dict[str, Any]]:
    out = []
    for ch in table.channels:
        for s in ch.manifold.sets:
            out.append({"spin": ch.spin, "irrep": s.irrep, "degeneracy": s.degeneracy, "energy_eV": s.energy_ev,
                        "occupation": s.occupation, "metal_d": s.metal_d, "orbitals": list(s.indices)})
    return out


def salcs_section(table) -> dict[str, Any] | None:
    s = table.salcs
    if s is None:
        return None
    return {"group": s.group, "sigma": s.sigma, "pi": s.pi, "metal": s.metal,
            "nonbonding_sigma": s.nonbonding_sigma, "nonbonding_pi": s.nonbonding_pi}


def build_result(spec, cx, calc, table=None, extra: dict[str, Any] | None = None) -> dict[str, Any]:
    """The whole result.json document."""
    from dsplit.qc.engine import machine_info, provenance_versions

    ss, mult = calc.spin_square()
    s = (calc.multiplicity - 1) / 2
    doc: dict[str, Any] = {
        "schema": SCHEMA_NAME, "schema_version": SCHEMA_VERSION,
        "name": spec.name, "spec": spec.normalised(), "spec_hash": spec.content_hash(),
        "complex": complex_section(cx), "method": method_section(calc),
        "converged": calc.converged, "configuration_verified": calc.configuration_verified,
        "configuration": calc.configuration_found,
        "configuration_target": " ".join(f"{d.label}^{n}" for d, n in zip(cx.d_sets, calc.target_occupations)),
        "multiplicity": calc.multiplicity,
        "energy_hartree": calc.energy_hartree if calc.converged else None,
        "spin_square": ss, "spin_square_expected": s * (s + 1),
        "scf": scf_section(calc),
        "orbitals": orbitals_section(calc, table),
        "provenance": {"versions": provenance_versions(), "machine": machine_info(),
                       "timings": {"calculation": calc.timings,
                                   "analysis": table.timings if table is not None else None}},
        "notes": list(calc.notes), "warnings": list(calc.warnings), "cautions": list(CAUTIONS),
    }
    if table is not None:
        doc["point_group"] = {"labels": table.point_group, "donor_set": table.donor_point_group,
                              "framework": table.framework_group or table.point_group,
                              "scf_subgroup": table.abelian_group}
        doc["manifold"] = manifold_section(table)
        doc["manifold_warnings"] = [w for ch in table.channels for w in ch.manifold.warnings]
        doc["salcs"] = salcs_section(table)
        doc["label_disagreements"] = [d for ch in table.channels for d in ch.disagreements]
        doc["notes"] += table.notes
        if doc["label_disagreements"]:
            doc["warnings"].append(f"{len(doc['label_disagreements'])} orbital set(s) whose full-group label does "
                                   "not correlate with PySCF's subgroup label (see label_disagreements)")
    if extra:
        doc.update(extra)
    return _num(doc)
