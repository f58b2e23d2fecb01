"""Angular overlap model (AOM) d-orbital matrix for any set of ligand directions.

The ligand-field matrix over the five real d orbitals is (Schäffer & Jørgensen,
Mol. Phys. 9, 401 (1965); Schäffer, Struct. Bonding 5, 68 (1968))

    V_ij = Σ_L [ eσ_L Fσ_i(L) Fσ_j(L) + eπ_L (Fπx_i(L) Fπx_j(L) + Fπy_i(L) Fπy_j(L)) ]

where F are the angular overlap factors: the coefficient of the local d_z² (σ) and
local d_xz, d_yz (π) functions, in the frame whose z axis points at ligand L, in
each global d orbital.  Each real d orbital is written as a traceless quadratic
form d_i(r) = rᵀ Q_i r, normalised so that d_z² = 1 on the z axis; then

    Fσ_i = uᵀ Q_i u,        Fπ_i(a) = (2/√3) aᵀ Q_i u

for a ligand along unit vector u and a unit vector a ⟂ u.  Orbital order is
PySCF's real-spherical order: (xy, yz, z², xz, x²−y²).
"""

from __future__ import annotations

import numpy as np

D_ORBITALS: tuple[str, ...] = ("xy", "yz", "z2", "xz", "x2-y2")

_S3 = np.sqrt(3.0) / 2.0
QUADRATIC_FORMS = np.array(
    [
        [[0, _S3, 0], [_S3, 0, 0], [0, 0, 0]],  # xy
        [[0, 0, 0], [0, 0, _S3], [0, _S3, 0]],  # yz
        [[-0.5, 0, 0], [0, -0.5, 0], [0, 0, 1.0]],  # z2
        [[0, 0, _S3], [0, 0, 0], [_S3, 0, 0]],  # xz
        [[_S3, 0, 0], [0, -_S3, 0], [0, 0, 0]],  # x2-y2
    ]
)


def _perpendicular_pair(u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Two unit vectors that complete u to a right-handed orthonormal frame."""
    trial = np.array([0.0, 0.0, 1.0]) if abs(u[2]) < 0.9 else np.array([1.0, 0.0, 0.0])
    a = np.cross(trial, u)
    a /= np.linalg.norm(a)
    b = np.cross(u, a)
    return a, b


def overlap_factors(direction: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Angular overlap factors (Fσ, Fπx, Fπy), each of length 5, for one ligand."""
    u = np.asarray(direction, dtype=float)
    u = u / np.linalg.norm(u)
    a, b = _perpendicular_pair(u)
    f_sigma = np.einsum("i,kij,j->k", u, QUADRATIC_FORMS, u)
    f_pi_a = (2.0 / np.sqrt(3.0)) * np.einsum("i,kij,j->k", a, QUADRATIC_FORMS, u)
    f_pi_b = (2.0 / np.sqrt(3.0)) * np.einsum("i,kij,j->k", b, QUADRATIC_FORMS, u)
    return f_sigma, f_pi_a, f_pi_b


def aom_matrix(
    directions: np.ndarray,
    e_sigma: float | np.ndarray,
    e_pi: float | np.ndarray = 0.0,
) -> np.ndarray:
    """The 5×5 AOM ligand-field matrix (same energy unit as eσ, eπ).

    ``e_sigma`` and ``e_pi`` are scalars or one value per ligand (isotropic π).
    """
    dirs = np.atleast_2d(np.asarray(directions, dtype=float))
    n = len(dirs)
    es = np.broadcast_to(np.asarray(e_sigma, dtype=float), (n,))
    ep = np.broadcast_to(np.asarray(e_pi, dtype=float), (n,))
    v = np.zeros((5, 5))
    for u, s, p in zip(dirs, es, ep):
        fs, fa, fb = overlap_factors(u)
        v += s * np.outer(fs, fs) + p * (np.outer(fa, fa) + np.outer(fb, fb))
    return v


def aom_levels(
    directions: np.ndarray,
    e_sigma: float | np.ndarray,
    e_pi: float | np.ndarray = 0.0,
) -> tuple[np.ndarray, np.ndarray]:
    """Eigenvalues (ascending) and eigenvectors (columns, over D_ORBITALS)."""
    w, c = np.linalg.eigh(aom_matrix(directions, e_sigma, e_pi))
    return w, c
