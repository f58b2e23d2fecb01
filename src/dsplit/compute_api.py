"""Python API behind ``dsplit compute``: spec → Complex → Calculation → OrbitalTable
→ (Splitting → Comparison) → result.json + reports, written atomically to one folder.

Every input is validated before any file is written or any SCF starts (exit 2);
an unconverged or unverified calculation is written with ``converged`` /
``configuration_verified`` false and no splitting numbers (exit 3).
"""

from __future__ import annotations

import json
import os
import shutil
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

from dsplit.errors import InputError
from dsplit.spec import Spec, check_cube_spacing


@dataclass
class RunOutput:
    result: dict[str, Any]
    out_dir: Path
    exit_code: int


def preflight(spec: Spec, threads: int | None = None, memory_mb: int | None = None):
    """Validate everything that can be validated without an SCF; returns (complex, setup)."""
    from dsplit.geometry.build import build_complex
    from dsplit.qc.setup import build_mole, memory_estimate_mb, resolve_method

    cx = build_complex(spec.complex)
    setup = resolve_method(cx, spec.method, threads=threads, memory_mb=memory_mb)
    if memory_mb is not None:
        if memory_mb < 100:
            raise InputError("--memory", f"{memory_mb} MB is too small; give at least 100 MB")
        mol, _ = build_mole(cx, setup, use_symmetry=False)
        need = memory_estimate_mb(mol, setup)
        if need > memory_mb:
            raise InputError("--memory", f"{memory_mb} MB is too small for this run (about {need:.0f} MB "
                                         "needed); raise --memory or keep density fitting on")
    return cx, setup


def write_json_atomic(path: Path, doc: dict[str, Any]) -> None:
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".part")
    with os.fdopen(fd, "w", encoding="utf-8") as fh:
        json.dump(doc, fh, indent=2, ensure_ascii=False)
        fh.write("\n")
    os.chmod(tmp, 0o644)
    os.replace(tmp, path)


def temporary_run_folder(out_dir: Path) -> Path:
    """A hidden folder beside ``out_dir`` to write a run into, with the usual folder permissions.

    (``mkdtemp`` makes it owner-only; a finished run folder should be readable by the group
    that shares the archive, as any folder made under the user's umask.)
    """
    tmp_dir = Path(tempfile.mkdtemp(dir=out_dir.parent, prefix=f".{out_dir.name}.tmp-"))
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp_dir, 0o777 & ~umask)
    return tmp_dir


def _replace_dir(tmp_dir: Path, out_dir: Path) -> None:
    """Move a finished run folder into place (an old folder of the same name is replaced)."""
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    if out_dir.exists():
        trash = out_dir.with_name(f".{out_dir.name}.old-{os.getpid()}")
        os.replace(out_dir, trash)
        os.replace(tmp_dir, out_dir)
        shutil.rmtree(trash, ignore_errors=True)
    else:
        os.replace(tmp_dir, out_dir)


def compute(spec: Spec, out_dir: Path, *, threads: int | None = None, memory_mb: int | None = None,
            progress: Callable | None = None, start_from: Path | None = None,
            estimators: bool = True, write_reports: bool = True, cube_spacing: float | None = None) -> RunOutput:
    """Run the whole job for one spec; files land in ``out_dir`` only when finished.

    ``cube_spacing`` (Å): grid spacing of the cube files that ``spec.method.cubes`` asks for.
    """
    from dsplit.analysis.orbitals import build_orbital_table
    from dsplit.qc.engine import run_calculation
    from dsplit.report.result import build_result

    spacing = check_cube_spacing(cube_spacing)
    cx, setup = preflight(spec, threads, memory_mb)
    out_dir = Path(out_dir)
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    tmp_dir = temporary_run_folder(out_dir)
    try:
        calc = run_calculation(cx, setup, tmp_dir, progress=progress, start_from=start_from)
        table = build_orbital_table(calc) if calc.ok else None
        extra: dict[str, Any] = {}
        if calc.ok and estimators:
            extra.update(_splitting_and_models(spec, cx, calc, table, tmp_dir, progress))
        elif not calc.ok:
            extra["splitting"] = None
            extra["splitting_withheld"] = "the calculation did not converge or its configuration was not verified"
        failed = [name for name, est in (extra.get("splitting") or {}).items()
                  if isinstance(est, dict) and est.get("configuration_verified") is False]
        if failed:
            extra["estimators_failed"] = failed
        doc = build_result(spec, cx, calc, table, extra)
        if failed:
            doc["warnings"].append(f"estimator calculation not verified, value withheld: {', '.join(failed)}")
        _write_handoff(spec, calc, table, doc, tmp_dir, spacing, pictures=write_reports)
        _write_geometry(cx, tmp_dir)
        write_json_atomic(tmp_dir / "spec.json", spec.normalised())
        write_json_atomic(tmp_dir / "result.json", doc)
        if write_reports:
            _write_reports(doc, tmp_dir)
        _replace_dir(tmp_dir, out_dir)
    except BaseException:
        shutil.rmtree(tmp_dir, ignore_errors=True)
        raise
    code = 0 if calc.ok and not doc.get("estimators_failed") else 3
    return RunOutput(doc, out_dir, code)


def _write_handoff(spec: Spec, calc, table, doc: dict[str, Any], folder: Path, spacing: float,
                   pictures: bool) -> None:
    """Molden, FCIDUMP, reproduce.py, QCSchema, d-orbital pictures (and cubes): listed in doc['handoff']."""
    from dsplit.report.handoff import write_handoff_files

    rec = write_handoff_files(calc, table, folder, doc=doc, cubes=spec.method.cubes, spacing=spacing,
                              pictures=pictures)
    doc["handoff"] = rec.to_dict()
    doc["provenance"]["timings"]["handoff"] = dict(rec.seconds)


def _write_geometry(cx, folder: Path) -> None:
    from dsplit.build_api import write_geometry

    write_geometry(cx, folder / "geometry.xyz")


def _splitting_and_models(spec, cx, calc, table, folder, progress) -> dict[str, Any]:
    """Splitting estimators and the ligand-field comparison."""
    from dsplit.analysis.splitting import estimate_splitting

    return estimate_splitting(spec, cx, calc, table, folder, progress=progress)


def _write_reports(doc: dict[str, Any], folder: Path) -> None:
    from dsplit.report.render import write_reports

    write_reports(doc, folder)
