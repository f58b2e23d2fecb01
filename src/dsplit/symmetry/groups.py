"""Point groups in a standard frame: operations, classes, characters, Mulliken labels.

Standard frame (matches the structure builder): principal axis z; for D_n,
D_nh, D_nd the first C2' lies on x; for C_nv a σv contains x and z; for D_nd
the σd bisect the C2' axes; cubic groups have their C2 (T, Th, Td) or C4
(O, Oh) axes on x, y, z and C3 along (±1, ±1, ±1).  Generators:

    C_n: C_n(z)            C_nv: + σ(xz)      C_nh: + σ(xy)      S_2n: S_2n(z)
    D_n: C_n(z), C2(x)     D_nh: + σ(xy)      D_nd: + σd (normal at π/2n + π/2)
    T: C2(z), C3(111)      Td: T + σ(normal 1,−1,0)     Th: T + i
    O: C4(z), C3(111)      Oh: O + i          Cs: σ(xy)   Ci: i   C1: —

The group is the closure of its generators; classes, characters (Burnside–Dixon,
:mod:`.chartable`) and labels (:mod:`.mulliken`) are computed, never typed in.
Linear groups are represented by finite proxies: 'Dooh' → D8h and 'Coov' →
C8v (their e1, e2, e3 are π, δ, φ; see :func:`linear_label`).

Public API
----------
point_group(name) -> PointGroup          (cached; 'Oh', 'D4h', 'C2v', 'S4', ...)
PointGroup.name, .ops (|G|,3,3; E first, grouped by class), .order, .classes
    (op indices), .class_of (|G|,), .class_sizes, .class_names ('8C3', "2C2'",
    'sigma_h'), .irreps (tuple[Irrep], textbook order), .labels, .complex_chars
    (n_class, n_class; the complex table, conjugate pairs unmerged)
PointGroup.irrep(label) -> Irrep
PointGroup.op_chars(label) -> ndarray (|G|,)      χ on every operation
PointGroup.char_matrix -> ndarray (n_irrep, |G|)
PointGroup.decompose(chi_ops) -> dict[str, float] n_Γ = Σ_g χ_Γ(g) χ(g) / (|G| c_Γ)
PointGroup.projector_weights(label) -> ndarray (|G|,)  (d_comp/|G|) χ_Γ(g)
Irrep(label, dim, chars, n_components)
linear_label(label) -> str               D8h/C8v label → 'sigma_g+', 'pi_u', ...
SUPPORTED: tuple of names accepted (families with any n are accepted too).
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np

from .chartable import (complex_characters, conjugacy_classes, multiplication_table,
                        real_combinations)
from .mulliken import irrep_sort_key, mulliken_labels
from .ops import describe, find_op, improper, inversion, op_symbol, reflection, rotation

__all__ = ["Irrep", "PointGroup", "point_group", "linear_label", "LINEAR_PROXY", "SUPPORTED"]

SUPPORTED = ("C1", "Cs", "Ci", "C2", "C3", "C4", "C6", "S4", "S6", "S8", "C2v", "C3v",
             "C4v", "C5v", "C6v", "C2h", "C3h", "C4h", "C6h", "D2", "D3", "D4", "D6",
             "D2h", "D3h", "D4h", "D5h", "D6h", "D2d", "D3d", "D4d", "D5d", "T", "Td",
             "Th", "O", "Oh", "Dooh", "Coov")
LINEAR_PROXY = {"Dooh": "D8h", "Coov": "C8v"}
_CUBIC = ("T", "Td", "Th", "O", "Oh")
_X, _Y, _Z = np.eye(3)


@dataclass(frozen=True)
class Irrep:
    """A real irreducible representation.

    chars: characters per class (real).  n_components: 2 for a separably
    degenerate pair of complex-conjugate 1-D irreps combined into one real 'e'.
    """

    label: str
    dim: int
    chars: np.ndarray
    n_components: int


def _generators(name: str) -> list[np.ndarray]:
    if name in _CUBIC:
        c3 = rotation([1, 1, 1], 2 * np.pi / 3)
        base = [rotation(_Z, np.pi / 2), c3] if name.startswith("O") else [rotation(_Z, np.pi), c3]
        extra = {"Td": [reflection([1, -1, 0])], "Th": [inversion()], "Oh": [inversion()]}
        return base + extra.get(name, [])
    fixed = {"C1": [], "Cs": [reflection(_Z)], "Ci": [inversion()]}
    if name in fixed:
        return fixed[name]
    mt = re.fullmatch(r"([CDS])(\d+)([vhd]?)", name)
    if not mt:
        raise ValueError(f"unknown point group {name!r}")
    fam, n, suf = mt.group(1), int(mt.group(2)), mt.group(3)
    if fam == "S":
        if suf or n % 2 or n < 4:
            raise ValueError(f"unsupported S group {name!r}")
        return [improper(_Z, 2 * np.pi / n)]
    gens = [rotation(_Z, 2 * np.pi / n)]
    if fam == "D":
        gens.append(rotation(_X, np.pi))
    if suf == "v" and fam == "C":
        gens.append(reflection(_Y))
    elif suf == "h":
        gens.append(reflection(_Z))
    elif suf == "d" and fam == "D":
        phi = np.pi / (2 * n) + np.pi / 2
        gens.append(reflection([np.cos(phi), np.sin(phi), 0.0]))
    elif suf:
        raise ValueError(f"unknown point group {name!r}")
    return gens


def _close(gens: list[np.ndarray], max_order: int = 200) -> np.ndarray:
    ops = [np.eye(3)]
    frontier = [np.eye(3)]
    while frontier:
        new = []
        for a in frontier:
            for g in gens:
                p = g @ a
                if find_op(np.array(ops), p) < 0:
                    ops.append(p)
                    new.append(p)
        frontier = new
        if len(ops) > max_order:
            raise ValueError("generators do not close into a finite point group")
    return np.array(ops)


def _class_key(g: np.ndarray) -> tuple:
    info = describe(g)
    kind = ("E", "C", "i", "S", "sigma").index(info.kind)
    on_z = info.axis is not None and abs(abs(info.axis[2]) - 1) < 1e-8
    return kind, -info.n, min(info.k, info.n - info.k) if info.n > 1 else 0, not on_z


def _class_name(ops: np.ndarray, members: list[int], group: str, second: bool) -> str:
    """Cotton-style class name; ``second`` marks the later of two mutually inverse classes."""
    g = ops[members[0]]
    sym = op_symbol(g, inverse=second)
    if sym in ("sigma", "C2"):
        axes = [describe(ops[m]).axis for m in members]
        coord = [a for a in axes if np.isclose(np.abs(a).max(), 1.0)]
        if group in ("D2", "D2h", "C2v"):
            a = "xyz"[int(np.argmax(np.abs(axes[0])))]
            plane = {"x": "yz", "y": "xz", "z": "xy"}[a]
            sym = f"sigma({plane})" if sym == "sigma" else f"C2({a})"
        elif sym == "sigma":
            if group in _CUBIC:
                sym = "sigma_h" if coord else "sigma_d"
            elif abs(axes[0][2]) > 1 - 1e-8:
                sym = "sigma_h"
            else:
                sym = "sigma_v" if any(abs(a[1]) > 1 - 1e-8 for a in axes) else "sigma_d"
        elif group not in _CUBIC and not any(abs(a[2]) > 1 - 1e-8 for a in axes):
            sym = "C2'" if any(abs(a[0]) > 1 - 1e-8 for a in axes) else "C2''"
        elif group in ("O", "Oh") and not coord:
            sym = "C2'"
    return (str(len(members)) if len(members) > 1 else "") + sym


class PointGroup:
    """One point group in the standard frame (see module docstring)."""

    def __init__(self, name: str):
        self.name = name
        proxy = LINEAR_PROXY.get(name, name)
        ops = _close(_generators(proxy))
        table = multiplication_table(ops)
        classes = conjugacy_classes(table)
        order = sorted(range(len(classes)), key=lambda c: _class_key(ops[classes[c][0]]))
        classes = [classes[c] for c in order]
        perm = [i for c in classes for i in c]          # ops grouped by class, E first
        self.ops = ops[perm]
        table = multiplication_table(self.ops)
        self.classes = conjugacy_classes(table)
        self.class_of = np.empty(len(self.ops), dtype=int)
        for c, members in enumerate(self.classes):
            self.class_of[members] = c
        self.class_sizes = np.array([len(m) for m in self.classes])
        inv = [int(np.where(table[a] == 0)[0][0]) for a in range(len(self.ops))]
        inv_class = [int(self.class_of[inv[m[0]]]) for m in self.classes]
        self.class_names = [_class_name(self.ops, m, proxy, inv_class[c] < c)
                            for c, m in enumerate(self.classes)]
        self.complex_chars = complex_characters(table, self.classes)
        combos = real_combinations(self.complex_chars)
        real = [np.sum(self.complex_chars[list(c)], axis=0).real for c in combos]
        getters = [self._getter(ch) for ch in real]
        cubic = proxy if proxy in _CUBIC else None
        labels = mulliken_labels(self.ops, cubic, getters)
        irreps = [Irrep(lab, int(round(ch[0])), ch, len(c))
                  for lab, ch, c in zip(labels, real, combos)]
        self.irreps = tuple(sorted(irreps, key=lambda r: irrep_sort_key(r.label)))

    def _getter(self, chars: np.ndarray):
        def chi(g: np.ndarray) -> float | None:
            k = find_op(self.ops, g)
            return None if k < 0 else float(chars[self.class_of[k]])
        return chi

    @property
    def order(self) -> int:
        return len(self.ops)

    @property
    def labels(self) -> list[str]:
        return [r.label for r in self.irreps]

    def irrep(self, label: str) -> Irrep:
        for r in self.irreps:
            if r.label == label:
                return r
        raise KeyError(f"{label!r} is not an irrep of {self.name} ({self.labels})")

    def op_chars(self, label: str) -> np.ndarray:
        """Character of irrep ``label`` on every operation (ordered as ``ops``)."""
        return self.irrep(label).chars[self.class_of]

    @cached_property
    def char_matrix(self) -> np.ndarray:
        return np.array([r.chars[self.class_of] for r in self.irreps])

    def projector_weights(self, label: str) -> np.ndarray:
        """Coefficients of P_Γ = Σ_g w_g R(g): w_g = (d/|G|) χ_Γ(g)* summed over components."""
        r = self.irrep(label)
        return (r.dim / r.n_components / self.order) * r.chars[self.class_of]

    def decompose(self, chi_ops: np.ndarray) -> dict[str, float]:
        """Multiplicities n_Γ = (1/(|G| c_Γ)) Σ_g χ_Γ(g) χ(g), c_Γ = number of components."""
        chi_ops = np.asarray(chi_ops, dtype=float)
        return {r.label: float(r.chars[self.class_of] @ chi_ops / (self.order * r.n_components))
                for r in self.irreps}


@lru_cache(maxsize=None)
def point_group(name: str) -> PointGroup:
    """The (cached) point group ``name`` in the standard frame."""
    return PointGroup(name)


_LINEAR = {"a1": "sigma+", "a2": "sigma-", "a1g": "sigma_g+", "a2g": "sigma_g-",
           "a1u": "sigma_u-", "a2u": "sigma_u+", "e1": "pi", "e2": "delta", "e3": "phi"}


def linear_label(label: str) -> str:
    """Map a D8h / C8v proxy label to the D∞h / C∞v one.

    D8h: a1g → Σg+, a2g → Σg−, a2u → Σu+ (z), a1u → Σu−; C8v: a1 → Σ+, a2 → Σ−;
    e1, e2, e3 → π, δ, φ; b1/b2 (|m| = 4 functions) → γ.  Written in ASCII:
    'sigma_g+', 'pi_u', 'delta', 'gamma_g'.
    """
    if label in _LINEAR:
        return _LINEAR[label]
    core, par = (label[:-1], label[-1]) if label[-1] in "gu" else (label, "")
    name = _LINEAR.get(core, "gamma" if core.startswith("b") else core)
    return f"{name}_{par}" if par else name
