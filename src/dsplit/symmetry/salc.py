"""Ligand σ/π SALC symmetry and metal s, p, d irreps (pure numpy).

Characters of the reducible representations, for operations g about the metal
(Cotton, *Chemical Applications of Group Theory*, 3rd ed., chapters on hybrid
orbitals and MO theory — from memory):

* σ set (one radial vector per donor): χ_σ(g) = number of donors left in place;
* π set (two tangential vectors per donor): χ_π(g) = Σ_{fixed donors} (tr g − uᵀ g u)
  with u the metal→donor unit vector (uᵀ g u = 1 for a fixed donor);
* metal: χ_s = 1, χ_p = tr g, χ_d = (tr(g)² + tr(g²))/2 − 1 (symmetric square of
  the vector representation minus the invariant r²: χ_{S²V}(g) = (χ(g)² + χ(g²))/2;
  Fulton & Harris, *Representation Theory: A First Course* — from memory).

Reduction n_Γ = Σ_g χ_Γ(g) χ(g) / (|G| c_Γ).  A ligand irrep with no metal
s, p or d partner is non-bonding by symmetry.  SALC vectors of the σ set are
the orthonormal range of P_Γ acting on the donor permutation representation.

Public API
----------
ligand_salcs(symmetry, metal_position, donor_positions, tol=1e-3) -> LigandSalcs
metal_irreps(symmetry) -> dict[str, dict[str, int]]        {'s': {...}, 'p': ..., 'd': ...}
LigandSalcs.group, .sigma, .pi (dict irrep → multiplicity), .sigma_chars, .pi_chars,
    .metal, .nonbonding_sigma, .nonbonding_pi, .sigma_vectors (irrep → (n, ndonor))
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .detect import Symmetry

__all__ = ["LigandSalcs", "ligand_salcs", "metal_irreps", "reduce_characters"]


@dataclass
class LigandSalcs:
    """Irreps spanned by ligand σ/π sets and by the metal s, p, d functions."""

    group: str
    sigma: dict[str, int]
    pi: dict[str, int]
    sigma_chars: np.ndarray
    pi_chars: np.ndarray
    metal: dict[str, dict[str, int]]
    nonbonding_sigma: list[str]
    nonbonding_pi: list[str]
    sigma_vectors: dict[str, np.ndarray]


def reduce_characters(symmetry: Symmetry, chi: np.ndarray) -> dict[str, int]:
    """Integer multiplicities of a reducible character given on every operation."""
    dec = symmetry.group.decompose(chi)
    out = {}
    for lab, n in dec.items():
        if abs(n - round(n)) > 1e-6:
            raise ArithmeticError(f"non-integral multiplicity {n} of {lab}")
        if round(n) > 0:
            out[lab] = int(round(n))
    return out


def metal_irreps(symmetry: Symmetry) -> dict[str, dict[str, int]]:
    """Irreps spanned by s, p and d functions on the fixed centre."""
    tr = np.einsum("gii->g", symmetry.ops)
    tr2 = np.einsum("gij,gji->g", symmetry.ops, symmetry.ops)
    return {"s": reduce_characters(symmetry, np.ones(len(tr))),
            "p": reduce_characters(symmetry, tr),
            "d": reduce_characters(symmetry, (tr ** 2 + tr2) / 2.0 - 1.0)}


def _donor_permutations(ops: np.ndarray, u: np.ndarray, d: np.ndarray, tol: float) -> np.ndarray:
    pts = u * d[:, None]
    img = np.einsum("gij,nj->gni", ops, pts)
    dist = np.linalg.norm(img[:, :, None, :] - pts[None, None, :, :], axis=-1)
    if np.any(dist.min(axis=2) > tol):
        raise ValueError("the donor set is not invariant under the given operations")
    return dist.argmin(axis=2)


def ligand_salcs(symmetry: Symmetry, metal_position: np.ndarray,
                 donor_positions: np.ndarray, tol: float = 1e-3) -> LigandSalcs:
    """σ/π reducible representations of the donor set under ``symmetry.ops`` (about the metal)."""
    vec = np.asarray(donor_positions, dtype=float) - np.asarray(metal_position, dtype=float)
    d = np.linalg.norm(vec, axis=1)
    u = vec / d[:, None]
    ops = symmetry.ops
    perm = _donor_permutations(ops, u, d, tol)
    fixed = perm == np.arange(len(u))[None, :]
    tr = np.einsum("gii->g", ops)
    ugu = np.einsum("ni,gij,nj->gn", u, ops, u)
    chi_s = fixed.sum(axis=1).astype(float)
    chi_p = np.sum(fixed * (tr[:, None] - ugu), axis=1)
    sigma = reduce_characters(symmetry, chi_s)
    pi = reduce_characters(symmetry, chi_p)
    metal = metal_irreps(symmetry)
    partners = set().union(*[set(v) for v in metal.values()])
    g = symmetry.group
    vecs = {}
    nd = len(u)
    for lab in sigma:
        w = g.projector_weights(lab)
        proj = np.zeros((nd, nd))
        for k in range(len(ops)):
            proj[perm[k], np.arange(nd)] += w[k]
        val, v = np.linalg.eigh((proj + proj.T) / 2)
        vecs[lab] = v[:, val > 0.5].T
    return LigandSalcs(symmetry.name, sigma, pi, chi_s, chi_p, metal,
                       sorted(set(sigma) - partners), sorted(set(pi) - partners), vecs)
