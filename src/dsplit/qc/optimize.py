"""Geometry optimisation of a Complex: symmetric (metal–ligand distances) or full (ASE).

Symmetric mode keeps the point group.  The ligands are split into symmetry-
distinct sets: orbits of the ligands under the complex's exact point group
(``dsplit.symmetry.detect_point_group`` permutations), so a trans-[MA4B2] has
one A set and one B set and a trigonal bipyramid of one kind has an axial and an
equatorial set.  Coordinate r_k moves every ligand L of set k rigidly along its
M–L unit vector u_L; moving a whole orbit by the same amount keeps every
operation of the group.  The generalized gradient is the chain rule

    ∂E/∂r_k = Σ_{L ∈ k} Σ_{a ∈ L} (∂E/∂R_a) · u_L

with PySCF's analytic nuclear gradient ∂E/∂R_a (PCM term included when a solvent
is on).  Steps are quasi-Newton in the few r_k: a diagonal start Hessian of
K_GUESS per ligand of the set (common practice: a metal–ligand stretch force
constant is a few mdyn/Å, 1 Eh/Å² ≈ 4.36 mdyn/Å), BFGS updates (Nocedal &
Wright, Numerical Optimization, 2nd ed., eq. 6.19 — from memory), at most
MAX_STEP Å per coordinate, and backtracking when the energy rises or an SCF fails.  Converged
when every |∂E/∂r_k| ≤ threshold (Hartree/Å, default GRADIENT_THRESHOLD).

Full mode is unconstrained: ``ase.optimize.BFGS`` drives ``DsplitCalculator``
(qc.ase_calculator) until the largest atomic force |∂E/∂R_a| ≤ threshold (the
same number, converted to ASE's eV/Å); whether the point group survived is
judged by detect_point_group on the final geometry at SYMMETRY_TOLERANCE Å.

Every step starts its SCF from the previous step's checkpoint; each geometry is
written to an ASE trajectory (``ase.io.Trajectory``, energies in eV, forces in eV/Å).
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np
from ase.units import Hartree

from dsplit.complex import Complex
from dsplit.errors import CalculationError, InputError
from dsplit.qc.ase_calculator import DsplitCalculator, check_gradient_support, complex_at

GRADIENT_THRESHOLD = 5e-4  # Hartree/Å: |∂E/∂r_k| (symmetric) or max |∂E/∂R_a| (full)
MAX_STEPS = 25  # energy + gradient evaluations (symmetric) / optimiser steps (full)
K_GUESS = 0.3  # Hartree/Å² per ligand, start curvature of a breathing coordinate
MAX_STEP = 0.15  # Å, largest change of one distance per step
SYMMETRY_TOLERANCE = 0.01  # Å, detect_point_group tolerance for "symmetry kept"
UPHILL = 1e-8  # Hartree, an energy rise larger than this triggers backtracking
MAX_RETRIES = 2  # failed SCFs retried with half the step


@dataclass(frozen=True)
class LigandSet:
    """Symmetry-equivalent ligands that move together (indices into Complex.ligands)."""

    label: str
    ligand: str
    role: str
    members: tuple[int, ...]


@dataclass
class OptimizationStep:
    index: int
    energy_hartree: float
    max_gradient: float  # Hartree/Å
    distances: dict[str, float]
    gradient: dict[str, float] | None  # ∂E/∂r_k per ligand set (symmetric mode)
    seconds: float


@dataclass
class OptimizationResult:
    """Outcome of one optimisation (converged or not); ``calculation`` is the last verified SCF."""

    mode: str
    converged: bool
    threshold: float
    threshold_meaning: str
    steps: list[OptimizationStep]
    initial: Complex
    final: Complex
    calculation: Any
    trajectory: Path | None
    start_group: str
    final_group: str
    gradient_model: str
    failure: str | None = None
    notes: list[str] = field(default_factory=list)
    hessian: np.ndarray | None = None  # symmetric mode: the last quasi-Newton Hessian, Eh/Å², one row per set

    @property
    def symmetry_kept(self) -> bool:
        return self.start_group == self.final_group

    @property
    def energy_change(self) -> float | None:
        if len(self.steps) < 1:
            return None
        return self.steps[-1].energy_hartree - self.steps[0].energy_hartree

    def to_json(self) -> dict[str, Any]:
        """The result.json ``optimization`` section (Hartree, Å; kJ/mol added)."""
        from dsplit.units import hartree_to_kjmol

        last = self.steps[-1] if self.steps else None
        de = self.energy_change
        return {
            "mode": self.mode, "converged": self.converged, "steps": len(self.steps),
            "final_gradient": last.max_gradient if last else None, "threshold": self.threshold,
            "gradient_unit": "hartree/angstrom", "threshold_meaning": self.threshold_meaning,
            "gradient_model": self.gradient_model,
            "initial_distances": self.steps[0].distances if self.steps else None,
            "distances": last.distances if last else None,
            "initial_energy_hartree": self.steps[0].energy_hartree if self.steps else None,
            "final_energy_hartree": last.energy_hartree if last else None,
            "energy_change_hartree": de, "energy_change_kJmol": hartree_to_kjmol(de) if de is not None else None,
            "start_point_group": self.start_group, "final_point_group": self.final_group,
            "symmetry_kept": self.symmetry_kept, "symmetry_tolerance_angstrom": SYMMETRY_TOLERANCE,
            "trajectory": self.trajectory.name if self.trajectory else None,
            "failure": self.failure, "notes": list(self.notes),
            "history": [{"step": s.index, "energy_hartree": s.energy_hartree, "max_gradient": s.max_gradient,
                         "distances": s.distances, "gradient": s.gradient, "seconds": s.seconds}
                        for s in self.steps],
        }


def _trans_partner(cx: Complex, k: int) -> str | None:
    u = np.asarray(cx.ligands[k].direction)
    for pl in cx.ligands:
        if np.dot(np.asarray(pl.direction), u) < -0.999:
            return pl.ligand.key
    return None


def ligand_sets(cx: Complex) -> list[LigandSet]:
    """Orbits of the ligands under the exact point group (see module docstring), labelled."""
    from dsplit.symmetry.detect import detect_point_group

    sym = detect_point_group(cx.atoms.get_chemical_symbols(), cx.atoms.positions)
    owner = cx.ligand_of_atom
    orbits: list[list[int]] = []
    seen: set[int] = set()
    for k, pl in enumerate(cx.ligands):
        if k in seen:
            continue
        images = sorted({owner[int(p[pl.atom_indices[0]])] for p in sym.permutation})
        orbits.append(images)
        seen.update(images)
    by_kind: dict[str, list[list[int]]] = {}
    for orb in orbits:
        by_kind.setdefault(cx.ligands[orb[0]].ligand.key, []).append(orb)
    out = []
    for key, orbs in by_kind.items():
        roles = [cx.polyhedron.site_roles[cx.ligands[o[0]].site] for o in orbs]
        trans = [_trans_partner(cx, o[0]) for o in orbs]
        for i, orb in enumerate(orbs):
            if len(orbs) == 1:
                label = key
            elif len(set(roles)) == len(orbs):
                label = f"{key} ({roles[i]})"
            elif None not in trans and len(set(trans)) == len(orbs):
                label = f"{key} (trans to {trans[i]})"
            else:
                label = f"{key} (site{'s' if len(orb) > 1 else ''} "                         + ",".join(str(cx.ligands[m].site) for m in orb) + ")"
            out.append(LigandSet(label, key, roles[i], tuple(orb)))
    return out


def set_distances(cx: Complex, sets: list[LigandSet]) -> np.ndarray:
    """Current M–L distance of each set (mean over its members, Å)."""
    return np.array([np.mean([cx.ligands[m].distance for m in s.members]) for s in sets])


def positions_at(cx: Complex, sets: list[LigandSet], r: np.ndarray) -> np.ndarray:
    """Positions with every ligand of set k moved rigidly to distance r_k along its M–L direction."""
    pos = cx.atoms.positions.copy()
    for s, rk in zip(sets, r):
        for m in s.members:
            pl = cx.ligands[m]
            pos[list(pl.atom_indices)] += (rk - pl.distance) * np.asarray(pl.direction)
    return pos


def set_gradient(cx: Complex, sets: list[LigandSet], grad: np.ndarray) -> np.ndarray:
    """∂E/∂r_k = Σ_L Σ_a ∂E/∂R_a · u_L (Hartree/Å)."""
    return np.array([sum(float(grad[list(cx.ligands[m].atom_indices)].sum(axis=0) @ np.asarray(cx.ligands[m].direction))
                         for m in s.members) for s in sets])


def solvent_gradient_available(setup) -> bool:
    """True in the gas phase, or when PySCF's PCM object gives a PCM gradient object."""
    if setup.solvent.is_gas_phase:
        return True
    try:
        from pyscf import gto, scf

        mol = gto.M(atom="H 0 0 0; H 0 0 0.74", basis="sto-3g", verbose=0)
        grad = scf.RHF(mol).PCM().nuc_grad_method()
    except Exception:
        return False
    return "solvent" in type(grad).__module__


