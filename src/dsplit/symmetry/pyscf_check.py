"""Correlate full-group labels to PySCF's Abelian labels and list disagreements.

PySCF (``symmetry=True``) labels orbitals in an Abelian group H (D2h, C2v, D2,
C2h, Cs, Ci, C2, C1; for linear molecules D∞h/C∞v whose irrep ids reduce to
D2h/C2v ids modulo 10).  Its operations 'C2x', 'sz', ... (``pyscf.symm.param``)
act in PySCF's frame: with A = ``mol._symm_axes`` (rows = PySCF axes in the input
frame) an operation h′ of that table is h = Aᵀ h′ A in the AO frame.  Each h must
be one of our operations; the correlation of a full-group irrep Γ to H is the
ordinary subduction (reduction formula) n_γ = (1/|H|) Σ_h χ_γ(h) χ_Γ(h)
(Cotton, *Chemical Applications of Group Theory*, 3rd ed. — from memory).

A labelled set with multiplicity k must show exactly k × (Γ ↓ H) among its
orbitals' PySCF labels.

Public API
----------
pyscf_abelian(mol) -> (group name, op matrices (|H|,3,3) in the AO frame,
                       irrep names, characters (n_irrep, |H|))
correlation(symmetry, mol) -> dict[str, dict[str, int]]       Γ → {PySCF irrep: count}
pyscf_orbsym(mol, mo_coeff) -> list[str]                      PySCF's own labels, Abelian
compare_with_pyscf(mol, result, mo_coeff=None, orbsym=None) -> list[Disagreement]
Disagreement(indices, energy, label, expected, found, reason)
"""
from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

import numpy as np

from .detect import Symmetry
from .label import MIXED, OrbitalLabels
from .ops import find_op

__all__ = ["Disagreement", "pyscf_abelian", "correlation", "pyscf_orbsym",
           "compare_with_pyscf"]

_LINEAR_ABELIAN = {"Dooh": "D2h", "Coov": "C2v"}


@dataclass
class Disagreement:
    """A set whose PySCF labels differ from the subduction of its full-group label."""

    indices: list[int]
    energy: float
    label: str
    expected: dict[str, int]
    found: dict[str, int]
    reason: str


def pyscf_abelian(mol) -> tuple[str, np.ndarray, list[str], np.ndarray]:
    """PySCF's Abelian group of ``mol`` with its operations in the AO frame."""
    from pyscf.symm import param
    if not mol.symmetry:
        raise ValueError("mol was built without symmetry")
    name = _LINEAR_ABELIAN.get(mol.groupname, mol.groupname)
    axes = np.asarray(mol._symm_axes, dtype=float)
    ops = np.array([axes.T @ np.asarray(param.D2H_OPS[o], dtype=float) @ axes
                    for o in param.OPERATOR_TABLE[name]])
    names = [row[0] for row in param.CHARACTER_TABLE[name]]
    chars = np.array([row[1:] for row in param.CHARACTER_TABLE[name]], dtype=float)
    return name, ops, names, chars


def correlation(symmetry: Symmetry, mol) -> dict[str, dict[str, int]]:
    """Subduction of every irrep of the full group onto PySCF's Abelian group."""
    _, h_ops, names, chars = pyscf_abelian(mol)
    idx = [find_op(symmetry.ops, h, atol=1e-5) for h in h_ops]
    if min(idx) < 0:
        raise ValueError(f"PySCF's {mol.groupname} is not a subgroup of the detected "
                         f"{symmetry.name} in the AO frame")
    g = symmetry.group
    out = {}
    for lab in g.labels:
        chi = g.op_chars(lab)[idx]
        n = chars @ chi / len(h_ops)
        if np.any(np.abs(n - np.round(n)) > 1e-6):
            raise ArithmeticError(f"non-integral subduction of {lab}")
        out[lab] = {nm: int(round(v)) for nm, v in zip(names, n) if round(v) > 0}
    return out


def pyscf_orbsym(mol, mo_coeff: np.ndarray) -> list[str]:
    """PySCF's Abelian label of every orbital (via ``pyscf.symm.label_orb_symm``)."""
    from pyscf import symm
    from pyscf.symm import param
    ids = symm.label_orb_symm(mol, mol.irrep_id, mol.symm_orb, mo_coeff)
    name = _LINEAR_ABELIAN.get(mol.groupname, mol.groupname)
    inv = {v: k for k, v in param.IRREP_ID_TABLE[name].items()}
    return [inv[int(i) % 10] for i in ids]


def compare_with_pyscf(mol, result: OrbitalLabels, mo_coeff: np.ndarray | None = None,
                       orbsym: list[str] | None = None) -> list[Disagreement]:
    """Sets whose PySCF labels are not k × (Γ ↓ H).  Pass ``orbsym`` (PySCF names) or
    ``mo_coeff`` (then :func:`pyscf_orbsym` is used).  'mixed' sets are skipped."""
    if orbsym is None:
        if mo_coeff is None:
            raise ValueError("give orbsym or mo_coeff")
        orbsym = pyscf_orbsym(mol, mo_coeff)
    table = correlation(result.symmetry, mol)
    out = []
    for es in result.sets:
        if es.label == MIXED:
            continue
        found = Counter(orbsym[i] for i in es.indices)
        k = es.multiplicity
        expected = {nm: int(round(v * k)) for nm, v in table[es.label].items()}
        if abs(k - round(k)) > 1e-3 or Counter(expected) != found:
            out.append(Disagreement(list(es.indices), es.energy, es.label, expected,
                                    dict(found), f"{es.label} ↓ {mol.groupname} differs"))
    return out
