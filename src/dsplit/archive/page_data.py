"""What the archive page shows: one ``PageRun`` per run folder or index row.

Runs come from the folders (so a run whose index row was lost still shows) and from
the index (so a row whose folder is gone shows as *missing*).  Each folder gets the
cheap integrity check the page can afford on every commit: the manifest, the SHA-256
of result.json (``check_folder(quick=True)``) and the size of every other listed file.
``dsplit archive verify`` re-hashes everything.

A value is shown only as the run's result.json holds it: every Δ is read from
``splitting.<estimator>.delta_cm1`` (any estimator present), the recommended Δ from
``recommended`` when the run has one; nothing is recomputed or filled in.  Runs that
are damaged, missing or not verified keep their values out of the page (withheld).
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from dsplit.archive.paths import MANIFEST_NAME, run_folders

#: Column order of the known estimators; others found in result.json follow, sorted.
KNOWN_ESTIMATORS = ("orbital", "state", "excitation", "multiplet")

VERIFIED, NOT_VERIFIED, DAMAGED, MISSING = "verified", "not verified", "damaged", "missing"


@dataclass(frozen=True)
class SpinGap:
    """E(highest 2S+1) − E(lowest 2S+1) of one functional in a spin-state ladder, kJ/mol."""

    theory: str
    high_spin: int
    low_spin: int
    gap_kjmol: float


@dataclass(frozen=True)
class PageRun:
    """One row of the page (all text is raw: the renderer escapes it)."""

    folder: str  # NAME/RUN-ID, relative to the archive
    name: str
    run_id: str
    kind: str
    state: str  # VERIFIED, NOT_VERIFIED, DAMAGED or MISSING
    problems: tuple[str, ...] = ()
    indexed: bool = True
    has_report: bool = False
    formula: str = ""
    metal: str = ""
    oxidation_state: int | None = None
    d_electrons: int | None = None
    geometry: str = ""
    point_group: str = ""
    orbital_group: str = ""  # the group the orbitals are labelled in, when lower than point_group
    ligands: dict[str, int] = field(default_factory=dict)
    theory: str = ""
    basis: str = ""
    solvent: str = ""
    ground_multiplicity: int | None = None
    deltas_cm1: dict[str, float] = field(default_factory=dict)  # estimator → Δ (verified runs only)
    recommended_cm1: float | None = None
    recommended_estimator: str = ""
    n_agrees: int | None = None
    n_differs: int | None = None
    n_not_applicable: int | None = None
    created: str = ""
    note: str = ""  # free text from the user's spec (the measured bands' source)
    mean_distance: float | None = None  # Å, mean metal–donor distance over the ligands
    spin_gaps: tuple[SpinGap, ...] = ()  # pairs of verified states, also from a ladder with unverified ones

    @property
    def method(self) -> str:
        return "/".join(x or "?" for x in (self.theory, self.basis, self.solvent))

    @property
    def shows_values(self) -> bool:
        return self.state == VERIFIED


def _number(x: Any) -> float | None:
    if isinstance(x, bool) or not isinstance(x, (int, float)):
        return None
    return float(x) if math.isfinite(float(x)) else None


def _int(x: Any) -> int | None:
    return x if isinstance(x, int) and not isinstance(x, bool) else None


def _str(x: Any) -> str:
    return "" if x is None else str(x)


def integrity_problems(folder: Path, manifest: dict[str, Any]) -> list[str]:
    """The page's cheap check: manifest + result.json hash (check_folder quick) + listed file sizes."""
    from dsplit.archive.manifest import check_folder

    problems = check_folder(folder, quick=True)
    for rel, entry in sorted((manifest.get("files") or {}).items()):
        if rel == "result.json" or not isinstance(entry, dict):
            continue
        try:
            size = (folder / rel).stat().st_size
        except OSError:
            problems.append(f"{rel} is missing")
            continue
        if size != entry.get("bytes"):
            problems.append(f"{rel} has {size} bytes, manifest.json says {entry.get('bytes')}")
    return problems


