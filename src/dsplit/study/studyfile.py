"""Study files (TOML, schema ``dsplit.study/1``): a base spec and the axes to vary.

Layout (every key checked; unknown keys refused)::

    name = "fe-sensor-screen"          # slug; default: the file name
    description = "…"                  # free text (optional)
    base = "fe-aqua-sensor.toml"       # a spec file, relative to this file …
    [base]                             # … or the spec inline ([base.complex], [base.method], …)
    [vary]                             # each axis a list; absent axes keep the base value
    metals = ["Fe:2", {metal = "Co", oxidation_state = 3}]
    ligands = [{aqua = 6}, {cyanido = 6}]
    geometries = ["octahedral", "trigonal-prismatic"]
    isomers = ["cis", "trans"]
    bond_lengths = [1.95, 2.05]        # Å, all ligands
    methods = ["HF/sto-3g", {theory = "B3LYP", basis = "def2-SVP", solvent = "water"}]
    multiplicities = "all"             # or a list of 2S+1 values
    [run]                              # defaults for the command-line flags
    workers = 2
    threads = 1
"""

from __future__ import annotations

import hashlib
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from dsplit.errors import InputError

SCHEMA = "dsplit.study/1"
AXES = ("metals", "ligands", "geometries", "isomers", "bond_lengths", "methods", "multiplicities")
_TOP = ("name", "description", "base", "vary", "run")
_RUN_KEYS = {"workers": int, "threads": int, "executor": str, "scheduler": str}


@dataclass
class Study:
    name: str
    base: dict[str, Any]            # a spec document (spec_from_dict layout)
    axes: dict[str, Any]            # axis → list of values (or "all" for multiplicities)
    run: dict[str, Any] = field(default_factory=dict)
    description: str = ""
    source: str = ""                # the study file's path
    sha256: str = ""                # of the study file's bytes


def _metal_value(v: Any) -> dict[str, Any]:
    if isinstance(v, str):
        sym, sep, ox = v.partition(":")
        if not sym.strip():
            raise InputError("vary.metals", f"cannot read {v!r}; write e.g. \"Fe:2\" or {{metal = \"Fe\", "
                                            "oxidation_state = 2}")
        out: dict[str, Any] = {"metal": sym.strip()}
        if sep:
            try:
                out["oxidation_state"] = int(ox)
            except ValueError:
                raise InputError("vary.metals", f"cannot read the oxidation state in {v!r}") from None
        return out
    if isinstance(v, dict) and "metal" in v and set(v) <= {"metal", "oxidation_state", "charge"}:
        return dict(v)
    raise InputError("vary.metals", f"cannot read {v!r}; give \"Fe:2\" or a table with metal (and "
                                    "oxidation_state or charge)")


def _method_value(v: Any) -> dict[str, Any]:
    if isinstance(v, str):
        theory, sep, basis = v.partition("/")
        out = {"theory": theory.strip()}
        if sep:
            out["basis"] = basis.strip()
        return out
    if isinstance(v, dict):
        return dict(v)
    raise InputError("vary.methods", f"cannot read {v!r}; give \"THEORY/BASIS\" or a table of [method] keys")


def _checked_axes(vary: Any) -> dict[str, Any]:
    if not isinstance(vary, dict):
        raise InputError("vary", "must be a TOML table of axes")
    axes: dict[str, Any] = {}
    for key, values in vary.items():
        if key not in AXES:
            raise InputError(f"vary.{key}", f"unknown axis; allowed: {', '.join(AXES)}")
        if key == "multiplicities" and values == "all":
            axes[key] = "all"
            continue
        if not isinstance(values, list):
            raise InputError(f"vary.{key}", "must be a list" + (" or \"all\"" if key == "multiplicities" else ""))
        if not values:
            raise InputError(f"vary.{key}", "is empty; give at least one value or leave the axis out")
        if key == "metals":
            values = [_metal_value(v) for v in values]
        elif key == "methods":
            values = [_method_value(v) for v in values]
        elif key == "ligands":
            if not all(isinstance(v, dict) and v for v in values):
                raise InputError("vary.ligands", "each entry is a table of counts, e.g. {aqua = 6}")
        elif key in ("geometries", "isomers"):
            if not all(isinstance(v, str) for v in values):
                raise InputError(f"vary.{key}", "each entry is a name (text)")
        elif key == "bond_lengths":
            if not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in values):
                raise InputError("vary.bond_lengths", "each entry is a distance in Å")
        elif key == "multiplicities":
            if not all(isinstance(v, int) and not isinstance(v, bool) for v in values):
                raise InputError("vary.multiplicities", "each entry is a whole number 2S+1, or write \"all\"")
        axes[key] = values
    return axes


def _checked_run(run: Any) -> dict[str, Any]:
    if not isinstance(run, dict):
        raise InputError("run", "must be a TOML table")
    for key, value in run.items():
        if key not in _RUN_KEYS:
            raise InputError(f"run.{key}", f"unknown key; allowed: {', '.join(_RUN_KEYS)}")
        if not isinstance(value, _RUN_KEYS[key]) or isinstance(value, bool):
            raise InputError(f"run.{key}", f"expected {'a whole number' if _RUN_KEYS[key] is int else 'text'}")
    return dict(run)


def _base(data: dict[str, Any], folder: Path) -> dict[str, Any]:
    from dsplit.spec import parse_toml_text

    base = data.get("base")
    if isinstance(base, str):
        path = (folder / base) if not Path(base).is_absolute() else Path(base)
        if not path.is_file():
            raise InputError("base", f"no spec file '{path}'")
        doc = parse_toml_text(path.read_text(encoding="utf-8"), str(path))
        doc.setdefault("name", re.sub(r"[^A-Za-z0-9._-]", "-", path.stem))
        return doc
    if isinstance(base, dict):
        return dict(base)
    raise InputError("base", "give a spec file (base = \"file.toml\") or a [base] table with [base.complex]")


def study_from_dict(data: dict[str, Any], folder: Path, default_name: str = "study") -> Study:
    for key in data:
        if key not in _TOP:
            raise InputError(key, f"unknown top-level key; allowed: {', '.join(_TOP)}")
    from dsplit.spec import slug_ok

    name = data.get("name", default_name)
    if not isinstance(name, str) or not slug_ok(name):
        raise InputError("name", f"{name!r} is not a valid study name; use letters, digits, '.', '_' or '-'")
    return Study(name=name, base=_base(data, folder), axes=_checked_axes(data.get("vary", {})),
                 run=_checked_run(data.get("run", {})), description=str(data.get("description", "")))


def load_study(path: str | Path) -> Study:
    from dsplit.spec import parse_toml_text

    p = Path(path)
    if not p.is_file():
        raise InputError("STUDY", f"no such file '{p}'; give the path of a study .toml")
    raw = p.read_bytes()
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError("STUDY", f"'{p}' is not UTF-8 text") from None
    default = re.sub(r"[^A-Za-z0-9._-]", "-", p.stem) or "study"
    st = study_from_dict(parse_toml_text(text, str(p)), p.parent, default)
    st.source = str(p.absolute())
    st.sha256 = hashlib.sha256(raw).hexdigest()
    return st
