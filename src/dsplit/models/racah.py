"""Interelectronic repulsion over the five real d orbitals from the Racah parameters A, B, C.

For two d electrons in complex spherical harmonics Y_2m the Coulomb integral in chemists'
notation is (Slater–Condon; Condon & Shortley, The Theory of Atomic Spectra, 1935, ch. 6)

    (m1 m2|m3 m4) = Σ_{k=0,2,4} R^k c^k(m2, m1) c^k(m3, m4) δ(m1 + m3, m2 + m4)

with the Gaunt coefficients

    c^k(m, m') = √(4π/(2k+1)) ∫ Y*_2m Y_k,m−m' Y_2m' dΩ
               = (−1)^m · 5 · (2 k 2; 0 0 0) (2 k 2; −m, m−m', m')

(Wigner 3j symbols, Racah's closed formula: Racah, Phys. Rev. 62, 438 (1942)).  In the
Condon–Shortley normalisation F0 = R^0, F2 = R^2/49, F4 = R^4/441, and Racah's parameters
(Racah 1942; Griffith, The Theory of Transition-Metal Ions, 1961, ch. 4 — from memory) are

    A = F0 − 49 F4,   B = F2 − 5 F4,   C = 35 F4
    ⇒ F0 = A + 7C/5,  F2 = B + C/7,   F4 = C/35.

The real orbitals are d_i = Σ_m T_im Y_2m in aom.D_ORBITALS order (xy, yz, z², xz, x²−y² =
m −2 … 2) with the usual positive real combinations (m > 0: ((−1)^m Y_m + Y_−m)/√2 ∝ cos mφ;
m < 0: i(Y_m − (−1)^m Y_−m)/√2 ∝ sin|m|φ), which are PySCF's real harmonics, so
(ij|kl) = Σ T*_i,m1 T_j,m2 T*_k,m3 T_l,m4 (m1 m2|m3 m4) is what PySCF's int2e_sph gives for a
single d shell (checked in tests/test_models_racah.py).
"""

from __future__ import annotations

from functools import lru_cache
from math import factorial, sqrt

import numpy as np

_M = (-2, -1, 0, 1, 2)  # m of the five d functions, in D_ORBITALS order


def wigner_3j(j1: int, j2: int, j3: int, m1: int, m2: int, m3: int) -> float:
    """Wigner 3j symbol for integer arguments (Racah's formula, Racah 1942)."""
    if m1 + m2 + m3 != 0 or not abs(j1 - j2) <= j3 <= j1 + j2:
        return 0.0
    if abs(m1) > j1 or abs(m2) > j2 or abs(m3) > j3:
        return 0.0
    tri = factorial(j1 + j2 - j3) * factorial(j1 - j2 + j3) * factorial(-j1 + j2 + j3) / factorial(j1 + j2 + j3 + 1)
    pre = sqrt(tri * factorial(j1 + m1) * factorial(j1 - m1) * factorial(j2 + m2) * factorial(j2 - m2)
               * factorial(j3 + m3) * factorial(j3 - m3))
    kmin = max(0, j2 - j3 - m1, j1 - j3 + m2)
    kmax = min(j1 + j2 - j3, j1 - m1, j2 + m2)
    total = 0.0
    for k in range(kmin, kmax + 1):
        total += (-1) ** k / (factorial(k) * factorial(j1 + j2 - j3 - k) * factorial(j1 - m1 - k)
                              * factorial(j2 + m2 - k) * factorial(j3 - j2 + m1 + k) * factorial(j3 - j1 - m2 + k))
    return float((-1) ** (j1 - j2 - m3) * pre * total)


def gaunt_d(k: int, m: int, m_prime: int) -> float:
    """Condon–Shortley c^k(2m, 2m') (see module docstring)."""
    q = m - m_prime
    return (-1) ** m * 5 * wigner_3j(2, k, 2, 0, 0, 0) * wigner_3j(2, k, 2, -m, q, m_prime)


def complex_to_real() -> np.ndarray:
    """T (5×5, unitary): real d_i = Σ_m T[i, m] Y_2m, rows in D_ORBITALS order, columns m = −2…2."""
    t = np.zeros((5, 5), dtype=complex)
    s = 1.0 / np.sqrt(2.0)
    for i, m in enumerate(_M):
        plus, minus = _M.index(abs(m)), _M.index(-abs(m))
        if m == 0:
            t[i, plus] = 1.0
        elif m > 0:
            t[i, plus] = (-1) ** m * s
            t[i, minus] = s
        else:
            t[i, minus] = 1j * s
            t[i, plus] = -1j * (-1) ** m * s
    return t


@lru_cache(maxsize=None)
def _angular(k: int) -> np.ndarray:
    """Angular tensor a_k(ij|kl) over the real d orbitals: (ij|kl) = Σ_k R^k a_k."""
    c = np.array([[gaunt_d(k, m, mp) for mp in _M] for m in _M])
    cplx = np.zeros((5, 5, 5, 5))
    for a, m1 in enumerate(_M):
        for b, m2 in enumerate(_M):
            for e, m3 in enumerate(_M):
                for f, m4 in enumerate(_M):
                    if m1 + m3 == m2 + m4:
                        cplx[a, b, e, f] = c[b, a] * c[e, f]
    t = complex_to_real()
    real = np.einsum("ia,jb,kc,ld,abcd->ijkl", t.conj(), t, t.conj(), t, cplx)
    if np.max(np.abs(real.imag)) > 1e-12:
        raise AssertionError("real-orbital repulsion integrals came out complex")
    out = np.ascontiguousarray(real.real)
    out.setflags(write=False)
    return out


def slater_eri(f0: float, f2: float, f4: float) -> np.ndarray:
    """(ij|kl) over real d orbitals from Condon–Shortley F0, F2, F4 (R^k = F0, 49 F2, 441 F4)."""
    return f0 * _angular(0) + 49.0 * f2 * _angular(2) + 441.0 * f4 * _angular(4)


def racah_to_slater(a: float, b: float, c: float) -> tuple[float, float, float]:
    """(F0, F2, F4) from Racah (A, B, C): F0 = A + 7C/5, F2 = B + C/7, F4 = C/35."""
    return a + 7.0 * c / 5.0, b + c / 7.0, c / 35.0


def racah_eri(a: float, b: float, c: float) -> np.ndarray:
    """(ij|kl) over the real d orbitals (D_ORBITALS order) from Racah A, B, C."""
    return slater_eri(*racah_to_slater(a, b, c))


def racah_eri_basis() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The three fixed tensors (T_A, T_B, T_C) with racah_eri(A, B, C) = A T_A + B T_B + C T_C."""
    return racah_eri(1.0, 0.0, 0.0), racah_eri(0.0, 1.0, 0.0), racah_eri(0.0, 0.0, 1.0)
