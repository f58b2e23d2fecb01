"""Report sections about the findings: splitting estimators, bands, models, checks, spin states.

Numbers are read from result.json.  Unit changes use dsplit.units (CODATA);
a band at wavenumber ν̃ has the vacuum wavelength λ = 1/ν̃ (units.cm1_to_nm).
The splitting, model and check sections are built only for a converged, verified run.
"""

from __future__ import annotations

from typing import Any

from dsplit.units import cm1_to_ev, cm1_to_nm, ev_to_cm1
from dsplit.report.blocks import (MISSING, Image, Items, Para, Section, Table, is_number, key_values, num, pct, text,
                                  unit, value)

ESTIMATORS = ("orbital", "state", "excitation")
_WARN_KEYS = ("warning", "warnings", "reason", "error", "notes")
_DELTA_KEYS = {"delta_eV", "delta_cm1", "delta_kJmol", "measures", "roots", "per_spin", *_WARN_KEYS}


def wavenumber(entry: dict[str, Any], cm1_key: str = "delta_cm1", ev_key: str = "delta_eV") -> float | None:
    """The entry's wavenumber in cm⁻¹ (from eV via units.ev_to_cm1 when only eV is given)."""
    if is_number(entry.get(cm1_key)):
        return float(entry[cm1_key])
    if is_number(entry.get(ev_key)):
        return ev_to_cm1(float(entry[ev_key]))
    return None


def wavelength_text(cm1: float | None) -> str:
    """λ / nm of a band at ν̃ (λ = 1/ν̃), one decimal."""
    return num(cm1_to_nm(cm1), 1) if cm1 is not None and cm1 > 0 else MISSING


def estimator_entries(doc: dict[str, Any]) -> list[tuple[str, dict[str, Any]]]:
    """(name, entry) of the splitting section: orbital, state, excitation first, then any others."""
    split = doc.get("splitting")
    if not isinstance(split, dict):
        return []
    names = [k for k in ESTIMATORS if k in split] + sorted(k for k in split if k not in ESTIMATORS)
    return [(k, split[k]) for k in names if isinstance(split[k], dict)]


def _warnings(entry: dict[str, Any]) -> str:
    out: list[str] = []
    for k in _WARN_KEYS:
        v = entry.get(k)
        if isinstance(v, (list, tuple)):
            out += [str(x) for x in v]
        elif v:
            out.append(str(v))
    return "; ".join(out)


def _delta_row(name: str, e: dict[str, Any]) -> list[str]:
    cm1 = wavenumber(e)
    if cm1 is None:
        return [name, "no value", MISSING, MISSING, MISSING, text(e.get("measures")), _warnings(e)]
    return [name, num(e.get("delta_eV"), 3), num(cm1, 0), num(e.get("delta_kJmol"), 1), wavelength_text(cm1),
            text(e.get("measures")), _warnings(e)]


_DELTA_HEADERS = ["Δ / eV", "Δ / cm⁻¹", "Δ / kJ mol⁻¹", "band at Δ / nm", "what it measures", "warnings"]


def splitting_section(doc: dict[str, Any]) -> Section | None:
    entries = estimator_entries(doc)
    if not entries:
        return None
    blocks: list = [Table(["estimator"] + _DELTA_HEADERS, [_delta_row(k, e) for k, e in entries],
                          "Δ from each estimator", badge_column=None)]
    blocks.append(Para("orbital: gap of the ligand-field orbital energies; state: ΔSCF energy of one d electron "
                       "moved to the upper set; excitation: TDDFT/TDA d–d excitation. The wavelength is the vacuum "
                       "wavelength λ = 1/ν̃ of a band at Δ.", "note"))
    if doc.get("estimators_failed"):
        blocks.append(Para(f"estimators that failed: {text(doc['estimators_failed'])}", "warning"))
    for name, e in entries:
        per_spin = e.get("per_spin")
        if isinstance(per_spin, dict) and set(per_spin) - {"restricted"}:
            rows = [_delta_row({"alpha": "α", "beta": "β"}.get(s, s), v) if isinstance(v, dict)
                    else [s, text(v)] + [MISSING] * 5 for s, v in per_spin.items()]
            blocks.append(Table(["spin"] + _DELTA_HEADERS, rows, f"{name} estimator per spin"))
        extra = [(k, v) for k, v in e.items() if k not in _DELTA_KEYS]
        if extra:
            blocks.append(key_values([(k.replace("_", " "), v) for k, v in extra], f"{name} estimator details"))
        if e.get("roots"):
            blocks.append(roots_table(e["roots"]))
    return Section("Ligand-field splitting Δ", blocks)


