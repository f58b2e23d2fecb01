"""The ligand-field (metal-d) manifold of one spin channel, and a bonding-character helper.

Pick rule (ours): group orbitals into degenerate sets; keep the sets that lie in the
frontier window [ε_HOMO − window, ε_LUMO + window] and have mean metal-d share ≥ min_d;
among whole sets, take the combination of exactly `size` (5) orbitals with the largest
summed metal-d share (ties: the combination nearer the HOMO/LUMO midpoint).  For d⁰ this
yields the lowest d-rich virtuals, for d¹⁰ the d-rich occupied orbitals.  Ambiguities are
reported as warnings, never resolved silently.

Energies in Hartree; eV via scipy.constants (CODATA).
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from typing import Collection, Sequence

import numpy as np
from scipy.constants import physical_constants

HARTREE_IN_EV: float = physical_constants["Hartree energy in eV"][0]
DEGENERACY_TOLERANCE: float = 1e-3  # Hartree (≈ 27 meV): neighbours closer than this join a set
OCCUPIED_ABOVE: float = 1e-6  # an orbital with occupation above this counts as occupied
_MAX_CANDIDATE_SETS = 16  # bound on the exhaustive whole-set search


@dataclass(frozen=True)
class DegenerateSet:
    """Orbitals treated as one level."""

    indices: tuple[int, ...]  # ascending
    irrep: str | None  # the members' labels joined by '+' if they differ
    degeneracy: int
    energy: float  # mean, Hartree
    energy_ev: float
    spread: float  # max − min energy inside the set, Hartree
    occupation: float  # sum over the set
    metal_d: float  # mean metal-d share


@dataclass(frozen=True)
class Manifold:
    """The picked d-based orbitals of one spin channel."""

    indices: tuple[int, ...]  # picked orbitals, set by set in energy order
    sets: tuple[DegenerateSet, ...]  # picked sets, by energy
    warnings: tuple[str, ...]
    ambiguous: bool


def _set_irrep(irreps: Sequence[str] | None, members: Sequence[int]) -> str | None:
    if irreps is None:
        return None
    return "+".join(dict.fromkeys(str(irreps[i]) for i in members))


def degenerate_sets(energies: Sequence[float], irreps: Sequence[str] | None = None,
                    set_ids: Sequence[int] | None = None,
                    tolerance: float = DEGENERACY_TOLERANCE) -> list[tuple[int, ...]]:
    """Orbital index groups, in energy order.

    With `set_ids`, orbitals sharing an id form a set.  Otherwise single linkage in
    energy: consecutive orbitals (sorted by energy) closer than `tolerance` Hartree join,
    unless their irrep labels (if given) differ.
    """
    e = np.asarray(energies, dtype=float)
    if set_ids is not None:
        ids = list(set_ids)
        groups: dict[int, list[int]] = {}
        for i in np.argsort(e, kind="stable"):
            groups.setdefault(ids[i], []).append(int(i))
        return sorted((tuple(sorted(g)) for g in groups.values()), key=lambda g: e[list(g)].mean())
    order = [int(i) for i in np.argsort(e, kind="stable")]
    sets: list[list[int]] = []  # members in energy order while linking
    for i in order:
        if sets and e[i] - e[sets[-1][-1]] < tolerance and (
                irreps is None or irreps[i] == irreps[sets[-1][-1]]):
            sets[-1].append(i)
        else:
            sets.append([i])
    return [tuple(sorted(s)) for s in sets]


def _describe(members: Sequence[int], e: np.ndarray, occ: np.ndarray, d: np.ndarray,
              irreps: Sequence[str] | None) -> DegenerateSet:
    idx = list(members)
    energy = float(e[idx].mean())
    return DegenerateSet(
        indices=tuple(int(i) for i in members), irrep=_set_irrep(irreps, idx),
        degeneracy=len(idx), energy=energy, energy_ev=energy * HARTREE_IN_EV,
        spread=float(e[idx].max() - e[idx].min()), occupation=float(occ[idx].sum()),
        metal_d=float(d[idx].mean()))


def _best_combination(cands: list[DegenerateSet], size: int, mid: float) -> list[DegenerateSet]:
    """Whole sets totalling `size` orbitals (or the most below it) with most summed metal d."""
    best: tuple[tuple[int, float, float], list[DegenerateSet]] | None = None
    for r in range(1, size + 1):
        for combo in itertools.combinations(cands, r):
            n = sum(s.degeneracy for s in combo)
            if n > size:
                continue
            key = (n, round(sum(s.metal_d * s.degeneracy for s in combo), 9),
                   -sum(abs(s.energy - mid) * s.degeneracy for s in combo))
            if best is None or key > best[0]:
                best = (key, list(combo))
    return [] if best is None else best[1]


def _fmt(s: DegenerateSet) -> str:
    label = f" {s.irrep}" if s.irrep else ""
    return f"set {list(s.indices)}{label} at {s.energy_ev:.3f} eV (metal d {s.metal_d:.2f})"


def ligand_field_manifold(energies: Sequence[float], occupations: Sequence[float],
                          metal_d: Sequence[float], irreps: Sequence[str] | None = None,
                          set_ids: Sequence[int] | None = None, *, size: int = 5,
                          tolerance: float = DEGENERACY_TOLERANCE, window: float = 1.0,
                          min_d: float = 0.2, warn_d: float = 0.5,
                          margin: float = 0.1) -> Manifold:
    """Pick the `size` d-based orbitals of one spin channel (see module docstring).

    energies in Hartree; window in Hartree; min_d, warn_d, margin are metal-d shares.
    Warnings: fewer than `size` orbitals in whole sets; the metal-d ranking boundary cuts a
    degenerate set; an unpicked set (in or outside the window) within `margin` of the
    weakest picked set; a picked set below `warn_d`.
    """
    e = np.asarray(energies, dtype=float)
    occ = np.asarray(occupations, dtype=float)
    d = np.asarray(metal_d, dtype=float)
    if not e.shape == occ.shape == d.shape or e.ndim != 1:
        raise ValueError("energies, occupations and metal_d must be 1-D of equal length")
    occupied = occ > OCCUPIED_ABOVE
    e_homo = e[occupied].max() if occupied.any() else e.min()
    e_lumo = e[~occupied].min() if (~occupied).any() else e.max()
    mid = 0.5 * (e_homo + e_lumo)
    lo_e, hi_e = min(e_homo, e_lumo) - window, max(e_homo, e_lumo) + window

    all_sets = [_describe(g, e, occ, d, irreps)
                for g in degenerate_sets(e, irreps, set_ids, tolerance)]
    in_window = [s for s in all_sets if lo_e <= e[list(s.indices)].min()
                 and e[list(s.indices)].max() <= hi_e]
    rank = sorted(in_window, key=lambda s: (-s.metal_d, abs(s.energy - mid), s.indices[0]))
    cands = [s for s in rank if s.metal_d >= min_d and s.degeneracy <= size]
    picked = _best_combination(cands[:_MAX_CANDIDATE_SETS], size, mid)
    warnings = _warnings(picked, rank, all_sets, in_window, size, margin, warn_d, min_d)
    picked.sort(key=lambda s: s.energy)
    indices = tuple(i for s in picked for i in s.indices)
    return Manifold(indices=indices, sets=tuple(picked), warnings=tuple(warnings),
                    ambiguous=bool(warnings))


def _warnings(picked: list[DegenerateSet], rank: list[DegenerateSet],
              all_sets: list[DegenerateSet], in_window: list[DegenerateSet], size: int,
              margin: float, warn_d: float, min_d: float) -> list[str]:
    out: list[str] = []
    n = sum(s.degeneracy for s in picked)
    if n < size:
        out.append(f"only {n} of {size} orbitals found in whole sets with metal d >= {min_d}")
    taken = 0
    for s in rank:  # orbital-by-orbital metal-d ranking, sets in rank order
        if s.metal_d < min_d or taken >= size:
            break
        if taken + s.degeneracy > size:
            out.append(f"the {size}-orbital boundary of the metal-d ranking cuts {_fmt(s)}")
        taken += s.degeneracy
    for s in picked:
        if s.metal_d < warn_d:
            out.append(f"picked {_fmt(s)} has metal d below {warn_d}")
    if picked:
        weakest = min(s.metal_d for s in picked)
        for s in all_sets:
            if s in picked or s.metal_d < weakest - margin:
                continue
            where = "" if s in in_window else " outside the frontier window"
            out.append(f"unpicked {_fmt(s)}{where} is within {margin} of the weakest "
                       f"picked set (metal d {weakest:.2f})")
    return out


def classify_bonding(metal_fraction: Sequence[float], irreps: Sequence[str | None] | None,
                     partner_irreps: Collection[str],
                     overlap_population: Sequence[float] | None = None, *,
                     nonbonding_below: float = 0.05,
                     overlap_tolerance: float = 1e-3) -> list[str]:
    """'bonding' / 'nonbonding' / 'antibonding' for each orbital of the valence block.

    Nonbonding: the irrep has no metal partner (not in `partner_irreps`; unlabelled orbitals
    are not excluded), or the metal share is below `nonbonding_below` or above
    1 − `nonbonding_below`.  Otherwise the sign of the metal–ligand overlap population
    decides when given (Mulliken, J. Chem. Phys. 23, 1833 (1955): > 0 bonding, < 0
    antibonding); without it, ligand-dominated → bonding, metal-dominated → antibonding,
    which assumes ligand donor levels below the metal d (common practice for Werner
    complexes).
    """
    f = np.asarray(metal_fraction, dtype=float)
    op = None if overlap_population is None else np.asarray(overlap_population, dtype=float)
    out = []
    for i, fi in enumerate(f):
        irrep = None if irreps is None else irreps[i]
        if (irrep is not None and irrep not in partner_irreps) or not (
                nonbonding_below <= fi <= 1.0 - nonbonding_below):
            out.append("nonbonding")
        elif op is not None:
            out.append("bonding" if op[i] > overlap_tolerance else
                       "antibonding" if op[i] < -overlap_tolerance else "nonbonding")
        else:
            out.append("bonding" if fi < 0.5 else "antibonding")
    return out
