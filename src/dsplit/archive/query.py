"""Queries over an archive: list (index), show one run (folder), compare runs.

A RUN is written ``NAME/RUN-ID``, a run-id, a unique run-id prefix (≥ 4
characters) or a complex NAME with exactly one run.  Runs are found from the
folders, so ``show`` works even with a missing or damaged index.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from dsplit.archive.paths import MANIFEST_NAME, RUN_ID_RE, check_name, inside, run_folders
from dsplit.archive.tables import Column
from dsplit.errors import InputError

LIST_COLUMNS: list[Column] = [
    ("folder", "run"), ("metal", "metal"), ("oxidation_state", "ox"), ("geometry", "geometry"),
    ("ligands", "ligands"), ("theory", "theory"), ("basis", "basis"), ("multiplicity", "2S+1"),
    ("configuration", "configuration"), ("delta_orbital_eV", "Δ orbital/eV"), ("delta_state_eV", "Δ state/eV"),
    ("delta_excitation_eV", "Δ excitation/eV"), ("n_agrees", "agrees"), ("n_differs", "differs"),
    ("n_not_applicable", "n/a"), ("status", "status"),
]
COMPARE_COLUMNS: list[Column] = [
    ("name", "name"), ("metal", "metal"), ("oxidation_state", "ox"), ("geometry", "geometry"),
    ("ligands", "ligands"), ("theory", "theory"), ("basis", "basis"), ("multiplicity", "2S+1"),
    ("delta_orbital_eV", "Δ orbital/eV"), ("delta_orbital_cm1", "Δ orbital/cm⁻¹"),
    ("delta_state_eV", "Δ state/eV"), ("delta_state_cm1", "Δ state/cm⁻¹"),
    ("delta_excitation_eV", "Δ excitation/eV"), ("delta_excitation_cm1", "Δ excitation/cm⁻¹"),
    ("n_agrees", "agrees"), ("n_differs", "differs"), ("n_not_applicable", "n/a"), ("run_id", "run"),
]


def select_rows(root: Path, selection: str | None = None, sort: str | None = None,
                limit: int | None = None, need_formula: bool = False) -> list[dict[str, Any]]:
    """Index rows as dicts; InputError for a bad selection or an unreadable index.

    Plain key selections are read with sqlite3 alone (fast); element symbols,
    formulas and ``formula`` as a column go through ase.db.
    """
    import sqlite3

    from dsplit.archive import index

    try:
        fast = None if need_formula else index.fast_rows(root, selection, sort=sort, limit=limit)
        rows = fast if fast is not None else index.iter_rows_kv(index.select(root, selection, sort=sort, limit=limit))
        return mark_folder_state(root, rows)
    except sqlite3.DatabaseError as exc:
        raise InputError("index.db", f"cannot read the index ({exc}); run 'dsplit archive rebuild-index'") from None
    except (ValueError, KeyError, IndexError) as exc:
        raise InputError("SELECTION", f"cannot read {selection!r} ({exc}); write e.g. metal=Fe,multiplicity>1 "
                                      "(ase.db selection syntax)") from None


def folder_state(root: Path, row: dict[str, Any]) -> str | None:
    """None when the row's run folder is intact (manifest + result.json hash), else what is wrong."""
    from dsplit.archive.manifest import check_folder

    rel = str(row.get("folder") or "")
    folder = root / rel
    if not rel or not folder.is_dir():
        return "folder missing"
    problems = check_folder(folder, quick=True)
    return f"damaged ({problems[0]})" if problems else None


