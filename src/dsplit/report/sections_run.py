"""Report sections about the run itself: status, cautions, complex, method, orbitals, provenance.

Everything shown is read from result.json; nothing is recomputed.
"""

from __future__ import annotations

from collections import Counter
from typing import Any

from dsplit.report.blocks import MISSING, Items, Para, Section, Table, because, key_values, num, pct, text

SPIN_ORDER = ("restricted", "alpha", "beta")
SPIN_NAMES = {"restricted": "restricted", "alpha": "α", "beta": "β"}
_SUP = str.maketrans("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")


def is_result(doc: dict[str, Any]) -> bool:
    """True only when the SCF converged and its d configuration was verified."""
    return bool(doc.get("converged")) and bool(doc.get("configuration_verified"))


def d_label(n: Any) -> str:
    """dⁿ with a superscript count (d³)."""
    return f"d{str(n).translate(_SUP)}" if n is not None else MISSING


def spins(doc: dict[str, Any]) -> list[str]:
    """Spin channels present in the orbital list, in the order restricted, α, β."""
    have = {o.get("spin") for o in doc.get("orbitals") or []}
    return [s for s in SPIN_ORDER if s in have]


def failure_reasons(doc: dict[str, Any]) -> list[str]:
    """Why a document is not a result, in words."""
    out = []
    scf = doc.get("scf") or {}
    if not doc.get("converged"):
        out.append(f"the SCF did not converge (last rung: {text(scf.get('rung'))}, "
                   f"{text(scf.get('iterations'))} cycles in all)")
    if not doc.get("configuration_verified"):
        out.append(f"the d configuration found ({text(doc.get('configuration'))}) was not verified "
                   f"against the target ({text(doc.get('configuration_target'))})")
    if doc.get("splitting_withheld"):
        out.append(str(doc["splitting_withheld"]))
    return out


def status_section(doc: dict[str, Any]) -> Section | None:
    """The prominent NOT A RESULT section (None for a valid result)."""
    if is_result(doc):
        return None
    return Section("NOT A RESULT", [
        Para("This calculation is not a result and must not be used as one.", "alert"),
        Items(failure_reasons(doc), "alert"),
        Para("No splitting values, estimator table, model fit or checks are given for this run. "
             "The orbital list below is shown only to diagnose the failure.", "alert"),
    ], kind="alert")


def cautions_section(doc: dict[str, Any]) -> Section:
    cautions = doc.get("cautions")
    if not cautions:
        from dsplit.report.result import CAUTIONS

        cautions = list(CAUTIONS)
    return Section("Cautions", [Items([str(c) for c in cautions], "caution")], kind="caution")


def _signed(n: Any) -> str:
    return f"{n:+d}".replace("-", "−") if isinstance(n, int) else text(n)


def complex_section(doc: dict[str, Any]) -> Section:
    cx = doc.get("complex") or {}
    pg = doc.get("point_group") or {}
    mult = doc.get("multiplicity", cx.get("multiplicity"))
    counts = Counter(lig.get("ligand") for lig in cx.get("ligands") or [])
    dist = cx.get("metal_ligand_distances") or {}
    isomer = cx.get("isomer")
    pairs: list[tuple[str, Any]] = [
        ("formula", cx.get("formula")),
        ("metal", f"{text(cx.get('metal'))}, oxidation state {_signed(cx.get('oxidation_state'))}"),
        ("d electrons", d_label(cx.get("d_electrons"))),
        ("charge", _signed(cx.get("charge"))),
        ("geometry", text(cx.get("geometry")) + (f" ({isomer} isomer)" if isomer and isomer != "only" else "")),
        ("ligands", ", ".join(f"{k} × {v}" for k, v in counts.items()) or None),
        ("metal–ligand distance / Å", "; ".join(f"{k} {num(v, 3)}" for k, v in dist.items()) or None),
        ("point group of the donor set", cx.get("point_group")),
        ("exact point group", cx.get("exact_point_group")),
        ("group used for orbital labels", pg.get("labels")),
        ("multiplicity 2S+1", because(mult, cx.get("multiplicity_source"))),
        ("allowed multiplicities", cx.get("multiplicities")),
        ("target configuration", because(doc.get("configuration_target") or cx.get("configuration_target"),
                                         cx.get("configuration_source"))),
        ("configuration found", doc.get("configuration")),
        ("high-spin / low-spin configuration",
         f"{text(cx.get('high_spin_configuration'))} / {text(cx.get('low_spin_configuration'))}"
         if cx.get("high_spin_configuration") else None),
    ]
    blocks: list = [key_values(pairs)]
    if cx.get("notes"):
        blocks.append(Items([str(n) for n in cx["notes"]], "note"))
    return Section("The complex", blocks)


