"""CLI start-up time: `dsplit --help` and `dsplit build` against `python -c pass`.

Prints the measured ratios (target: `dsplit --help` ≤ 5× a bare interpreter start).
Run: python benchmarks/cli_startup.py
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def _time(cmd: list[str], repeats: int = 7) -> float:
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, capture_output=True)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def _dsplit() -> list[str]:
    """The installed console script (what users run), else the module."""
    import shutil

    script = shutil.which("dsplit") or str(Path(sys.executable).with_name("dsplit"))
    return [script] if Path(script).exists() else [sys.executable, "-m", "dsplit.cli"]


def main() -> None:
    base = _time([sys.executable, "-c", "pass"])
    help_t = _time(_dsplit() + ["--help"])
    with tempfile.TemporaryDirectory() as tmp:
        build_t = _time(_dsplit() + ["build", str(ROOT / "inputs/ti-fluorido-violet.toml"), "-o", f"{tmp}/x.xyz"],
                        repeats=3)
    print(f"python -c pass      {base * 1000:8.1f} ms")
    print(f"dsplit --help       {help_t * 1000:8.1f} ms   ratio {help_t / base:5.2f}  (target ≤ 5)")
    print(f"dsplit build (Ti)   {build_t * 1000:8.1f} ms   ratio {build_t / base:5.2f}")


if __name__ == "__main__":
    main()
