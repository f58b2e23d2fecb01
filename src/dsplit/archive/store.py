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
import sqlite3
import time
from pathlib import Path
from typing import Any, Callable

from dsplit.archive.locks import file_lock, lock_path
from dsplit.archive.manifest import build_manifest, check_folder, read_json
from dsplit.archive.paths import (MANIFEST_NAME, archive_root, check_name, default_archive_root, key_versions,
                                  remove_stale_tmp, run_folder, run_id_for, tmp_folder)
from dsplit.errors import InputError
from dsplit.runfolder import RunOutput, swap_into_place, write_json
from dsplit.spec import Spec

__all__ = ["ArchivedRun", "run_archived", "lookup", "default_archive_root", "archive_run_id",
           "check_writable_archive"]

#: an archived run is a RunOutput whose ``out_dir`` is the run folder (``cached``: answered from the archive)
ArchivedRun = RunOutput


def check_writable_archive(archive: str | Path | None, check_index: bool = True) -> Path:
    """The archive folder, created if needed; InputError unless new runs can be written there.

    Checked before any SCF: a read-only archive (permissions, a read-only file system) or a
    damaged index.db would otherwise fail only after the calculation.
    """
    from dsplit.archive import index

    root = archive_root(archive, create=False, must_exist=False)
    probe = root
    while not probe.exists():
        probe = probe.parent
    if not os.access(probe, os.W_OK | os.X_OK):
        raise InputError("--archive", f"cannot write in '{probe}' (no permission or a read-only file system); "
                                      "give --archive DIR on a writable disk")
    root = archive_root(archive, create=True)
    if check_index:
        index.check_index(root)
    return root


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
    if reindex and os.access(root, os.W_OK):  # a read-only archive answers without mending its index
        from dsplit.archive import index

        try:
            missing = not index.has_run(root, folder.name)  # the writer died between rename and index
        except sqlite3.DatabaseError:  # a damaged index: the run folder still answers; verify says the rest
            missing = False
        if missing:
            index.add_run_or_warn(root, folder, result, manifest)
    return ArchivedRun(result, folder, int(manifest.get("exit_code", 0)), cached=True, run_id=folder.name)


def _commit(tmp: Path, final: Path, replace: bool) -> bool:
    """Put tmp in place as final.  False if an intact run is already there and ``replace`` is off."""
    if final.exists() and not replace and not check_folder(final, quick=True):
        return False
    swap_into_place(tmp, final)
    return True


def run_archived(spec: Spec, archive: str | Path | None, produce: Callable[[Path], Any], *,
                 kind: str = "compute", options: dict[str, Any] | None = None,
                 recompute: bool = False, on_wait: Callable[[], None] | None = None) -> ArchivedRun:
    """Answer ``spec`` from the archive, or run ``produce(out_dir)`` and archive what it wrote.

    ``produce`` must write a finished run folder at ``out_dir`` (result.json at least)
    and return an object with ``.result`` (dict) and ``.exit_code`` — e.g. a closure
    around ``dsplit.api.compute.write_run``.  ``options`` are settings that change the
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
            write_json(tmp / "result.json", result)
            manifest = build_manifest(tmp, run_id=run_id, name=name, kind=kind, result=result,
                                      exit_code=int(out.exit_code), key_versions=versions,
                                      options=options or {}, wall_seconds=time.perf_counter() - t0)
            write_json(tmp / MANIFEST_NAME, manifest)
            committed = _commit(tmp, final, replace=recompute)
        finally:
            shutil.rmtree(tmp, ignore_errors=True)
        if not committed:
            return _load_if_intact(root, final, reindex=True) or ArchivedRun(result, final, int(out.exit_code),
                                                                             run_id=run_id)
    from dsplit.archive import index
    from dsplit.archive.page import refresh_page

    index.add_run_or_warn(root, final, result, manifest)  # the run folder stays whatever the index does
    refresh_page(root)  # the archive's index.html; never raises (a warning line on failure)
    return ArchivedRun(result, final, int(out.exit_code), cached=False, run_id=run_id)
