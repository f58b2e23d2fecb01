"""dsplit.symmetry — point groups, detection, AO representations, MO labels.

PySCF labels orbitals only in Abelian subgroups (D2h for Oh); this package
labels them in the full point group and measures nothing else.

Modules (each documents its formulas and API):

* :mod:`.ops`        3×3 operations (rotation, reflection, improper, describe)
* :mod:`.groups`     point groups in the builder's standard frame, classes,
                     character tables (computed), Mulliken labels
* :mod:`.chartable`  Burnside–Dixon characters; :mod:`.mulliken` labelling rules
* :mod:`.detect`     ``detect_point_group`` (numpy only, no PySCF); the
                     element search itself is in :mod:`.elements`
* :mod:`.salc`       ligand σ/π reducible representations, metal s/p/d irreps
* :mod:`.aorep`      operations on a PySCF AO basis          (imports PySCF lazily)
* :mod:`.label`      ``label_orbitals``                       (PySCF)
* :mod:`.pyscf_check` correlation with PySCF's Abelian labels (PySCF)
* :mod:`.donor`      donor-set labels of the metal-d part     (PySCF)

Importing this package (or ``detect``, ``groups``, ``salc``) never imports
PySCF; the PySCF-facing names below are loaded on first use.

Main entry points::

    point_group(name) -> PointGroup
    detect_point_group(symbols, positions, tol=1e-3, x_hint=None) -> Symmetry
    ligand_salcs(symmetry, metal_position, donor_positions, tol=1e-3) -> LigandSalcs
    mol_symmetry(mol, tol=1e-3) -> Symmetry
    ao_representation(mol, symmetry) -> ndarray (|G|, nao, nao)
    label_orbitals(mol, mo_coeff, mo_energy, symmetry=None, *, degen_tol=1e-3,
                   merge_tol=None, threshold=0.9, close_tol=1e-2, tol=1e-3) -> OrbitalLabels
    compare_with_pyscf(mol, result, mo_coeff=None, orbsym=None) -> list[Disagreement]
    mol_donor_symmetry(mol, metal, donors=None, tol=1e-3) -> Symmetry
    donor_set_labels(mol, result, mo_coeff, metal, donor_symmetry, threshold=0.9)
        -> list[DonorLabel]
"""
from __future__ import annotations

import importlib

from .detect import Symmetry, detect_point_group
from .groups import Irrep, PointGroup, linear_label, point_group
from .salc import LigandSalcs, ligand_salcs, metal_irreps

_LAZY = {
    "mol_symmetry": "aorep", "ao_representation": "aorep", "shell_rotation": "aorep",
    "label_orbitals": "label", "OrbitalLabels": "label", "OrbitalSet": "label",
    "display_label": "label", "MIXED": "label",
    "compare_with_pyscf": "pyscf_check", "correlation": "pyscf_check",
    "pyscf_orbsym": "pyscf_check", "Disagreement": "pyscf_check",
    "donor_set_labels": "donor", "donor_set_symmetry": "donor",
    "mol_donor_symmetry": "donor", "donor_atoms": "donor", "DonorLabel": "donor",
    "metal_d_indices": "donor",
}

__all__ = ["Symmetry", "detect_point_group", "Irrep", "PointGroup", "linear_label",
           "point_group", "LigandSalcs", "ligand_salcs", "metal_irreps", *_LAZY]


def __getattr__(name: str):
    if name in _LAZY:
        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