def gradient_model(setup) -> str:
    if setup.solvent.is_gas_phase:
        return "analytic (PySCF), gas phase"
    if solvent_gradient_available(setup):
        return "analytic (PySCF), including the PCM solvent term"
    return "analytic (PySCF), gas-phase gradient only: this PySCF has no PCM gradient"


def check_optimizable(cx: Complex, setup, full: bool) -> None:
    """InputError (before any SCF) for point donors, or for --full without a solvent gradient."""
    check_gradient_support(cx)
    if full and not solvent_gradient_available(setup):
        raise InputError("--full", f"this PySCF has no analytic PCM gradient for solvent '{setup.solvent.name}'; "
                                   "use the symmetric mode or --solvent none")


def _write_frame(traj, cx: Complex, energy: float, grad: np.ndarray) -> None:
    from ase.calculators.singlepoint import SinglePointCalculator

    atoms = cx.atoms.copy()
    atoms.calc = SinglePointCalculator(atoms, energy=energy * Hartree, forces=-grad * Hartree)
    traj.write(atoms)


def _bfgs_update(h: np.ndarray, s: np.ndarray, y: np.ndarray) -> np.ndarray:
    """H + yyᵀ/(yᵀs) − (Hs)(Hs)ᵀ/(sᵀHs), skipped unless the curvature yᵀs is positive."""
    ys, hs = float(y @ s), h @ s
    if ys <= 1e-10:
        return h
    return h + np.outer(y, y) / ys - np.outer(hs, hs) / float(s @ hs)


