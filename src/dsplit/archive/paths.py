"""Where things live in an archive, and the run-id.

Layout::

    <archive>/index.db                     ase.db (SQLite) index, one row per run
    <archive>/.locks/                      lock files (index writes, one per run being computed)
    <archive>/_studies/<study>/            a study's plan and progress (see dsplit.study)
    <archive>/<name>/<run-id>/             one finished run (manifest.json written last)
    <archive>/<name>/.tmp-<run-id>-<host>-<pid>/   a run being written (never listed)

The run-id is a content hash: SHA-256 over the canonical JSON of the normalised
spec (name included), the run kind (compute, spin-states, optimize, …), options
that change the result, and the versions of dsplit and PySCF — the two packages
whose changes move the numbers (numpy/scipy/ASE versions are recorded in the
manifest but do not change the id: their effect is below the SCF thresholds,
common practice).  The id is 16 characters: the first hex digit is mapped to a
letter a–p so that no tool (ase.db, a spreadsheet) ever reads it as a number.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import shutil
import socket
from pathlib import Path
from typing import Any

from dsplit.errors import InputError
from dsplit.runfolder import MANIFEST_NAME  # noqa: F401  (the archive's modules read the name from here)

ENV_VAR = "DSPLIT_ARCHIVE"
DEFAULT_DIRNAME = "dsplit-archive"
INDEX_NAME = "index.db"
STUDIES_DIR = "_studies"
LOCKS_DIR = ".locks"
RUN_ID_RE = re.compile(r"^[a-p][0-9a-f]{15}$")
TMP_RE = re.compile(r"\.tmp-(?P<rid>[a-p][0-9a-f]{15})-(?P<host>[A-Za-z0-9]+)-(?P<pid>\d+)")


def default_archive_root() -> Path:
    """``$DSPLIT_ARCHIVE`` if set, else ``./dsplit-archive``."""
    env = os.environ.get(ENV_VAR)
    return Path(env) if env else Path.cwd() / DEFAULT_DIRNAME


def archive_root(path: str | Path | None, create: bool = True, must_exist: bool = True) -> Path:
    """Resolve an archive folder (refuses a path that is a file); create it or require it."""
    root = Path(path) if path is not None else default_archive_root()
    root = root.expanduser().absolute()
    if root.exists() and not root.is_dir():
        raise InputError("--archive", f"'{root}' is a file, not a folder; give a folder for the archive")
    if create:
        try:
            root.mkdir(parents=True, exist_ok=True)
        except (FileExistsError, NotADirectoryError):
            raise InputError("--archive", f"cannot create '{root}': a part of the path is a file") from None
    elif must_exist and not root.is_dir():
        raise InputError("--archive", f"no archive at '{root}'; give --archive DIR or set {ENV_VAR}")
    return root


def is_archive(root: Path) -> bool:
    """Whether ``root`` holds a dsplit archive: an index, a lock folder, studies or a run folder."""
    if not root.is_dir():
        return False
    if (root / INDEX_NAME).is_file() or (root / LOCKS_DIR).is_dir() or (root / STUDIES_DIR).is_dir():
        return True
    return next(run_folders(root), None) is not None


def existing_archive(path: str | Path | None) -> Path:
    """The archive at ``path`` (default as :func:`default_archive_root`); InputError if there is none."""
    root = archive_root(path, create=False, must_exist=True)
    if not is_archive(root):
        raise InputError("--archive", f"no dsplit archive at '{root}' (no index.db, no run folders); "
                                      f"give --archive DIR or set {ENV_VAR}")
    return root


def check_name(name: str) -> str:
    """A complex name must be a slug that stays inside the archive."""
    from dsplit.spec import slug_ok

    if not isinstance(name, str) or not slug_ok(name) or name in (".", "..") or os.path.isabs(name):
        raise InputError("name", f"{name!r} cannot be an archive folder; use letters, digits, '.', '_' or '-' "
                                 "(no '/', no '..', not an absolute path)")
    return name


def inside(root: Path, *parts: str) -> Path:
    """root/parts…, refusing anything that resolves outside root."""
    path = root.joinpath(*parts)
    real_root = os.path.realpath(root)
    if os.path.commonpath([real_root, os.path.realpath(path)]) != real_root:
        raise InputError("name", f"'{'/'.join(parts)}' would leave the archive '{root}'")
    return path


def run_folder(root: Path, name: str, run_id: str) -> Path:
    check_name(name)
    if not RUN_ID_RE.match(run_id):
        raise InputError("RUN", f"{run_id!r} is not a run-id (16 characters, a–p then hex digits)")
    return inside(root, name, run_id)


def key_versions() -> dict[str, str]:
    """Versions that change numbers, hence part of the run-id."""
    from importlib import metadata

    import dsplit

    try:
        pyscf_version = metadata.version("pyscf")  # no import of PySCF itself (fast cache hits)
    except metadata.PackageNotFoundError:  # pragma: no cover - a source checkout of PySCF
        import pyscf

        pyscf_version = pyscf.__version__
    return {"dsplit": dsplit.__version__, "pyscf": pyscf_version}


def run_id_for(spec_normalised: dict[str, Any], kind: str = "compute", options: dict[str, Any] | None = None,
               versions: dict[str, str] | None = None) -> str:
    """16-character content hash of spec + kind + options + key versions (module docstring)."""
    body = {"spec": spec_normalised, "kind": kind, "options": options or {},
            "versions": versions if versions is not None else key_versions()}
    text = json.dumps(body, sort_keys=True, separators=(",", ":"), ensure_ascii=True)
    digest = hashlib.sha256(text.encode()).hexdigest()
    return "abcdefghijklmnop"[int(digest[0], 16)] + digest[1:16]


def _host() -> str:
    return re.sub(r"[^A-Za-z0-9]", "", socket.gethostname()) or "host"


def tmp_folder(root: Path, name: str, run_id: str) -> Path:
    """A unique, dot-named folder for a run being written (host and pid in the name)."""
    return inside(root, name, f".tmp-{run_id}-{_host()}-{os.getpid()}-{os.urandom(3).hex()}")


def pid_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def remove_stale_tmp(folder: Path) -> list[Path]:
    """Delete unfinished run folders in ``folder`` left by dead processes of this host."""
    removed: list[Path] = []
    if not folder.is_dir():
        return removed
    host = _host()
    for entry in folder.iterdir():
        m = TMP_RE.search(entry.name)
        if not entry.name.startswith(".") or m is None:
            continue
        if m["host"] == host and not pid_alive(int(m["pid"])):
            shutil.rmtree(entry, ignore_errors=True)
            removed.append(entry)
    return removed


def run_folders(root: Path):
    """Every finished-looking run folder ``<root>/<name>/<run-id>`` (name, run_id, path)."""
    from dsplit.spec import slug_ok

    if not root.is_dir():
        return
    for name_dir in sorted(root.iterdir()):
        if not name_dir.is_dir() or not slug_ok(name_dir.name):
            continue
        for run_dir in sorted(name_dir.iterdir()):
            if run_dir.is_dir() and RUN_ID_RE.match(run_dir.name):
                yield name_dir.name, run_dir.name, run_dir
