"""Spin-state ladder with checkpoint reuse against the same ladder with independent SCFs.

Both runs do the same states (every multiplicity × every functional) in one process,
one after the other; printed side by side: wall time, SCF cycles, energies (which must
agree), and the ratio reuse/independent (target ≤ 0.7).
Run: python benchmarks/spin_ladder_reuse.py [SPEC.toml] [--functionals HF,BHANDHLYP] [--threads 2]
Default complex: [VF4]⁻ (d2, tetrahedral), HF/STO-3G without density fitting — small
enough for a shared 2-core machine.
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

DEFAULT = {"name": "vf4-bench", "complex": {"metal": "V", "oxidation_state": 3, "geometry": "tetrahedral",
                                            "ligands": {"fluorido": 4}, "bond_length": 1.85},
           "method": {"theory": "HF", "basis": "sto-3g", "density_fitting": False}}


def _run(spec, folder: Path, reuse: bool, functionals: str, multiplicities: str | None, threads: int, optimize: bool):
    from dsplit.api.spin import spin_states

    t0 = time.perf_counter()
    run = spin_states(spec, folder, functionals=functionals, multiplicities=multiplicities, reuse=reuse,
                      optimize=optimize, threads=threads, write_reports=False)
    wall = time.perf_counter() - t0
    cycles = sum(_cycles(folder / s["folder"]) for s in run.result["spin_states"])
    return run, wall, cycles


def _cycles(state_folder: Path) -> int:
    """SCF cycles of one state, read back from its PySCF logs ('cycle=' lines)."""
    return sum(1 for log in state_folder.glob("*.log")
               for line in log.read_text(errors="replace").splitlines() if line.startswith("cycle="))


def main() -> None:
    from dsplit.spec import load_spec, spec_from_dict

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("spec", nargs="?")
    ap.add_argument("--functionals", default="HF,BHANDHLYP")
    ap.add_argument("--multiplicities")
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--optimize", action="store_true")
    a = ap.parse_args()
    spec = load_spec(a.spec) if a.spec else spec_from_dict(DEFAULT)
    with tempfile.TemporaryDirectory() as tmp:
        runs = {}
        for reuse in (False, True):
            runs[reuse] = _run(spec, Path(tmp) / f"reuse-{reuse}", reuse, a.functionals, a.multiplicities,
                               a.threads, a.optimize)
    print(f"{spec.name}: functionals {a.functionals}, multiplicities {a.multiplicities or 'all allowed'}"
          f"{', optimised per state' if a.optimize else ''}")
    print(f"{'state':<18}{'E independent / Eh':>22}{'E reuse / Eh':>22}{'|ΔE| / Eh':>12}")
    for s0, s1 in zip(runs[False][0].result["spin_states"], runs[True][0].result["spin_states"]):
        e0, e1 = s0["energy_hartree"], s1["energy_hartree"]
        diff = abs(e0 - e1) if e0 is not None and e1 is not None else float("nan")
        print(f"{s0['theory'] + ' 2S+1=' + str(s0['multiplicity']):<18}{e0 or float('nan'):>22.8f}"
              f"{e1 or float('nan'):>22.8f}{diff:>12.2e}")
    (_, t_ind, c_ind), (_, t_re, c_re) = runs[False], runs[True]
    print(f"independent: {t_ind:8.1f} s, {c_ind} SCF cycles")
    print(f"reuse:       {t_re:8.1f} s, {c_re} SCF cycles")
    print(f"ratio reuse/independent: time {t_re / t_ind:.2f} (target ≤ 0.7), cycles {c_re / max(c_ind, 1):.2f}")


if __name__ == "__main__":
    main()
