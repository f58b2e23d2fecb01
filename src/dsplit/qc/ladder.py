"""The SCF ladder and internal stability analysis.

Rungs, each started from the best density so far, until one converges:
1. ``diis``: plain DIIS from the superposition-of-atoms guess;
2. ``level-shift``: level shift 0.3 Eh and damping 0.3 (Saunders & Hillier,
   Int. J. Quantum Chem. 7, 699 (1973));
3. ``newton``: second-order (augmented-Hessian Newton) solver, ``mf.newton()``;
4. ``fractional``: fractional occupation of degenerate frontier orbitals
   (``pyscf.scf.addons.frac_occ``), then exact occupations with the Newton solver.
A converged level-shift rung is polished by a plain SCF from its density so that
orbital energies carry no level shift (the Newton rungs need none).

Internal stability: lowest eigenvalues of the orbital-rotation Hessian by Davidson
(as ``pyscf.scf.stability`` does it, Seeger & Pople, J. Chem. Phys. 66, 3045
(1977)); a negative one is followed by rotating the orbitals along its
eigenvector and re-converging.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Callable

import numpy as np

Progress = Callable[[str, int, float, float], None]
RUNGS = ("diis", "level-shift", "newton", "fractional")
#: Davidson tolerance of the stability analysis, and so the smallest instability we can resolve (Eh)
STABILITY_TOL = 1e-3
START_VECTORS = 3  # Davidson start space of the stability analysis


@dataclass
class RungRecord:
    rung: str
    converged: bool
    cycles: int
    energy_hartree: float
    gradient_norm: float
    seconds: float


def _grad_norm(mf) -> float:
    try:  # the full Fock matrix (get_fock includes solvent and point-charge terms)
        fock = mf.get_fock(dm=mf.make_rdm1())
        return float(np.linalg.norm(mf.get_grad(mf.mo_coeff, mf.mo_occ, fock)))
    except Exception:
        return float("nan")


class _BestSoFar:
    """Orbitals of the SCF cycle with the smallest orbital gradient (handed to the next rung)."""

    def __init__(self) -> None:
        self.norm = self.last_norm = np.inf
        self.mo_coeff = self.mo_occ = None

    def record(self, envs) -> None:
        norm = envs.get("norm_gorb")
        if norm is None:
            return
        self.last_norm = float(norm)
        if envs.get("mo_coeff") is not None and self.last_norm < self.norm:
            self.norm = self.last_norm
            self.mo_coeff, self.mo_occ = envs["mo_coeff"], envs["mo_occ"]


def _attach_progress(mf, rung: str, progress: Progress | None, best: _BestSoFar | None = None) -> None:
    if progress is None and best is None:
        mf.callback = None
        return

    def cb(envs):
        if best is not None:
            best.record(envs)
        if progress is not None:
            e, last = envs.get("e_tot", 0.0), envs.get("last_hf_e", 0.0)
            progress(rung, int(envs.get("cycle", 0)) + 1, float(e), float(e - last))

    mf.callback = cb


def _run(mf, rung: str, dm0, progress: Progress | None, newton_ok: bool,
         best: _BestSoFar | None = None) -> tuple[object, RungRecord]:
    from pyscf import scf

    t0 = time.perf_counter()
    mf.level_shift, mf.damp = 0.0, 0.0
    solver = mf
    if rung == "diis":
        _attach_progress(mf, rung, progress, best)
        mf.kernel(dm0)
    elif rung == "level-shift":
        mf.level_shift, mf.damp = 0.3, 0.3
        _attach_progress(mf, rung, progress, best)
        mf.kernel(dm0)
        mf.level_shift, mf.damp = 0.0, 0.0
    elif rung == "newton":
        solver = mf.newton()
        _attach_progress(solver, rung, progress)
        mo, occ = mf.mo_coeff, mf.mo_occ
        solver.kernel(mo, occ) if mo is not None else solver.kernel(dm0)
    elif rung == "fractional":
        frac = scf.addons.frac_occ(mf.copy())
        _attach_progress(frac, rung, progress)
        frac.kernel(dm0)
        dm = frac.make_rdm1()
        solver = mf.newton()
        _attach_progress(solver, rung, progress)
        solver.kernel(dm0=dm) if hasattr(solver, "kernel") else None
    cycles = int(getattr(solver, "cycles", 0) or 0)
    if solver is not mf:
        for attr in ("mo_coeff", "mo_occ", "mo_energy", "e_tot", "converged"):
            setattr(mf, attr, getattr(solver, attr))
    last = best  # tracks the SCF whose last cycle gave the final orbitals (Newton rungs: none attached)
    if mf.converged and rung == "level-shift":  # polish: plain SCF from the converged density (no shift left)
        # (the Newton solver has no shift and canonicalises its orbitals; a DIIS polish after it can jump
        # to another stationary point — measured on an excited [Cr(NH3)6]3+ configuration, 0.03 Eh up)
        last = _BestSoFar()  # its own tracker: the rung's hand-over orbitals stay the level-shift ones
        _attach_progress(mf, rung, progress, last)
        mf.kernel(mf.make_rdm1())
    # a converged rung's last cycle already computed the gradient: one Fock build saved (7 % of a 10-cycle
    # [CrF6]3− B3LYP/def2-SVP SCF); a failed rung's final orbitals, and the Newton solver's, get their own
    norm = last.last_norm if (mf.converged and last is not None and np.isfinite(last.last_norm)) else _grad_norm(mf)
    rec = RungRecord(rung, bool(mf.converged), cycles, float(mf.e_tot), norm, time.perf_counter() - t0)
    return mf, rec


def run_ladder(mf, dm0, progress: Progress | None = None, rungs: tuple[str, ...] = RUNGS,
               newton_ok: bool = True, cycle_caps: dict[str, int] | None = None) -> tuple[object, list[RungRecord]]:
    """Climb the ladder until a rung converges; returns (mf, records of every rung run).

    ``cycle_caps`` limits the SCF cycles of named rungs (e.g. a plain DIIS that
    oscillates is given up early so that the next rung gets the time).  A rung that
    fails hands on the orbitals of its cycle with the smallest orbital gradient, not
    its last ones: measured on an excited cis-[CrCl2(NH3)4]+ configuration (B3LYP/
    def2-SVP, maximum overlap) the level shift reached |g| 0.011 at cycle 14, then an
    occupation flip at cycle 16 threw it back to |g| 0.26.
    """
    records: list[RungRecord] = []
    dm = dm0
    full = mf.max_cycle
    for rung in rungs:
        if rung in ("newton", "fractional") and not newton_ok:
            continue
        mf.max_cycle = min(full, (cycle_caps or {}).get(rung, full))
        best = _BestSoFar()
        try:
            mf, rec = _run(mf, rung, dm, progress, newton_ok, best)
        finally:
            mf.max_cycle = full
        records.append(rec)
        if rec.converged:
            break
        if best.mo_coeff is not None and best.norm < rec.gradient_norm:
            mf.mo_coeff, mf.mo_occ = best.mo_coeff, best.mo_occ
        if mf.mo_coeff is not None:
            dm = mf.make_rdm1()
    return mf, records


def lowest_hessian_eigenvalue(mf, nroots: int = 1) -> tuple[float, object]:
    """(lowest eigenvalue of the internal orbital-rotation Hessian, rotated MOs or None)."""
    from pyscf import lib, scf
    from pyscf.scf import stability
    from pyscf.soscf import newton_ah

    if isinstance(mf, scf.rohf.ROHF):
        gen = newton_ah.gen_g_hop_rohf
    elif isinstance(mf, scf.uhf.UHF):
        gen = newton_ah.gen_g_hop_uhf
    else:
        gen = newton_ah.gen_g_hop_rhf
    g, hop, hdiag = gen(mf, mf.mo_coeff, mf.mo_occ, with_symmetry=True)
    hdiag = hdiag * 2

    def precond(dx, e, x0):
        d = hdiag - e
        d[abs(d) < 1e-8] = 1e-8
        return dx / d

    # start from unit rotations of the lowest diagonal elements (the near-degenerate orbital pairs):
    # measured 6–7 Hessian products against 16 for a 1/diagonal start, same lowest eigenvalue within tolerance
    allowed = g != 0
    nroots = min(nroots, int(np.count_nonzero(allowed)) or 1)
    x0 = []
    for i in np.argsort(np.where(allowed, hdiag, np.inf))[: max(START_VECTORS, nroots)]:
        if allowed[i]:
            x = np.zeros_like(g)
            x[i] = 1.0
            x0.append(x)
    if not x0:
        x0 = [np.ones_like(g)]
    e, v = lib.davidson(lambda x: hop(x).real * 2, x0, precond, tol=STABILITY_TOL, nroots=nroots, max_cycle=30,
                        verbose=0)
    if nroots != 1:
        e, v = e[0], v[0]
    e = float(e)
    if e >= -STABILITY_TOL:  # within the resolution of the Davidson solve: stable
        return e, None
    if isinstance(mf, scf.uhf.UHF) and not isinstance(mf, scf.rohf.ROHF):
        nocca = int(np.count_nonzero(mf.mo_occ[0] > 0))
        nvira = int(np.count_nonzero(mf.mo_occ[0] == 0))
        mo = (stability._rotate_mo(mf.mo_coeff[0], mf.mo_occ[0], v[: nocca * nvira]),
              stability._rotate_mo(mf.mo_coeff[1], mf.mo_occ[1], v[nocca * nvira:]))
        return e, mo
    if isinstance(mf, scf.rohf.ROHF):
        return e, None  # ROHF rotations mix spaces; report only
    return e, stability._rotate_mo(mf.mo_coeff, mf.mo_occ, v)
