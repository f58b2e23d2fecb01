"""Determinants of dⁿ over five spatial orbitals: strings, one-body operators, S², orbital changes.

A determinant is an α string and a β string, each a 5-bit integer (bit p set ⇔ orbital p
occupied), strings sorted by increasing integer value; a CI vector is laid out ci[iα, iβ]
and flattened row-major (α slow).  This is the layout and sign convention of PySCF's
``fci.direct_spin1`` (``fci.cistring.make_strings``), checked in tests/test_models_multiplet.py.

Second quantisation with the creation operators of a string in a fixed order (common practice;
e.g. Helgaker, Jørgensen & Olsen, Molecular Electronic-Structure Theory, 2000, ch. 1 and 2 —
from memory):

* E^σ_pq = a†_pσ a_qσ on a string I with q ∈ I, p ∉ I (or p = q) gives I − q + p with the sign
  (−1)^(number of occupied orbitals strictly between p and q) — the same for ascending or
  descending operator order, and PySCF's ``cistring.cre_des_sign``.
* E_pq = E^α_pq + E^β_pq; a spin-free H = Σ h_pq E_pq + ½ Σ (pq|rs)(E_pq E_rs − δ_qr E_ps).
* S_−S_+ = n_β − Σ_pq E^α_qp E^β_pq, so S² = n_β − Σ E^α_qp E^β_pq + S_z(S_z + 1) acts inside one
  (n_α, n_β) block.
* An orbital change a†_j → Σ_i D_ij a†_i maps |J⟩ to Σ_I det D[I, J] |I⟩ (the minors of D), in
  each spin: the CI vector becomes M_α c M_βᵀ.
"""

from __future__ import annotations

from functools import lru_cache
from itertools import combinations

import numpy as np

N_ORB = 5


@lru_cache(maxsize=None)
def strings(n_electrons: int, n_orb: int = N_ORB) -> tuple[int, ...]:
    """All n_orb-bit strings with ``n_electrons`` bits set, ascending."""
    return tuple(sorted(sum(1 << p for p in occ) for occ in combinations(range(n_orb), n_electrons)))


def occupied(string: int, n_orb: int = N_ORB) -> tuple[int, ...]:
    """Occupied orbitals of a string, ascending."""
    return tuple(p for p in range(n_orb) if string >> p & 1)


def spin_counts(n_electrons: int, ms2: int) -> tuple[int, int]:
    """(n_α, n_β) for dⁿ at 2·M_S = ms2."""
    if (n_electrons + ms2) % 2 or abs(ms2) > n_electrons or abs(ms2) > 2 * N_ORB - n_electrons:
        raise ValueError(f"2M_S = {ms2} is impossible for {n_electrons} electrons in {N_ORB} orbitals")
    return (n_electrons + ms2) // 2, (n_electrons - ms2) // 2


@lru_cache(maxsize=None)
def excitation_operators(n_electrons: int, n_orb: int = N_ORB) -> np.ndarray:
    """E_pq on the strings of one spin: array (n_orb, n_orb, n_strings, n_strings), [p, q, J, I]."""
    strs = strings(n_electrons, n_orb)
    index = {s: i for i, s in enumerate(strs)}
    e = np.zeros((n_orb, n_orb, len(strs), len(strs)))
    for i, s in enumerate(strs):
        for q in occupied(s, n_orb):
            for p in range(n_orb):
                if p != q and s >> p & 1:
                    continue
                lo, hi = min(p, q), max(p, q)
                between = bin(s & ((1 << hi) - (1 << (lo + 1)))).count("1") if hi > lo else 0
                e[p, q, index[s ^ (1 << q) | (1 << p)], i] = (-1) ** between
    e.setflags(write=False)
    return e


