"""index.db: an ase.db SQLite database with one row per archived run.

Each row holds the run's geometry (ase.Atoms) and flat key-value pairs, so
``ase db index.db metal=Fe,delta_orbital_eV>1.5`` works on it directly.
Writers hold an flock on ``.locks/index.lock`` (one writer at a time, released
by the kernel if a writer dies) and retry when SQLite reports a lock (another
reader such as ``ase db``); connections use ase.db's SQLite timeout (20 s).
ase.db's own lock *file* is off: a killed writer would leave it behind.
"""

from __future__ import annotations

import operator
import os
import re
import sqlite3
import time
from pathlib import Path
from typing import Any, Iterable

from dsplit.archive.locks import file_lock, lock_path
from dsplit.archive.paths import INDEX_NAME, MANIFEST_NAME, run_folders
from dsplit.errors import InputError

ESTIMATORS = ("orbital", "state", "excitation")
VERDICTS = {"agrees": "n_agrees", "differs": "n_differs", "not applicable": "n_not_applicable"}
RETRY_SECONDS = 120.0


def index_path(root: Path) -> Path:
    return root / INDEX_NAME


def connect(path: Path):
    import ase.db

    return ase.db.connect(str(path), type="db", use_lock_file=False)


def _value(v: Any) -> Any:
    """A value ase.db accepts: text that reads as a number is stored as that number."""
    if isinstance(v, str):
        from ase.db.core import convert_str_to_int_float_bool_or_str

        return convert_str_to_int_float_bool_or_str(v)
    return v


def ligand_text(ligands: dict[str, int]) -> str:
    """``ammine:2+chlorido:4`` — no ',' or '=' so that ase.db selections can match it."""
    return "+".join(f"{k}:{n}" for k, n in sorted(ligands.items()))


def _checks_counts(checks: Any) -> dict[str, int]:
    counts = {key: 0 for key in VERDICTS.values()}
    for c in checks or []:
        key = VERDICTS.get(c.get("verdict")) if isinstance(c, dict) else None
        if key:
            counts[key] += 1
    return counts


def key_values(result: dict[str, Any], manifest: dict[str, Any]) -> dict[str, Any]:
    """The flat key-value pairs of one run (keys absent when the run has no value)."""
    spec = result.get("spec") or {}
    scx = spec.get("complex") or {}
    cx = result.get("complex") or {}
    method = result.get("method") or {}
    smethod = spec.get("method") or {}
    solvent = method.get("solvent")
    solvent = solvent.get("name") if isinstance(solvent, dict) else smethod.get("solvent")
    versions = manifest.get("key_versions") or {}
    kv: dict[str, Any] = {
        "run_id": manifest.get("run_id"), "name": manifest.get("name"),
        "folder": f"{manifest.get('name')}/{manifest.get('run_id')}", "kind": manifest.get("kind"),
        "status": manifest.get("status"), "exit_code": manifest.get("exit_code"),
        "created": manifest.get("created"),
        "metal": cx.get("metal", scx.get("metal")), "oxidation_state": cx.get("oxidation_state",
                                                                             scx.get("oxidation_state")),
        "complex_charge": cx.get("charge"), "d_electrons": cx.get("d_electrons"),
        "geometry": cx.get("geometry", scx.get("geometry")), "isomer": cx.get("isomer"),
        "point_group": cx.get("point_group"),
        "ligands": ligand_text(scx["ligands"]) if isinstance(scx.get("ligands"), dict) else None,
        "theory": method.get("theory", smethod.get("theory")), "basis": method.get("basis", smethod.get("basis")),
        "solvent": solvent if solvent is not None else "none",
        "multiplicity": result.get("multiplicity"), "ground_multiplicity": result.get("ground_multiplicity"),
        "configuration": result.get("configuration"),
        "converged": result.get("converged"), "verified": result.get("configuration_verified"),
        "energy_hartree": result.get("energy_hartree"), "spec_hash": result.get("spec_hash"),
        "dsplit_version": versions.get("dsplit"), "pyscf_version": versions.get("pyscf"),
        "wall_seconds": (manifest.get("timings") or {}).get("wall_seconds"),
    }
    for lig, n in (scx.get("ligands") or {}).items():
        kv[f"n_{lig}"] = n
    for est, block in (result.get("splitting") or {}).items():
        if est in ESTIMATORS and isinstance(block, dict):
            kv[f"delta_{est}_eV"] = block.get("delta_eV")
            kv[f"delta_{est}_cm1"] = block.get("delta_cm1")
    kv.update(_checks_counts(result.get("checks")))
    return {k: _value(v) for k, v in kv.items() if v is not None and not isinstance(v, (dict, list))}