def roots_table(roots: list[dict[str, Any]]) -> Table:
    """Excited-state roots with energies, vacuum wavelength, oscillator strength and symmetry."""
    rows = []
    for i, r in enumerate(roots, 1):
        cm1 = wavenumber(r, "energy_cm1", "energy_eV")
        dd = {True: "yes", False: "no"}.get(r.get("d_d"), MISSING)
        if is_number(r.get("d_d_weight")):
            dd += f" ({pct(r['d_d_weight'])} %)"
        band = {True: "yes", False: "no"}.get(r.get("ligand_field_band"), MISSING)
        if is_number(r.get("band_weight")):
            band += f" ({pct(r['band_weight'])} %)"
        rows.append([str(i), num(r.get("energy_eV"), 3), num(cm1, 0), wavelength_text(cm1),
                     num(r.get("oscillator_strength"), 5), text(r.get("symmetry") or None), dd, band])
    return Table(["root", "E / eV", "ν̃ / cm⁻¹", "λ / nm", "f", "symmetry", "d–d (d-manifold weight)",
                  "lower → upper d set (weight)"], rows,
                 "predicted bands (excitation estimator)")


def _per_ligand(x: Any) -> dict[str, Any]:
    return x if isinstance(x, dict) else {"all ligands": x}


_PREDICTION_NAMES = {
    "set_order": "d-set order (low → high)", "degeneracies": "degeneracies",
    "delta_t_over_delta_o": "Δt/Δo (same ligand and distance)", "cfse": "CFSE",
    "unpaired": "unpaired electrons", "spin_only_moment": "spin-only moment / μB",
    "expected_ground_multiplicity": "expected ground multiplicity 2S+1",
}


def _is_record_map(x: Any) -> bool:
    return isinstance(x, dict) and bool(x) and all(isinstance(v, dict) for v in x.values())


def record_map_table(records: dict[str, dict[str, Any]], caption: str) -> Table:
    """{row name: {column: value}} as a table (e.g. CFSE per HS / LS)."""
    keys = list(dict.fromkeys(k for r in records.values() for k in r))
    return Table([""] + [k.replace("_", " ") for k in keys],
                 [[str(name)] + [value(k, r.get(k)) for k in keys] for name, r in records.items()], caption)


def measured_bands(doc: dict[str, Any]) -> list[dict[str, Any]]:
    """doc['measured'] ([{band_cm1, ...}]), else the spec's experiment.measured_bands_cm1."""
    if doc.get("measured"):
        return [b if isinstance(b, dict) else {"band_cm1": b} for b in doc["measured"]]
    exp = (doc.get("spec") or {}).get("experiment") or {}
    src = exp.get("source") or None
    return [{"band_cm1": b, "source": src} for b in exp.get("measured_bands_cm1") or []]


