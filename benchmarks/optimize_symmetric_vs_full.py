"""Symmetric (breathing-coordinate) against full (ASE BFGS) optimisation of one ideal complex.

Same start, same method, same gradient threshold; printed side by side: wall time,
energy/gradient evaluations, final energy and M–L distance; then the time ratio and
the energy difference (both should reach the same minimum of a symmetric start).
Run: python benchmarks/optimize_symmetric_vs_full.py [SPEC.toml] [--threads 2]
Default complex: [Mn(CO)6]+ (d6 low spin, octahedral) at 1.85 Å, HF/STO-3G without density
fitting, gas phase: the full mode also relaxes the C–O bonds that the symmetric mode keeps
rigid, so the energy difference measures that approximation.
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

DEFAULT = {"name": "mnco6-bench", "complex": {"metal": "Mn", "oxidation_state": 1, "geometry": "octahedral",
                                              "ligands": {"carbonyl": 6}, "bond_length": 1.85},
           "method": {"theory": "HF", "basis": "sto-3g", "density_fitting": False, "solvent": "none"}}


def main() -> None:
    import numpy as np

    from dsplit.qc.setup import preflight
    from dsplit.units import hartree_to_kjmol
    from dsplit.qc.optimize import optimize_full, optimize_symmetric
    from dsplit.spec import load_spec, spec_from_dict

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("spec", nargs="?")
    ap.add_argument("--threads", type=int, default=2)
    a = ap.parse_args()
    spec = load_spec(a.spec) if a.spec else spec_from_dict(DEFAULT)
    cx, setup = preflight(spec, a.threads)
    out = {}
    with tempfile.TemporaryDirectory() as tmp:
        for name, fn in (("symmetric", optimize_symmetric), ("full", optimize_full)):
            folder = Path(tmp) / name
            folder.mkdir()
            t0 = time.perf_counter()
            res = fn(cx, setup, folder)
            out[name] = (res, time.perf_counter() - t0)
    print(f"{spec.name}: {cx.formula} {cx.geometry}, {setup.theory}/{setup.basis}, start "
          + ", ".join(f"{k} {v:.3f} Å" for k, v in cx.metal_ligand_distances().items()))
    print(f"{'mode':<10}{'wall / s':>10}{'evaluations':>13}{'E final / Eh':>20}{'M–L mean / Å':>14}{'group':>8}")
    for name, (res, wall) in out.items():
        d = np.mean([pl.distance for pl in res.final.ligands])
        print(f"{name:<10}{wall:>10.1f}{len(res.steps):>13}{res.steps[-1].energy_hartree:>20.8f}{d:>14.4f}"
              f"{res.final_group:>8}{'' if res.converged else '  NOT converged'}")
    (s, ts), (f, tf) = out["symmetric"], out["full"]
    de = f.steps[-1].energy_hartree - s.steps[-1].energy_hartree
    print(f"time ratio symmetric/full: {ts / tf:.2f}; E(full) − E(symmetric) = {de:.2e} Eh "
          f"({hartree_to_kjmol(de):.2e} kJ/mol)")


if __name__ == "__main__":
    main()
