"""Cost of the hand-off files and d-orbital pictures against one ground-state SCF.

Runs ``compute`` on a spec with cube files on and prints, from result.json's own timings
(``provenance.timings.handoff``), each hand-off part as a ratio to the ground-state SCF,
plus the size of the files.  Parts: QCSchema, Molden, reproduce.py (text only), the
FCIDUMP (exact-integral frozen-core Hamiltonian + 5-orbital CASCI), cubes (only with
``cubes``), pictures (coarse metal-centred grid, marching cubes, five matplotlib renders).
Measured numbers are quoted in the final report of the branch that added this script.
Run: python benchmarks/handoff_cost.py [spec] [--threads N] [--no-cubes]
     (default inputs/ti-fluorido-violet.toml: B3LYP/def2-SVP)
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path


def main() -> None:
    from dsplit.compute_api import compute
    from dsplit.spec import load_spec, spec_from_dict

    root = Path(__file__).resolve().parent.parent
    ap = argparse.ArgumentParser()
    ap.add_argument("spec", nargs="?", default=str(root / "inputs/ti-fluorido-violet.toml"))
    ap.add_argument("--threads", type=int, default=None)
    ap.add_argument("--no-cubes", action="store_true")
    args = ap.parse_args()
    spec = load_spec(args.spec)
    data = spec.normalised()
    data.pop("schema")
    data["method"]["cubes"] = not args.no_cubes
    spec = spec_from_dict(data)
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        run = compute(spec, Path(tmp) / "run", threads=args.threads)
        total = time.perf_counter() - t0
        sizes = {p.name: p.stat().st_size for p in run.out_dir.iterdir()}
    doc = run.result
    scf = doc["provenance"]["timings"]["calculation"]["scf"]
    parts = doc["provenance"]["timings"].get("handoff") or {}
    print(f"{doc['complex']['formula']}  {doc['method']['theory']}/{doc['method']['basis']}  "
          f"nao {doc['method']['nao']}  exit {run.exit_code}")
    print(f"ground-state SCF   {scf:8.2f} s   1.000")
    for name, sec in parts.items():
        print(f"{name:<18} {sec:8.2f} s   {sec / scf:.3f}")
    hand = sum(parts.values())
    pics = parts.get("pictures", 0.0)
    print(f"hand-off in all    {hand:8.2f} s   {hand / scf:.3f}   (without cubes {(hand - parts.get('cubes', 0.0)) / scf:.3f},"
          f" pictures alone {pics / scf:.3f})")
    print(f"whole run          {total:8.2f} s   {total / scf:.2f}")
    cube_mb = sum(v for k, v in sizes.items() if k.endswith(".cube")) / 1e6
    other = {k: v for k, v in sizes.items() if k.split(".")[-1] in ("molden", "fcidump", "py", "png") or "qcschema" in k}
    print(f"cube files {cube_mb:.1f} MB; " + ", ".join(f"{k} {v / 1e3:.0f} kB" for k, v in sorted(other.items())))


if __name__ == "__main__":
    main()