def _ecp_text(m: dict[str, Any]) -> str:
    return text(m["ecp"]) if m.get("ecp") else "none (all-electron basis)"


def method_section(doc: dict[str, Any]) -> Section:
    m = doc.get("method") or {}
    why = m.get("reasons") or {}
    sol = m.get("solvent") or {}
    scf = doc.get("scf") or {}
    stab = scf.get("stability") or {}

    exx = m.get("exact_exchange")
    solvent = because("gas phase" if not sol.get("name") else
                      f"{sol['name']} (ε = {num(sol.get('epsilon'), 2)}, {text(sol.get('model'))})", sol.get("reason"))
    df = m.get("density_fitting")
    pairs: list[tuple[str, Any]] = [
        ("theory", because(text(m.get("theory")) + (f" (exact exchange {pct(exx)} %)" if exx is not None else ""),
                           why.get("theory"))),
        ("basis", because(m.get("basis"), why.get("basis"))),
        ("ECP", because(_ecp_text(m), why.get("ecp"))),
        ("density fitting", (f"yes ({text(m.get('auxbasis'))})" if df else "no") if df is not None else None),
        ("solvent", solvent),
        ("reference", m.get("reference")),
        ("integration grid level", m.get("grid_level")),
        ("basis functions", m.get("nao")),
        ("symmetry used in the SCF", m.get("symmetry_group_scf") or "none"),
        ("threads", m.get("threads")),
        ("SCF rung / cycles", f"{text(scf.get('rung'))} / {text(scf.get('iterations'))}"),
        ("final orbital-gradient norm", scf.get("gradient_norm")),
        ("stability", _stability_text(stab) if stab else None),
        ("configuration targeting", scf.get("targeting")),
        ("total energy / Eh", num(doc.get("energy_hartree"), 8) if doc.get("energy_hartree") is not None else None),
        ("⟨S²⟩ (expected S(S+1))",
         f"{num(doc.get('spin_square'), 4)} ({num(doc.get('spin_square_expected'), 4)})"
         if doc.get("spin_square") is not None else None),
    ]
    blocks: list = [key_values(pairs)]
    rungs = scf.get("rungs") or []
    if len(rungs) > 1:
        blocks.append(Table(["rung", "converged", "cycles", "E / Eh", "gradient norm", "time / s"],
                            [[text(r.get("rung")), text(r.get("converged")), text(r.get("cycles")),
                              num(r.get("energy_hartree"), 8), num(r.get("gradient_norm"), 6),
                              num(r.get("seconds"), 1)] for r in rungs], "SCF ladder"))
    return Section("Method", blocks)


def _stability_text(stab: dict[str, Any]) -> str:
    verdict = {True: "stable", False: "UNSTABLE", None: "not tested"}[stab.get("stable")]
    return (f"{verdict}; lowest orbital-Hessian eigenvalue {num(stab.get('lowest_hessian_eigenvalue'), 4)}, "
            f"instabilities followed: {text(stab.get('instabilities_followed'))}")


