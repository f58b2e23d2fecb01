"""Mulliken labels for the irreps of a point group in its standard frame.

Rules (R. S. Mulliken, *J. Chem. Phys.* 23, 1997 (1955); as used in
F. A. Cotton, *Chemical Applications of Group Theory*, 3rd ed., ch. 4 —
from memory), with the standard frame of :mod:`dsplit.symmetry.groups`
(principal axis z, the first C2' on x, σv containing x and z):

* letter: one-dimensional → a (χ(P) = +1) or b (χ(P) = −1), where P is the
  principal rotation C_n about z, or S_2n about z when the group has S_2n but
  no inversion (D2d, D4d, S4, S8); two-dimensional → e; three → t.
* subscript 1/2 on a, b: symmetric/antisymmetric under C2(x); without C2' under
  σ(xz).  O, Oh: C2 about (1,1,0); Td: σ with normal (1,−1,0).  D2, D2h:
  b1/b2/b3 are the b's symmetric under C2(z)/C2(y)/C2(x).
* t1/t2 (O, Oh, Td): χ = −1 / +1 under that same C2' or σd.
* e_k for a principal order m ≥ 5: χ(P) = 2 cos(2πk/m).
* g/u from χ(i); without inversion but with σh: ' / ''.

Labels are lowercase ASCII ('t2g', "e''", 'b1'), the orbital convention.

Public API
----------
mulliken_labels(ops, char_of_op) -> list[str]
irrep_sort_key(label) -> tuple
"""
from __future__ import annotations

from collections.abc import Callable

import numpy as np

from .ops import find_op, improper, inversion, reflection, rotation

__all__ = ["mulliken_labels", "irrep_sort_key"]

_X, _Y, _Z = np.eye(3)


def _principal(ops: np.ndarray) -> tuple[np.ndarray | None, int, int]:
    """(P, n, m): P the operation defining a/b, n the C_n order about z, m the order of P."""
    n = max(k for k in range(1, 25) if find_op(ops, rotation(_Z, 2 * np.pi / k)) >= 0)
    if n == 1:
        return None, 1, 1
    if find_op(ops, inversion()) < 0:
        s2n = improper(_Z, 2 * np.pi / (2 * n))
        if find_op(ops, s2n) >= 0:
            return s2n, n, 2 * n
    return rotation(_Z, 2 * np.pi / n), n, n


def mulliken_labels(ops: np.ndarray, cubic: str | None,
                    char_of_op: list[Callable[[np.ndarray], float | None]]) -> list[str]:
    """Label every real irrep; ``char_of_op[k](g)`` is χ_k(g), or None when g ∉ G.

    ``cubic`` is 'T', 'Th', 'Td', 'O' or 'Oh' for the cubic groups, else None.
    """
    has = lambda g: find_op(ops, g) >= 0  # noqa: E731
    p_op, n, m = (None, 1, 1) if cubic else _principal(ops)
    d2_type = (not cubic and n == 2 and has(rotation(_X, np.pi)) and has(rotation(_Y, np.pi))
               and p_op is not None and np.linalg.det(p_op) > 0)
    if cubic in ("O", "Oh"):
        sub_op = rotation([1, 1, 0], np.pi)
    elif cubic == "Td":
        sub_op = reflection([1, -1, 0])
    elif cubic:
        sub_op = None
    elif has(rotation(_X, np.pi)):
        sub_op = rotation(_X, np.pi)
    elif has(reflection(_Y)):
        sub_op = reflection(_Y)
    else:
        sub_op = None
    inv = inversion() if has(inversion()) else None
    sigma_h = reflection(_Z) if (not cubic and inv is None and has(reflection(_Z))) else None

    labels = []
    for chi in char_of_op:
        dim = int(round(chi(np.eye(3))))
        if dim == 1:
            if d2_type:  # b1, b2, b3: symmetric under C2(z), C2(y), C2(x)
                sym = [chi(rotation(a, np.pi)) > 0 for a in (_Z, _Y, _X)]
                lab = "a" if all(sym) else "b" + str(1 + sym.index(True))
            else:
                lab = "a" if p_op is None or chi(p_op) > 0 else "b"
                if sub_op is not None:
                    lab += "1" if chi(sub_op) > 0 else "2"
        elif dim == 2:
            lab = "e"
            if not cubic and m >= 5:
                k = np.arccos(np.clip(chi(p_op) / 2.0, -1, 1)) * m / (2 * np.pi)
                lab += str(int(round(k)))
        elif dim == 3:
            lab = "t"
            if sub_op is not None:
                lab += "1" if chi(sub_op) < 0 else "2"
        else:
            raise ValueError(f"no Mulliken letter for dimension {dim}")
        if inv is not None:
            lab += "g" if chi(inv) > 0 else "u"
        elif sigma_h is not None:
            lab += "'" if chi(sigma_h) > 0 else "''"
        labels.append(lab)
    if len(set(labels)) != len(labels):
        raise ValueError(f"Mulliken labels are not unique: {labels}")
    return labels


def irrep_sort_key(label: str) -> tuple[int, int, int]:
    """Textbook row order: g before u (' before ''), a < b < e < t, then the subscript."""
    second = 1 if label.endswith("u") or label.endswith("''") else 0
    letter = "abet".index(label[0])
    digits = "".join(c for c in label[1:] if c.isdigit())
    return second, letter, int(digits) if digits else 0
