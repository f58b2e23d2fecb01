"""Expand a study into tasks (one spec each), dropping invalid combinations with a reason.

Combinations are the Cartesian product of the axes in the order metals, ligands,
geometries, isomers, bond_lengths, methods, multiplicities.  Each expanded spec is
validated like ``dsplit compute`` validates before an SCF (spec checks, then
``dsplit.qc.setup.preflight``: builder, electron count, multiplicity, theory,
basis, solvent); a combination that fails is dropped with the InputError text.
Names: the study name plus the values of the complex axes (``screen-fe2-aqua6``);
methods and multiplicities are runs of the same complex, so they share its name.
"""

from __future__ import annotations

import copy
import hashlib
import itertools
import re
from dataclasses import asdict, dataclass, field
from typing import Any

from dsplit.errors import InputError
from dsplit.study.studyfile import Study

COMPLEX_AXES = ("metals", "ligands", "geometries", "isomers", "bond_lengths")
MAX_NAME = 80


@dataclass
class Task:
    name: str
    run_id: str
    spec: dict[str, Any]        # spec document (dsplit.spec.spec_from_dict layout)
    axes: dict[str, str]        # axis → value as text


@dataclass
class Dropped:
    axes: dict[str, str]
    reason: str


@dataclass
class Plan:
    study: str
    tasks: list[Task] = field(default_factory=list)
    dropped: list[Dropped] = field(default_factory=list)
    source: str = ""
    sha256: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"schema": "dsplit.study-plan/1", "study": self.study, "source": self.source,
                "sha256": self.sha256, "tasks": [asdict(t) for t in self.tasks],
                "dropped": [asdict(d) for d in self.dropped]}

    @classmethod
    def from_dict(cls, doc: dict[str, Any]) -> "Plan":
        return cls(study=doc["study"], tasks=[Task(**t) for t in doc["tasks"]],
                   dropped=[Dropped(**d) for d in doc.get("dropped", [])], source=doc.get("source", ""),
                   sha256=doc.get("sha256", ""))


def _label(axis: str, v: Any) -> str:
    if axis == "metals":
        tail = f":{v['oxidation_state']}" if "oxidation_state" in v else (
            f" (charge {v['charge']:+d})" if "charge" in v else "")
        return f"{v['metal']}{tail}"
    if axis == "ligands":
        return "+".join(f"{k}:{n}" for k, n in sorted(v.items()))
    if axis == "bond_lengths":
        return f"{float(v):.3f} Å"
    if axis == "methods":
        return "/".join(str(v[k]) for k in ("theory", "basis") if k in v) + "".join(
            f" {k}={v[k]}" for k in sorted(v) if k not in ("theory", "basis"))
    return str(v)


def _name_part(axis: str, v: Any) -> str:
    if axis == "metals":
        sym = v["metal"].lower()
        return f"{sym}{v['oxidation_state']}" if "oxidation_state" in v else (
            f"{sym}q{v['charge']}" if "charge" in v else sym)
    if axis == "ligands":
        return "-".join(f"{k}{n}" for k, n in sorted(v.items()))
    if axis == "bond_lengths":
        return f"r{float(v):.3f}".rstrip("0")
    return str(v)


def task_name(prefix: str, parts: list[str]) -> str:
    """A slug ≤ 80 characters (long names keep a hash tail so they stay unique)."""
    name = re.sub(r"[^A-Za-z0-9._-]+", "-", "-".join([prefix, *parts])).strip("-.") or "run"
    name = re.sub(r"\.{2,}", ".", name)
    if len(name) > MAX_NAME:
        tail = hashlib.sha256(name.encode()).hexdigest()[:8]
        name = name[:MAX_NAME - 9].rstrip("-.") + "-" + tail
    return name


def _apply(doc: dict[str, Any], axis: str, v: Any) -> None:
    cx = doc.setdefault("complex", {})
    if axis == "metals":
        for k in ("metal", "oxidation_state", "charge"):
            cx.pop(k, None)
        cx.update(v)
    elif axis == "ligands":
        cx["ligands"] = dict(v)
        if isinstance(cx.get("bond_length"), dict):  # per-ligand distances: keep those of ligands still there
            kept = {k: d for k, d in cx["bond_length"].items() if k in cx["ligands"]}
            if kept:
                cx["bond_length"] = kept
            else:
                cx.pop("bond_length")
    elif axis == "geometries":
        cx["geometry"] = v
    elif axis == "isomers":
        cx["isomer"] = v
    elif axis == "bond_lengths":
        cx["bond_length"] = float(v)
    elif axis == "methods":
        doc["method"] = {**doc.get("method", {}), **v}
    elif axis == "multiplicities":
        cx["multiplicity"] = int(v)


def _validate(doc: dict[str, Any]):
    """(spec, complex) or raise InputError."""
    from dsplit.qc.setup import preflight
    from dsplit.spec import spec_from_dict

    spec = spec_from_dict(doc)
    cx, _ = preflight(spec, threads=1)
    return spec, cx


def expand(study: Study) -> Plan:
    """All valid tasks of a study, and every dropped combination with its reason."""
    from dsplit.archive.store import archive_run_id

    plan = Plan(study=study.name, source=study.source, sha256=study.sha256)
    axes = study.axes
    cx_axes = [a for a in COMPLEX_AXES if a in axes]
    prefix = study.name if cx_axes else str(study.base.get("name", study.name))
    seen: dict[str, str] = {}
    for cx_combo in itertools.product(*(axes[a] for a in cx_axes)):
        base = copy.deepcopy(study.base)
        for a, v in zip(cx_axes, cx_combo):
            _apply(base, a, v)
        base["name"] = task_name(prefix, [_name_part(a, v) for a, v in zip(cx_axes, cx_combo)])
        cx_labels = {a: _label(a, v) for a, v in zip(cx_axes, cx_combo)}
        for method in axes.get("methods", [None]):
            doc = copy.deepcopy(base)
            labels = dict(cx_labels)
            if method is not None:
                _apply(doc, "methods", method)
                labels["methods"] = _label("methods", method)
            mults = axes.get("multiplicities", [None])
            if mults == "all":
                doc["complex"].pop("multiplicity", None)
                try:
                    _, cx = _validate(doc)
                except InputError as exc:
                    plan.dropped.append(Dropped({**labels, "multiplicities": "all"}, str(exc)))
                    continue
                mults = list(cx.counts.multiplicities)
            for m in mults:
                d = copy.deepcopy(doc)
                lab = dict(labels)
                if m is not None:
                    _apply(d, "multiplicities", m)
                    lab["multiplicities"] = str(m)
                try:
                    spec, _ = _validate(d)
                except InputError as exc:
                    plan.dropped.append(Dropped(lab, str(exc)))
                    continue
                rid = archive_run_id(spec)
                if rid in seen:
                    plan.dropped.append(Dropped(lab, f"the same run as {seen[rid]} (listed twice)"))
                    continue
                seen[rid] = f"{spec.name}/{rid}"
                plan.tasks.append(Task(spec.name, rid, d, lab))
    if not plan.tasks:
        why = "; ".join(sorted({d.reason for d in plan.dropped})[:5]) or "no combinations"
        raise InputError("vary", f"the study expands to no valid run ({why})")
    return plan
