"""Spec files: parse, validate, normalise; a stable content hash.

A spec is TOML with three tables (all keys checked, unknown keys refused)::

    name = "coating-sample-3"
    [complex]     metal, oxidation_state | charge, geometry, ligands = {key = count},
                  isomer, bond_length (Å, number or {ligand = Å}), multiplicity,
                  configuration, apical_angle (°, square-pyramidal only)
    [method]      theory, basis, solvent, density_fitting, open_shell, grid_level,
                  max_cycles, cubes (true: write cube files of the d orbitals and densities)
    [experiment]  measured_bands_cm1 = [...] or measured_bands_nm = [...], source

Types and ranges are checked here; names that only PySCF can judge (basis,
functional) are checked by the calculation stage before any SCF starts.
"""

from __future__ import annotations

import hashlib
import json
import math
import re
import sys
import unicodedata
from dataclasses import dataclass, field, asdict
from pathlib import Path
from typing import Any

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

from dsplit.errors import InputError
from dsplit.geometry.build import ComplexRequest
from dsplit.units import nm_to_cm1

SCHEMA = "dsplit.spec/1"

_COMPLEX_KEYS = {
    "metal": str, "oxidation_state": int, "charge": int, "geometry": str, "ligands": dict,
    "isomer": str, "bond_length": (float, int, dict), "multiplicity": int,
    "configuration": str, "apical_angle": (float, int),
}
_METHOD_KEYS = {
    "theory": str, "basis": str, "solvent": (str, float, int), "density_fitting": bool,
    "open_shell": str, "grid_level": int, "max_cycles": int, "cubes": bool,
}
_EXPERIMENT_KEYS = {"measured_bands_cm1": list, "measured_bands_nm": list, "source": str}
_TOP_KEYS = {"name", "complex", "method", "experiment"}
OPEN_SHELL_CHOICES = ("unrestricted", "restricted")
#: default cube spacing, Å.  Measured on [CrF6]3− (B3LYP/3-21G): Σ|ψ|²ΔV of the five d orbitals is
#: 1.000 at 0.10 Å, 0.994–1.002 at 0.15 Å, 0.95–1.03 at 0.20 Å (the tight metal d functions are
#: under-sampled); 0.15 Å keeps the norm within 1 % at a third of the 0.10 Å file size
CUBE_SPACING_ANGSTROM = 0.15
CUBE_SPACING_RANGE = (0.02, 1.0)  # Å: finer is gigabytes of text, coarser misses the d lobes
_SLUG = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,79}$")


@dataclass(frozen=True)
class MethodSpec:
    theory: str = "B3LYP"
    basis: str = "def2-SVP"
    solvent: str | float | None = None  # None: the default rule (PCM water when |charge| ≥ 2)
    density_fitting: bool = True
    open_shell: str = "unrestricted"
    grid_level: int = 3
    max_cycles: int = 100
    cubes: bool = False  # write Gaussian cube files too (report/handoff.py)


@dataclass(frozen=True)
class ExperimentSpec:
    measured_bands_cm1: tuple[float, ...] = ()
    source: str = ""


@dataclass(frozen=True)
class Spec:
    name: str
    complex: ComplexRequest
    method: MethodSpec = field(default_factory=MethodSpec)
    experiment: ExperimentSpec = field(default_factory=ExperimentSpec)

    def normalised(self) -> dict[str, Any]:
        """Plain dict with every default filled in, keys sorted (for hashing/archiving)."""
        cx = {k: v for k, v in asdict(self.complex).items() if v is not None and k != "name"}
        return {
            "schema": SCHEMA,
            "name": self.name,
            "complex": cx,
            # cubes = false is left out, so specs written before the key existed keep their hash
            "method": {k: v for k, v in asdict(self.method).items() if k != "cubes" or v},
            "experiment": {"measured_bands_cm1": list(self.experiment.measured_bands_cm1),
                           "source": self.experiment.source},
        }

    def content_hash(self) -> str:
        """SHA-256 of the canonical JSON of the normalised spec (name excluded)."""
        body = self.normalised()
        body.pop("name")
        text = json.dumps(body, sort_keys=True, separators=(",", ":"), ensure_ascii=True)
        return hashlib.sha256(text.encode()).hexdigest()


