"""Point-charge crystal-field matrix over the five real d orbitals.

A ligand k is a point charge q_k (in units of e; −1 for a monoanion) at R_k from
the metal.  Expanding 1/|r − R_k| in Legendre polynomials (r < R_k) and keeping
the terms that have non-zero d–d matrix elements (l = 0, 2, 4), the one-electron
crystal-field matrix is (Figgis & Hitchman, Ligand Field Theory and Its
Applications, Wiley 2000, ch. 2 — from memory)

    V_ij = Σ_k (−q_k) Σ_{l∈{0,2,4}} ⟨r^l⟩ / R_k^{l+1} · ∫ d_i(r̂) d_j(r̂) P_l(r̂·R̂_k) dΩ

in units of e²/(4πε₀·length).  ⟨r^l⟩ are radial moments of the metal d
function.  The angular integral is done exactly by a product Gauss–Legendre ×
trapezoid quadrature (the integrand is a polynomial of degree 8 on the sphere).
The l = 2 term vanishes for cubic sets (Oh, Td, cube); the l = 4 term gives
Dq = |q|⟨r⁴⟩/(6a⁵) for six charges at distance a.

Lengths are in Å (⟨r^l⟩ in Å^l); energies are returned in Hartree.  Only
ratios are meaningful unless realistic ⟨r²⟩, ⟨r⁴⟩ are supplied.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.special import eval_legendre

from dsplit.models.aom import overlap_factors
from dsplit.units import BOHR_IN_ANGSTROM


@lru_cache(maxsize=1)
def _sphere_quadrature() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Nodes (unit vectors), weights (sum 4π) and normalised real d values there.

    8 Gauss–Legendre points in cos θ and 16 in φ integrate spherical polynomials
    up to degree 15 exactly.
    """
    x, wx = np.polynomial.legendre.leggauss(8)
    nphi = 16
    phi = 2.0 * np.pi * np.arange(nphi) / nphi
    s = np.sqrt(1.0 - x**2)
    nodes = np.array([[si * np.cos(p), si * np.sin(p), xi] for xi, si in zip(x, s) for p in phi])
    weights = np.repeat(wx, nphi) * (2.0 * np.pi / nphi)
    # overlap_factors' σ factor is the d function r̂ᵀQ r̂ scaled so ∫ d_i² dΩ = 4π/5.
    d = np.array([overlap_factors(u)[0] for u in nodes]) * np.sqrt(5.0 / (4.0 * np.pi))
    return nodes, weights, d


def point_charge_matrix(
    positions: np.ndarray,
    charges: float | np.ndarray = -1.0,
    r2: float = 1.0,
    r4: float = 1.0,
    multipoles: tuple[int, ...] = (2, 4),
) -> np.ndarray:
    """The 5×5 point-charge crystal-field matrix (Hartree), order of aom.D_ORBITALS.

    ``positions`` (n×3, Å) are relative to the metal; ``charges`` in e (scalar or
    one per ligand); ``r2``, ``r4`` are ⟨r²⟩ (Å²), ⟨r⁴⟩ (Å⁴); ``multipoles`` picks
    which l of {0, 2, 4} to keep (l = 0 is a uniform shift −Σq/R).
    """
    pos = np.atleast_2d(np.asarray(positions, dtype=float))
    q = np.broadcast_to(np.asarray(charges, dtype=float), (len(pos),))
    bad = set(multipoles) - {0, 2, 4}
    if bad:
        raise ValueError(f"multipoles must be among 0, 2, 4 (got {sorted(bad)})")
    moment = {0: 1.0, 2: r2, 4: r4}
    nodes, weights, d = _sphere_quadrature()
    v = np.zeros((5, 5))
    for rk, qk in zip(pos, q):
        dist = np.linalg.norm(rk)
        cosg = nodes @ (rk / dist)
        radial = sum(moment[l] / dist ** (l + 1) * eval_legendre(l, cosg) for l in multipoles)
        v += -qk * np.einsum("n,ni,nj->ij", weights * radial, d, d)
    # e²/(4πε₀ Å) = E_h · (a0 / Å)
    return v * BOHR_IN_ANGSTROM


def point_charge_levels(
    positions: np.ndarray,
    charges: float | np.ndarray = -1.0,
    r2: float = 1.0,
    r4: float = 1.0,
    multipoles: tuple[int, ...] = (2, 4),
) -> tuple[np.ndarray, np.ndarray]:
    """Eigenvalues (ascending, Hartree) and eigenvectors (columns over D_ORBITALS)."""
    return np.linalg.eigh(point_charge_matrix(positions, charges, r2, r4, multipoles))
