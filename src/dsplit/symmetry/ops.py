"""Point-group operations as 3×3 orthogonal matrices (pure numpy).

Conventions (active operations acting on column vectors, r' = g r):

* ``rotation(axis, angle)`` — Rodrigues' formula
  R = cosθ·I + sinθ·[u]× + (1 − cosθ)·u uᵀ
  (e.g. Goldstein, *Classical Mechanics*, 3rd ed., §4.9 — from memory).
* ``reflection(normal)`` — Householder matrix σ = I − 2 n nᵀ.
* ``improper(axis, angle)`` — S(θ) = σ_h(u) · C(θ); S(π) is the inversion.
* ``describe(g)`` — axis/angle of an operation: a proper g is a rotation by
  θ with cosθ = (tr g − 1)/2; an improper g is written g = −p with p proper,
  i.e. g = i·C(φ) = S(φ − π) about the axis of p.

Public API
----------
rotation(axis, angle) -> ndarray
reflection(normal) -> ndarray
improper(axis, angle) -> ndarray
inversion() -> ndarray
describe(g) -> OpInfo            (kind 'E','C','i','sigma','S'; n, k, axis)
op_symbol(g) -> str              ('E', 'C4', 'C3^2' -> 'C3', 'S6', 'i', 'sigma')
canonical_axis(v) -> ndarray     unit vector with a fixed sign
find_op(ops, g, atol) -> int     index of g in a stack of matrices, or -1
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

import numpy as np

__all__ = [
    "OpInfo", "rotation", "reflection", "improper", "inversion", "describe",
    "op_symbol", "canonical_axis", "find_op",
]


def canonical_axis(v: np.ndarray) -> np.ndarray:
    """Normalise ``v`` and flip it so that its first clearly non-zero component is positive."""
    v = np.asarray(v, dtype=float)
    v = v / np.linalg.norm(v)
    for c in v:
        if abs(c) > 1e-8:
            return v if c > 0 else -v
    return v


def rotation(axis: np.ndarray, angle: float) -> np.ndarray:
    """Proper rotation by ``angle`` (rad) about ``axis`` (Rodrigues' formula)."""
    u = np.asarray(axis, dtype=float)
    u = u / np.linalg.norm(u)
    ux = np.array([[0.0, -u[2], u[1]], [u[2], 0.0, -u[0]], [-u[1], u[0], 0.0]])
    c, s = np.cos(angle), np.sin(angle)
    return c * np.eye(3) + s * ux + (1.0 - c) * np.outer(u, u)


def reflection(normal: np.ndarray) -> np.ndarray:
    """Mirror plane with the given normal: σ = I − 2 n nᵀ."""
    n = np.asarray(normal, dtype=float)
    n = n / np.linalg.norm(n)
    return np.eye(3) - 2.0 * np.outer(n, n)


def inversion() -> np.ndarray:
    """Inversion through the origin, −I."""
    return -np.eye(3)


def improper(axis: np.ndarray, angle: float) -> np.ndarray:
    """Improper rotation S(θ) = σ_h · C(θ) about ``axis``."""
    return reflection(axis) @ rotation(axis, angle)


@dataclass(frozen=True)
class OpInfo:
    """Geometric description of one operation.

    kind: 'E', 'C' (proper rotation), 'i', 'sigma' or 'S' (improper rotation).
    n, k: the rotation (proper part for 'S') is by 2πk/n, 0 < k < n, gcd(k, n) = 1;
    for 'S' the angle is the S_n angle θ (g = σ_h C(θ)).
    axis: canonical unit axis (rotation axis, or mirror-plane normal); None for E, i.
    """

    kind: str
    n: int
    k: int
    axis: np.ndarray | None


def _axis_angle(p: np.ndarray) -> tuple[np.ndarray | None, float]:
    """Axis and angle θ ∈ [0, π] of a proper rotation p (cosθ = (tr p − 1)/2)."""
    c = np.clip((np.trace(p) - 1.0) / 2.0, -1.0, 1.0)
    theta = float(np.arccos(c))
    if theta < 1e-8:
        return None, 0.0
    if np.pi - theta < 1e-6:
        # p = 2uuᵀ − I: take the largest column of (p + I)
        m = p + np.eye(3)
        u = m[:, int(np.argmax(np.linalg.norm(m, axis=0)))]
        return canonical_axis(u), np.pi
    u = np.array([p[2, 1] - p[1, 2], p[0, 2] - p[2, 0], p[1, 0] - p[0, 1]])
    u = u / np.linalg.norm(u)
    cu = canonical_axis(u)
    # rotation by θ about u equals rotation by −θ about −u; report θ ∈ (0, π) w.r.t. cu
    if np.dot(cu, u) < 0:
        theta = 2.0 * np.pi - theta
    return cu, theta


def _fraction(theta: float, max_den: int = 48) -> tuple[int, int]:
    f = Fraction(theta / (2.0 * np.pi)).limit_denominator(max_den)
    return f.denominator, f.numerator


def describe(g: np.ndarray) -> OpInfo:
    """Kind, order and axis of an orthogonal 3×3 matrix (see module docstring)."""
    g = np.asarray(g, dtype=float)
    det = np.linalg.det(g)
    if det > 0:
        axis, theta = _axis_angle(g)
        if axis is None:
            return OpInfo("E", 1, 0, None)
        n, k = _fraction(theta)
        return OpInfo("C", n, k, axis)
    axis, phi = _axis_angle(-g)
    if axis is None:
        return OpInfo("i", 2, 1, None)
    theta = (phi - np.pi) % (2.0 * np.pi)  # g = S(θ) with θ = φ − π
    if theta < 1e-8 or 2.0 * np.pi - theta < 1e-8:
        return OpInfo("sigma", 1, 0, axis)
    n, k = _fraction(theta)
    return OpInfo("S", n, k, axis)


def op_symbol(g: np.ndarray, inverse: bool = False) -> str:
    """Schoenflies symbol of one operation: 'C4', 'S8^3', 'i', 'sigma'.

    C_n^k and its inverse get the same symbol (k ≤ n/2) unless ``inverse`` is
    set, which names the inverse power: C_n^(n−k), S_n^(n−k) for even n and
    S_n^(2n−k) for odd n (the order of S_n is 2n for odd n).
    """
    info = describe(g)
    if info.kind in ("E", "i", "sigma"):
        return info.kind
    k = min(info.k, info.n - info.k)
    if info.kind == "S" and info.n % 2 and k % 2 == 0:
        k = info.n - k  # S_n^k with k odd: σ^k C_n^k
    if inverse:
        k = (2 * info.n - k) if (info.kind == "S" and info.n % 2) else info.n - k
    base = f"{info.kind}{info.n}"
    return base if k == 1 else f"{base}^{k}"


def find_op(ops: np.ndarray, g: np.ndarray, atol: float = 1e-6) -> int:
    """Index of matrix ``g`` in the stack ``ops`` (max-abs difference < atol), or −1."""
    diff = np.abs(np.asarray(ops) - np.asarray(g)[None]).reshape(len(ops), -1).max(axis=1)
    i = int(np.argmin(diff))
    return i if diff[i] < atol else -1
