"""Run folders: every file written whole, every run folder put in place whole.

- ``write_json`` / ``write_text`` / ``write_bytes`` / ``write_with``: a temporary file in the
  same folder, then ``os.replace`` (atomic on POSIX), with the permissions of a file made
  under the user's umask (``tempfile.mkstemp`` alone would make it owner-only).
- ``StagedFolder``: a run is written into a hidden staging folder and only a finished run
  is put in place.  A target that does not exist is created by one rename; a target that
  exists must be empty or a dsplit run folder (it holds our ``manifest.json``): then only
  the files that manifest lists are replaced and anything else the user keeps there stays.
  A folder dsplit did not make is never removed or emptied.
- ``manifest.json`` lists the SHA-256 (FIPS 180-4, via hashlib) and size of every other
  file of a finished run folder; it is written last.  The archive adds its run-id and
  versions (dsplit.archive.manifest).

Every check on the target happens in ``StagedFolder.prepare`` before any calculation runs,
so bad paths fail with one line (InputError, exit 2) and nothing is written.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import os
import shutil
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

from dsplit.errors import InputError

MANIFEST_NAME = "manifest.json"
MANIFEST_SCHEMA = "dsplit.manifest"
MANIFEST_VERSION = 1
_CHUNK = 1 << 20


@dataclass
class RunOutput:
    """A finished run: its result.json document, where it lies, and the exit code it earns.

    ``cached``: answered from the archive; ``run_id``: the archive's id (archived runs only).
    """

    result: dict[str, Any]
    out_dir: Path
    exit_code: int
    cached: bool = False
    run_id: str = ""


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def file_mode() -> int:
    """Permissions of a new file under the current umask (0644 for the usual 022)."""
    return 0o666 & ~_umask()


def folder_mode() -> int:
    """Permissions of a new folder under the current umask (0755 for the usual 022)."""
    return 0o777 & ~_umask()


def write_with(path: Path, writer: Callable[[Path], None]) -> Path:
    """Call ``writer(tmp)`` on a temporary path beside ``path``, then move it into place."""
    path = Path(path)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".part")
    os.close(fd)
    try:
        writer(Path(tmp))
        os.chmod(tmp, file_mode())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def write_bytes(path: Path, data: bytes) -> Path:
    return write_with(path, lambda tmp: tmp.write_bytes(data))


def write_text(path: Path, text: str) -> Path:
    return write_with(path, lambda tmp: tmp.write_text(text, encoding="utf-8"))


def write_json(path: Path, doc: Any) -> Path:
    """JSON (UTF-8, indented, newline at the end), written whole."""
    return write_text(path, json.dumps(doc, indent=2, ensure_ascii=False) + "\n")


def sha256_file(path: Path) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(_CHUNK), b""):
            h.update(block)
    return h.hexdigest()


def folder_files(folder: Path) -> list[str]:
    """Relative POSIX paths of every file below ``folder`` except the manifest."""
    return sorted(p.relative_to(folder).as_posix() for p in folder.rglob("*")
                  if p.is_file() and p.name != MANIFEST_NAME)


def file_table(folder: Path) -> dict[str, dict[str, Any]]:
    """{relative path: {sha256, bytes}} of every file of a run folder (the manifest's 'files')."""
    return {rel: {"sha256": sha256_file(folder / rel), "bytes": (folder / rel).stat().st_size}
            for rel in folder_files(folder)}


def write_manifest(folder: Path, **fields: Any) -> dict[str, Any]:
    """Write ``manifest.json`` last: schema, creation time, ``fields`` and the file table."""
    doc = {"schema": MANIFEST_SCHEMA, "schema_version": MANIFEST_VERSION,
           "created": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
           **fields, "files": file_table(folder)}
    write_json(folder / MANIFEST_NAME, doc)
    return doc


def read_manifest(folder: Path) -> dict[str, Any] | None:
    """The folder's manifest when it is ours (schema dsplit.manifest), else None."""
    try:
        doc = json.loads((Path(folder) / MANIFEST_NAME).read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError):
        return None
    return doc if isinstance(doc, dict) and doc.get("schema") == MANIFEST_SCHEMA else None


def _writable_folder(folder: Path, option: str) -> None:
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError(option, f"cannot write in '{folder}' (no permission or a read-only file system); "
                                 "choose a folder you can write to")


def check_target(target: Path, option: str = "--out") -> Path:
    """Absolute target folder, checked for use as a run folder (InputError otherwise).

    Allowed: a new folder whose nearest existing parent is a writable folder; an existing
    writable folder that is empty or holds a dsplit run (our manifest).
    """
    target = Path(target).expanduser().absolute()
    if target.exists():
        if not target.is_dir():
            raise InputError(option, f"'{target}' is a file, not a folder; choose an empty or new folder")
        _writable_folder(target, option)
        if any(target.iterdir()) and read_manifest(target) is None:
            raise InputError(option, f"{target} holds other files; choose an empty or new folder")
        return target
    parent = target.parent
    while not parent.exists():
        parent = parent.parent
    if not parent.is_dir():
        raise InputError(option, f"cannot create '{target}': '{parent}' is a file, not a folder")
    _writable_folder(parent, option)
    return target


def _move_tree(src: Path, dst: Path) -> None:
    """Move every entry of ``src`` into the existing folder ``dst`` (merging sub-folders), then remove src."""
    for entry in sorted(src.iterdir()):
        there = dst / entry.name
        if entry.is_dir() and there.is_dir():
            _move_tree(entry, there)
        else:
            os.replace(entry, there)
    src.rmdir()


def _remove_listed(target: Path, manifest: dict[str, Any]) -> None:
    """Remove the files an earlier run listed in its manifest (and folders they leave empty)."""
    files = manifest.get("files") if isinstance(manifest.get("files"), dict) else {}
    for rel in list(files) + [MANIFEST_NAME]:
        path = target / rel
        if ".." in Path(rel).parts or not path.is_file():
            continue
        path.unlink()
        parent = path.parent
        while parent != target and parent.is_dir() and not any(parent.iterdir()):
            parent.rmdir()
            parent = parent.parent


class StagedFolder:
    """A run written into a hidden staging folder, then put in place (see module docstring).

    Use as a context manager: the staging folder is removed if the block raises; call
    :meth:`commit` to put a finished run in place.
    """

    def __init__(self, target: Path, option: str = "--out") -> None:
        self.target = check_target(target, option)
        self.option = option
        if self.target.exists():  # stage inside the target: needs no permission on its parent
            base = self.target
        else:
            base = self.target.parent
            base.mkdir(parents=True, exist_ok=True)
        self.path = Path(tempfile.mkdtemp(dir=base, prefix=f".{self.target.name}.staging-"))
        os.chmod(self.path, folder_mode())

    def __enter__(self) -> "StagedFolder":
        return self

    def __exit__(self, exc_type, exc, tb) -> None:
        if exc_type is not None:
            self.discard()

    def discard(self) -> None:
        """Remove the staging folder (only it: it is ours)."""
        shutil.rmtree(self.path, ignore_errors=True)

    def commit(self) -> Path:
        """Put the staged run in place: one rename for a new target, else replace our own files."""
        if not self.target.exists():
            os.replace(self.path, self.target)
            return self.target
        previous = read_manifest(self.target)
        if previous is None and any(p != self.path for p in self.target.iterdir()):
            self.discard()  # someone put files there while we ran: leave them, keep nothing half-done
            raise InputError(self.option, f"{self.target} holds other files; choose an empty or new folder")
        if previous is not None:
            _remove_listed(self.target, previous)
        _move_tree(self.path, self.target)
        return self.target


def swap_into_place(staged: Path, final: Path) -> None:
    """Replace the folder ``final`` (wholly ours, e.g. an archived run) by ``staged`` in two renames."""
    try:
        os.rename(staged, final)
        return
    except OSError:
        if not final.exists():
            raise
    trash = final.with_name(f".trash-{final.name}-{os.getpid()}")
    os.rename(final, trash)
    os.rename(staged, final)
    shutil.rmtree(trash, ignore_errors=True)
