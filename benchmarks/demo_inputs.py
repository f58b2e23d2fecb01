"""Every demo input in inputs/ through `dsplit compute`, one after the other, as shipped.

Prints one row per input: ground configuration and whether it verified, the three
estimators' Δ (cm⁻¹), the exit code and the wall time.  This is the check behind
"every demo input converges and verifies" (exit 0 only when the ground state and all
estimators verified).  Study files (a `[[runs]]`-style grid) are skipped.
Run: python benchmarks/demo_inputs.py OUT_DIR [NAME_PART ...] [--ground-only] [--threads N]
"""

from __future__ import annotations

import sys
import time
from pathlib import Path


def _cm1(doc: dict, estimator: str) -> str:
    est = (doc.get("splitting") or {}).get(estimator)
    if not isinstance(est, dict):
        return "—"
    value = est.get("delta_cm1")
    return f"{value:,.0f}" if value is not None else "withheld"


def main() -> None:
    from dsplit.api.compute import compute
    from dsplit.spec import load_spec

    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    ground_only = "--ground-only" in sys.argv
    threads = None
    if "--threads" in sys.argv:
        threads = int(sys.argv[sys.argv.index("--threads") + 1])
        args.remove(str(threads))
    if not args:
        sys.exit(__doc__)
    out_root, wanted = Path(args[0]), args[1:]
    root = Path(__file__).resolve().parent.parent
    inputs = sorted(p for p in (root / "inputs").glob("*.toml") if not p.name.startswith("study-"))
    inputs = [p for p in inputs if not wanted or any(w in p.name for w in wanted)]
    print(f"{'input':32s} {'nao':>4s} {'ground':22s} {'verified':8s} {'orbital':>9s} {'state':>9s} "
          f"{'excitation':>10s} {'exit':>4s} {'wall s':>7s}", flush=True)
    for path in inputs:
        t0 = time.perf_counter()
        run = compute(load_spec(path), out_root / path.stem, threads=threads, estimators=not ground_only)
        doc = run.result
        print(f"{path.stem:32s} {doc['method']['nao']:4d} {doc['configuration']:22s} "
              f"{str(doc['configuration_verified']):8s} {_cm1(doc, 'orbital'):>9s} {_cm1(doc, 'state'):>9s} "
              f"{_cm1(doc, 'excitation'):>10s} {run.exit_code:4d} {time.perf_counter() - t0:7.0f}", flush=True)


if __name__ == "__main__":
    main()
