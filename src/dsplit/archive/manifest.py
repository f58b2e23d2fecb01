"""manifest.json: what a finished run folder holds and how it was made.

It lists the SHA-256 and size of every other file in the folder (dsplit.runfolder),
the software versions, the machine, the timings and the run-id.
It is written last, just before the folder is renamed into place, so a folder
whose manifest is missing or does not match its files is not a finished run.
"""

from __future__ import annotations

import datetime as _dt
import json
import platform
import socket
from pathlib import Path
from typing import Any

from dsplit.runfolder import MANIFEST_NAME, MANIFEST_SCHEMA, MANIFEST_VERSION, file_table, folder_files, sha256_file

SCHEMA_NAME = MANIFEST_SCHEMA
SCHEMA_VERSION = MANIFEST_VERSION


def build_manifest(folder: Path, *, run_id: str, name: str, kind: str, result: dict[str, Any],
                   exit_code: int, key_versions: dict[str, str], options: dict[str, Any],
                   wall_seconds: float) -> dict[str, Any]:
    prov = result.get("provenance") or {}
    return {
        "schema": SCHEMA_NAME, "schema_version": SCHEMA_VERSION,
        "run_id": run_id, "name": name, "kind": kind, "spec_hash": result.get("spec_hash"),
        "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "exit_code": exit_code,
        "status": "verified" if exit_code == 0 else "not verified",
        "key_versions": key_versions,
        "versions": prov.get("versions"),
        "machine": {**(prov.get("machine") or {}), "hostname": socket.gethostname(),
                    "platform": prov.get("machine", {}).get("platform", platform.platform())},
        "timings": {"wall_seconds": wall_seconds, "run": prov.get("timings")},
        "options": options,
        "files": file_table(folder),
    }


def read_json(path: Path) -> dict[str, Any]:
    """Parse a JSON object; ValueError with a short reason if it is not one."""
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise ValueError(f"{path.name} is missing") from None
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise ValueError(f"{path.name} is not valid JSON ({exc})") from None
    if not isinstance(doc, dict):
        raise ValueError(f"{path.name} is not a JSON object")
    return doc


def check_folder(folder: Path, quick: bool = False) -> list[str]:
    """Problems with one run folder (empty list: intact).

    ``quick`` checks the manifest and result.json only (used on a cache hit);
    otherwise every file's hash is recomputed and unlisted files are reported.
    """
    try:
        man = read_json(folder / MANIFEST_NAME)
    except ValueError as exc:
        return [str(exc)]
    problems: list[str] = []
    if man.get("schema") != SCHEMA_NAME:
        problems.append(f"manifest.json schema is {man.get('schema')!r}, expected {SCHEMA_NAME!r}")
    if man.get("run_id") != folder.name:
        problems.append(f"manifest run_id {man.get('run_id')!r} does not match the folder name")
    files = man.get("files")
    if not isinstance(files, dict) or "result.json" not in files:
        return problems + ["manifest.json lists no files (or not result.json)"]
    for rel in (["result.json"] if quick else sorted(files)):
        entry = files[rel]
        path = folder / rel
        if not path.is_file():
            problems.append(f"{rel} is missing")
        elif not isinstance(entry, dict) or sha256_file(path) != entry.get("sha256"):
            problems.append(f"{rel} does not match its SHA-256 in manifest.json")
    if not quick:
        extra = sorted(set(folder_files(folder)) - set(files))
        problems += [f"{rel} is not listed in manifest.json" for rel in extra]
    if not any(p.startswith("result.json") for p in problems):
        try:
            read_json(folder / "result.json")
        except ValueError as exc:
            problems.append(str(exc))
    return problems
