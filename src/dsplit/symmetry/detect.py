"""Point-group detection of a molecule (numpy only; never imports PySCF).

Algorithm (generic; the textbook route of e.g. Cotton, *Chemical Applications
of Group Theory*, 3rd ed., §3.14 flow chart — from memory):

1. Centre = fixed point of every operation: the atomic-number-weighted centroid.
2. Linear if every atom lies on one line → D∞h ('Dooh') with inversion, else
   C∞v ('Coov'); labelled through the proxies D8h / C8v.
3. Symmetry-equivalent sets (SEAs): same label, same distance from the centre.
4. Candidate axes: inertia axes; per SEA the atom directions, pair sums,
   differences and cross products; normals of isosceles triangles of the
   smallest SEA (these catch every C_n, n ≥ 3, even for accidental spherical tops).
5. Every candidate axis is tried for C_n (n = 2…8), S_2n (n = 2…8) and a
   perpendicular mirror; the inversion is tried once.  An operation is accepted
   if every atom lands within ``tol`` (Å) of an atom with the same label.
6. The group is named from the axis orders found; the standard frame R is
   chosen (principal axis → z, first C2' or σv → x, the C2'/σv class holding
   more atoms for n ≥ 4 even, then the frame closest to the molecule's own), and
   every operation R g Rᵀ of the standard group is verified on the molecule.

Public API
----------
detect_point_group(symbols, positions, tol=1e-3, x_hint=None) -> Symmetry
Symmetry.name              Schoenflies name ('Oh', 'D4h', 'Th', 'Dooh', 'Coov', ...)
Symmetry.group             PointGroup in the standard frame (D8h / C8v proxy if linear)
Symmetry.rotation          R, columns = standard axes in the molecule frame;
                           ops[k] = R @ group.ops[k] @ R.T
Symmetry.ops               (|G|, 3, 3) operations in the molecule frame (order = group.ops)
Symmetry.centre            fixed point (Å)
Symmetry.permutation       (|G|, natom): image atom index of atom i under ops[k]
Symmetry.max_error         largest atom→image distance (Å)
Symmetry.to_standard(positions) -> (positions − centre) @ R
"""
from __future__ import annotations

import itertools
import re
from dataclasses import dataclass

import numpy as np

from .groups import LINEAR_PROXY, PointGroup, point_group
from .ops import canonical_axis, inversion

__all__ = ["Symmetry", "detect_point_group"]

_MAX_N = 8


@dataclass(frozen=True)
class Symmetry:
    """Result of :func:`detect_point_group` (see module docstring)."""

    name: str
    group: PointGroup
    rotation: np.ndarray
    ops: np.ndarray
    centre: np.ndarray
    permutation: np.ndarray
    max_error: float

    @property
    def linear(self) -> bool:
        return self.name in LINEAR_PROXY

    def to_standard(self, positions: np.ndarray) -> np.ndarray:
        """Coordinates in the standard frame of :attr:`group` (origin at the centre)."""
        return (np.asarray(positions, dtype=float) - self.centre) @ self.rotation


def _weights(symbols: list[str]) -> np.ndarray:
    from ase.data import atomic_numbers
    w = []
    for s in symbols:
        m = re.match(r"[A-Z][a-z]?", s.strip().capitalize())
        z = atomic_numbers.get(m.group(0), 0) if m else 0
        w.append(float(z) if z > 0 else 1.0)
    return np.array(w)


