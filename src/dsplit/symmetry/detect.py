"""Point-group detection of a molecule (numpy only; never imports PySCF).

Algorithm (generic; the textbook classification route of e.g. Cotton,
*Chemical Applications of Group Theory*, 3rd ed., ch. 3 — from memory, made
numerical):

1. Centre = fixed point of every operation: the atomic-number-weighted centroid.
2. Linear if every atom lies on one line → D∞h ('Dooh') with inversion, else
   C∞v ('Coov'); labelled through the proxies D8h / C8v.
3. Symmetry-equivalent sets (SEAs): same label, same distance from the centre.
4. Candidate axes: second-moment (inertia-like) axes; for the smallest SEA of
   ≥ 3 atoms its atom directions, pair sums, differences and cross products,
   and the normals of isosceles triangles through its first atom — together
   they contain every symmetry axis and mirror normal, also for accidental
   spherical tops (argument in ``_candidate_axes``).
5. Every candidate axis is tried for C_n (n = 2…8), S_2n (n = 2…8) and a
   perpendicular mirror; the inversion is tried once.  Candidates passing at
   3·tol get their axis re-fitted to all atoms (Kabsch); the ideal operation
   about the fitted axis is accepted if every atom lands within ``tol`` (Å) of
   an atom with the same label.  Icosahedral groups raise NotImplementedError;
   a single atom raises ValueError.
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

from .elements import Elements, equivalent_sets, find_elements, match
from .groups import LINEAR_PROXY, PointGroup, point_group
from .ops import canonical_axis, inversion

__all__ = ["Symmetry", "detect_point_group"]



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


def _perp(axes: np.ndarray, z: np.ndarray) -> np.ndarray:
    return np.abs(axes @ z) < 1e-3


def _name_and_axes(el: Elements) -> tuple[str, np.ndarray | None, list[np.ndarray]]:
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
    If the elements found at ``tol`` do not make an exact group in any frame
    (a geometry between two symmetries), ``tol`` is halved (up to 3 times).
    """
    for attempt in range(4):  # halve tol when the elements do not form an exact group
        try:
            return _detect(symbols, positions, tol / 2 ** attempt, x_hint)
        except _NoFrame:
            continue
    raise RuntimeError(f"no consistent point group found at tol = {tol} … {tol / 8}")


class _NoFrame(RuntimeError):
    """Elements were found but no frame makes them an exact standard group."""


def _detect(symbols: list[str], positions: np.ndarray, tol: float,
            x_hint: np.ndarray | None) -> Symmetry:
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
        inv_ok = match(inversion()[None], x, tol, groups)[0][0]
        name, z, xs = ("Dooh" if inv_ok else "Coov"), canonical_axis(line), []
    else:
        sets = equivalent_sets(x, spec, tol)
        name, z, xs = _name_and_axes(find_elements(x, tol, groups, sets))
    group = point_group(name)
    frames = _frames(name, z, xs, x_hint)
    fam = re.fullmatch(r"([CD])(\d+)([vh]?)", LINEAR_PROXY.get(name, name))
    use_atoms = bool(fam and int(fam.group(2)) % 2 == 0 and int(fam.group(2)) >= 4
                     and (fam.group(1), fam.group(3)) in (("D", ""), ("D", "h"), ("C", "v")))
    frames.sort(key=lambda f: (-_atoms_in_xz(f, x, tol) if use_atoms else 0, -np.trace(f)))
    for frame in frames:
        ops = np.einsum("ij,gjk,lk->gil", frame, group.ops, frame)
        ok, perm, err = match(ops, x, tol, groups)
        if ok.all():
            return Symmetry(name, group, frame, ops, centre, perm, float(err.max()))
    raise _NoFrame(f"found elements of {name} but could not align its standard frame")
