"""Character tables computed from the group operations (pure numpy).

Method: Burnside's algorithm as made numerical by Dixon
(J. D. Dixon, *Numer. Math.* 10, 446 (1967); Burnside, *Theory of Groups of
Finite Order*, 2nd ed. — from memory).  With class-multiplication
coefficients c_rst = #{(x, y) : x ∈ C_r, y ∈ C_s, x y = z_t} (z_t a fixed member
of C_t), every irreducible character gives a common eigenvector ω of the
matrices (M_r)_st = c_rst:

    ω_r ω_s = Σ_t c_rst ω_t ,     ω_r = |C_r| χ(C_r) / d .

The eigenvectors of one random combination Σ_r a_r M_r are normalised to
ω_E = 1, the dimension follows from Σ_r |C_r| |χ_r|² = |G|, i.e.
d² = |G| / Σ_r |ω_r|²/|C_r|, and χ_r = d ω_r / |C_r|.

Complex-conjugate pairs of one-dimensional irreps (C3, S4, T, Th, ...) are
combined into one real, "separably degenerate" irrep with character 2 Re χ,
as in Mulliken's convention for real orbitals.

Public API
----------
multiplication_table(ops, atol) -> ndarray (n, n) int
conjugacy_classes(table) -> list[list[int]]
complex_characters(table, classes) -> ndarray (n_irrep, n_class) complex
real_combinations(chars) -> list[tuple[int, ...]]
"""
from __future__ import annotations

import numpy as np

__all__ = [
    "multiplication_table", "conjugacy_classes", "complex_characters",
    "real_combinations",
]


def multiplication_table(ops: np.ndarray, atol: float = 1e-6) -> np.ndarray:
    """table[a, b] = index of ops[a] @ ops[b]; raises if the set is not closed."""
    n = len(ops)
    flat = ops.reshape(n, 9)
    table = np.empty((n, n), dtype=int)
    for a in range(n):
        prod = np.einsum("ij,bjk->bik", ops[a], ops).reshape(n, 9)
        diff = np.abs(prod[:, None, :] - flat[None, :, :]).max(axis=2)
        idx = diff.argmin(axis=1)
        if np.any(diff[np.arange(n), idx] > atol):
            raise ValueError("operation set is not closed under multiplication")
        table[a] = idx
    return table


def conjugacy_classes(table: np.ndarray) -> list[list[int]]:
    """Classes {x g x⁻¹} in order of first appearance (the identity is assumed at index 0)."""
    n = len(table)
    inv = np.array([int(np.where(table[a] == 0)[0][0]) for a in range(n)])
    seen = np.zeros(n, dtype=bool)
    classes: list[list[int]] = []
    for g in range(n):
        if seen[g]:
            continue
        members = sorted({int(table[table[x, g], inv[x]]) for x in range(n)})
        seen[members] = True
        classes.append(members)
    return classes


def complex_characters(table: np.ndarray, classes: list[list[int]],
                       seed: int = 7) -> np.ndarray:
    """Irreducible characters per class by the Burnside–Dixon eigenvector method."""
    n = len(table)
    ncls = len(classes)
    cls_of = np.empty(n, dtype=int)
    for c, members in enumerate(classes):
        cls_of[members] = c
    sizes = np.array([len(m) for m in classes], dtype=float)
    # c[r, s, t] = #{(x, y): x in C_r, y in C_s, x y = z_t}
    coef = np.zeros((ncls, ncls, ncls))
    reps = [m[0] for m in classes]
    for r in range(ncls):
        for x in classes[r]:
            prod = table[x]  # x*y for every y
            for t, z in enumerate(reps):
                y = int(np.where(prod == z)[0][0])
                coef[r, cls_of[y], t] += 1.0
    rng = np.random.default_rng(seed)
    a = rng.normal(size=ncls)
    mat = np.einsum("r,rst->st", a, coef)
    _, vecs = np.linalg.eig(mat)
    chars = np.empty((ncls, ncls), dtype=complex)
    for k in range(ncls):
        w = vecs[:, k] / vecs[0, k]
        d = np.sqrt(n / np.sum(np.abs(w) ** 2 / sizes))
        chars[k] = np.round(d) * w / sizes
    # verify the eigenvector property for all class matrices (catches eigen-degeneracy)
    om = chars * sizes[None, :] / chars[:, :1].real  # ω = |C| χ / d
    for r in range(ncls):
        lhs = om[:, r:r + 1] * om
        rhs = np.einsum("st,kt->ks", coef[r], om)
        if not np.allclose(lhs, rhs, atol=1e-6):
            raise ArithmeticError("Burnside–Dixon eigenvectors are not simultaneous")
    chars.real[np.abs(chars.real) < 1e-9] = 0.0
    chars.imag[np.abs(chars.imag) < 1e-9] = 0.0
    return chars


def real_combinations(chars: np.ndarray, atol: float = 1e-6) -> list[tuple[int, ...]]:
    """Group complex irreps into real ones: (k,) if χ_k is real, (k, l) if χ_l = χ_k*."""
    done: set[int] = set()
    out: list[tuple[int, ...]] = []
    for k in range(len(chars)):
        if k in done:
            continue
        if np.abs(chars[k].imag).max() < atol:
            out.append((k,))
            done.add(k)
            continue
        conj = [l for l in range(len(chars))
                if l not in done and l != k and np.allclose(chars[l], chars[k].conj(), atol=atol)]
        if len(conj) != 1:
            raise ArithmeticError("complex irrep without a unique conjugate partner")
        out.append((k, conj[0]))
        done.update((k, conj[0]))
    return out
