"""Progress of a study: a rich progress bar with a live summary on a terminal, plain lines otherwise."""

from __future__ import annotations

import sys
from typing import Any

import click


def outcome_line(o: dict[str, Any], n_done: int, n_total: int) -> str:
    delta = o.get("delta_eV")
    d = f"  Δ {o.get('delta_estimator', '')} {delta:.3f} eV" if isinstance(delta, (int, float)) else ""
    what = o.get("error") or f"{o.get('seconds', 0):.1f} s{d}"
    return f"[{n_done}/{n_total}] {o['state']:<12} {o['name']}/{o['run_id']}  {what}"


class StudyProgress:
    """Counts outcomes (computed, cached, not verified, failed) and shows them as they come."""

    STATES = ("computed", "cached", "not verified", "failed")

    def __init__(self, total: int, already: int, quiet: bool = False) -> None:
        self.total = total
        self.counts = {s: 0 for s in self.STATES}
        self.counts["cached"] = already
        self.failed: dict[str, str] = {}
        self.recent: list[dict[str, Any]] = []
        self.quiet = quiet
        self.live = None
        if not quiet and sys.stderr.isatty():
            from rich.console import Console
            from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

            self.bar = Progress(TextColumn("study"), BarColumn(), MofNCompleteColumn(), TimeElapsedColumn(),
                                TextColumn("{task.description}"), console=Console(stderr=True))
            self.task = self.bar.add_task(self._summary(), total=total, completed=already)

    @property
    def done(self) -> int:
        return sum(self.counts.values())

    def _summary(self) -> str:
        return " · ".join(f"{s} {n}" for s, n in self.counts.items() if n or s == "computed")

    def _renderable(self):
        from rich.console import Group
        from rich.table import Table

        t = Table(box=None, show_header=False, pad_edge=False)
        for o in self.recent[-5:]:
            d = o.get("delta_eV")
            t.add_row(o["state"], o["name"], f"{o.get('seconds', 0):.1f} s",
                      f"Δ {d:.3f} eV" if isinstance(d, (int, float)) else (o.get("error") or ""))
        return Group(self.bar, t)

    def __enter__(self):
        if hasattr(self, "bar"):
            from rich.live import Live

            self.live = Live(self._renderable(), console=self.bar.console, refresh_per_second=4)
            self.live.__enter__()
        return self

    def __exit__(self, *exc):
        if self.live is not None:
            self.live.__exit__(*exc)

    def update(self, o: dict[str, Any]) -> None:
        self.counts[o["state"]] = self.counts.get(o["state"], 0) + 1
        if o["state"] == "failed":
            self.failed[o["run_id"]] = o.get("error", "")
        self.recent.append(o)
        if self.live is not None:
            self.bar.update(self.task, completed=self.done, description=self._summary())
            self.live.update(self._renderable())
        elif not self.quiet:
            click.echo(outcome_line(o, self.done, self.total))