def _match(ops: np.ndarray, x: np.ndarray, tol: float,
           groups: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """For each op: (ok, permutation, max error); label groups are checked smallest
    first and failing operations are dropped early."""
    m, n = len(ops), len(x)
    perm = np.zeros((m, n), dtype=int)
    err = np.zeros(m)
    alive = np.arange(m)
    for idx in sorted(groups, key=len):
        if not len(alive):
            break
        y = np.einsum("mij,nj->mni", ops[alive], x[idx])
        d = np.linalg.norm(y[:, :, None, :] - x[None, None, idx, :], axis=-1)
        e = d.min(axis=2).max(axis=1)
        perm[np.ix_(alive, idx)] = idx[d.argmin(axis=2)]
        err[alive] = np.maximum(err[alive], e)
        alive = alive[e < tol]
    dead = np.ones(m, dtype=bool)
    dead[alive] = False
    err[dead] = np.inf
    ok = np.zeros(m, dtype=bool)
    ok[alive] = True
    if len(alive):
        bad = np.any(np.sort(perm[alive], axis=1) != np.arange(n), axis=1)
        ok[alive[bad]] = False
    return ok, perm, err


def _seas(x: np.ndarray, spec: np.ndarray, tol: float) -> list[np.ndarray]:
    r = np.linalg.norm(x, axis=1)
    out = []
    for s in np.unique(spec):
        idx = np.where(spec == s)[0]
        idx = idx[np.argsort(r[idx])]
        cuts = np.where(np.diff(r[idx]) > tol)[0] + 1
        out += [c for c in np.split(idx, cuts)]
    return out


def _unit_rows(v: np.ndarray, min_norm: float) -> np.ndarray:
    nrm = np.linalg.norm(v, axis=1)
    v = v[nrm > min_norm] / nrm[nrm > min_norm, None]
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


def _candidate_axes(x: np.ndarray, seas: list[np.ndarray], inertia_axes: np.ndarray,
                    tol: float) -> np.ndarray:
    cands = [inertia_axes.T]
    off = [s for s in seas if np.linalg.norm(x[s[0]]) > tol]
    late = []
    for s in off:
        p = x[s]
        cands.append(p)
        i, j = np.triu_indices(len(s), 1)
        cands.append(p[i] + p[j])
        late += [np.cross(p[i], p[j]), p[i] - p[j]]
    small = [s for s in off if len(s) >= 3]
    if small:
        p = x[min(small, key=len)]
        tri = np.array(list(itertools.combinations(range(len(p)), 3)))
        a, b, c = p[tri[:, 0]], p[tri[:, 1]], p[tri[:, 2]]
        ab, bc, ca = (np.linalg.norm(a - b, axis=1), np.linalg.norm(b - c, axis=1),
                      np.linalg.norm(c - a, axis=1))
        iso = ((np.abs(ab - bc) < tol) | (np.abs(bc - ca) < tol) | (np.abs(ca - ab) < tol))
        late.append(np.cross(b[iso] - a[iso], c[iso] - a[iso]))
    allv = np.vstack(cands + late)
    return _dedupe(_unit_rows(allv, tol))


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
class _Elements:
    """Axis orders found: proper order, S_2n order and mirror per candidate axis."""

    axes: np.ndarray
    cn: np.ndarray      # max n of a valid C_n (1 if none)
    s2n: np.ndarray     # max 2n of a valid S_2n (0 if none)
    mirror: np.ndarray  # bool: mirror plane perpendicular to the axis
    inversion: bool


def _find_elements(x, spec, tol, groups, seas) -> _Elements:
    _, v = np.linalg.eigh(x.T @ x)  # second-moment axes (invariant, like inertia axes)
    axes = _candidate_axes(x, seas, v, tol)
    na = len(axes)
    # divisibility prefilter: off-axis atoms of each SEA must come in orbits of n
    perp = np.linalg.norm(np.cross(x[None, :, :], axes[:, None, :]), axis=2) > tol
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
    ok = np.zeros(len(ops), dtype=bool)
    for start in range(0, len(ops), 512):
        ok[start:start + 512] = _match(ops[start:start + 512], x, tol, groups)[0]
    cn, s2n, mir = np.ones(na, dtype=int), np.zeros(na, dtype=int), np.zeros(na, dtype=bool)
    inv = False
    for good, (a, kind, n) in zip(ok, tags):
        if not good:
            continue
        if kind == "C":
            cn[a] = max(cn[a], n)
        elif kind == "S":
            s2n[a] = max(s2n[a], n)
        elif kind == "m":
            mir[a] = True
        else:
            inv = True
    keep = (cn > 1) | (s2n > 0) | mir
    return _Elements(axes[keep], cn[keep], s2n[keep], mir[keep], inv)


def _perp(axes: np.ndarray, z: np.ndarray) -> np.ndarray:
    return np.abs(axes @ z) < 1e-3


def _name_and_axes(el: _Elements) -> tuple[str, np.ndarray | None, list[np.ndarray]]:
    """Schoenflies name, principal axis (or None) and the x-axis candidates."""
    ax, cn, s2n, mir, inv = el.axes, el.cn, el.s2n, el.mirror, el.inversion
    if np.sum(cn >= 3) >= 2:
        if np.any(cn == 5):
            raise NotImplementedError("icosahedral groups are not supported")
        if np.any(cn == 4):
            name, frame_axes = ("Oh" if inv else "O"), ax[cn == 4]
        else:
            name = "Th" if inv else ("Td" if mir.any() else "T")
            frame_axes = ax[cn == 2]
        return name, None, list(frame_axes)
    if not len(cn) or cn.max() == 1:
        if mir.any():
            return "Cs", ax[mir][0], []
        return ("Ci" if inv else "C1"), None, []
    n = int(cn.max())
    if n == 2 and np.sum(cn == 2) >= 3 and not np.any(s2n == 4):
        return ("D2h" if inv else "D2"), None, list(ax[cn == 2])
    if n == 2 and np.any(s2n == 4):
        z = ax[s2n == 4][0]
    else:
        z = ax[cn == n][0]
    perp = _perp(ax, z)
    c2p = ax[perp & (cn % 2 == 0)]
    planes_v = ax[perp & mir]
    sigma_h = bool(np.any(mir & (np.abs(ax @ z) > 1 - 1e-6)))
    s_2n = bool(np.any((s2n == 2 * n) & (np.abs(ax @ z) > 1 - 1e-6)))
    if len(c2p) == n:
        name = f"D{n}h" if sigma_h else (f"D{n}d" if len(planes_v) == n else f"D{n}")
        return name, z, list(c2p)
    if sigma_h:
        return f"C{n}h", z, []
    if len(planes_v) == n:
        return f"C{n}v", z, [np.cross(z, p) for p in planes_v]
    if s_2n:
        return f"S{2 * n}", z, []
    return f"C{n}", z, []


def _lab_x(z: np.ndarray, hint: np.ndarray | None = None) -> np.ndarray:
    for e in ([np.asarray(hint, dtype=float)] if hint is not None else []) + list(np.eye(3)):
        v = e - (e @ z) * z
        if np.linalg.norm(v) > 0.3:
            return v / np.linalg.norm(v)
    raise AssertionError("unreachable")


def _frames(name: str, z: np.ndarray | None, xs: list[np.ndarray],
            hint: np.ndarray | None) -> list[np.ndarray]:
    """Proper rotations R = [x, y, z] (columns) compatible with the group's standard frame."""
    if name in ("C1", "Ci"):
        return [np.eye(3)]
    pairs = []
    if z is None:  # cubic / D2 family: any ordered pair of the three frame axes
        for a, b in itertools.permutations(range(len(xs)), 2):
            for sa, sb in itertools.product((1, -1), repeat=2):
                pairs.append((sa * xs[a], sb * xs[b]))
    else:
        xcands = xs if xs else [_lab_x(z, hint)]
        for sz in (1, -1):
            for xv in xcands:
                zz = sz * z
                for sx in (1, -1):
                    pairs.append((zz, sx * (xv if xs else _lab_x(zz, hint))))
    frames = []
    for zz, xv in pairs:
        zz = zz / np.linalg.norm(zz)
        xv = xv - (xv @ zz) * zz
        if np.linalg.norm(xv) < 1e-6:
            continue
        xv = xv / np.linalg.norm(xv)
        frames.append(np.column_stack([xv, np.cross(zz, xv), zz]))
    return frames


def _atoms_in_xz(frame: np.ndarray, x: np.ndarray, tol: float) -> int:
    y = x @ frame
    return int(np.sum((np.abs(y[:, 1]) < tol) & (np.linalg.norm(y, axis=1) > tol)))


def detect_point_group(symbols: list[str], positions: np.ndarray, tol: float = 1e-3,
                       x_hint: np.ndarray | None = None) -> Symmetry:
    """Detect the point group of a molecule (labels ``symbols``, ``positions`` in Å).

    ``x_hint``: direction for the standard x axis where the group leaves it free
    (linear, C_n, C_nh, S_2n, Cs); default the molecule's own x (then y, z).
    """
    pos = np.asarray(positions, dtype=float).reshape(-1, 3)
    labels = [str(s) for s in symbols]
    if len(labels) != len(pos):
        raise ValueError("symbols and positions differ in length")
    _, spec = np.unique(labels, return_inverse=True)
    w = _weights(labels)
    centre = w @ pos / w.sum()
    x = pos - centre
    groups = [np.where(spec == s)[0] for s in np.unique(spec)]
    if len(pos) == 1:
        raise ValueError("a single atom has the full rotation group; nothing to detect")
    # linear?
    _, vec = np.linalg.eigh(x.T @ x)
    line = vec[:, -1]
    if np.all(np.linalg.norm(np.cross(x, line), axis=1) < tol):
        inv_ok = _match(inversion()[None], x, tol, groups)[0][0]
        name, z, xs = ("Dooh" if inv_ok else "Coov"), canonical_axis(line), []
    else:
        seas = _seas(x, spec, tol)
        name, z, xs = _name_and_axes(_find_elements(x, spec, tol, groups, seas))
    group = point_group(name)
    frames = _frames(name, z, xs, x_hint)
    fam = re.fullmatch(r"([CD])(\d+)([vh]?)", LINEAR_PROXY.get(name, name))
    use_atoms = bool(fam and int(fam.group(2)) % 2 == 0 and int(fam.group(2)) >= 4
                     and (fam.group(1), fam.group(3)) in (("D", ""), ("D", "h"), ("C", "v")))
    frames.sort(key=lambda f: (-_atoms_in_xz(f, x, tol) if use_atoms else 0, -np.trace(f)))
    for frame in frames:
        ops = np.einsum("ij,gjk,lk->gil", frame, group.ops, frame)
        ok, perm, err = _match(ops, x, tol, groups)
        if ok.all():
            return Symmetry(name, group, frame, ops, centre, perm, float(err.max()))
    raise RuntimeError(f"found elements of {name} but could not align its standard frame")
