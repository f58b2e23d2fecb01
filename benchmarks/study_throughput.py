"""Throughput of a small study: 1 worker × 2 threads against 2 workers × 1 thread (2 cores).

Six tiny runs ([TiF6]2−, HF/3-21G, gas phase, six Ti–F distances), each setting
in a fresh archive; wall time includes worker start-up.  Prints runs per minute
and the speed-up.  Run: python benchmarks/study_throughput.py
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
LENGTHS = [1.84, 1.86, 1.88, 1.90, 1.92, 1.94]


def timed(workers: int, threads: int) -> tuple[float, int]:
    sys.path.insert(0, str(ROOT / "tests"))
    from test_study_run import write_study

    from dsplit.api.compute import compute_archived
    from dsplit.study.api import plan_study, run_study

    with tempfile.TemporaryDirectory() as tmp:
        path = write_study(Path(tmp), "bench", LENGTHS, basis="3-21g")
        root = Path(tmp) / "arch"
        root.mkdir()
        plan = plan_study(path, root)
        t0 = time.perf_counter()
        out = run_study(plan, root, compute=compute_archived, workers=workers, threads=threads, quiet=True)
        wall = time.perf_counter() - t0
        assert out.exit_code == 0, out.outcomes
        return wall, len(plan.tasks)


def main() -> None:
    from dsplit.study.runner import machine_cores

    one, n = timed(1, 2)
    two, _ = timed(2, 1)
    print(f"cores available: {machine_cores()}, runs: {n}")
    print(f"1 worker  × 2 threads   {one:7.2f} s   {60 * n / one:6.1f} runs/min")
    print(f"2 workers × 1 thread    {two:7.2f} s   {60 * n / two:6.1f} runs/min   speed-up {one / two:5.2f}")


if __name__ == "__main__":
    main()
