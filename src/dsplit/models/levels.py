"""Group d levels into degenerate sets and give each set's d-orbital composition.

For a set S of degenerate eigenvectors c_k (columns over aom.D_ORBITALS) the
projector P = Σ_{k∈S} c_k c_kᵀ is basis-independent inside the set; its diagonal,
divided by the degeneracy, is the fraction of each real d orbital in the set
(common practice).  Levels closer than ``tol`` to their neighbour in ascending
order are chained into one set.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from dsplit.models.aom import D_ORBITALS, aom_levels


@dataclass(frozen=True)
class LevelSet:
    """One degenerate set of d levels."""

    energy: float  # mean energy of the set
    degeneracy: int
    indices: tuple[int, ...]  # positions in the ascending eigenvalue list
    composition: dict[str, float] = field(default_factory=dict)  # fractions, sum 1
    orbitals: tuple[str, ...] = ()  # orbitals with fraction ≥ 0.05, largest first


def default_tolerance(energies: np.ndarray) -> float:
    """1e-6 of the level spread (or of the largest |E| if all coincide), min 1e-12."""
    e = np.asarray(energies, dtype=float)
    scale = float(np.ptp(e)) or float(np.max(np.abs(e)))
    return max(1e-6 * scale, 1e-12)


def group_levels(
    energies: np.ndarray,
    vectors: np.ndarray | None = None,
    tol: float | None = None,
) -> list[LevelSet]:
    """Degenerate sets, ascending in energy; compositions need ``vectors`` (5×n)."""
    e = np.asarray(energies, dtype=float)
    order = np.argsort(e, kind="stable")
    tol = default_tolerance(e) if tol is None else tol
    groups: list[list[int]] = []
    for i in order:
        if groups and e[i] - e[groups[-1][-1]] <= tol:
            groups[-1].append(int(i))
        else:
            groups.append([int(i)])
    sets = []
    for g in groups:
        comp: dict[str, float] = {}
        orbs: tuple[str, ...] = ()
        if vectors is not None:
            c = np.asarray(vectors, dtype=float)[:, g]
            frac = np.einsum("ik,ik->i", c, c) / len(g)
            comp = {name: float(f) for name, f in zip(D_ORBITALS, frac)}
            ranked = sorted(comp, key=lambda k: -comp[k])
            orbs = tuple(k for k in ranked if comp[k] >= 0.05)
        sets.append(LevelSet(float(e[g].mean()), len(g), tuple(g), comp, orbs))
    return sets


def aom_sets(
    directions: np.ndarray,
    e_sigma: float | np.ndarray,
    e_pi: float | np.ndarray = 0.0,
    tol: float | None = None,
) -> list[LevelSet]:
    """AOM levels for the given ligand directions, grouped into degenerate sets."""
    w, c = aom_levels(directions, e_sigma, e_pi)
    return group_levels(w, c, tol)


def set_energies(sets: list[LevelSet]) -> tuple[np.ndarray, np.ndarray]:
    """(energies, degeneracies) arrays of a list of sets, for filling and CFSE."""
    return (
        np.array([s.energy for s in sets], dtype=float),
        np.array([s.degeneracy for s in sets], dtype=int),
    )