def _spin_gaps(doc: dict[str, Any]) -> tuple[SpinGap, ...]:
    """Per functional of a spin-state ladder: relative energy of the highest minus the lowest 2S+1.

    Both relative energies are the ladder's own (result.json ``spin_states``); a functional
    with either state unverified gives no gap.
    """
    by_theory: dict[str, list[dict[str, Any]]] = {}
    for s in doc.get("spin_states") or []:
        if isinstance(s, dict) and _int(s.get("multiplicity")) is not None:
            by_theory.setdefault(_str(s.get("theory")), []).append(s)
    gaps = []
    for theory, states in by_theory.items():
        hs = max(states, key=lambda s: s["multiplicity"])
        ls = min(states, key=lambda s: s["multiplicity"])
        e_hs, e_ls = _number(hs.get("relative_kJmol")), _number(ls.get("relative_kJmol"))
        if hs is ls or e_hs is None or e_ls is None or not (hs.get("verified") and ls.get("verified")):
            continue
        gaps.append(SpinGap(theory, hs["multiplicity"], ls["multiplicity"], e_hs - e_ls))
    return tuple(gaps)


def _mean_distance(doc: dict[str, Any], ligands: dict[str, int]) -> float | None:
    """Count-weighted mean of result.json's metal–ligand distances (one per ligand kind)."""
    dist = (doc.get("complex") or {}).get("metal_ligand_distances")
    if not isinstance(dist, dict):
        return None
    pairs = [(_number(d), ligands.get(k, 1)) for k, d in dist.items()]
    pairs = [(d, n) for d, n in pairs if d is not None and isinstance(n, int) and n > 0]
    if not pairs:
        return None
    return sum(d * n for d, n in pairs) / sum(n for _, n in pairs)


def _deltas(doc: dict[str, Any]) -> dict[str, float]:
    out = {}
    for est, block in (doc.get("splitting") or {}).items():
        if isinstance(block, dict) and _number(block.get("delta_cm1")) is not None:
            out[str(est)] = _number(block["delta_cm1"])
    return out


def run_from_folder(folder: Path, indexed: bool) -> PageRun:
    """A PageRun from one run folder (its result.json and manifest.json)."""
    from dsplit.archive.index import key_values
    from dsplit.archive.manifest import read_json

    name, run_id = folder.parent.name, folder.name
    try:
        manifest = read_json(folder / MANIFEST_NAME)
    except ValueError:
        manifest = {}
    problems = integrity_problems(folder, manifest)
    try:
        doc = read_json(folder / "result.json")
    except ValueError:
        doc = {}
    kv = key_values(doc, manifest) if doc else {}
    spec = doc.get("spec") if isinstance(doc.get("spec"), dict) else {}
    ligands = (spec.get("complex") or {}).get("ligands") or {}
    ligands = {str(k): n for k, n in ligands.items() if _int(n)} if isinstance(ligands, dict) else {}
    cx = doc.get("complex") if isinstance(doc.get("complex"), dict) else {}
    labels = (doc.get("point_group") or {}).get("labels") if isinstance(doc.get("point_group"), dict) else None
    verified = (not problems and manifest.get("exit_code") == 0 and bool(doc.get("converged"))
                and bool(doc.get("configuration_verified")))
    state = DAMAGED if problems else VERIFIED if verified else NOT_VERIFIED
    rec = doc.get("recommended") if isinstance(doc.get("recommended"), dict) else {}
    ground = _int(doc.get("ground_multiplicity")) if "spin_states" in doc else _int(doc.get("multiplicity"))
    show = state == VERIFIED
    counts = bool(doc) and state != DAMAGED
    return PageRun(
        folder=f"{name}/{run_id}", name=name, run_id=run_id, kind=_str(manifest.get("kind") or kv.get("kind")),
        state=state, problems=tuple(problems), indexed=indexed, has_report=(folder / "report.html").is_file(),
        formula=_str(cx.get("formula")), metal=_str(kv.get("metal")), oxidation_state=_int(kv.get("oxidation_state")),
        d_electrons=_int(kv.get("d_electrons")), geometry=_str(kv.get("geometry")),
        point_group=_str(kv.get("point_group")),
        orbital_group=_str(labels) if labels and labels != kv.get("point_group") else "",
        ligands=ligands, theory=_str(kv.get("theory")), basis=_str(kv.get("basis")), solvent=_str(kv.get("solvent")),
        ground_multiplicity=ground if show else None,
        deltas_cm1=_deltas(doc) if show else {},
        recommended_cm1=_number(rec.get("delta_cm1")) if show else None,
        recommended_estimator=_str(rec.get("estimator")) if show else "",
        n_agrees=_int(kv.get("n_agrees")) if counts else None, n_differs=_int(kv.get("n_differs")) if counts else None,
        n_not_applicable=_int(kv.get("n_not_applicable")) if counts else None,
        created=_str(manifest.get("created")),
        note=_str((spec.get("experiment") or {}).get("source") if isinstance(spec.get("experiment"), dict) else ""),
        mean_distance=_mean_distance(doc, ligands) if show else None,
        spin_gaps=_spin_gaps(doc) if state in (VERIFIED, NOT_VERIFIED) else (),  # per state: only verified pairs
    )


