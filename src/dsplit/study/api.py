"""Python API behind ``dsplit study``: load → expand → plan → run what is missing → summary."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

from dsplit.errors import InputError
from dsplit.study.expand import Plan, Task, expand
from dsplit.study.studyfile import load_study


@dataclass
class StudyOutcome:
    plan: Plan
    archive: Path
    cached_before: list[str] = field(default_factory=list)   # run-ids already in the archive
    outcomes: list[dict[str, Any]] = field(default_factory=list)
    interrupted: bool = False

    @property
    def exit_code(self) -> int:
        if self.interrupted:
            return 130
        return 3 if any(o["state"] in ("failed", "not verified") for o in self.outcomes) else 0


def plan_study(study_path: str | Path, archive: Path, resume: bool = False) -> Plan:
    """The plan: freshly expanded from the file, or (``resume``) the one recorded in the archive."""
    from dsplit.archive.store import archive_run_id
    from dsplit.spec import spec_from_dict
    from dsplit.study.record import read_plan

    study = load_study(study_path)
    if not resume:
        return expand(study)
    plan = read_plan(archive, study.name)
    for t in plan.tasks:
        if archive_run_id(spec_from_dict(t.spec)) != t.run_id:
            raise InputError("--resume", f"the dsplit or PySCF version changed since study '{study.name}' was "
                                         "planned; run it again without --resume (finished runs are kept)")
    return plan


def cached_tasks(plan: Plan, archive: Path, reindex: bool = True) -> list[Task]:
    """Tasks whose run is already intact in the archive (``reindex``: add any missing index row)."""
    from dsplit.archive.store import lookup
    from dsplit.spec import spec_from_dict

    return [t for t in plan.tasks if lookup(archive, spec_from_dict(t.spec), reindex=reindex) is not None]


def plan_rows(plan: Plan, cached: set[str]) -> list[dict[str, Any]]:
    rows = [{"n": i + 1, "name": t.name, **t.axes, "run_id": t.run_id,
             "status": "in archive" if t.run_id in cached else "to run"} for i, t in enumerate(plan.tasks)]
    return rows


def run_study(plan: Plan, archive: Path, *, compute: Callable, workers: int | None = None,
              threads: int | None = None, executor: str = "local", scheduler: str | None = None,
              quiet: bool = False) -> StudyOutcome:
    """Run every task of ``plan`` that the archive does not hold yet, each through ``compute``.

    ``compute``: the archived compute, ``dsplit.api.compute.compute_archived`` (handed in
    because the study layer sits below the API layer).
    """
    from dsplit.archive.paths import remove_stale_tmp
    from dsplit.study.progress import StudyProgress
    from dsplit.study.record import write_plan, write_status
    from dsplit.study.runner import parallelism, run_tasks

    for name in {t.name for t in plan.tasks}:
        remove_stale_tmp(archive / name)
    cached = cached_tasks(plan, archive)
    done_ids = {t.run_id for t in cached}
    todo = [t for t in plan.tasks if t.run_id not in done_ids]
    if executor == "dask" and threads is None:
        threads = 1
    n_workers, n_threads = parallelism(len(todo) or 1, workers, threads)
    write_plan(archive, plan)
    outcome = StudyOutcome(plan, archive, cached_before=sorted(done_ids))
    progress = StudyProgress(len(plan.tasks), len(cached), quiet=quiet)

    def report(o: dict[str, Any]) -> None:
        outcome.outcomes.append(o)
        progress.update(o)
        write_status(archive, plan.study, "running", progress.counts, progress.failed)

    write_status(archive, plan.study, "running", progress.counts, progress.failed)
    try:
        with progress:
            run_tasks(todo, archive, workers=n_workers, threads=n_threads, executor=executor, scheduler=scheduler,
                      report=report, compute=compute)
    except KeyboardInterrupt:
        outcome.interrupted = True
        write_status(archive, plan.study, "interrupted", progress.counts, progress.failed)
        return outcome
    write_status(archive, plan.study, "finished", progress.counts, progress.failed)
    return outcome


def summary_rows(outcome: StudyOutcome) -> list[dict[str, Any]]:
    """One row per task: its state and Δ values from the index."""
    from dsplit.archive import index

    by_task = {o["run_id"]: o for o in outcome.outcomes}
    rows_by_id = {r.get("run_id"): r for r in index.fast_rows(outcome.archive) or []}
    finished = ({t.run_id for t in cached_tasks(outcome.plan, outcome.archive, reindex=False)}
                if outcome.interrupted else set())
    out = []
    for t in outcome.plan.tasks:
        o = by_task.get(t.run_id)
        state = o["state"] if o else ("cached" if t.run_id in outcome.cached_before else
                                      "in archive" if t.run_id in finished else "not run")
        out.append({**rows_by_id.get(t.run_id, {}), "name": t.name, "run_id": t.run_id, **t.axes, "state": state,
                    "error": (o or {}).get("error")})
    return out