def optimize_symmetric(cx: Complex, setup, folder: Path | None, *, multiplicity: int | None = None,
                       target_occupations: list[int] | None = None, start_from: Path | None = None,
                       threshold: float = GRADIENT_THRESHOLD, max_steps: int = MAX_STEPS, progress=None,
                       tag: str = "opt", start_distances: dict[str, float] | None = None,
                       start_hessian: np.ndarray | None = None) -> OptimizationResult:
    """Optimise one distance per symmetry-distinct ligand set, keeping the point group.

    ``start_distances`` (by set label) and ``start_hessian`` let a neighbouring optimisation
    (another spin state or functional of the same complex) seed the start point and the
    quasi-Newton curvature; without them the builder's distances and K_GUESS are used.
    """
    from ase.io import Trajectory

    check_optimizable(cx, setup, full=False)
    if folder is not None:
        folder.mkdir(parents=True, exist_ok=True)
    sets = ligand_sets(cx)
    ev = DsplitCalculator(cx, setup, folder, multiplicity=multiplicity, target_occupations=target_occupations,
                          start_from=start_from, tag=tag, progress=progress)
    traj_path = folder / f"{tag}.traj" if folder is not None else None
    traj = Trajectory(str(traj_path), "w") if traj_path is not None else None
    x = set_distances(cx, sets)
    if start_distances:
        x = np.array([float(start_distances.get(s.label, v)) for s, v in zip(sets, x)])
        notes_seed = ["start distances from a neighbouring optimisation"]
    else:
        notes_seed = []
    hess = np.diag([K_GUESS * len(s.members) for s in sets])
    if start_hessian is not None and np.shape(start_hessian) == hess.shape \
            and np.all(np.linalg.eigvalsh(start_hessian) > 0):
        hess = np.array(start_hessian, dtype=float)
        notes_seed.append("start Hessian from a neighbouring optimisation")
    best: tuple[np.ndarray, float, np.ndarray] | None = None
    steps: list[OptimizationStep] = []
    converged, failure, last_cx, retries = False, None, cx, 0
    notes = [f"ligand sets: {', '.join(f'{s.label} ×{len(s.members)}' for s in sets)}", *notes_seed]
    try:
        while len(steps) < max_steps:
            t0 = time.perf_counter()
            try:
                calc, grad = ev.evaluate(positions_at(cx, sets, x))
            except CalculationError as exc:  # a failed SCF: retry a shorter step from the best point
                if best is None or retries == MAX_RETRIES:
                    failure = str(exc)
                    break
                retries += 1
                notes.append(f"{exc}; retried half the step")
                x = best[0] + 0.5 * (x - best[0])
                continue
            last_cx = calc.complex
            e, g = calc.energy_hartree, set_gradient(last_cx, sets, grad)
            steps.append(OptimizationStep(len(steps), e, float(np.max(np.abs(g))),
                                          {s.label: float(v) for s, v in zip(sets, x)},
                                          {s.label: float(v) for s, v in zip(sets, g)}, time.perf_counter() - t0))
            if traj is not None:
                _write_frame(traj, last_cx, e, grad)
            if np.max(np.abs(g)) <= threshold:
                converged = True
                break
            if best is not None:
                hess = _bfgs_update(hess, x - best[0], g - best[2])
                if e > best[1] + UPHILL:  # went uphill: shorter step from the best point
                    p = -np.linalg.solve(hess, best[2])
                    limit = 0.5 * float(np.max(np.abs(x - best[0])))
                    x = best[0] + p * min(1.0, limit / max(float(np.max(np.abs(p))), 1e-12))
                    continue
            best = (x.copy(), e, g.copy())
            p = -np.linalg.solve(hess, g)
            x = x + p * min(1.0, MAX_STEP / max(float(np.max(np.abs(p))), 1e-12))
    finally:
        if traj is not None:
            traj.close()
    if not converged and failure is None:
        failure = f"not converged in {max_steps} steps (largest |∂E/∂r| {steps[-1].max_gradient:.2e} Eh/Å)"
    verified = [c for c in ev.calculations if c.ok]
    final_calc = verified[-1] if verified else ev.last
    return OptimizationResult(
        mode="symmetric", converged=converged, threshold=threshold,
        threshold_meaning="every |∂E/∂r| ≤ threshold, r = the distance of one symmetry-distinct ligand set "
                          "(all its ligands moving together)",
        steps=steps, initial=cx, final=last_cx, calculation=final_calc, trajectory=traj_path,
        start_group=cx.exact_point_group, final_group=cx.exact_point_group if not steps else
        _point_group(last_cx), gradient_model=gradient_model(setup), failure=failure, notes=notes, hessian=hess)


