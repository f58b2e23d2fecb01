"""Python API behind ``dsplit compute``: the whole job for one spec, in data-flow order.

    spec → complex + method            qc.setup.preflight (every input checked, exit 2)
         → Calculation                 qc.engine.run_calculation (converged, verified)
         → OrbitalTable                analysis.orbitals.build_orbital_table
         → estimates + comparison      api.estimators.run_estimators
         → result.json + reports       report.result, report.render
         → one run folder              runfolder.StagedFolder (--out) or archive.store (archive)

Every input is validated before any file is written or any SCF starts; an unconverged
or unverified calculation is written with ``converged`` / ``configuration_verified``
false and no splitting numbers (exit 3).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, Callable

from dsplit.errors import InputError
from dsplit.runfolder import RunOutput, StagedFolder, write_json, write_manifest
from dsplit.spec import Spec, check_cube_spacing

WITHHELD = "the calculation did not converge or its configuration was not verified"


def write_run(spec: Spec, cx, setup, folder: Path, *, progress: Callable | None = None,
              start_from: Path | None = None, estimators: bool = True, write_reports: bool = True,
              cube_spacing: float | None = None) -> tuple[dict[str, Any], int]:
    """Compute ``spec`` (already checked by preflight) and write its files into ``folder``.

    Returns (result.json document, exit code 0 or 3).  ``folder`` is a staging folder:
    the caller puts it in place.  Besides result.json and the reports, every run gets the
    hand-off files (report.handoff: Molden, FCIDUMP, reproduce.py, QCSchema; cube files
    when ``spec.method.cubes``, on a grid of ``cube_spacing`` Å).
    """
    from dsplit.analysis.orbitals import build_orbital_table
    from dsplit.api.build import write_geometry
    from dsplit.api.estimators import run_estimators
    from dsplit.qc.engine import run_calculation
    from dsplit.report.result import build_result

    calc = run_calculation(cx, setup, folder, progress=progress, start_from=start_from)
    table = build_orbital_table(calc) if calc.ok else None
    extra: dict[str, Any] = {}
    if calc.ok and estimators:
        extra.update(run_estimators(spec, cx, calc, table, folder, progress))
    elif not calc.ok:
        extra["splitting"] = None
        extra["splitting_withheld"] = WITHHELD
    failed = [name for name, est in (extra.get("splitting") or {}).items()
              if isinstance(est, dict) and est.get("configuration_verified") is False]
    if failed:
        extra["estimators_failed"] = failed
    doc = build_result(spec, cx, calc, table, extra)
    if failed:
        doc["warnings"].append(f"estimator calculation not verified, value withheld: {', '.join(failed)}")
    _write_handoff(spec, calc, table, doc, folder, check_cube_spacing(cube_spacing), pictures=write_reports)
    write_geometry(cx, folder / "geometry.xyz")
    write_json(folder / "spec.json", spec.normalised())
    write_json(folder / "result.json", doc)
    if write_reports:
        from dsplit.report.render import write_reports as render

        render(doc, folder)
    code = 0 if calc.ok and not failed else 3
    return doc, code


def _write_handoff(spec: Spec, calc, table, doc: dict[str, Any], folder: Path, spacing: float,
                   pictures: bool) -> None:
    """Molden, FCIDUMP, reproduce.py, QCSchema, d-orbital pictures (and cubes): listed in doc['handoff']."""
    from dsplit.api.handoff import write_handoff_files

    rec = write_handoff_files(calc, table, folder, doc=doc, cubes=spec.method.cubes, spacing=spacing,
                              pictures=pictures)
    doc["handoff"] = rec.to_dict()
    doc["provenance"]["timings"]["handoff"] = dict(rec.seconds)


def compute(spec: Spec, out: str | Path | None = None, *, archive: str | Path | None = None,
            recompute: bool = False, threads: int | None = None, memory_mb: int | None = None,
            progress: Callable | None = None, start_from: Path | None = None, estimators: bool = True,
            write_reports: bool = True, on_wait: Callable[[], None] | None = None,
            cube_spacing: float | None = None) -> RunOutput:
    """Run the whole job for one spec into a plain folder ``out`` or into the archive.

    With ``out`` the run lands there when finished (a new folder, an empty one, or an
    earlier dsplit run folder whose own files are replaced); otherwise it is archived in
    ``archive`` (default ``$DSPLIT_ARCHIVE`` or ./dsplit-archive) and the same request
    again is answered from there unless ``recompute``.
    """
    from dsplit.qc.setup import check_resources, preflight

    check_resources(threads, memory_mb)
    check_cube_spacing(cube_spacing)
    if out is not None and archive is not None:
        raise InputError("--out", "give --out DIR (a plain folder) or --archive DIR, not both")
    if out is None:
        return compute_archived(spec, archive, recompute, threads=threads, memory_mb=memory_mb, progress=progress,
                                start_from=start_from, estimators=estimators, write_reports=write_reports,
                                on_wait=on_wait, cube_spacing=cube_spacing)
    cx, setup = preflight(spec, threads, memory_mb)
    with StagedFolder(Path(out)) as stage:
        doc, code = write_run(spec, cx, setup, stage.path, progress=progress, start_from=start_from,
                              estimators=estimators, write_reports=write_reports, cube_spacing=cube_spacing)
        write_manifest(stage.path, kind="compute", name=spec.name, spec_hash=doc.get("spec_hash"), exit_code=code,
                       status="verified" if code == 0 else "not verified")
        target = stage.commit()
    return RunOutput(doc, target, code)


def compute_archived(spec: Spec, archive: str | Path | None = None, recompute: bool = False, *,
                     threads: int | None = None, memory_mb: int | None = None, progress: Callable | None = None,
                     start_from: Path | None = None, estimators: bool = True, write_reports: bool = True,
                     on_wait: Callable[[], None] | None = None, cube_spacing: float | None = None) -> RunOutput:
    """``compute`` through the archive (cache hit unless ``recompute``).

    Threads, memory and the start checkpoint do not enter the run-id; switching the
    estimators or the reports off does (those runs hold less).  A hit returns the archived
    run (its ``out_dir`` is the run folder) without importing PySCF.
    """
    from dsplit.archive.paths import archive_root, check_name
    from dsplit.archive.store import check_writable_archive, lookup, run_archived
    from dsplit.qc.setup import check_resources, preflight

    check_resources(threads, memory_mb)
    options = {k: v for k, v in {"estimators": estimators, "write_reports": write_reports}.items() if not v}
    check_cube_spacing(cube_spacing)
    if spec.method.cubes and cube_spacing is not None:  # other cubes than the default: another run
        options["cube_spacing"] = float(cube_spacing)
    check_name(spec.name)
    if not recompute:  # a hit needs neither validation nor PySCF: the spec was checked when it ran
        root = archive_root(archive, create=False, must_exist=False)
        hit = lookup(root, spec, "compute", options) if root.is_dir() else None
        if hit is not None:
            return hit
    cx, setup = preflight(spec, threads, memory_mb)  # bad input fails before any folder is made
    check_writable_archive(archive)

    def produce(folder: Path) -> RunOutput:
        doc, code = write_run(spec, cx, setup, folder, progress=progress, start_from=start_from,
                              estimators=estimators, write_reports=write_reports, cube_spacing=cube_spacing)
        return RunOutput(doc, folder, code)

    return run_archived(spec, archive, produce, kind="compute", options=options, recompute=recompute,
                        on_wait=on_wait)
