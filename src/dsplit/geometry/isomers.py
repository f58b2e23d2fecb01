"""Geometric isomers of mixed ligand sets on an ideal polyhedron.

Two assignments of ligand kinds to donor sites are the same isomer when a
symmetry operation of the polyhedron maps one onto the other.  The operations
are found as the permutations of sites that keep every site–site distance (for
sites around a fixed metal these are exactly the point-group operations, proper
and improper, so mirror-image forms count as one isomer, as cis/trans and
fac/mer naming does).  Names follow the usual trade words: cis/trans, fac/mer,
axial/equatorial, apical/basal; other cases get ``isomer-k``.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from dsplit.errors import InputError
from dsplit.geometry.polyhedra import Polyhedron


@dataclass(frozen=True)
class Isomer:
    name: str
    assignment: tuple[str, ...]  # ligand key per site, in site order


@lru_cache(maxsize=32)
def _site_permutations(dirs_key: bytes, n: int) -> tuple[tuple[int, ...], ...]:
    dirs = np.frombuffer(dirs_key).reshape(n, 3)
    dist = np.round(np.linalg.norm(dirs[:, None] - dirs[None], axis=-1), 6)
    perms = []
    for p in itertools.permutations(range(n)):
        if np.array_equal(dist[np.ix_(p, p)], dist):
            perms.append(p)
    return tuple(perms)


def site_permutations(poly: Polyhedron) -> tuple[tuple[int, ...], ...]:
    """All distance-preserving permutations of the donor sites."""
    d = np.ascontiguousarray(poly.directions, dtype=float)
    return _site_permutations(d.tobytes(), len(d))


def _canonical(assignment: tuple[str, ...], perms) -> tuple[str, ...]:
    return min(tuple(assignment[p[i]] for i in range(len(p))) for p in perms)


def _name(poly: Polyhedron, assignment: tuple[str, ...], counts: dict[str, int]) -> str | None:
    """Trade name of an isomer, when one applies."""
    minority = min(counts, key=lambda k: (counts[k], k))
    sites = [i for i, a in enumerate(assignment) if a == minority]
    dirs = poly.directions
    kinds = len(counts)
    if poly.geometry in ("octahedral", "square-planar") and kinds == 2:
        if len(sites) == 2:
            cos = float(np.dot(dirs[sites[0]], dirs[sites[1]]))
            return "trans" if cos < -0.5 else "cis"
        if len(sites) == 3 and poly.geometry == "octahedral":
            cosines = [float(np.dot(dirs[i], dirs[j])) for i, j in itertools.combinations(sites, 2)]
            return "mer" if min(cosines) < -0.5 else "fac"
    if poly.geometry in ("trigonal-bipyramidal", "square-pyramidal") and kinds == 2:
        roles = sorted(poly.site_roles[i] for i in sites)
        if len(sites) == 1:
            return roles[0]
        if len(sites) == 2:
            if poly.geometry == "trigonal-bipyramidal":
                return {("axial", "axial"): "diaxial", ("equatorial", "equatorial"): "diequatorial"}.get(
                    tuple(roles), "axial-equatorial")
            if roles == ["apical", "basal"]:
                return "apical-basal"
            cos = float(np.dot(dirs[sites[0]], dirs[sites[1]]))
            return "basal-trans" if cos < 0 else "basal-cis"
    return None


def enumerate_isomers(poly: Polyhedron, counts: dict[str, int]) -> list[Isomer]:
    """Distinct isomers for ligand ``counts`` (key → number) on ``poly``."""
    n = poly.coordination_number
    if sum(counts.values()) != n:
        raise InputError("complex.ligands",
                         f"{sum(counts.values())} ligands given, {poly.geometry} takes {n}")
    pool = [k for k, c in sorted(counts.items()) for _ in range(c)]
    perms = site_permutations(poly)
    seen: dict[tuple[str, ...], tuple[str, ...]] = {}
    for arr in sorted(set(itertools.permutations(pool))):
        canon = _canonical(arr, perms)
        if canon not in seen:
            seen[canon] = arr
    # present the representative that puts the majority ligand on the earliest sites
    isomers = []
    names_used: dict[str, int] = {}
    for k, arr in enumerate(sorted(seen.values(), key=lambda a: _canonical(a, perms)), start=1):
        name = _name(poly, arr, counts) if len(seen) > 1 else None
        name = name or (f"isomer-{k}" if len(seen) > 1 else "only")
        names_used[name] = names_used.get(name, 0) + 1
        isomers.append(Isomer(name, tuple(arr)))
    dup = [nm for nm, c in names_used.items() if c > 1]
    if dup:  # a rule gave one name to two isomers: fall back to numbering
        isomers = [Isomer(f"isomer-{k}", iso.assignment) for k, iso in enumerate(isomers, start=1)]
    return isomers


def choose_isomer(poly: Polyhedron, counts: dict[str, int], name: str | None) -> Isomer:
    """The isomer called ``name`` (or the only one; the first when not asked)."""
    isomers = enumerate_isomers(poly, counts)
    if name is None:
        return isomers[0]
    for iso in isomers:
        if iso.name == name:
            return iso
    allowed = ", ".join(i.name for i in isomers)
    raise InputError("complex.isomer", f"'{name}' does not exist for this ligand set; allowed: {allowed}")