def _point_group(cx: Complex) -> str:
    from dsplit.symmetry.detect import detect_point_group

    return detect_point_group(cx.atoms.get_chemical_symbols(), cx.atoms.positions, tol=SYMMETRY_TOLERANCE).name


def _full_distances(cx: Complex) -> dict[str, float]:
    """Every M–L distance after a full optimisation, labelled ligand@site."""
    return {f"{pl.ligand.key}@{pl.site}": float(pl.distance) for pl in cx.ligands}


def optimize_full(cx: Complex, setup, folder: Path | None, *, multiplicity: int | None = None,
                  target_occupations: list[int] | None = None, start_from: Path | None = None,
                  threshold: float = GRADIENT_THRESHOLD, max_steps: int = MAX_STEPS, progress=None,
                  tag: str = "opt") -> OptimizationResult:
    """Unconstrained optimisation with ase.optimize.BFGS over DsplitCalculator."""
    from ase.optimize import BFGS

    check_optimizable(cx, setup, full=True)
    if folder is not None:
        folder.mkdir(parents=True, exist_ok=True)
    calc = DsplitCalculator(cx, setup, folder, multiplicity=multiplicity, target_occupations=target_occupations,
                            start_from=start_from, tag=tag, progress=progress)
    atoms = cx.atoms.copy()
    atoms.calc = calc
    traj_path = folder / f"{tag}.traj" if folder is not None else None
    logfile = str(folder / f"{tag}-bfgs.log") if folder is not None else None
    failure, converged = None, False
    with BFGS(atoms, logfile=logfile, trajectory=str(traj_path) if traj_path else None, maxstep=MAX_STEP) as opt:
        try:
            converged = bool(opt.run(fmax=threshold * Hartree, steps=max_steps))
        except CalculationError as exc:
            failure = str(exc)
    good = list(zip(calc.calculations, calc.gradients))  # a failed evaluation has no gradient
    steps = [OptimizationStep(i, c.energy_hartree, float(np.max(np.linalg.norm(g, axis=1))),
                              _full_distances(c.complex), None, c.timings.get("wall", 0.0))
             for i, (c, g) in enumerate(good)]
    final = good[-1][0] if good else (calc.last)
    final_cx = final.complex if final is not None else cx
    if not converged and failure is None:
        failure = f"not converged in {max_steps} steps (largest force {steps[-1].max_gradient:.2e} Eh/Å)"
    group = _point_group(final_cx)
    final_cx = replace(final_cx, exact_point_group=group)  # the group may have dropped on the way
    return OptimizationResult(
        mode="full", converged=converged, threshold=threshold,
        threshold_meaning="largest atomic |∂E/∂R| ≤ threshold (ase.optimize.BFGS fmax, converted to eV/Å)",
        steps=steps, initial=cx, final=final_cx, calculation=final, trajectory=traj_path,
        start_group=cx.exact_point_group, final_group=group,
        gradient_model=gradient_model(setup), failure=failure)


def optimize(cx: Complex, setup, folder: Path | None, *, full: bool = False, **kwargs) -> OptimizationResult:
    """Symmetric (default) or full optimisation; see the two functions."""
    return (optimize_full if full else optimize_symmetric)(cx, setup, folder, **kwargs)


__all__ = ["GRADIENT_THRESHOLD", "LigandSet", "OptimizationResult", "OptimizationStep", "check_optimizable",
           "complex_at", "ligand_sets", "optimize", "optimize_full", "optimize_symmetric", "positions_at",
           "set_gradient", "solvent_gradient_available"]