def run_atoms(folder: Path, result: dict[str, Any]):
    """The run's geometry: ``geometry.xyz`` in the folder, else result.json's atoms."""
    from ase import Atoms

    xyz = folder / "geometry.xyz"
    if xyz.is_file():
        try:
            import ase.io

            return ase.io.read(str(xyz))
        except Exception:  # an unreadable geometry file: fall back to result.json
            pass
    atoms = (result.get("complex") or {}).get("atoms") or []
    return Atoms(symbols=[a["symbol"] for a in atoms], positions=[a["position"] for a in atoms])


def _retry(action):
    """Run ``action()``; retry while SQLite says the database is locked/busy."""
    deadline = time.monotonic() + RETRY_SECONDS
    pause = 0.05
    while True:
        try:
            return action()
        except sqlite3.OperationalError as exc:
            if "locked" not in str(exc) and "busy" not in str(exc) or time.monotonic() > deadline:
                raise
            time.sleep(pause)
            pause = min(pause * 2, 1.0)


def _upsert(db, atoms, kv: dict[str, Any]) -> int:
    with db:  # one connection, one transaction
        ids = [row.id for row in db.select(run_id=kv["run_id"], include_data=False)]
        if len(ids) > 1:
            db.delete(ids[1:])
        if ids:
            return db.write(atoms, key_value_pairs=kv, id=ids[0])
        return db.write(atoms, key_value_pairs=kv)


def _ensure_index(root: Path) -> Path:
    """index.db with all of ase.db's tables, created whole (call with the index lock held).

    Python's sqlite3 commits each CREATE TABLE on its own, so a writer killed while
    ase.db sets up a new file would leave half a schema: build it aside, then rename.
    """
    path = index_path(root)
    if not path.is_file():
        tmp = root / f".{INDEX_NAME}.init-{os.getpid()}"
        tmp.unlink(missing_ok=True)
        connect(tmp).count()  # ase.db creates its tables and indices
        os.replace(tmp, path)
    return path


def add_run(root: Path, folder: Path, result: dict[str, Any], manifest: dict[str, Any]) -> int:
    """Insert or replace the row of one run (keyed by run_id); returns the row id."""
    atoms = run_atoms(folder, result)
    kv = key_values(result, manifest)
    with file_lock(lock_path(root, "index")):
        path = _ensure_index(root)
        return _retry(lambda: _upsert(connect(path), atoms, kv))


DAMAGED = "index.db is damaged: run `dsplit archive rebuild-index`"


def check_index(root: Path) -> None:
    """InputError when index.db exists but SQLite cannot read it (checked before any SCF)."""
    path = index_path(root)
    if not path.is_file():
        return
    try:
        con = sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=20)
        try:
            con.execute("SELECT COUNT(*) FROM sqlite_master").fetchone()
        finally:
            con.close()
    except sqlite3.DatabaseError as exc:
        if isinstance(exc, sqlite3.OperationalError) and ("locked" in str(exc) or "busy" in str(exc)):
            return  # another writer holds it; the writers' retry handles that
        raise InputError("index.db", f"{DAMAGED} ({exc})") from None


def add_run_or_warn(root: Path, folder: Path, result: dict[str, Any], manifest: dict[str, Any]) -> str | None:
    """``add_run``; a damaged or unwritable index gives a one-line warning (returned and printed), never an error.

    The run folder is already in place then: ``archive rebuild-index`` finds it again.
    """
    import sys

    try:
        add_run(root, folder, result, manifest)
        return None
    except (sqlite3.DatabaseError, OSError) as exc:
        text = f"dsplit: warning: run kept in {folder}, but {DAMAGED} ({type(exc).__name__}: {exc})"
        print(text, file=sys.stderr)
        return text


def has_run(root: Path, run_id: str) -> bool:
    """Whether index.db has a row for ``run_id`` (plain sqlite3 on ase.db's key table: no ASE import)."""
    path = index_path(root)
    if not path.is_file():
        return False

    def count() -> int:
        con = sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=20)
        try:
            return con.execute("SELECT COUNT(*) FROM text_key_values WHERE key='run_id' AND value=?",
                               (run_id,)).fetchone()[0]
        except sqlite3.OperationalError as exc:
            if "no such table" in str(exc):  # an index that ase.db has not initialised yet
                return 0
            raise
        finally:
            con.close()

    return _retry(count) > 0


def select(root: Path, selection: str | None = None, sort: str | None = None, limit: int | None = None) -> list:
    """Rows (ase.db AtomsRow) matching an ase.db selection string, e.g. ``metal=Fe,multiplicity>1``."""
    path = index_path(root)
    if not path.is_file():
        return []
    def read() -> list:
        db = connect(path)
        with db:  # one connection for all rows (ase.db reconnects per row otherwise)
            return list(db.select(selection or None, sort=sort, limit=limit, include_data=False))

    return _retry(read)


