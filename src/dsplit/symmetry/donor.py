"""Donor-set labels of d-based orbitals (e.g. t2g/eg in Oh for six aqua ligands, Th).

The donor set (metal + donor atoms) often has a higher group than the whole
complex.  Functions on the metal transform only under the metal's site, so the
metal-d part of an MO, c_d (coefficients on all metal d AOs), can be projected
onto the donor-set irreps without any atom permutation:

    w_Γ = tr(c_dᵀ S_dd P^d_Γ c_d) / tr(c_dᵀ S_dd c_d),
    P^d_Γ = (d_Γ/|G|) Σ_g χ_Γ(g)* D^(2)(g) ⊕ … (one D block per metal d shell).

``d_norm`` = tr(c_dᵀ S_dd c_d)/n is the squared norm of that d part (not a
population); it tells how much there was to project.

Public API
----------
donor_atoms(positions, metal, factor=1.25) -> list[int]     atoms within factor × shortest M–X
donor_set_symmetry(symbols, positions, metal, donors=None, tol=1e-3) -> Symmetry
mol_donor_symmetry(mol, metal, donors=None, tol=1e-3) -> Symmetry  (AO frame of a Mole)
metal_d_indices(mol, metal) -> ndarray                       AO indices of the metal d shells
donor_set_labels(mol, result, mo_coeff, metal, donor_symmetry, threshold=0.9)
    -> list[DonorLabel]                                       one per set of ``result``
DonorLabel(indices, label, weight, weights, d_norm)
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .aorep import shell_rotation
from .detect import Symmetry, detect_point_group
from .label import MIXED, OrbitalLabels

__all__ = ["DonorLabel", "donor_atoms", "donor_set_symmetry", "mol_donor_symmetry",
           "metal_d_indices",
           "donor_set_labels"]


@dataclass
class DonorLabel:
    """Donor-set label of one exact-group set (``label`` is 'mixed' below threshold)."""

    indices: list[int]
    label: str
    weight: float
    weights: dict[str, float]
    d_norm: float


def donor_atoms(positions: np.ndarray, metal: int, factor: float = 1.25) -> list[int]:
    """Atoms closer to the metal than ``factor`` × the shortest metal–atom distance."""
    pos = np.asarray(positions, dtype=float)
    d = np.linalg.norm(pos - pos[metal], axis=1)
    d[metal] = np.inf
    return [int(i) for i in np.where(d <= factor * d.min())[0]]


def donor_set_symmetry(symbols: list[str], positions: np.ndarray, metal: int,
                       donors: list[int] | None = None, tol: float = 1e-3) -> Symmetry:
    """Point group of the metal plus its donor atoms; the metal must be a fixed point."""
    pos = np.asarray(positions, dtype=float)
    donors = donor_atoms(pos, metal) if donors is None else list(donors)
    idx = [metal] + donors
    sym = detect_point_group([symbols[i] for i in idx], pos[idx], tol=tol)
    if np.any(sym.permutation[:, 0] != 0):
        raise ValueError("the metal is not fixed by the donor-set group")
    return sym


def mol_donor_symmetry(mol, metal: int, donors: list[int] | None = None,
                       tol: float = 1e-3) -> Symmetry:
    """:func:`donor_set_symmetry` on a PySCF Mole, in the frame its AOs live in."""
    from pyscf.data.nist import BOHR
    return donor_set_symmetry([a[0] for a in mol._atom], np.asarray(mol.atom_coords()) * BOHR,
                              metal, donors, tol)


def metal_d_indices(mol, metal: int) -> np.ndarray:
    """AO indices of every d shell on atom ``metal`` (PySCF order)."""
    ao_loc = mol.ao_loc_nr()
    idx = []
    for ib in range(mol.nbas):
        if mol.bas_atom(ib) == metal and mol.bas_angular(ib) == 2:
            idx.extend(range(ao_loc[ib], ao_loc[ib + 1]))
    return np.array(idx, dtype=int)


def _d_projectors(mol, idx: np.ndarray, sym: Symmetry) -> np.ndarray:
    ncomp = 6 if mol.cart else 5
    nsh = len(idx) // ncomp
    g = sym.group
    reps = np.array([np.kron(np.eye(nsh), shell_rotation(2, op, cart=mol.cart))
                     for op in sym.ops])
    return np.array([np.einsum("g,gij->ij", g.projector_weights(lab), reps)
                     for lab in g.labels])


def donor_set_labels(mol, result: OrbitalLabels, mo_coeff: np.ndarray, metal: int,
                     donor_symmetry: Symmetry, threshold: float = 0.9,
                     ovlp: np.ndarray | None = None) -> list[DonorLabel]:
    """Label the metal-d part of every set of ``result`` in the donor-set group."""
    idx = metal_d_indices(mol, metal)
    if not len(idx):
        raise ValueError(f"atom {metal} carries no d shells")
    s = mol.intor_symmetric("int1e_ovlp") if ovlp is None else ovlp
    s_dd = s[np.ix_(idx, idx)]
    proj = _d_projectors(mol, idx, donor_symmetry)
    labels = donor_symmetry.group.labels
    out = []
    for es in result.sets:
        cd = np.asarray(mo_coeff)[np.ix_(idx, es.indices)]
        norm = float(np.trace(cd.T @ s_dd @ cd))
        if norm < 1e-12:
            out.append(DonorLabel(list(es.indices), MIXED, 0.0, {}, 0.0))
            continue
        w = np.array([np.trace(cd.T @ s_dd @ p @ cd) for p in proj]) / norm
        best = int(np.argmax(w))
        lab = labels[best] if w[best] >= threshold else MIXED
        out.append(DonorLabel(list(es.indices), lab, float(w[best]),
                              {k: float(v) for k, v in zip(labels, w)},
                              norm / len(es.indices)))
    return out
