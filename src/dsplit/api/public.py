"""The Python API: the command line's jobs as functions that return typed results.

Each function takes a spec — a path to a TOML file, a dict in the same layout, or a
:class:`dsplit.spec.Spec` — plus the command line's options as keywords: the spec's own
fields (``metal``, ``ligands``, ``basis``, ``solvent`` …, applied over the spec like the
flags) and the run's (``out`` or ``archive``, ``threads``, ``memory_mb``, ``recompute`` …).
Bad input raises :class:`dsplit.errors.InputError` (the CLI's exit 2).

>>> import dsplit
>>> cx = dsplit.build({"complex": {"metal": "Ti", "oxidation_state": 4, "geometry": "tetrahedral",
...                                "ligands": {"fluorido": 4}}})
>>> cx.formula, cx.exact_point_group, cx.d_count
('[TiF4]', 'Td', 0)
>>> run = dsplit.compute({"name": "tif4", "complex": {"metal": "Ti", "oxidation_state": 4,
...                       "geometry": "tetrahedral", "ligands": {"fluorido": 4}}},
...                      out=getfixture("tmp_path") / "tif4", theory="HF", basis="sto-3g", solvent="none",
...                      threads=1)
>>> run.ok, run.exit_code, run.multiplicity
(True, 0, 1)
>>> again = dsplit.load_result(run.folder)
>>> again.energy_hartree == run.energy_hartree and again.to_dict() == run.to_dict()
True
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

from dsplit.errors import InputError
from dsplit.spec import Spec

#: keywords that override the spec's [complex] and [method] tables (the command line's flags)
COMPLEX_KEYS = ("metal", "oxidation_state", "charge", "geometry", "ligands", "isomer", "bond_length",
                "multiplicity", "configuration", "apical_angle")
METHOD_KEYS = ("theory", "basis", "solvent", "density_fitting", "open_shell", "grid_level", "max_cycles")

def as_spec(spec: Any, **overrides: Any) -> Spec:
    """A validated Spec from a path, a dict or a Spec, with keyword overrides of its fields."""
    from dsplit.spec import load_spec, spec_from_dict

    unknown = set(overrides) - set(COMPLEX_KEYS) - set(METHOD_KEYS) - {"name"}
    if unknown:
        raise InputError(sorted(unknown)[0], f"not a spec field; allowed: {', '.join(COMPLEX_KEYS + METHOD_KEYS)}")
    cx = {k: overrides[k] for k in COMPLEX_KEYS if overrides.get(k) is not None}
    md = {k: overrides[k] for k in METHOD_KEYS if overrides.get(k) is not None}
    if isinstance(spec, (str, Path)):
        s = load_spec(spec, cx, md)
        return s if overrides.get("name") is None else as_spec(s, name=overrides["name"])
    if isinstance(spec, Spec):
        doc = spec.normalised()
        doc.pop("schema", None)
        doc["complex"].pop("name", None)
        doc["method"] = {k: v for k, v in doc["method"].items() if v is not None}  # None: the default rule
    elif isinstance(spec, dict):
        doc = {k: (dict(v) if isinstance(v, dict) else v) for k, v in spec.items()}
    else:
        raise InputError("spec", f"give a spec file path, a dict or a Spec, not {type(spec).__name__}")
    if cx:
        doc.setdefault("complex", {}).update(cx)
    if md:
        doc.setdefault("method", {}).update(md)
    if overrides.get("name") is not None:
        doc["name"] = overrides["name"]
    return spec_from_dict(doc, default_name=str(doc.get("name", "complex")))


def _split(options: dict[str, Any]) -> tuple[dict[str, Any], dict[str, Any]]:
    """(spec overrides, run options) from one keyword dict."""
    spec_keys = set(COMPLEX_KEYS) | set(METHOD_KEYS) | {"name"}
    return ({k: v for k, v in options.items() if k in spec_keys},
            {k: v for k, v in options.items() if k not in spec_keys})


@dataclass(frozen=True)
class Estimate:
    """One estimator's Δ (None when withheld) and what it measures."""

    estimator: str
    delta_cm1: float | None
    delta_eV: float | None
    measures: str = ""
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class RunResult:
    """A finished run, read from its result.json; ``to_dict()`` gives that document."""

    name: str
    formula: str
    folder: Path
    exit_code: int
    cached: bool
    converged: bool
    configuration_verified: bool
    energy_hartree: float | None
    multiplicity: int | None
    point_group: str | None
    estimates: dict[str, Estimate] = field(default_factory=dict)
    recommended: Estimate | None = None
    ligand_field: dict[str, Any] | None = None
    checks: tuple[dict[str, Any], ...] = ()
    warnings: tuple[str, ...] = ()
    document: dict[str, Any] = field(default_factory=dict, repr=False)

    @property
    def ok(self) -> bool:
        """Converged, verified, and every estimator that ran was verified (exit code 0)."""
        return self.exit_code == 0

    @property
    def delta_cm1(self) -> float | None:
        """The recommended Δ in cm⁻¹ (None when no estimator gave one)."""
        return None if self.recommended is None else self.recommended.delta_cm1

    def to_dict(self) -> dict[str, Any]:
        return dict(self.document)

    @classmethod
    def from_document(cls, doc: dict[str, Any], folder: Path, exit_code: int | None = None,
                      cached: bool = False) -> "RunResult":
        ok = bool(doc.get("converged")) and bool(doc.get("configuration_verified"))
        code = exit_code if exit_code is not None else (0 if ok and not doc.get("estimators_failed") else 3)
        estimates = {}
        for name, e in (doc.get("splitting") or {}).items():
            if isinstance(e, dict):
                estimates[name] = Estimate(name, e.get("delta_cm1"), e.get("delta_eV"), str(e.get("measures") or ""),
                                           tuple(str(n) for n in e.get("notes") or ()))
        rec = doc.get("recommended") or None
        recommended = None
        if isinstance(rec, dict) and rec.get("delta_cm1") is not None:
            recommended = Estimate(str(rec.get("estimator")), rec.get("delta_cm1"), rec.get("delta_eV"),
                                   str(rec.get("rule") or ""))
        group = (doc.get("point_group") or {}).get("labels") if isinstance(doc.get("point_group"), dict) else None
        return cls(name=str(doc.get("name")), formula=str((doc.get("complex") or {}).get("formula")),
                   folder=Path(folder), exit_code=int(code), cached=cached, converged=bool(doc.get("converged")),
                   configuration_verified=bool(doc.get("configuration_verified")),
                   energy_hartree=doc.get("energy_hartree"), multiplicity=doc.get("multiplicity"),
                   point_group=group, estimates=estimates, recommended=recommended,
                   ligand_field=doc.get("ligand_field"), checks=tuple(doc.get("checks") or ()),
                   warnings=tuple(doc.get("warnings") or ()), document=doc)


