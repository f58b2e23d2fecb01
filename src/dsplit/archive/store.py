"""Archived runs: cache lookup, compute into a temporary folder, manifest, rename, index.

``run_archived`` is the one path every archiving command takes::

    hit?  <archive>/<name>/<run-id>/ intact  → answer from it (no SCF)
    else  lock .locks/<run-id>.lock           (a second process asking for the same
                                               run waits, then gets the cache hit)
          produce(tmp)                        tmp = <archive>/<name>/.tmp-<run-id>-<host>-<pid>-…
          add the archive block to result.json, write manifest.json last
          rename tmp → <archive>/<name>/<run-id>  (atomic; an interrupted run never
                                                   looks finished)
          add the index row, rewrite <archive>/index.html (dsplit.archive.page)

A folder counts as a finished run only if its manifest exists and result.json
matches the SHA-256 recorded there.
"""

from __future__ import annotations

import os
import shutil
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

from dsplit.archive.locks import file_lock, lock_path
from dsplit.archive.manifest import build_manifest, check_folder, read_json
from dsplit.archive.paths import (MANIFEST_NAME, archive_root, check_name, default_archive_root, key_versions,
                                  remove_stale_tmp, run_folder, run_id_for, tmp_folder)
from dsplit.compute_api import RunOutput, write_json_atomic
from dsplit.spec import Spec

__all__ = ["ArchivedRun", "compute_archived", "run_archived", "lookup", "default_archive_root", "archive_run_id"]


@dataclass
class ArchivedRun(RunOutput):
    """A RunOutput whose ``out_dir`` is the archived run folder; ``cached``: answered from the archive."""

    cached: bool = False
    run_id: str = ""


def archive_run_id(spec: Spec, kind: str = "compute", options: dict[str, Any] | None = None) -> str:
    """The run-id a spec gets in the archive (see dsplit.archive.paths)."""
    return run_id_for(spec.normalised(), kind, options)


def lookup(root: Path, spec: Spec, kind: str = "compute", options: dict[str, Any] | None = None,
           reindex: bool = True) -> ArchivedRun | None:
    """The archived run for this request, or None (no folder, or one that is not intact)."""
    folder = run_folder(root, check_name(spec.name), archive_run_id(spec, kind, options))
    return _load_if_intact(root, folder, reindex)


def _load_if_intact(root: Path, folder: Path, reindex: bool) -> ArchivedRun | None:
    if not folder.is_dir() or check_folder(folder, quick=True):
        return None
    result = read_json(folder / "result.json")
    manifest = read_json(folder / MANIFEST_NAME)
    if reindex:
        from dsplit.archive import index

        if not index.has_run(root, folder.name):  # the writer died between rename and index
            index.add_run(root, folder, result, manifest)
    return ArchivedRun(result, folder, int(manifest.get("exit_code", 0)), cached=True, run_id=folder.name)


def _commit(tmp: Path, final: Path, replace: bool) -> bool:
    """Rename tmp → final.  False if an intact run is already there and ``replace`` is off."""
    try:
        os.rename(tmp, final)
        return True
    except OSError:
        if not final.exists():
            raise
    if not replace and not check_folder(final, quick=True):
        return False
    trash = final.with_name(f".trash-{final.name}-{os.getpid()}")
    os.rename(final, trash)
    os.rename(tmp, final)
    shutil.rmtree(trash, ignore_errors=True)
    return True


def run_archived(spec: Spec, archive: str | Path | None, produce: Callable[[Path], Any], *,
                 kind: str = "compute", options: dict[str, Any] | None = None,
                 recompute: bool = False, on_wait: Callable[[], None] | None = None) -> ArchivedRun:
    """Answer ``spec`` from the archive, or run ``produce(out_dir)`` and archive what it wrote.

    ``produce`` must write a finished run folder at ``out_dir`` (result.json at least)
    and return an object with ``.result`` (dict) and ``.exit_code`` — e.g. a lambda
    around ``dsplit.compute_api.compute``.  ``options`` are settings that change the
    result (they enter the run-id); ``kind`` names the producer (compute, spin-states, …).
    """
    root = archive_root(archive)
    name = check_name(spec.name)
    versions = key_versions()
    run_id = run_id_for(spec.normalised(), kind, options, versions)
    final = run_folder(root, name, run_id)
    if not recompute:
        hit = _load_if_intact(root, final, reindex=True)
        if hit is not None:
            return hit
    with file_lock(lock_path(root, run_id), on_wait=on_wait):
        if not recompute:  # another process may have finished it while we waited
            hit = _load_if_intact(root, final, reindex=True)
            if hit is not None:
                return hit
        final.parent.mkdir(parents=True, exist_ok=True)
        remove_stale_tmp(final.parent)
        tmp = tmp_folder(root, name, run_id)
        t0 = time.perf_counter()
        try:
            out = produce(tmp)
            result = read_json(tmp / "result.json")
            result["archive"] = {"run_id": run_id, "folder": f"{name}/{run_id}", "kind": kind,
                                 "key_versions": versions}
            write_json_atomic(tmp / "result.json", result)
            manifest = build_manifest(tmp, run_id=run_id, name=name, kind=kind, result=result,
                                      exit_code=int(out.exit_code), key_versions=versions,
                                      options=options or {}, wall_seconds=time.perf_counter() - t0)
            write_json_atomic(tmp / MANIFEST_NAME, manifest)
            committed = _commit(tmp, final, replace=recompute)
        finally:
            shutil.rmtree(tmp, ignore_errors=True)
        if not committed:
            return _load_if_intact(root, final, reindex=True) or ArchivedRun(result, final, int(out.exit_code),
                                                                             run_id=run_id)
    from dsplit.archive import index
    from dsplit.archive.page import refresh_page

    index.add_run(root, final, result, manifest)
    refresh_page(root)  # the archive's index.html; never raises (a warning line on failure)
    return ArchivedRun(result, final, int(out.exit_code), cached=False, run_id=run_id)


def compute_archived(spec: Spec, archive: str | Path | None = None, recompute: bool = False, *,
                     threads: int | None = None, memory_mb: int | None = None, progress: Callable | None = None,
                     start_from: Path | None = None, estimators: bool = True, write_reports: bool = True,
                     on_wait: Callable[[], None] | None = None) -> ArchivedRun:
    """``dsplit.compute_api.compute`` through the archive (cache hit unless ``recompute``).

    Threads, memory and the start checkpoint do not enter the run-id; switching the
    estimators or the reports off does (those runs hold less).  A hit returns the
    archived RunOutput (its ``out_dir`` is the run folder) without importing PySCF.
    """
    from dsplit.compute_api import compute, preflight

    options = {k: v for k, v in {"estimators": estimators, "write_reports": write_reports}.items() if not v}
    check_name(spec.name)
    if not recompute:  # a hit needs neither validation nor PySCF: the spec was checked when it ran
        root = archive_root(archive, create=False, must_exist=False)
        hit = lookup(root, spec, "compute", options) if root.is_dir() else None
        if hit is not None:
            return hit
    preflight(spec, threads, memory_mb)  # bad input fails before any folder is made
    return run_archived(
        spec, archive,
        lambda out: compute(spec, out, threads=threads, memory_mb=memory_mb, progress=progress,
                            start_from=start_from, estimators=estimators, write_reports=write_reports),
        kind="compute", options=options, recompute=recompute, on_wait=on_wait)
