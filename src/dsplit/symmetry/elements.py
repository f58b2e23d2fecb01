"""Symmetry elements of a point set: candidate axes, matching, axis re-fitting.

Used by :mod:`.detect` (numpy only).  The argument that the candidate set is
complete is in :func:`candidate_axes`; operations are accepted by
:func:`find_elements` after a Kabsch re-fit of their axis (see
:func:`_refined_match`).

API (internal to dsplit.symmetry)
---------------------------------
match(ops, x, tol, groups) -> (ok, permutation, max error)
equivalent_sets(x, spec, tol) -> list of index arrays (SEAs)
find_elements(x, tol, groups, seas) -> Elements(axes, cn, s2n, mirror, inversion)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .ops import inversion

_MAX_N = 8


def match(ops: np.ndarray, x: np.ndarray, tol: float,
           groups: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """For each op: (ok, permutation, max error).  Label groups are checked smallest
    first, each on a few probe atoms before all of them; failures drop out early."""
    m, n = len(ops), len(x)
    perm = np.zeros((m, n), dtype=int)
    err = np.zeros(m)
    alive = np.arange(m)
    for idx in sorted(groups, key=len):
        for part in (idx[:3], idx) if len(idx) > 6 else (idx,):
            if not len(alive):
                break
            y = np.einsum("mij,nj->mni", ops[alive], x[part])
            d = np.linalg.norm(y[:, :, None, :] - x[None, None, idx, :], axis=-1)
            e = d.min(axis=2).max(axis=1)
            perm[np.ix_(alive, part)] = idx[d.argmin(axis=2)]
            err[alive] = np.maximum(err[alive], e)
            alive = alive[e < tol]
    dead = np.ones(m, dtype=bool)
    dead[alive] = False
    err[dead] = np.inf
    ok = ~dead
    if len(alive):
        bad = np.any(np.sort(perm[alive], axis=1) != np.arange(n), axis=1)
        ok[alive[bad]] = False
    return ok, perm, err


def equivalent_sets(x: np.ndarray, spec: np.ndarray, tol: float) -> list[np.ndarray]:
    """SEAs: atoms with the same label and the same distance from the centre (± tol)."""
    r = np.linalg.norm(x, axis=1)
    out = []
    for s in np.unique(spec):
        idx = np.where(spec == s)[0]
        idx = idx[np.argsort(r[idx])]
        cuts = np.where(np.diff(r[idx]) > tol)[0] + 1
        out += [c for c in np.split(idx, cuts)]
    return out


def _unit_rows(v: np.ndarray, min_norm: float) -> np.ndarray:
    """Unit vectors with a canonical sign, longest raw vectors first (a direction
    built from a longer vector carries less of the atoms' positional noise)."""
    nrm = np.linalg.norm(v, axis=1)
    keep = np.argsort(-nrm)
    keep = keep[nrm[keep] > min_norm]
    v = v[keep] / nrm[keep, None]
    sign = np.where(np.abs(v[:, 0]) > 1e-6, np.sign(v[:, 0]),
                    np.where(np.abs(v[:, 1]) > 1e-6, np.sign(v[:, 1]), np.sign(v[:, 2])))
    return v * sign[:, None]


def _dedupe(v: np.ndarray, cos_tol: float = 1 - 1e-6) -> np.ndarray:
    keep: list[np.ndarray] = []
    remaining = v
    while len(remaining):
        a = remaining[0]
        keep.append(a)
        remaining = remaining[np.abs(remaining @ a) < cos_tol]
    return np.array(keep)


def _pair_features(p: np.ndarray) -> tuple[list[np.ndarray], list[np.ndarray]]:
    i, j = np.triu_indices(len(p), 1)
    return [p, p[i] + p[j]], [np.cross(p[i], p[j]), p[i] - p[j]]


def candidate_axes(x: np.ndarray, seas: list[np.ndarray], inertia_axes: np.ndarray,
                    tol: float) -> np.ndarray:
    """Directions that contain every rotation axis and mirror normal of the molecule.

    One SEA S with ≥ 3 atoms suffices: a C2 axis holds an atom of S, a midpoint
    of a ↦ C2 a, or is the normal of S when S lies in its perpendicular plane; a
    mirror normal is some a − σa or the normal of S; a C_n (n ≥ 3) axis holds the
    first atom a0 of S or is normal to the isosceles triangle a0, C_n a0, C_n² a0.
    Without such a SEA all off-centre atoms are pooled (then only C2 axes exist).
    """
    off = [s for s in seas if np.linalg.norm(x[s[0]]) > tol]
    big = [s for s in off if len(s) >= 3]
    if not big:
        first, late = _pair_features(x[np.concatenate(off)]) if off else ([], [])
        return _dedupe(np.vstack([_unit_rows(np.vstack(first + late), tol), inertia_axes.T]))
    p = x[min(big, key=len)]
    first, late = _pair_features(p)
    a0 = p[0]
    b, c = np.triu_indices(len(p) - 1, 1)
    b, c = b + 1, c + 1
    d_ab, d_ac = np.linalg.norm(p[b] - a0, axis=1), np.linalg.norm(p[c] - a0, axis=1)
    d_bc = np.linalg.norm(p[b] - p[c], axis=1)
    iso = (np.abs(d_ab - d_bc) < tol) | (np.abs(d_ac - d_bc) < tol) | (np.abs(d_ab - d_ac) < tol)
    late.append(np.cross(p[b[iso]] - a0, p[c[iso]] - a0))
    return _dedupe(np.vstack([_unit_rows(np.vstack(first + late), tol), inertia_axes.T]))


def _rotations(axes: np.ndarray, angle: float, improper: bool = False) -> np.ndarray:
    """Batched Rodrigues rotations C(angle) about each row of ``axes``; with
    ``improper`` the mirror σ ⊥ u is applied as well: S(θ) = σ_h C(θ)."""
    u = axes.reshape(-1, 3)
    k = np.zeros((len(u), 3, 3))
    k[:, 0, 1], k[:, 0, 2], k[:, 1, 2] = -u[:, 2], u[:, 1], -u[:, 0]
    k = k - k.transpose(0, 2, 1)
    uu = np.einsum("ai,aj->aij", u, u)
    c, s = np.cos(angle), np.sin(angle)
    r = c * np.eye(3) + s * k + (1 - c) * uu
    if improper:
        r = np.einsum("aij,ajk->aik", np.eye(3) - 2 * uu, r)
    return r


@dataclass
class Elements:
    """Axis orders found: proper order, S_2n order and mirror per candidate axis."""

    axes: np.ndarray
    cn: np.ndarray      # max n of a valid C_n (1 if none)
    s2n: np.ndarray     # max 2n of a valid S_2n (0 if none)
    mirror: np.ndarray  # bool: mirror plane perpendicular to the axis
    inversion: bool


def find_elements(x: np.ndarray, tol: float, groups: list[np.ndarray],
                   seas: list[np.ndarray]) -> Elements:
    """Try C_n, S_2n and mirrors about every candidate axis, and the inversion."""
    _, v = np.linalg.eigh(x.T @ x)  # second-moment axes (invariant, like inertia axes)
    axes = candidate_axes(x, seas, v, tol)
    na = len(axes)
    # divisibility prefilter: off-axis atoms of each SEA must come in orbits of n
    perp = np.linalg.norm(np.cross(x[None, :, :], axes[:, None, :]), axis=2) > 3 * tol
    off_counts = np.array([perp[:, s].sum(axis=1) for s in seas]).T  # (na, nsea)
    ops, tags = [], []
    for n in range(2, _MAX_N + 1):
        sel = np.where(np.all(off_counts % n == 0, axis=1))[0]
        ops.append(_rotations(axes[sel], 2 * np.pi / n))
        tags += [(a, "C", n) for a in sel]
        sel = np.where(np.all(off_counts % 2 == 0, axis=1))[0]
        ops.append(_rotations(axes[sel], np.pi / n, improper=True))
        tags += [(a, "S", 2 * n) for a in sel]
    ops.append(_rotations(axes, 0.0, improper=True))  # S(0) = mirror ⊥ u
    tags += [(a, "m", 1) for a in range(na)]
    ops.append(inversion()[None])
    tags.append((-1, "i", 2))
    ops = np.concatenate(ops)
    kind = np.array([t[1] for t in tags])
    order = np.array([t[2] for t in tags])
    ok, fitted = _refined_match(ops, kind, order, axes[[t[0] for t in tags]], x, tol, groups)
    inv = bool(np.any(ok & (kind == "i")))
    sel = ok & (kind != "i")
    if not sel.any():
        return Elements(np.zeros((0, 3)), np.zeros(0, int), np.zeros(0, int),
                         np.zeros(0, bool), inv)
    k, n = kind[sel], order[sel]
    return _merge_close(Elements(fitted[sel], np.where(k == "C", n, 1),
                                  np.where(k == "S", n, 0), k == "m", inv))


def _merge_close(el: Elements, cos_tol: float = np.cos(0.05)) -> Elements:
    """Merge elements whose axes are within 0.05 rad (one axis found twice in a noisy
    geometry); distinct axes of groups with n ≤ 8 are ≥ 11° apart."""
    order = np.lexsort((~el.mirror, -el.s2n, -el.cn))   # best-described axis first
    taken = np.zeros(len(order), dtype=bool)
    rows = []
    for i in order:
        if taken[i]:
            continue
        same = (np.abs(el.axes @ el.axes[i]) > cos_tol) & ~taken
        taken |= same
        rows.append((el.axes[i], el.cn[same].max(), el.s2n[same].max(), el.mirror[same].any()))
    if not rows:
        return el
    ax, cn, s2n, mir = (np.array(v) for v in zip(*rows))
    return Elements(ax, cn, s2n, mir.astype(bool), el.inversion)


def _null_vectors(m: np.ndarray) -> np.ndarray:
    """Right singular vector of the smallest singular value of each 3×3 matrix."""
    return np.linalg.svd(m)[2][:, -1, :]


def _refined_match(ops: np.ndarray, kind: np.ndarray, order: np.ndarray, axes: np.ndarray,
                   x: np.ndarray, tol: float,
                   groups: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Accept candidate operations robustly in a slightly distorted geometry.

    Candidates passing at 3·tol get their axis re-fitted to all atoms: the best
    orthogonal g with g x_i ≈ x_π(i) (Kabsch: H = Σ x_π(i) x_iᵀ = U S Vᵀ,
    g = U diag(1, 1, ±1) Vᵀ; Kabsch, *Acta Cryst.* A32, 922 (1976)), whose axis is
    the null vector of g ∓ I; the ideal operation about that axis must pass at tol.
    Returns (accepted, fitted axis per operation).
    """
    ok = np.zeros(len(ops), dtype=bool)
    axes = axes.copy()
    cand, perm = [], []
    for start in range(0, len(ops), 512):
        good, pm, _ = match(ops[start:start + 512], x, 3 * tol, groups)
        cand.append(np.where(good)[0] + start)
        perm.append(pm[good])
    cand, perm = np.concatenate(cand), np.concatenate(perm)
    if not len(cand):
        return ok, axes
    det = np.sign(np.linalg.det(ops[cand]))
    h = np.einsum("kni,nj->kij", x[perm], x)
    u, _, vt = np.linalg.svd(h)
    fix = np.sign(np.linalg.det(u @ vt)) * det
    d = np.ones((len(cand), 3))
    d[:, 2] = fix
    g = np.einsum("kij,kj,kjl->kil", u, d, vt)
    ax = _null_vectors(g - det[:, None, None] * np.eye(3))
    ax *= np.sign(np.einsum("ki,ki->k", ax, axes[cand]))[:, None]
    ideal = np.empty_like(ops[cand])
    for k, c in enumerate(cand):
        if kind[c] == "i":
            ideal[k] = -np.eye(3)
            continue
        angle = 0.0 if kind[c] == "m" else 2 * np.pi / order[c]
        ideal[k] = _rotations(ax[k], angle, improper=kind[c] != "C")[0]
    ok[cand] = match(ideal, x, tol, groups)[0]
    axes[cand] = ax
    return ok, axes