def models_section(doc: dict[str, Any]) -> Section | None:
    models = doc.get("models")
    if not isinstance(models, dict) or not models:
        return None
    blocks: list = []
    fit = models.get("aom_fit")
    if isinstance(fit, dict):
        u = f" / {unit(fit['unit'])}" if fit.get("unit") else ""
        es, ep = _per_ligand(fit.get("e_sigma")), _per_ligand(fit.get("e_pi"))
        rows = [[str(k), text(es.get(k)), text(ep.get(k))] for k in dict.fromkeys([*es, *ep])]
        blocks.append(Table(["ligand", f"eσ{u}", f"eπ{u}"], rows, "angular overlap model fit"))
        rest = [(f"RMS residual{u}", fit.get("rms"))] + [
            (k.replace("_", " "), v) for k, v in fit.items() if k not in {"e_sigma", "e_pi", "rms", "unit"}]
        blocks.append(key_values(rest))
    elif fit is not None:
        blocks.append(Para(f"angular overlap model fit: {text(fit)}", "note"))
    pred = models.get("predictions")
    if isinstance(pred, dict):
        nested = {k: v for k, v in pred.items() if _is_record_map(v)}
        blocks.append(key_values([(_PREDICTION_NAMES.get(k, k.replace("_", " ")), v) for k, v in pred.items()
                                  if k not in nested], "ligand-field predictions"))
        blocks += [record_map_table(v, _PREDICTION_NAMES.get(k, k.replace("_", " "))) for k, v in nested.items()]
    meaning = models.get("band_meaning") or doc.get("band_meaning")
    if meaning:
        what = meaning.get("text") if isinstance(meaning, dict) else meaning
        blocks.append(Para(f"first band: {text(what)}"))
    known = {"aom_fit", "predictions", "band_meaning"}
    others = [(k.replace("_", " "), v) for k, v in models.items() if k not in known]
    if others:
        blocks.append(key_values(others))
    return Section("Ligand-field models", blocks) if blocks else None


def checks_section(doc: dict[str, Any]) -> Section | None:
    checks = doc.get("checks")
    if not checks:
        return None
    rows = [[text(c.get("name")), text(c.get("verdict")), text(c.get("numbers") or None), text(c.get("detail") or None)]
            for c in checks if isinstance(c, dict)]
    tally = {v: sum(r[1] == v for r in rows) for v in ("agrees", "differs", "not applicable")}
    summary = ", ".join(f"{n} {v}" for v, n in tally.items() if n)
    return Section("Checks", [Para(summary or "no checks"), Table(["check", "verdict", "numbers", "detail"], rows,
                                                                  badge_column=1)])


def measured_section(doc: dict[str, Any], with_computed: bool) -> Section | None:
    bands = measured_bands(doc)
    if not bands:
        return None
    ests = [(k, wavenumber(e)) for k, e in estimator_entries(doc)] if with_computed else []
    ests = [(k, c) for k, c in ests if c is not None]
    rows = []
    for b in bands:
        m = b.get("band_cm1")
        row = [num(m, 0), wavelength_text(m) if is_number(m) else MISSING,
               num(cm1_to_ev(m), 3) if is_number(m) else MISSING]
        for _, c in ests:
            row.append(f"{num(c, 0)} ({100.0 * (c - m) / m:+.1f} %)" if is_number(m) and m else num(c, 0))
        row.append(text({k: v for k, v in b.items() if k != "band_cm1" and v is not None} or None))
        rows.append(row)
    headers = ["measured ν̃ / cm⁻¹", "λ / nm", "E / eV"] + [f"{k} Δ / cm⁻¹ (vs measured)" for k, _ in ests] + ["source"]
    blocks: list = [Table(headers, rows)]
    if ests:
        blocks.append(Para("Percent difference = (computed − measured) / measured.", "note"))
    return Section("Measured bands", blocks)


def spin_state_rows(doc: dict[str, Any]) -> list[dict[str, Any]]:
    """Per-state entries from doc['spin_states'] (a list, or a dict holding 'states')."""
    ss = doc.get("spin_states")
    if isinstance(ss, dict):
        ss = ss.get("states")
    return [s for s in ss or [] if isinstance(s, dict)]


def functional_spread_rows(doc: dict[str, Any]) -> list[dict[str, Any]]:
    """doc['functional_spread'] (or spin_states['functional_spread']): [{theory, exact_exchange, delta_hs_ls_kJmol}]."""
    fs = doc.get("functional_spread")
    if fs is None and isinstance(doc.get("spin_states"), dict):
        fs = doc["spin_states"].get("functional_spread")
    return [r for r in fs or [] if isinstance(r, dict)]


def state_ok(s: dict[str, Any]) -> bool:
    """A spin state counts only if converged and (when stated) configuration-verified."""
    return bool(s.get("converged", True)) and bool(s.get("configuration_verified", True))