def _ligands_from_text(text: str) -> dict[str, int]:
    """``ammine:2+chlorido:4`` (the index's ligand text) → {ligand: count}."""
    out = {}
    for part in text.split("+"):
        key, _, n = part.partition(":")
        if key and n.isdigit():
            out[key] = int(n)
    return out


def run_from_row(row: dict[str, Any]) -> PageRun:
    """An index row whose folder is gone: shown as missing, with what the row says."""
    folder = _str(row.get("folder")) or f"{_str(row.get('name'))}/{_str(row.get('run_id'))}"
    return PageRun(
        folder=folder, name=_str(row.get("name")), run_id=_str(row.get("run_id")), kind=_str(row.get("kind")),
        state=MISSING, problems=("the run folder is missing (the index still has its row)",),
        metal=_str(row.get("metal")), oxidation_state=_int(row.get("oxidation_state")),
        d_electrons=_int(row.get("d_electrons")), geometry=_str(row.get("geometry")),
        point_group=_str(row.get("point_group")), ligands=_ligands_from_text(_str(row.get("ligands"))),
        theory=_str(row.get("theory")), basis=_str(row.get("basis")), solvent=_str(row.get("solvent")),
        created=_str(row.get("created")),
    )


@dataclass(frozen=True)
class ArchiveSnapshot:
    """Every run of an archive as the page sees it, plus problems with the index itself."""

    root: Path
    runs: tuple[PageRun, ...]
    index_problem: str = ""

    @property
    def estimators(self) -> list[str]:
        """Estimator columns: the known ones always, then any other found in a run."""
        found = {e for r in self.runs for e in r.deltas_cm1}
        return list(KNOWN_ESTIMATORS) + sorted(found - set(KNOWN_ESTIMATORS))


def _index_rows(root: Path) -> tuple[list[dict[str, Any]], str]:
    import sqlite3

    from dsplit.archive import index

    if not index.index_path(root).is_file():
        return [], "index.db is missing; run 'dsplit archive rebuild-index'"
    try:
        return index.fast_rows(root) or [], ""
    except (sqlite3.DatabaseError, json.JSONDecodeError) as exc:
        return [], f"index.db is unreadable ({exc}); run 'dsplit archive rebuild-index'"


def collect(root: Path) -> ArchiveSnapshot:
    """Read the archive at ``root``: run folders first, then index rows with no folder."""
    rows, index_problem = _index_rows(root)
    indexed_ids = {r.get("run_id") for r in rows}
    runs = [run_from_folder(folder, rid in indexed_ids) for _, rid, folder in run_folders(root)]
    on_disk = {r.run_id for r in runs}
    runs += [run_from_row(r) for r in rows if r.get("run_id") not in on_disk]
    runs.sort(key=lambda r: r.created, reverse=True)  # newest first (ISO dates sort as text)
    return ArchiveSnapshot(root, tuple(runs), index_problem)