_OPS = {"=": operator.eq, "!=": operator.ne, "<": operator.lt, "<=": operator.le, ">": operator.gt,
        ">=": operator.ge}
_WORD = re.compile(r"^[a-z_][_0-9a-zA-Z]*$")  # our keys; capitalised words are element symbols to ase.db
_ASE_SPECIAL = {"age", "user", "calculator", "natoms", "energy", "magmom", "charge", "formula", "ctime", "mtime",
                "pbc", "unique_id", "fmax", "smax", "volume", "mass"}


def _number_or_text(text: str) -> Any:
    for cast in (int, float):
        try:
            return cast(text)
        except ValueError:
            pass
    return {"True": True, "False": False}.get(text, text)


def _simple_selection(selection: str | None) -> list[tuple[str, str, Any]] | None:
    """``key op value`` terms of a selection, or None if it needs ase.db's own parser."""
    terms: list[tuple[str, str, Any]] = []
    for expr in (selection or "").split(","):
        expr = expr.strip()
        if not expr:
            continue
        op = next((o for o in ("!=", "<=", ">=", "<", ">", "=") if o in expr), None)
        key, value = expr.split(op, 1) if op else (expr, None)
        key = key.strip()
        if not _WORD.match(key) or key in _ASE_SPECIAL or (op and any(o in value for o in "<>=!")):
            return None
        terms.append((key, op or "has", None if value is None else _number_or_text(value.strip())))
    return terms


def _matches(kv: dict[str, Any], key: str, op: str, value: Any) -> bool:
    """ase.db semantics: a row without the key never matches; text compares with text, numbers with numbers."""
    v = kv.get(key)
    if v is None:
        return False
    if op == "has":
        return True
    if isinstance(value, str) or isinstance(v, str):
        return isinstance(value, str) and isinstance(v, str) and _OPS[op](v, value)
    return _OPS[op](float(v), float(value))


def fast_rows(root: Path, selection: str | None = None, sort: str | None = None,
              limit: int | None = None) -> list[dict[str, Any]] | None:
    """Key-value rows read with sqlite3 alone (no ASE import); None if ase.db must answer.

    Same results as ``select`` for selections of our own keys (``key``, ``key=v``,
    ``!= < <= > >=``) — for element symbols, formulas or ase's special keys it
    returns None and the caller uses ase.db.
    """
    import json

    terms = _simple_selection(selection)
    skey = (sort or "").lstrip("-")
    if terms is None or (skey and (not _WORD.match(skey) or skey in _ASE_SPECIAL)):
        return None
    path = index_path(root)
    if not path.is_file():
        return []

    def read():
        con = sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=20)
        try:
            return con.execute("SELECT id, key_value_pairs FROM systems ORDER BY id").fetchall()
        finally:
            con.close()

    rows = []
    for rid, text in _retry(read):
        kv = json.loads(text)
        if all(_matches(kv, *t) for t in terms):
            rows.append({**kv, "id": rid})
    if skey:
        have = [r for r in rows if r.get(skey) is not None]
        have.sort(key=lambda r: (isinstance(r[skey], str), r[skey]), reverse=sort.startswith("-"))
        rows = have + [r for r in rows if r.get(skey) is None]
    return rows[:limit] if limit else rows


def load_run(folder: Path) -> tuple[dict[str, Any], dict[str, Any]]:
    from dsplit.archive.manifest import read_json

    return read_json(folder / "result.json"), read_json(folder / MANIFEST_NAME)


def rebuild(root: Path) -> tuple[int, list[tuple[str, str]]]:
    """Rewrite index.db from the run folders; returns (rows written, [(folder, reason) skipped])."""
    from dsplit.archive.manifest import check_folder

    skipped: list[tuple[str, str]] = []
    n = 0
    with file_lock(lock_path(root, "index")):
        tmp = root / f".{INDEX_NAME}.rebuild-{os.getpid()}"
        tmp.unlink(missing_ok=True)
        try:
            db = connect(tmp)
            with db:
                for name, run_id, folder in run_folders(root):
                    problems = check_folder(folder, quick=True)
                    if problems:
                        skipped.append((f"{name}/{run_id}", "; ".join(problems)))
                        continue
                    result, manifest = load_run(folder)
                    db.write(run_atoms(folder, result), key_value_pairs=key_values(result, manifest))
                    n += 1
            connect(tmp).count()  # ase.db creates the file lazily (an archive with no runs)
            os.replace(tmp, index_path(root))
        finally:
            tmp.unlink(missing_ok=True)
    return n, skipped


def iter_rows_kv(rows: Iterable) -> list[dict[str, Any]]:
    """Plain dicts (key-value pairs + row id + formula) for printing."""
    out = []
    for row in rows:
        d = dict(row.key_value_pairs)
        d["id"] = row.id
        d["formula"] = row.formula
        out.append(d)
    return out
