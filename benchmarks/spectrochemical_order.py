"""The state estimator along the spectrochemical series for chromium(III) (not run in CI).

Expected order (Tsuchida's series, e.g. Shriver & Atkins, Inorganic Chemistry — from memory):
F⁻ < H2O < NH3 < CN⁻.  Prints Δ(state) per ligand and whether the order holds.
Cr–L distances: typical crystal distances of the chromium(III) complexes (from memory, as in
benchmarks/validation.py); at covalent-radius sums (Cordero 2008) the aqua ion is 0.09 Å too long and
B3LYP/3-21G then puts it below fluorido (measured here: 1.59 against 1.94 eV).
Measured here with these distances (PCM water, state estimator, all ΔSCF verified), with the ΔSCF
pair that makes a ⁴T2g component (|xz yz x²−y²|, see analysis/splitting.py):
B3LYP/STO-3G: F⁻ 2.33, H2O 1.94, NH3 2.67, CN⁻ 2.95 eV — differs (aqua below fluorido);
B3LYP/3-21G (benchmarks/validation.py): F⁻ 16,700, H2O 16,100 cm⁻¹ — the same swap, the rest in order.
Until 2026-12 the pair xy → z² was used, which makes a ⁴T1g component (A2g), and measured the second
band: B3LYP/3-21G F⁻ 3.107, H2O 3.055, NH3 3.047, CN⁻ 4.069 eV.  The F⁻/H2O order is the part no
cheap method here gets right, so the series is not a CI test.
Run: python benchmarks/spectrochemical_order.py [theory] [basis]   (default B3LYP 3-21G, PCM water)
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

#: Cr(III)–donor distances, Å (typical crystal distances, from memory)
DISTANCES = {"fluorido": 1.93, "aqua": 1.96, "ammine": 2.07, "cyanido": 2.08}


def main() -> None:
    from dsplit.analysis.splitting import choose_transition, state_estimate
    from dsplit.qc.excited import run_delta_scf
    from dsplit.geometry.build import ComplexRequest, build_complex
    from dsplit.qc.engine import run_calculation
    from dsplit.qc.setup import resolve_method
    from dsplit.spec import MethodSpec

    theory = sys.argv[1] if len(sys.argv) > 1 else "B3LYP"
    basis = sys.argv[2] if len(sys.argv) > 2 else "3-21G"
    deltas = {}
    for lig, r in DISTANCES.items():
        t0 = time.perf_counter()
        cx = build_complex(ComplexRequest("series", "Cr", "octahedral", {lig: 6}, oxidation_state=3, bond_length=r))
        setup = resolve_method(cx, MethodSpec(theory=theory, basis=basis, solvent="water"))
        with tempfile.TemporaryDirectory() as tmp:
            calc = run_calculation(cx, setup, Path(tmp), stability=False)
            st = state_estimate(calc, run_delta_scf(calc, choose_transition(calc), Path(tmp))) if calc.ok else {}
        deltas[lig] = st.get("delta_eV")
        print(f"{lig:<10} Δ(state) = {deltas[lig]} eV  verified {st.get('configuration_verified')}  "
              f"{time.perf_counter() - t0:.0f} s", flush=True)
    have = {k: v for k, v in deltas.items() if v is not None}
    order = sorted(have, key=have.get)
    print("order found:", " < ".join(order), "| expected: fluorido < aqua < ammine < cyanido |",
          "agrees" if order == ["fluorido", "aqua", "ammine", "cyanido"] else "differs")


if __name__ == "__main__":
    main()
