"""``archive verify``: every run folder against its manifest, and the index against the folders."""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from pathlib import Path

from dsplit.archive.paths import TMP_RE, pid_alive, run_folders


@dataclass
class VerifyReport:
    runs_checked: int = 0
    damaged: dict[str, list[str]] = field(default_factory=dict)  # "name/run-id" → problems
    index_problems: list[str] = field(default_factory=list)
    unfinished: list[str] = field(default_factory=list)  # temporary folders of runs being (or left) written

    @property
    def ok(self) -> bool:
        return not self.damaged and not self.index_problems

    def lines(self) -> list[str]:
        out = [f"{key}: {p}" for key, probs in sorted(self.damaged.items()) for p in probs]
        out += [f"index.db: {p}" for p in self.index_problems]
        out += [f"note: {u}" for u in self.unfinished]
        verdict = "intact" if self.ok else f"{len(self.damaged)} damaged run(s), {len(self.index_problems)} index problem(s)"
        out.append(f"{self.runs_checked} run(s) checked: {verdict}")
        return out


def verify_archive(root: Path) -> VerifyReport:
    import sqlite3

    from dsplit.archive import index
    from dsplit.archive.manifest import check_folder

    rep = VerifyReport()
    on_disk: set[str] = set()
    for name, rid, folder in run_folders(root):
        rep.runs_checked += 1
        on_disk.add(rid)
        problems = check_folder(folder)
        if problems:
            rep.damaged[f"{name}/{rid}"] = problems
    for name_dir in (p for p in root.iterdir() if p.is_dir()):
        for entry in (e for e in name_dir.iterdir() if e.name.startswith(".")):
            m = TMP_RE.search(entry.name)
            if m:
                state = "being written" if pid_alive(int(m["pid"])) else "left by an interrupted process"
                rep.unfinished.append(f"{name_dir.name}/{entry.name} ({state}; not a finished run)")
    if not index.index_path(root).is_file():
        if on_disk:
            rep.index_problems.append("missing; run 'dsplit archive rebuild-index'")
        return rep
    try:
        rows = index.iter_rows_kv(index.select(root))
    except sqlite3.DatabaseError as exc:
        rep.index_problems.append(f"unreadable ({exc}); run 'dsplit archive rebuild-index'")
        return rep
    counts = Counter(r.get("run_id") for r in rows)
    for rid, n in sorted(counts.items()):
        if n > 1:
            rep.index_problems.append(f"run {rid} has {n} rows")
    for r in rows:
        if r.get("run_id") not in on_disk:
            rep.index_problems.append(f"row {r['id']} ({r.get('folder')}) has no run folder")
    intact = on_disk - {key.partition("/")[2] for key in rep.damaged}
    for rid in sorted(intact - set(counts)):
        rep.index_problems.append(f"run {rid} has no row; run 'dsplit archive rebuild-index'")
    return rep