def mark_folder_state(root: Path, rows: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """Rows whose folder is gone or whose result.json no longer matches its manifest say so in 'status'.

    The index alone would still call them verified; the full check of every file is
    ``archive verify``.
    """
    for row in rows:
        bad = folder_state(root, row)
        if bad is not None:
            row["status"] = bad
            row["damaged"] = True
    return rows


def resolve_run(root: Path, run: str) -> Path:
    """The folder of RUN (see module docstring)."""
    if "/" in run:
        name, _, rid = run.partition("/")
        folder = inside(root, check_name(name), rid)
        if not RUN_ID_RE.match(rid) or not folder.is_dir():
            raise InputError("RUN", f"no run '{run}' in {root}")
        return folder
    if len(run) < 4:
        raise InputError("RUN", "give NAME/RUN-ID, a run-id or at least 4 characters of one, or a NAME")
    by_id = [p for _, rid, p in run_folders(root) if rid.startswith(run)]
    if not by_id:
        by_id = [p for name, _, p in run_folders(root) if name == run]
    if len(by_id) == 1:
        return by_id[0]
    if not by_id:
        raise InputError("RUN", f"no run matches '{run}' in {root}; see 'dsplit archive list'")
    names = ", ".join(f"{p.parent.name}/{p.name}" for p in by_id[:6])
    raise InputError("RUN", f"'{run}' matches {len(by_id)} runs ({names}{', …' if len(by_id) > 6 else ''}); "
                            "give NAME/RUN-ID")


def show_text(folder: Path) -> str:
    """A plain-text summary of one run folder (integrity, provenance, key values, files)."""
    from dsplit.archive.index import key_values
    from dsplit.archive.manifest import check_folder, read_json
    from dsplit.archive.tables import cell

    problems = check_folder(folder)
    try:
        result = read_json(folder / "result.json")
    except ValueError as exc:
        raise InputError("RUN", f"{folder}: {exc}; run 'dsplit archive verify'") from None
    try:
        manifest = read_json(folder / MANIFEST_NAME)
    except ValueError:
        manifest = {}
    lines = [f"run        {folder.parent.name}/{folder.name}", f"folder     {folder}",
             f"integrity  {'intact' if not problems else 'DAMAGED: ' + '; '.join(problems)}"]
    versions = manifest.get("versions") or {}
    lines.append("made       " + ", ".join(
        [str(manifest.get("created", "?")), f"{cell((manifest.get('timings') or {}).get('wall_seconds'), 1)} s"]
        + [f"{k} {v}" for k, v in versions.items()]))
    lines.append("")
    kv = key_values(result, manifest)
    width = max(len(k) for k in kv) if kv else 0
    lines += [f"{k.ljust(width)}  {cell(v, 4)}" for k, v in sorted(kv.items())]
    for w in result.get("warnings") or []:
        lines.append(f"warning: {w}")
    files = manifest.get("files") or {}
    if files:
        lines.append("")
        lines += [f"{rel:<28} {entry.get('bytes', 0):>10} B  sha256 {str(entry.get('sha256'))[:16]}…"
                  for rel, entry in sorted(files.items()) if isinstance(entry, dict)]
    return "\n".join(lines)


def compare_rows(root: Path, runs: list[str], selection: str | None, sort: str | None) -> list[dict[str, Any]]:
    """Rows for ``archive compare``: the named RUNs in the order given, or an index selection."""
    if runs and selection:
        raise InputError("--where", "give RUNs or --where, not both")
    if not runs:
        rows = select_rows(root, selection, sort=sort)
    else:
        wanted = [resolve_run(root, r).name for r in runs]
        by_id = {r["run_id"]: r for r in select_rows(root, None)}
        missing = [w for w in wanted if w not in by_id]
        if missing:
            raise InputError("RUN", f"run(s) {', '.join(missing)} not in the index; "
                                    "run 'dsplit archive rebuild-index'")
        rows = [by_id[w] for w in wanted]
    if not rows:
        raise InputError("RUN", "no runs to compare")
    return rows


#: keys that tell runs apart when the --by key alone repeats
_DISTINGUISH = ("metal", "geometry", "ligands", "theory", "basis", "multiplicity")


def run_labels(rows: list[dict[str, Any]], by: str) -> list[str]:
    """One axis label per run: the ``by`` value, plus whatever else differs when that repeats."""
    labels = [str(r.get(by, r.get("name"))) for r in rows]
    if len(set(labels)) == len(labels):
        return labels
    varying = [k for k in _DISTINGUISH if k != by and len({str(r.get(k)) for r in rows}) > 1]
    return [" ".join([lab] + [("2S+1=" if k == "multiplicity" else "") + str(r.get(k)) for k in varying])
            for lab, r in zip(labels, rows)]


def compare_figure(rows: list[dict[str, Any]], by: str, path: Path) -> Path:
    """Δ per estimator (eV, with a cm⁻¹ axis) across the runs, labelled by key ``by``."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from dsplit.units import cm1_to_ev, ev_to_cm1

    labels = run_labels(rows, by)
    fig, ax = plt.subplots(figsize=(max(4.0, 0.9 * len(rows) + 2), 3.6))
    x = list(range(len(rows)))
    plotted = False
    for est, marker in (("orbital", "o"), ("state", "s"), ("excitation", "^")):
        ys = [r.get(f"delta_{est}_eV") for r in rows]
        if any(y is not None for y in ys):
            ax.plot(x, [float("nan") if y is None else y for y in ys], marker=marker, label=est)
            plotted = True
    if not plotted:
        raise InputError("--figure", "none of these runs has a Δ value to plot")
    ax.set_xticks(x)
    ax.set_xticklabels(labels, rotation=30, ha="right")
    ax.set_xlabel(by)
    ax.set_ylabel("Δ / eV")
    sec = ax.secondary_yaxis("right", functions=(ev_to_cm1, cm1_to_ev))
    sec.set_ylabel("Δ / cm⁻¹")
    ax.legend(title="estimator")
    ax.grid(alpha=0.3)
    fig.tight_layout()
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fig.savefig(path)
    plt.close(fig)
    return path
