"""Report pieces of the multiplet estimator: the fitted ligand-field parameters, every computed
dⁿ state, and the term diagram with this complex's point and the measured bands on it.

Read from result.json (``ligand_field``, ``multiplet_states``, ``splitting.multiplet``,
``measured_fit``); the term diagram evaluates the dⁿ model (models.term_curves) at the
document's Δ, B and C — a drawing of the fitted parameters, not a new calculation.
"""

from __future__ import annotations

from typing import Any

from dsplit.report.blocks import MISSING, Image, Para, Section, Table, num, text
from dsplit.units import cm1_to_ev, cm1_to_nm

TERM_DIAGRAM = "term_diagram"
#: states of one 2S+1 and irrep this close (cm⁻¹) are one level: symmetry partners differ only by numerical
#: noise (measured ≤ 5 cm⁻¹ for ³T1g of [V(H2O)6]3+, B3LYP/3-21G, PCM)
LEVEL_CM1 = 20.0
#: the diagram's x range reaches past the complex's Δ/B by this factor (at least 40)
X_MARGIN = 1.4


def _cm1(x: Any) -> str:
    return num(x, 0) if isinstance(x, (int, float)) else MISSING


def parameters_table(lf: dict[str, Any]) -> Table:
    """Δ, B, C, β, C/B and the fit residual, one labelled row each."""
    b, c = lf.get("B_cm1"), lf.get("C_cm1")
    rows = [["Δ (ligand-field splitting of the fitted d levels)", _cm1(lf.get("delta_cm1")), "cm⁻¹"],
            ["Racah B", _cm1(b), "cm⁻¹"], ["Racah C", _cm1(c), "cm⁻¹"],
            ["C/B", num(c / b, 2) if isinstance(b, (int, float)) and isinstance(c, (int, float)) and b else MISSING,
             "—"],
            ["β = B / B(free ion) (nephelauxetic ratio)", num(lf.get("beta"), 2), "—"],
            ["fit residual (RMS, model − computed states)", num(lf.get("residual_cm1"), 0), "cm⁻¹"],
            ["state energies fitted", text(lf.get("source")), ""]]
    levels = lf.get("levels_cm1")
    if isinstance(levels, list) and levels:
        rows.append(["fitted d-level energies", ", ".join(num(v, 0) for v in levels), "cm⁻¹"])
    return Table(["quantity", "value", "unit"], rows, "ligand-field parameters fitted to every computed dⁿ state")


def states_table(states: list[dict[str, Any]]) -> Table:
    """Every computed state above the ground state; partners of one level (same 2S+1 and irrep within
    ``LEVEL_CM1``) on one row at their mean energy."""
    levels: list[list[dict[str, Any]]] = []
    for s in sorted(states, key=lambda s: float(s.get("energy_cm1") or 0.0)):
        e = float(s.get("energy_cm1") or 0.0)
        head = levels[-1][0] if levels else None
        if head is not None and (head.get("multiplicity"), head.get("irrep")) == (s.get("multiplicity"), s.get("irrep")) \
                and e - float(head.get("energy_cm1") or 0.0) < LEVEL_CM1:
            levels[-1].append(s)
        else:
            levels.append([s])
    rows = []
    for i, level in enumerate(levels):
        s = level[0]
        e = sum(float(x.get("energy_cm1") or 0.0) for x in level) / len(level)
        allowed = "ground state" if i == 0 else ("yes" if s.get("spin_allowed") else "no")
        rows.append([_cm1(e) if i else "0", num(cm1_to_ev(e), 3) if i else "0", num(cm1_to_nm(e), 0) if i and e > 0 else MISSING,
                     text(s.get("multiplicity")), text(s.get("irrep")), str(len(level)), allowed,
                     text(s.get("configurations"))])
    return Table(["E above ground / cm⁻¹", "E / eV", "λ / nm", "2S+1", "irrep", "states in the level",
                  "spin-allowed from the ground state", "leading d configurations (weight)"], rows,
                 "every dⁿ state of the multiplet calculation")


def multiplet_section(doc: dict[str, Any], figure: str | None = None) -> Section | None:
    """Parameters, states and term diagram; None when the estimator did not run."""
    entry = (doc.get("splitting") or {}).get("multiplet")
    if not isinstance(entry, dict):
        return None
    blocks: list = []
    lf = doc.get("ligand_field")
    if isinstance(lf, dict):
        blocks.append(parameters_table(lf))
        if lf.get("B_cm1") is None:
            blocks.append(Para("B and C are not fixed by these states (one d electron or hole: no "
                               "interelectronic repulsion among the d states)", "note"))
    else:
        reason = "; ".join(str(n) for n in entry.get("notes") or []) or "no fit"
        blocks.append(Para(f"multiplet estimator withheld: {reason}", "warning"))
    states = doc.get("multiplet_states") or []
    if states:
        blocks.append(states_table(states))
    if entry.get("solvent"):
        blocks.append(Para(f"Continuum solvent in the multiplet calculation: {text(entry['solvent'])}.", "note"))
    if figure:
        blocks.append(Image(figure, "term diagram", "term diagram of the dⁿ ligand-field model at the fitted C/B: "
                            "dashed line at this complex's Δ/B; diamonds: the measured bands, when given"))
    return Section("d–d states and ligand-field parameters (multiplet estimator)", blocks)


def term_diagram_figure(doc: dict[str, Any]):
    """The term diagram for this dⁿ, donor-set shape and fitted C/B (None when B is not known)."""
    from dsplit.geometry.polyhedra import polyhedron
    from dsplit.models.field_shape import polyhedron_shape
    from dsplit.models.term_curves import term_curves
    from dsplit.report.term_diagram import draw_term_diagram

    lf = doc.get("ligand_field")
    cx = doc.get("complex") or {}
    if not isinstance(lf, dict) or not lf.get("B_cm1") or not lf.get("C_cm1") or not lf.get("delta_cm1"):
        return None
    n, geometry = cx.get("d_electrons"), cx.get("geometry")
    if not isinstance(n, int) or not 2 <= n <= 8 or not geometry:
        return None
    b, c, delta = float(lf["B_cm1"]), float(lf["C_cm1"]), float(lf["delta_cm1"])
    point = abs(delta) / b
    curves = term_curves(n, polyhedron_shape(polyhedron(str(geometry))), c / b, x_max=max(40.0, X_MARGIN * point))
    bands = [float(x) for x in ((doc.get("measured_fit") or {}).get("bands_cm1") or [])]
    return draw_term_diagram(curves, point=point, bands_cm1=bands or None, b_cm1=b,
                             title=f"d{n} {geometry}: terms at C/B = {c / b:.2f} (fitted B = {b:.0f} cm⁻¹)")
