"""Cache hit vs the original run: `compute_archived` of one spec twice (target: hit ≤ 2 s).

Measures the first (SCF) run, a hit in the same process, and a hit in a fresh
process (interpreter start and imports included, as a user of `dsplit compute`
sees it).  Prints times and ratios.  Run: python benchmarks/archive_cache.py
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
import time
from pathlib import Path

SPEC = {"name": "bench-tif6", "complex": {"metal": "Ti", "oxidation_state": 4, "geometry": "octahedral",
                                          "ligands": {"fluorido": 6}},
        "method": {"theory": "HF", "basis": "3-21g", "solvent": "none"}}
HIT = ("import sys, time; t = time.perf_counter(); from dsplit.spec import spec_from_dict; "
       "from dsplit.api.compute import compute_archived; "
       "r = compute_archived(spec_from_dict({spec!r}), sys.argv[1], threads=1); "
       "print(time.perf_counter() - t, r.exit_code)")


def main() -> None:
    from dsplit.api.compute import compute_archived
    from dsplit.spec import spec_from_dict

    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp) / "arch"
        spec = spec_from_dict(SPEC)
        t0 = time.perf_counter()
        compute_archived(spec, root, threads=1)
        first = time.perf_counter() - t0
        t0 = time.perf_counter()
        hit = compute_archived(spec, root, threads=1)
        in_proc = time.perf_counter() - t0
        t0 = time.perf_counter()
        out = subprocess.run([sys.executable, "-c", HIT.format(spec=SPEC), str(root)], capture_output=True,
                             text=True, check=True)
        fresh = time.perf_counter() - t0
        assert hit.exit_code == 0 and out.stdout.split()[1] == "0"
    print(f"original run (SCF, HF/3-21G [TiF6]2-)   {first:7.3f} s")
    print(f"cache hit, same process                {in_proc:7.3f} s   ratio {in_proc / first:6.4f}")
    print(f"cache hit, fresh process (with start)  {fresh:7.3f} s   ratio {fresh / first:6.4f}   (target ≤ 2 s)")


if __name__ == "__main__":
    main()
