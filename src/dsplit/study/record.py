"""A study's record in the archive: ``_studies/<study>/plan.json`` and ``status.json``.

The plan is written before the first run starts; the status after every run
(atomically, by the process that drives the study).  Whether a task is finished
is always decided by the archive itself (an intact run folder), never by the
status file, so a killed study is resumed correctly from whatever it left.
"""

from __future__ import annotations

import datetime as _dt
import os
import socket
from pathlib import Path
from typing import Any

from dsplit.archive.paths import STUDIES_DIR, check_name, inside
from dsplit.errors import InputError
from dsplit.runfolder import write_json
from dsplit.study.expand import Plan


def study_dir(root: Path, study: str) -> Path:
    return inside(root, STUDIES_DIR, check_name(study))


def _now() -> str:
    return _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")


def write_plan(root: Path, plan: Plan) -> Path:
    folder = study_dir(root, plan.study)
    folder.mkdir(parents=True, exist_ok=True)
    write_json(folder / "plan.json", {**plan.to_dict(), "created": _now()})
    return folder


def read_plan(root: Path, study: str) -> Plan:
    from dsplit.archive.manifest import read_json

    path = study_dir(root, study) / "plan.json"
    if not path.is_file():
        raise InputError("--resume", f"no earlier run of study '{study}' in {root}; run it without --resume")
    try:
        return Plan.from_dict(read_json(path))
    except (ValueError, KeyError, TypeError) as exc:
        raise InputError("--resume", f"the recorded plan {path} is damaged ({exc}); run without --resume") from None


def write_status(root: Path, study: str, state: str, counts: dict[str, int], failed: dict[str, str]) -> None:
    folder = study_dir(root, study)
    folder.mkdir(parents=True, exist_ok=True)
    doc: dict[str, Any] = {"state": state, "updated": _now(), "host": socket.gethostname(), "pid": os.getpid(),
                           "counts": counts, "failed": failed}
    write_json(folder / "status.json", doc)