def check_cube_spacing(spacing: float | None) -> float:
    """The cube spacing to use (Å): the default for None; InputError outside CUBE_SPACING_RANGE."""
    if spacing is None:
        return CUBE_SPACING_ANGSTROM
    lo, hi = CUBE_SPACING_RANGE
    if not lo <= float(spacing) <= hi:
        raise InputError("--cube-spacing", f"{spacing} Å is outside {lo}–{hi} Å; the default is "
                                           f"{CUBE_SPACING_ANGSTROM} Å")
    return float(spacing)


def _typename(t) -> str:
    names = {str: "text", int: "whole number", float: "number", dict: "table", list: "list", bool: "true/false"}
    if isinstance(t, tuple):
        return " or ".join(dict.fromkeys(names[x] for x in t))
    return names[t]


def check_finite(value: Any, field: str) -> None:
    """InputError for NaN or ±inf anywhere in a value (TOML has nan and inf literals)."""
    if isinstance(value, float) and not math.isfinite(value):
        raise InputError(field, f"{value} is not a finite number; give an ordinary number")
    if isinstance(value, dict):
        for k, v in value.items():
            check_finite(v, f"{field}.{k}")
    elif isinstance(value, (list, tuple)):
        for v in value:
            check_finite(v, field)


def _check_table(table: Any, allowed: dict[str, Any], prefix: str) -> dict[str, Any]:
    if not isinstance(table, dict):
        raise InputError(prefix, "must be a TOML table")
    for key, value in table.items():
        check_finite(value, f"{prefix}.{key}")
        if key not in allowed:
            raise InputError(f"{prefix}.{key}", f"unknown key; allowed in [{prefix}]: {', '.join(allowed)}")
        want = allowed[key]
        types = want if isinstance(want, tuple) else (want,)
        ok = isinstance(value, types) and not (isinstance(value, bool) and bool not in types)
        if not ok:
            raise InputError(f"{prefix}.{key}", f"expected {_typename(want)}, got {value!r}")
    return table


def slug_ok(name: str) -> bool:
    """Names are slugs: letters, digits, '.', '_', '-'; no path separators, no '..'."""
    return bool(_SLUG.match(name)) and ".." not in name


def spec_from_dict(data: dict[str, Any], default_name: str = "complex") -> Spec:
    """Validate a parsed TOML document and build a Spec (InputError on any bad field)."""
    for key in data:
        if key not in _TOP_KEYS:
            raise InputError(key, "unknown top-level key; allowed: name, [complex], [method], [experiment]")
    name = data.get("name", default_name)
    if not isinstance(name, str) or not slug_ok(name):
        raise InputError("name", f"{name!r} is not a valid name; use letters, digits, '.', '_' or '-' "
                                 "(no '/', no '..', at most 80 characters)")
    if "complex" not in data:
        raise InputError("complex", "missing [complex] table; give metal, oxidation_state, geometry, ligands")
    cx = _check_table(data["complex"], _COMPLEX_KEYS, "complex")
    for required in ("metal", "geometry", "ligands"):
        if required not in cx:
            raise InputError(f"complex.{required}", "is required")
    for lig, n in cx["ligands"].items():
        if isinstance(n, bool) or not isinstance(n, int) or n < 1:
            raise InputError(f"complex.ligands.{lig}", f"count must be a whole number ≥ 1, got {n!r}")
    bl = cx.get("bond_length")
    if isinstance(bl, dict):
        for lig, r in bl.items():
            if isinstance(r, bool) or not isinstance(r, (int, float)):
                raise InputError(f"complex.bond_length.{lig}", f"expected a distance in Å, got {r!r}")
        bl = {k: float(v) for k, v in bl.items()}
    elif bl is not None:
        bl = float(bl)
    request = ComplexRequest(
        name=name, metal=cx["metal"], geometry=cx["geometry"], ligands=dict(cx["ligands"]),
        oxidation_state=cx.get("oxidation_state"), charge=cx.get("charge"), isomer=cx.get("isomer"),
        bond_length=bl, multiplicity=cx.get("multiplicity"), configuration=cx.get("configuration"),
        apical_angle=float(cx["apical_angle"]) if "apical_angle" in cx else None,
    )
    if request.multiplicity is not None and request.multiplicity < 1:
        raise InputError("complex.multiplicity", f"must be ≥ 1 (2S+1), got {request.multiplicity}")

    md = _check_table(data.get("method", {}), _METHOD_KEYS, "method")
    solvent = md.get("solvent")
    if isinstance(solvent, (int, float)) and not isinstance(solvent, bool) and solvent < 1.0:
        raise InputError("method.solvent", f"a dielectric constant must be ≥ 1, got {solvent}")
    if md.get("open_shell", "unrestricted") not in OPEN_SHELL_CHOICES:
        raise InputError("method.open_shell", f"allowed: {', '.join(OPEN_SHELL_CHOICES)}")
    if not 0 <= md.get("grid_level", 3) <= 9:
        raise InputError("method.grid_level", "allowed: 0–9 (PySCF grid levels)")
    if md.get("max_cycles", 100) < 1:
        raise InputError("method.max_cycles", "must be ≥ 1")
    method = MethodSpec(**{**asdict(MethodSpec()), **md})
    if isinstance(method.solvent, str):
        method = MethodSpec(**{**asdict(method), "solvent": method.solvent.strip().lower()})

    ex = _check_table(data.get("experiment", {}), _EXPERIMENT_KEYS, "experiment")
    if "measured_bands_cm1" in ex and "measured_bands_nm" in ex:
        raise InputError("experiment", "give measured_bands_cm1 or measured_bands_nm, not both")
    bands: list[float] = []
    for key in ("measured_bands_cm1", "measured_bands_nm"):
        for v in ex.get(key, []):
            if isinstance(v, bool) or not isinstance(v, (int, float)) or v <= 0:
                raise InputError(f"experiment.{key}", f"expected positive numbers, got {v!r}")
            bands.append(float(v) if key.endswith("cm1") else nm_to_cm1(float(v)))
    experiment = ExperimentSpec(tuple(bands), ex.get("source", ""))
    return Spec(name=name, complex=request, method=method, experiment=experiment)


