"""Cost of the hand-off files and d-orbital pictures against one ground-state SCF.

Runs ``compute`` on a spec with cube files on and prints, from result.json's own timings
(``provenance.timings.handoff``), each hand-off part as a ratio to the ground-state SCF,
plus the size of the files.  Parts: QCSchema, Molden, reproduce.py (text only), the
FCIDUMP (exact-integral frozen-core Hamiltonian + 5-orbital CASCI), cubes (only with
``cubes``), pictures (coarse metal-centred grid, marching cubes, five matplotlib renders).
Measured (2026-12, 2 cores shared with other jobs, one thread, B3LYP/def2-SVP, PCM water, cubes at
0.15 Å, full ``compute``):
  [TiF6]3−     nao 115: ground SCF 46.9 s; FCIDUMP 0.053×, cubes 0.044×, pictures 0.020×, Molden 0.002×,
               QCSchema + reproduce.py < 0.001×; all 0.119× (0.075× without cubes); cubes 18.6 MB
  [V(H2O)6]3+  nao 175: ground SCF 247 s; FCIDUMP 0.029×, cubes 0.012×, pictures 0.002×; all 0.044×
               (0.032× without cubes); cubes 29.3 MB, orbitals.molden 1.7 MB, each picture ~50 kB
The FCIDUMP part is one exact-integral J/K build of the core plus a 5-orbital transformation; the
pictures take about 1 s whatever the basis (a 0.2 Å grid around the metal, five renders).
Run: python benchmarks/handoff_cost.py [spec] [--threads N] [--no-cubes]
     (default inputs/ti-fluorido-violet.toml: B3LYP/def2-SVP)
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path


def main() -> None:
    from dsplit.api.compute import compute
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
