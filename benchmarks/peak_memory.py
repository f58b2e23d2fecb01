"""Peak memory of `dsplit compute` at about 200 basis functions (target ≤ 2 GiB).

[Fe(H2O)6]2+ high spin, B3LYP/def2-SVP, density fitting: runs the whole job in a child
process and prints its peak resident set size (ru_maxrss) and the basis size.
Run: python benchmarks/peak_memory.py [KEEP_DIR]   (KEEP_DIR: keep the run's folder there)
"""

from __future__ import annotations

import resource
import subprocess
import sys
import tempfile
from pathlib import Path

CHILD = r"""
import sys
from pathlib import Path
from dsplit.spec import load_spec
from dsplit.api.compute import compute
run = compute(load_spec(sys.argv[1]), Path(sys.argv[2]))
import json; print(json.dumps({"nao": run.result["method"]["nao"], "exit": run.exit_code}))
"""


def main() -> None:
    root = Path(__file__).resolve().parent.parent
    keep = Path(sys.argv[1]).resolve() if len(sys.argv) > 1 else None
    with tempfile.TemporaryDirectory() as tmp:
        out = keep if keep is not None else Path(tmp) / "run"
        proc = subprocess.run([sys.executable, "-c", CHILD, str(root / "inputs/fe-aqua-sensor.toml"),
                               str(out)], capture_output=True, text=True)
    peak_kib = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    print(proc.stdout.strip().splitlines()[-1] if proc.stdout.strip() else proc.stderr[-2000:])
    print(f"peak RSS of the child: {peak_kib / 1024 / 1024:.2f} GiB (target ≤ 2 GiB)")


if __name__ == "__main__":
    main()