def spin_states_section(doc: dict[str, Any], figure: str | None) -> Section | None:
    states, spread = spin_state_rows(doc), functional_spread_rows(doc)
    if not states and not spread:
        return None
    blocks: list = []
    theories = {s.get("theory") for s in states} - {None}
    if states:
        rows = []
        for s in states:
            good = state_ok(s)
            energy = [num(s.get(k), d) if good else "not a result" for k, d in
                      (("relative_kJmol", 1), ("relative_kcalmol", 1), ("relative_cm1", 0), ("relative_eV", 3),
                       ("energy_hartree", 8))]
            rows.append(([text(s.get("theory"))] if len(theories) > 1 else [])
                        + [text(s.get("multiplicity")), text(s.get("configuration"))] + energy
                        + [num(s.get("spin_square"), 3), text(s.get("distances")),
                           "verified" if good else "NOT converged/verified"])
        headers = (["theory"] if len(theories) > 1 else []) + [
            "2S+1", "configuration", "ΔE / kJ mol⁻¹", "ΔE / kcal mol⁻¹", "ΔE / cm⁻¹", "ΔE / eV", "E / Eh", "⟨S²⟩",
            "M–L / Å", "status"]
        blocks.append(Table(headers, rows, "spin states (energies relative to the lowest)"))
    if doc.get("ground_multiplicity") is not None:
        blocks.append(Para(f"Lowest computed state: 2S+1 = {text(doc['ground_multiplicity'])}."))
    if spread:
        blocks.append(Table(["theory", "exact exchange %", "ΔE(HS − LS) / kJ mol⁻¹"],
                            [[text(r.get("theory")), pct(r.get("exact_exchange")), num(r.get("delta_hs_ls_kJmol"), 1)]
                             for r in spread], "functional spread"))
        blocks.append(Para("ΔE(HS − LS) = E(high spin) − E(low spin): positive means low spin is lower. Spin-state "
                           "gaps depend strongly on the functional; more exact exchange favours high spin "
                           "(common practice).", "note"))
    if figure:
        blocks.append(Image(figure, "spin-state energies", "relative energies per multiplicity"
                            + (" and ΔE(HS − LS) against the exact-exchange fraction" if spread else "")))
    return Section("Spin states", blocks)


_OPT_NAMES = {"mode": "mode", "steps": "steps", "final_gradient": "final gradient norm",
              "gradient_threshold": "gradient threshold", "distances": "metal–ligand distances / Å",
              "energy_change_hartree": "energy change / Eh", "converged": "converged",
              "symmetry_kept": "symmetry kept", "trajectory": "trajectory file"}


def optimization_section(doc: dict[str, Any]) -> Section | None:
    opt = doc.get("optimization")
    if not isinstance(opt, dict) or not opt:
        return None
    blocks: list = []
    if opt.get("converged") is False:
        blocks.append(Para("The geometry optimisation did not converge within its step limit.", "warning"))
    simple = [(k, v) for k, v in opt.items() if not (isinstance(v, list) and v and isinstance(v[0], dict))]
    blocks.append(key_values([(_OPT_NAMES.get(k, k.replace("_", " ")), v) for k, v in simple]))
    for k, v in opt.items():
        if isinstance(v, list) and v and isinstance(v[0], dict):
            keys = list(dict.fromkeys(x for r in v for x in r))
            blocks.append(Table([x.replace("_", " ") for x in keys], [[value(x, r.get(x)) for x in keys] for r in v],
                                k.replace("_", " ")))
    return Section("Geometry optimisation", blocks)


def level_diagram_section(figure: str | None, problems: list[str]) -> Section | None:
    blocks: list = []
    if figure:
        blocks.append(Image(figure, "orbital level diagram",
                            "Complex orbitals in the frontier window (centre; α and β side by side for open shells), "
                            "metal levels (left) and ligand levels (right) where available. The coloured part of "
                            "each bar is its metal-d share; ligand-field manifold sets are highlighted."))
    if problems:
        blocks.append(Items(problems, "warning"))
    return Section("Level diagram", blocks) if blocks else None

