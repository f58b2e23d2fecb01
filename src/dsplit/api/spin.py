"""Python API behind ``dsplit spin-states`` and ``dsplit optimize``.

Spin-state ladder: every allowed multiplicity 2S+1 of dⁿ (or a chosen list), each in
its ligand-field configuration (chem.counting.configuration_occupations), as one
verified SCF (optionally after a symmetric optimisation of that state), for one or
several functionals.  Relative energies are E − E_lowest of the same functional in
kJ/mol, kcal/mol (thermochemical calorie, scipy.constants.calorie), cm⁻¹ and eV.

Spin contamination: deviation = ⟨S²⟩ − S(S+1); a state is flagged when
|deviation| > max(CONTAMINATION_FLOOR, CONTAMINATION_RELATIVE · S(S+1)), i.e. more
than 10 % of S(S+1) or 0.1 absolute for S = 0 and ½ (common practice).

Predicted ground state: the spectrochemical default multiplicity rule
(chem.spin_default.default_multiplicity — rules of thumb, no Δ or pairing energy is
estimated), compared with the computed lowest state by models.checks.spin_state_check.

Reuse: every state starts its SCF from a checkpoint where one fits: the same
multiplicity of the previous functional, else the previous multiplicity of this
functional (same electron count; the engine falls back to atoms when it does not fit).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any, Callable

from dsplit.errors import InputError
from dsplit.models.filling import CONTAMINATION_RULE, spin_contamination
from dsplit.runfolder import RunOutput, StagedFolder, write_json, write_manifest
from dsplit.spec import Spec

@dataclass
class StateRun:
    """One spin state of one functional: its SCF (and optimisation) and where its files are."""

    theory: str
    exact_exchange: float
    multiplicity: int
    configuration: str
    calculation: Any  # engine Calculation (None if never run)
    optimization: Any  # OptimizationResult or None
    distances: dict[str, float]
    folder: str

    @property
    def ok(self) -> bool:
        good = self.calculation is not None and self.calculation.ok
        return good and (self.optimization is None or self.optimization.converged)

    @property
    def energy(self) -> float | None:
        return self.calculation.energy_hartree if self.calculation is not None and self.calculation.converged else None


def relative_energies(delta_hartree: float) -> dict[str, float]:
    """ΔE in kJ/mol, kcal/mol, cm⁻¹, eV (CODATA via dsplit.units; 1 cal = scipy.constants.calorie J)."""
    from scipy.constants import calorie

    from dsplit.units import hartree_to_cm1, hartree_to_ev, hartree_to_kjmol

    kj = hartree_to_kjmol(delta_hartree)
    return {"relative_kJmol": kj, "relative_kcalmol": kj / calorie, "relative_cm1": hartree_to_cm1(delta_hartree),
            "relative_eV": hartree_to_ev(delta_hartree)}


def parse_multiplicities(text: str | None, d_count: int) -> list[int]:
    """'1,5' → [1, 5] (ascending, unique); every value must be allowed for dⁿ; None → all allowed."""
    from dsplit.chem.counting import allowed_multiplicities

    allowed = allowed_multiplicities(d_count)
    if text is None:
        return allowed
    out: list[int] = []
    for part in str(text).split(","):
        part = part.strip()
        if not part.isdigit():
            raise InputError("--multiplicities", f"cannot read '{part}'; write e.g. 1,5")
        out.append(int(part))
    bad = [m for m in out if m not in allowed]
    if bad:
        raise InputError("--multiplicities", f"{', '.join(map(str, bad))} not allowed for d^{d_count}; "
                                             f"allowed: {', '.join(map(str, allowed))}")
    return sorted(set(out))


def parse_functionals(text: str | None, default: str) -> list[str]:
    """'HF,PBE,B3LYP' → names checked with qc.setup.check_theory (InputError for an unknown one)."""
    from dsplit.qc.setup import check_theory

    names = [default] if text is None else [p.strip() for p in str(text).split(",") if p.strip()]
    if not names:
        raise InputError("--functionals", "give at least one functional, e.g. HF,PBE,B3LYP")
    out = []
    for n in names:
        try:
            out.append(check_theory(n)[0])
        except InputError as exc:
            raise InputError("--functionals", exc.message) from None
    return list(dict.fromkeys(out))


def predicted_ground(cx) -> tuple[int, str]:
    """Ligand-field expectation of the ground multiplicity (spectrochemical default rule)."""
    from dsplit.chem.spin_default import default_multiplicity

    return default_multiplicity(cx.counts.multiplicities, cx.metal.row, cx.geometry, cx.d_count,
                                cx.oxidation_state, [pl.ligand.key for pl in cx.ligands], cx.d_sets)


def _slug(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-") or "theory"


def _usable(run: StateRun | None) -> Path | None:
    if run is None or run.calculation is None or not run.calculation.converged:
        return None
    chk = run.calculation.chk_path
    return chk if chk is not None and Path(chk).is_file() else None


def _optimization_seed(same_state: StateRun | None, neighbour: StateRun | None) -> dict[str, Any]:
    """Start distances and Hessian for a state's optimisation from converged neighbours.

    The same multiplicity under the previous functional gives both (functionals move a
    metal–ligand distance by a few hundredths of an ångström; measured on the iron(II) aqua
    ladder, 3-21G: Fe–O within 0.1 Å across HF, PBE, TPSSh, B3LYP); the previous multiplicity
    of the same functional gives only the curvature, since a spin change moves the distance
    by about 0.1–0.2 Å (common practice for iron(II)).
    """
    seed: dict[str, Any] = {}
    for run, take_distances in ((same_state, True), (neighbour, False)):
        opt = run.optimization if run is not None else None
        if opt is None or not opt.converged or not opt.steps:
            continue
        if take_distances and "start_distances" not in seed:
            seed["start_distances"] = dict(opt.steps[-1].distances)
        if "start_hessian" not in seed and opt.hessian is not None:
            seed["start_hessian"] = opt.hessian
    return seed


def run_ladder(cx, setups: list, folder: Path, multiplicities: list[int], *, optimize: bool = False,
               reuse: bool = True, progress: Callable | None = None, threshold: float | None = None,
               max_steps: int | None = None) -> list[StateRun]:
    """All states × functionals (functional-major order), files under ``folder/states``."""
    from dsplit.chem.counting import configuration_occupations, format_configuration
    from dsplit.qc.engine import run_calculation
    from dsplit.qc.optimize import ligand_sets, optimize_symmetric, set_distances

    sets = ligand_sets(cx)
    start_distances = {s.label: float(r) for s, r in zip(sets, set_distances(cx, sets))}
    runs: list[StateRun] = []
    previous: dict[int, StateRun] = {}  # multiplicity → run of the previous functional
    opt_kw = {k: v for k, v in (("threshold", threshold), ("max_steps", max_steps)) if v is not None}
    for setup in setups:
        last: StateRun | None = None
        for m in multiplicities:
            occ = configuration_occupations(cx.d_sets, cx.d_count, m)
            name = f"{_slug(setup.theory)}-m{m}"
            sub = folder / "states" / name
            start = (_usable(previous.get(m)) or _usable(last)) if reuse else None
            opt = None
            if progress is not None and hasattr(progress, "stage"):
                progress.stage(f"{setup.theory} 2S+1 = {m}")
            if optimize:
                seed = _optimization_seed(previous.get(m), last) if reuse else {}
                opt = optimize_symmetric(cx, setup, sub, multiplicity=m, target_occupations=occ, start_from=start,
                                         progress=progress, **seed, **opt_kw)
                calc, dist = opt.calculation, (opt.steps[-1].distances if opt.steps else start_distances)
            else:
                calc = run_calculation(cx, setup, sub, multiplicity=m, target_occupations=occ, start_from=start,
                                       progress=progress)
                dist = start_distances
            run = StateRun(setup.theory, setup.exact_exchange, m, format_configuration(cx.d_sets, occ), calc, opt,
                           dist, f"states/{name}")
            runs.append(run)
            last = run
            previous[m] = run
    return runs


def _state_json(run: StateRun, lowest: float | None) -> dict[str, Any]:
    calc = run.calculation
    ss = calc.spin_square()[0] if calc is not None and calc.converged else None
    expected, dev, flagged = spin_contamination(ss if ss is not None else float("nan"), run.multiplicity)
    rel = relative_energies(run.energy - lowest) if run.ok and lowest is not None else dict.fromkeys(
        ("relative_kJmol", "relative_kcalmol", "relative_cm1", "relative_eV"))
    out = {"theory": run.theory, "exact_exchange": run.exact_exchange, "multiplicity": run.multiplicity,
           "configuration": run.configuration,
           "configuration_found": calc.configuration_found if calc is not None else None,
           "energy_hartree": run.energy if run.ok else None, **rel,
           "spin_square": ss, "spin_square_expected": expected,
           "spin_square_deviation": dev if ss is not None else None,
           "spin_contaminated": flagged if ss is not None else None,
           "distances": run.distances, "converged": bool(calc is not None and calc.converged),
           "configuration_verified": bool(calc is not None and calc.configuration_verified),
           "verified": run.ok, "folder": run.folder,
           "warnings": list(calc.warnings) if calc is not None else ["not run"],
           "notes": list(calc.notes) if calc is not None else [],
           "scf_seconds": calc.timings.get("wall") if calc is not None else None}
    if run.optimization is not None:
        o = run.optimization.to_json()
        o.pop("history", None)
        out["optimization"] = o
    return out


def ladder_json(runs: list[StateRun], cx) -> dict[str, Any]:
    """spin_states, ground_multiplicity, functional_spread, spin_prediction and the check."""
    from dsplit.models.checks import spin_state_check
    from dsplit.units import hartree_to_kjmol

    theories = list(dict.fromkeys(r.theory for r in runs))
    states, spread, grounds = [], [], {}
    for t in theories:
        mine = [r for r in runs if r.theory == t]
        good = [r for r in mine if r.ok]
        lowest = min((r.energy for r in good), default=None)
        states += [_state_json(r, lowest) for r in mine]
        grounds[t] = min(good, key=lambda r: r.energy).multiplicity if good and len(good) == len(mine) else None
        hs, ls = max(mine, key=lambda r: r.multiplicity), min(mine, key=lambda r: r.multiplicity)
        delta = hartree_to_kjmol(hs.energy - ls.energy) if hs is not ls and hs.ok and ls.ok else None
        spread.append({"theory": t, "exact_exchange": mine[0].exact_exchange, "delta_hs_ls_kJmol": delta,
                       "high_spin": hs.multiplicity, "low_spin": ls.multiplicity, "ground_multiplicity": grounds[t]})
    ground = grounds[theories[0]]
    pred, why = predicted_ground(cx)
    computed = {r.multiplicity for r in runs}
    check = spin_state_check(ground, pred if pred in computed else None)
    doc: dict[str, Any] = {
        "spin_states": states, "ground_multiplicity": ground, "ground_theory": theories[0],
        "spin_prediction": {"multiplicity": pred, "reason": why, "source": "spectrochemical default rule "
                            "(dsplit.chem.spin_default; rules of thumb, common practice)"},
        "functional_spread": spread if len(theories) > 1 else [],
        "spin_contamination_rule": CONTAMINATION_RULE,
        "checks": [{"name": check.name, "verdict": check.verdict, "numbers": check.numbers, "detail": check.detail}],
    }
    if ground is None:
        doc["ground_withheld"] = "at least one state did not converge or was not verified"
    return doc


def _main_run(runs: list[StateRun], ground: int | None) -> StateRun:
    first = [r for r in runs if r.theory == runs[0].theory]
    return next((r for r in first if r.multiplicity == ground), None) or next((r for r in first if r.ok), first[0])


def _finish(spec: Spec, cx, calc, extra: dict[str, Any], folder: Path, write_reports: bool,
            kind: str, code: int) -> dict[str, Any]:
    """result.json + spec.json + geometry.xyz (+ reports) and the manifest, into the staging folder."""
    from dsplit.api.build import write_geometry
    from dsplit.report.result import build_result

    doc = build_result(spec, cx, calc, None, extra)
    write_geometry(cx, folder / "geometry.xyz")
    write_json(folder / "spec.json", spec.normalised())
    write_json(folder / "result.json", doc)
    if write_reports:
        from dsplit.report.render import write_reports as render

        render(doc, folder)
    write_manifest(folder, kind=kind, name=spec.name, spec_hash=doc.get("spec_hash"), exit_code=code,
                   status="verified" if code == 0 else "not verified")
    return doc


def spin_states(spec: Spec, out_dir: Path, *, multiplicities: str | list[int] | None = None,
                functionals: str | list[str] | None = None, optimize: bool = False, reuse: bool = True,
                threads: int | None = None, memory_mb: int | None = None, progress: Callable | None = None,
                threshold: float | None = None, max_steps: int | None = None, write_reports: bool = True):
    """The spin-state ladder of ``spec``; returns a RunOutput (exit 3 if any state failed)."""
    from dsplit.qc.optimize import check_optimizable
    from dsplit.qc.setup import preflight, resolve_method

    out_dir = Path(out_dir)
    cx, setup = preflight(spec, threads, memory_mb)
    mults = parse_multiplicities(",".join(map(str, multiplicities)) if isinstance(multiplicities, list)
                                 else multiplicities, cx.d_count)
    names = parse_functionals(",".join(functionals) if isinstance(functionals, list) else functionals,
                              setup.theory)
    setups = [setup if n == setup.theory else resolve_method(cx, replace(spec.method, theory=n), threads, memory_mb)
              for n in names]
    if optimize:
        check_optimizable(cx, setup, full=False)
    with StagedFolder(out_dir) as stage:
        runs = run_ladder(cx, setups, stage.path, mults, optimize=optimize, reuse=reuse, progress=progress,
                          threshold=threshold, max_steps=max_steps)
        extra = ladder_json(runs, cx)
        main = _main_run(runs, extra["ground_multiplicity"])
        extra["main_state"] = {"theory": main.theory, "multiplicity": main.multiplicity, "folder": main.folder}
        main_cx = main.optimization.final if main.optimization is not None else cx
        code = 0 if all(r.ok for r in runs) else 3
        doc = _finish(spec, main_cx, main.calculation, extra, stage.path, write_reports, "spin-states", code)
        target = stage.commit()
    return RunOutput(doc, target, code)


def optimize_geometry(spec: Spec, out_dir: Path, *, full: bool = False, threshold: float | None = None,
                      max_steps: int | None = None, threads: int | None = None, memory_mb: int | None = None,
                      progress: Callable | None = None, start_from: Path | None = None,
                      write_reports: bool = True):
    """Optimise ``spec``'s complex in its spec/default state; RunOutput (exit 3 if not converged/verified)."""
    from dsplit.api.build import write_geometry
    from dsplit.errors import CalculationError
    from dsplit.qc.optimize import check_optimizable, optimize
    from dsplit.qc.setup import preflight

    out_dir = Path(out_dir)
    cx, setup = preflight(spec, threads, memory_mb)
    check_optimizable(cx, setup, full=full)
    kw = {k: v for k, v in (("threshold", threshold), ("max_steps", max_steps)) if v is not None}
    with StagedFolder(out_dir) as stage:
        res = optimize(cx, setup, stage.path, full=full, start_from=start_from, progress=progress, **kw)
        if res.calculation is None:
            raise CalculationError(f"geometry optimisation stopped before any SCF: {res.failure}")
        write_geometry(res.initial, stage.path / "initial_geometry.xyz")
        code = 0 if res.converged and res.calculation.ok else 3
        doc = _finish(spec, res.final, res.calculation, {"optimization": res.to_json()}, stage.path, write_reports,
                      "optimize", code)
        target = stage.commit()
    return RunOutput(doc, target, code)

