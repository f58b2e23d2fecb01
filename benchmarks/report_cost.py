"""Cost of the full report (three estimators) against one ground-state SCF (target ≤ 3×).

Runs `compute` on a def2-SVP hexa-coordinate complex and prints the time of each stage
from result.json's own timings, as ratios to the ground-state SCF.
Measured on a quiet 2-core machine (2026-12, [TiF6]3− B3LYP/def2-SVP, nao 115): ground SCF 17.1 s,
stability 0.48×, state 0.69×, excitation 1.05× (2 TDA roots; 1.51× with 3), restricted-open ground for
the orbital estimator about 0.6×, whole run 3.95× — over the 3× target.
Run: python benchmarks/report_cost.py [spec]   (default inputs/ti-fluorido-violet.toml)
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path


def main() -> None:
    from dsplit.api.compute import compute
    from dsplit.spec import load_spec

    root = Path(__file__).resolve().parent.parent
    spec = load_spec(sys.argv[1] if len(sys.argv) > 1 else root / "inputs/ti-fluorido-violet.toml")
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        run = compute(spec, Path(tmp) / "run")
        total = time.perf_counter() - t0
    doc = run.result
    calc = doc["provenance"]["timings"]["calculation"]
    scf = calc["scf"]
    split = doc.get("splitting") or {}
    print(f"{doc['complex']['formula']}  {doc['method']['theory']}/{doc['method']['basis']}  nao {doc['method']['nao']}")
    print(f"ground-state SCF        {scf:8.1f} s   1.00")
    print(f"stability analysis      {calc['stability']:8.1f} s   {calc['stability'] / scf:.2f}")
    for name in ("orbital", "state", "excitation"):
        sec = (split.get(name) or {}).get("seconds")
        if sec is not None:
            print(f"{name:<22}  {sec:8.1f} s   {sec / scf:.2f}")
    extra = doc.get("splitting_seconds") or 0.0
    print(f"all estimators          {extra:8.1f} s   {extra / scf:.2f}")
    print(f"whole run               {total:8.1f} s   {total / scf:.2f}  (target ≤ 3 for the full report)")


if __name__ == "__main__":
    main()