def frontier_section(doc: dict[str, Any]) -> Section | None:
    from dsplit.report.terminal import frontier_rows

    if not doc.get("orbitals"):
        return None
    pg = doc.get("point_group") or {}
    labels = pg.get("labels") or (doc.get("complex") or {}).get("exact_point_group") or "full group"
    donor = pg.get("donor_set")
    with_donor = donor and any(o.get("donor_irrep") for o in doc["orbitals"])
    group = f"{donor} / {labels}" if with_donor else labels
    sub = pg.get("scf_subgroup") or (doc.get("method") or {}).get("symmetry_group_scf") or "subgroup"
    blocks: list = []
    for spin in spins(doc):
        rows = []
        for o in reversed(frontier_rows(doc, spin)):
            rows.append([text(o.get("index")), num(o.get("energy_eV"), 3), num(o.get("occupation"), 0),
                         text(o.get("donor_irrep") or o.get("irrep")), text(o.get("irrep_subgroup")),
                         pct(o.get("metal_d")), pct(o.get("ligand")), "●" if o.get("in_manifold") else ""])
        blocks.append(Table(["#", "E / eV", "occ", f"irrep ({group})", f"PySCF ({sub})", "metal d %",
                             "ligand %", "d manifold"], rows, f"{SPIN_NAMES[spin]} orbitals around HOMO/LUMO"))
    where = (f"in the donor-set group {donor} where such a label exists, else in {labels}" if with_donor
             else f"in {labels}")
    blocks.append(Para(f"Irreps are {where}; the PySCF label is in the abelian subgroup {sub} used by the SCF. "
                       "Metal d and ligand shares are IAO populations; ● marks the ligand-field manifold.", "note"))
    return Section("Frontier orbitals", blocks)


def manifold_section(doc: dict[str, Any]) -> Section | None:
    sets = doc.get("manifold")
    if not sets:
        return None
    rows = [[SPIN_NAMES.get(s.get("spin"), text(s.get("spin"))), text(s.get("irrep")), text(s.get("degeneracy")),
             num(s.get("energy_eV"), 3), num(s.get("occupation"), 0), pct(s.get("metal_d")), text(s.get("orbitals"))]
            for s in sets]
    blocks: list = [Table(["spin", "set", "degeneracy", "E / eV", "electrons", "metal d %", "orbitals"], rows)]
    if doc.get("manifold_warnings"):
        blocks.append(Items([str(w) for w in doc["manifold_warnings"]], "warning"))
    return Section("Ligand-field manifold", blocks)


def notes_section(doc: dict[str, Any]) -> Section | None:
    blocks: list = []
    if doc.get("warnings"):
        blocks.append(Items([str(w) for w in doc["warnings"]], "warning"))
    if doc.get("notes"):
        blocks.append(Items([str(n) for n in doc["notes"]], "note"))
    for d in doc.get("label_disagreements") or []:
        blocks.append(Para(f"label disagreement: {text(d)}", "warning"))
    return Section("Notes and warnings", blocks) if blocks else None


def _flat(prefix: str, x: Any) -> list[tuple[str, Any]]:
    if isinstance(x, dict):
        return [kv for k, v in x.items() for kv in _flat(f"{prefix} · {k}" if prefix else str(k), v)]
    return [(prefix, num(x, 2) if isinstance(x, float) else x)]


def provenance_section(doc: dict[str, Any]) -> Section:
    prov = doc.get("provenance") or {}
    versions = prov.get("versions") or {}
    pairs: list[tuple[str, Any]] = [
        ("schema", f"{text(doc.get('schema'))} v{text(doc.get('schema_version'))}"),
        ("run name", doc.get("name")), ("run id", doc.get("run_id")), ("spec hash", doc.get("spec_hash")),
        ("versions", ", ".join(f"{k} {v}" for k, v in versions.items()) or None),
        ("machine", prov.get("machine")),
    ]
    blocks: list = [key_values(pairs)]
    timings = _flat("", prov.get("timings") or {})
    if timings:
        blocks.append(key_values(timings, "timings / s"))
    return Section("Provenance", blocks)