def _result(run) -> RunResult:
    return RunResult.from_document(run.result, run.out_dir, run.exit_code, run.cached)


def build(spec: Any, **options: Any):
    """The built complex (dsplit.complex.Complex: ``.atoms`` is an ase.Atoms) of ``spec``."""
    from dsplit.geometry.build import build_complex

    over, rest = _split(options)
    if rest:
        raise InputError(sorted(rest)[0], "build takes only spec fields as keywords")
    return build_complex(as_spec(spec, **over).complex)


def compute(spec: Any, out: str | Path | None = None, *, archive: str | Path | None = None,
            progress: Callable | None = None, **options: Any) -> RunResult:
    """``dsplit compute``: into the plain folder ``out``, or into ``archive`` (default: ./dsplit-archive).

    Run options: ``threads``, ``memory_mb``, ``recompute``, ``start_from``, ``estimators``,
    ``write_reports``; every other keyword overrides a spec field.
    """
    from dsplit.api.compute import compute as run_compute

    over, rest = _split(options)
    return _result(run_compute(as_spec(spec, **over), out, archive=archive, progress=progress, **rest))


def spin_states(spec: Any, out: str | Path, *, progress: Callable | None = None, **options: Any) -> RunResult:
    """``dsplit spin-states`` into ``out``: ``multiplicities``, ``functionals``, ``optimize`` … as keywords."""
    from dsplit.api.spin import spin_states as run_spin

    over, rest = _split(options)
    return _result(run_spin(as_spec(spec, **over), Path(out), progress=progress, **rest))


def optimize(spec: Any, out: str | Path, *, progress: Callable | None = None, **options: Any) -> RunResult:
    """``dsplit optimize`` into ``out``: ``full``, ``threshold``, ``max_steps`` … as keywords."""
    from dsplit.api.spin import optimize_geometry

    over, rest = _split(options)
    return _result(optimize_geometry(as_spec(spec, **over), Path(out), progress=progress, **rest))


def load_result(folder: str | Path) -> RunResult:
    """A run folder (plain or archived) read back into a RunResult."""
    from dsplit.runfolder import read_manifest

    folder = Path(folder)
    path = folder / "result.json"
    try:
        import json

        doc = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise InputError("folder", f"'{folder}' holds no readable result.json ({exc})") from None
    manifest = read_manifest(folder) or {}
    code = manifest.get("exit_code")
    return RunResult.from_document(doc, folder, int(code) if code is not None else None)


@dataclass(frozen=True)
class Archive:
    """An archive folder: its runs as index rows, a run read back, a pandas table."""

    root: Path

    def rows(self, selection: str | None = None) -> list[dict[str, Any]]:
        """Index rows (dicts of the archive's keys; damaged or missing folders say so in 'status')."""
        from dsplit.archive.query import select_rows

        return select_rows(self.root, selection)

    def run(self, run: str) -> RunResult:
        """One run by NAME/RUN-ID, run-id (prefix) or a NAME with one run."""
        from dsplit.archive.query import resolve_run

        return load_result(resolve_run(self.root, run))

    def to_dataframe(self, selection: str | None = None):
        """The index as a pandas DataFrame (pandas is the optional extra ``dsplit[pandas]``)."""
        try:
            import pandas as pd
        except ImportError:
            raise InputError("pandas", "to_dataframe needs pandas: pip install 'dsplit[pandas]'") from None
        return pd.DataFrame(self.rows(selection))


def open_archive(path: str | Path | None = None) -> Archive:
    """The archive at ``path`` (default: $DSPLIT_ARCHIVE, else ./dsplit-archive)."""
    from dsplit.archive.paths import existing_archive

    return Archive(existing_archive(path))


__all__ = ["Archive", "Estimate", "RunResult", "as_spec", "build", "compute", "load_result", "open_archive",
           "optimize", "spin_states"]
