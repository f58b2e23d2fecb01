"""dsplit's calculation engine against a bare PySCF script doing the same SCF, density fitting
against 4-index integrals, and the cost of labelling + composition against the SCF.

Prints measured ratios side by side (targets: overhead ≤ 1.05, DF speed-up ≥ 3,
labelling + composition ≤ 5 % of the SCF).  Complex: [CrF6]3−, B3LYP/def2-SVP, PCM water.
Two bare scripts: one with PySCF's own PCM (what a user would write), one with dsplit's
factorised PCM (the same numerics as the engine, so the ratio is the engine's own overhead);
density fitting is timed against 4-index integrals with the factorised PCM in both, so the
solvent's surface integrals do not swamp the two-electron part.
Run: python benchmarks/compute_overhead.py [basis] [--threads N]   (N: threads for both sides; default all cores)
"""

from __future__ import annotations

import sys

from _common import build, timed


def bare_pyscf(cx, basis: str, density_fitting: bool = True, factorised_pcm: bool = False):
    """The same SCF written by hand: UKS B3LYP, DF, PCM water, superposition-of-atoms guess."""
    from pyscf import dft, gto

    from dsplit.qc.pcm_factorised import attach_factorised_pcm

    atoms = [(s, tuple(p)) for s, p in zip(cx.atoms.get_chemical_symbols(), cx.atoms.positions)]
    mol = gto.M(atom=atoms, basis=basis, charge=cx.charge, spin=cx.multiplicity - 1, symmetry=True, verbose=0)
    mf = dft.UKS(mol)
    mf.xc = "B3LYP"
    mf.conv_tol = 1e-9
    mf.init_guess = "atom"
    if density_fitting:
        mf = mf.density_fit()
    if factorised_pcm:
        mf = attach_factorised_pcm(mf, 78.36)
    else:
        mf = mf.PCM()
        mf.with_solvent.eps = 78.36
    mf.kernel()
    return mf


def main() -> None:
    from dsplit.analysis.orbitals import build_orbital_table
    from dsplit.qc.engine import run_calculation
    from dsplit.qc.setup import resolve_method
    from dsplit.spec import MethodSpec

    from pyscf import lib

    args = sys.argv[1:]
    threads = None
    if "--threads" in args:
        threads = int(args.pop(args.index("--threads") + 1))
        args.remove("--threads")
        lib.num_threads(threads)
    basis = args[0] if args else "def2-SVP"
    cx = build("Cr", 3, "octahedral", {"fluorido": 6}, bond_length=1.93)
    t: dict[str, float] = {}
    with timed(t, "bare"):
        mf = bare_pyscf(cx, basis)
    with timed(t, "bare_fpcm"):
        mff = bare_pyscf(cx, basis, factorised_pcm=True)
    setup = resolve_method(cx, MethodSpec(theory="B3LYP", basis=basis, solvent="water"), threads=threads)
    with timed(t, "dsplit_no_stability"):
        calc = run_calculation(cx, setup, None, stability=False)
    with timed(t, "dsplit"):
        calc_full = run_calculation(cx, setup, None)
    with timed(t, "analysis"):
        table = build_orbital_table(calc_full)
    with timed(t, "bare_4index"):
        mf4 = bare_pyscf(cx, basis, density_fitting=False, factorised_pcm=True)
    print(f"complex [CrF6]3-, B3LYP/{basis}, PCM water, nao = {calc.mol.nao_nr()}, threads = {lib.num_threads()}")
    print(f"bare PySCF SCF, PySCF's PCM     {t['bare']:8.1f} s   E = {mf.e_tot:.8f}")
    print(f"bare PySCF SCF, factorised PCM  {t['bare_fpcm']:8.1f} s   E = {mff.e_tot:.8f}")
    print(f"dsplit engine (no stability)    {t['dsplit_no_stability']:8.1f} s   E = {calc.energy_hartree:.8f}   "
          f"ratio {t['dsplit_no_stability'] / t['bare_fpcm']:.3f} to the same numerics (target ≤ 1.05), "
          f"{t['dsplit_no_stability'] / t['bare']:.3f} to PySCF's PCM")
    print(f"dsplit engine (with stability)  {t['dsplit']:8.1f} s   ratio {t['dsplit'] / t['bare']:.3f}  "
          f"(stability analysis included)")
    print(f"labels + IAO composition        {t['analysis']:8.2f} s   "
          f"{100 * t['analysis'] / calc_full.timings['scf']:.1f} % of the SCF (target ≤ 5 %)")
    print(f"4-index integrals (no DF)       {t['bare_4index']:8.1f} s   DF speed-up "
          f"{t['bare_4index'] / t['bare_fpcm']:.2f}× (target ≥ 3×), ΔE(DF − 4-index) = "
          f"{(mff.e_tot - mf4.e_tot) * 1e6:.1f} µEh")


if __name__ == "__main__":
    main()