@lru_cache(maxsize=None)
def sector_operators(n_alpha: int, n_beta: int) -> np.ndarray:
    """Spin-summed E_pq on the (n_α, n_β) determinant block: (5, 5, N, N), N = N_α·N_β."""
    ea, eb = excitation_operators(n_alpha), excitation_operators(n_beta)
    ia, ib = np.eye(ea.shape[2]), np.eye(eb.shape[2])
    out = np.einsum("pqij,kl->pqikjl", ea, ib).reshape(N_ORB, N_ORB, ia.shape[0] * ib.shape[0], -1)
    out = out + np.einsum("ij,pqkl->pqikjl", ia, eb).reshape(out.shape)
    out.setflags(write=False)
    return out


def one_body_matrix(h: np.ndarray, n_alpha: int, n_beta: int) -> np.ndarray:
    """Σ_pq h_pq E_pq on the (n_α, n_β) block."""
    return np.tensordot(np.asarray(h, dtype=float), sector_operators(n_alpha, n_beta), axes=([0, 1], [0, 1]))


def two_body_matrix(eri: np.ndarray, n_alpha: int, n_beta: int) -> np.ndarray:
    """½ Σ (pq|rs)(E_pq E_rs − δ_qr E_ps) on the (n_α, n_β) block (eri in chemists' notation)."""
    e = sector_operators(n_alpha, n_beta)
    n = e.shape[2]
    flat = e.reshape(N_ORB * N_ORB, n, n)
    eri = np.asarray(eri, dtype=float)
    weighted = np.tensordot(eri.reshape(N_ORB * N_ORB, -1), flat, axes=(1, 0))
    pairs = np.einsum("aij,ajk->ik", flat, weighted)
    contracted = np.einsum("pqqs->ps", eri)
    return 0.5 * (pairs - one_body_matrix(contracted, n_alpha, n_beta))


@lru_cache(maxsize=None)
def spin_squared(n_alpha: int, n_beta: int) -> np.ndarray:
    """S² on the (n_α, n_β) block (formula in the module docstring)."""
    ea, eb = excitation_operators(n_alpha), excitation_operators(n_beta)
    cross = np.einsum("qpij,pqkl->ikjl", ea, eb).reshape(ea.shape[2] * eb.shape[2], -1)
    sz = 0.5 * (n_alpha - n_beta)
    out = (n_beta + sz * (sz + 1.0)) * np.eye(cross.shape[0]) - cross
    out.setflags(write=False)
    return out


def string_minors(d: np.ndarray, n_electrons: int) -> np.ndarray:
    """M[I, J] = det d[occ(I), occ(J)] over the strings of ``n_electrons`` (d: 5×5)."""
    strs = [occupied(s) for s in strings(n_electrons)]
    d = np.asarray(d, dtype=float)
    if n_electrons == 0:
        return np.ones((1, 1))
    return np.array([[np.linalg.det(d[np.ix_(i, j)]) for j in strs] for i in strs])


def rotate_ci(ci: np.ndarray, u: np.ndarray, n_electrons: int, ms2: int) -> np.ndarray:
    """CI vector over orbitals φ_a = Σ_i d_i U_ia → the same state over the d_i determinants.

    ``ci`` is (N_α, N_β) over φ; the result is M_α(U) ci M_β(U)ᵀ with the minors of U
    (module docstring).  U need not be orthogonal (the result is then not normalised).
    """
    n_alpha, n_beta = spin_counts(n_electrons, ms2)
    c = np.asarray(ci, dtype=float).reshape(len(strings(n_alpha)), len(strings(n_beta)))
    return string_minors(u, n_alpha) @ c @ string_minors(u, n_beta).T


def configuration_of(alpha: int, beta: int, set_of_orbital: tuple[int, ...], n_sets: int) -> tuple[int, ...]:
    """Electrons per orbital set of the determinant (α string, β string)."""
    occ = [0] * n_sets
    for s in (alpha, beta):
        for p in occupied(s):
            occ[set_of_orbital[p]] += 1
    return tuple(occ)