def parse_toml_text(text: str, source: str = "spec") -> dict[str, Any]:
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(source, f"malformed TOML ({exc}); fix the syntax") from None


def name_from_stem(stem: str) -> str:
    """A valid run name made from a file name (accents dropped, other characters to '-')."""
    text = unicodedata.normalize("NFKD", stem).encode("ascii", "ignore").decode()
    text = re.sub(r"[^A-Za-z0-9._-]+", "-", text).replace("..", ".")
    text = re.sub(r"^[^A-Za-z0-9]+", "", text)[:80].rstrip("-.")
    return text or "complex"


def _read_spec_file(path: str | Path) -> dict[str, Any]:
    p = Path(path)
    if not p.is_file():
        raise InputError("SPEC", f"no such file '{p}'; give the path of a .toml spec")
    try:
        text = p.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise InputError("SPEC", f"'{p}' is not UTF-8 text; save the spec as UTF-8 TOML") from None
    except OSError as exc:
        raise InputError("SPEC", f"cannot read '{p}' ({exc.strerror or exc})") from None
    return parse_toml_text(text, str(p))


def load_spec(path: str | Path | None = None, complex_overrides: dict[str, Any] | None = None,
              method_overrides: dict[str, Any] | None = None) -> Spec:
    """Read a spec file once (or none: flags only), apply flag overrides, validate.

    Overrides with value None are ignored; a run with no file needs at least the
    complex flags.  Without a ``name`` the file's stem, made valid, names the run.
    """
    data: dict[str, Any] = _read_spec_file(path) if path is not None else {"complex": {}}
    complex_over = {k: v for k, v in (complex_overrides or {}).items() if v is not None}
    method_over = {k: v for k, v in (method_overrides or {}).items() if v is not None}
    if complex_over:
        cx = data.setdefault("complex", {})
        if isinstance(cx, dict):
            cx.update(complex_over)
    if method_over:
        md = data.setdefault("method", {})
        if isinstance(md, dict):
            md.update(method_over)
    if path is None and not data.get("complex"):
        raise InputError("SPEC", "give a spec file or --metal/--geometry/--ligands flags")
    return spec_from_dict(data, default_name=name_from_stem(Path(path).stem) if path is not None else "complex")
