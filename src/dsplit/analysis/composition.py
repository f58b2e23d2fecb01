"""Orbital composition: the share of each MO on metal s / p / d, on each ligand, on each atom.

Default method: intrinsic atomic orbitals (IAO; Knizia, J. Chem. Theory Comput. 9,
4834 (2013)), built by `pyscf.lo.iao.iao` from the *occupied* orbitals of one spin
and Löwdin-orthonormalised.  The fraction of MO φ_i on IAO a is

    w_ai = |⟨a|φ_i⟩|²,      other_i = 1 − Σ_a w_ai  (≥ 0, the part outside the IAO space).

Why this also serves the virtual orbitals.  With B the minimal reference basis
(MINAO) projected into the working basis and O the occupied space, Knizia's IAOs
span O ⊕ (1−O)(B ⊖ Õ), Õ ⊂ B the depolarised occupied orbitals.  When the working
basis represents MINAO exactly this is O ⊕ (B ∩ O⊥): the occupied space plus the part
of the free-atom minimal basis orthogonal to it, which is the maximum-overlap
valence-virtual space (overlap 1 with B; cf. Lu et al., J. Chem. Phys. 120, 2629
(2004), citation from memory); in ordinary bases it is close (3-21G [TiF6]2−: virtual
weights differ by ≤ 2e-4).  Occupied MOs are described exactly (other = 0); a
virtual MO is described to the degree it is valence-like, and the remainder is
reported in `other` instead of being renormalised away.  Building IAOs from the
occupied plus "the lowest n_B − n_occ virtuals" instead is unsafe: in 3-21G [TiF6]2−
the three lowest virtuals are diffuse Ti 4p (t1u, outside MINAO) and the cut falls
inside the t2g set.

Alternative: method="mulliken", gross populations in the working AO basis
(Mulliken, J. Chem. Phys. 23, 1833 (1955)): w_μi = C_μi (S C)_μi; they sum to 1 but
may be negative and depend strongly on the basis.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np
from pyscf import gto, lo

D_COMPONENTS: tuple[str, ...] = ("xy", "yz", "z^2", "xz", "x2-y2")
"""PySCF's real-spherical d order; columns of `Composition.metal_d_components`."""

METHODS: tuple[str, ...] = ("iao", "mulliken")

AoLabel = tuple[int, str, str, str]


@dataclass(frozen=True)
class Composition:
    """Fractions (rows = MOs in the order given) for one spin channel."""

    method: str
    metal_index: int
    labels: tuple[AoLabel, ...]  # the functions `functions` refers to (IAO or AO)
    functions: np.ndarray  # (nmo, nfunc) share of each function
    per_atom: np.ndarray  # (nmo, natm)
    per_ligand: np.ndarray  # (nmo, nL)
    ligand: np.ndarray  # (nmo,) sum over ligands
    metal: np.ndarray  # (nmo,) all metal functions
    metal_s: np.ndarray  # (nmo,) every s shell of the metal (core + valence)
    metal_p: np.ndarray
    metal_d: np.ndarray
    metal_d_components: np.ndarray  # (nmo, 5) in D_COMPONENTS order
    other: np.ndarray  # (nmo,) outside the IAO space ("diffuse/other")

    @property
    def metal_relative(self) -> np.ndarray:
        """metal / (metal + ligand): the metal share of the described part (0 where none)."""
        total = self.metal + self.ligand
        return np.divide(self.metal, total, out=np.zeros_like(total), where=total > 1e-12)


def _check_ligand_map(natm: int, metal_index: int, ligand_of_atom: Sequence[int]) -> np.ndarray:
    ligand_of_atom = np.asarray(ligand_of_atom, dtype=int)
    if ligand_of_atom.shape != (natm,):
        raise ValueError(f"ligand_of_atom needs {natm} entries, got {ligand_of_atom.shape}")
    if not 0 <= metal_index < natm or ligand_of_atom[metal_index] != -1:
        raise ValueError("ligand_of_atom[metal_index] must be -1")
    others = np.delete(ligand_of_atom, metal_index)
    if others.size and others.min() < 0:
        raise ValueError("every atom but the metal must belong to a ligand (id >= 0)")
    return ligand_of_atom


def _iao_fractions(mol: gto.Mole, mo_coeff: np.ndarray, mo_occ: np.ndarray,
                   minao: str) -> tuple[np.ndarray, list[AoLabel]]:
    """w_ia = |⟨a|φ_i⟩|² over orthonormal IAOs from the occupied orbitals."""
    s = mol.intor_symmetric("int1e_ovlp")
    iaos = lo.iao.iao(mol, mo_coeff[:, mo_occ > 0], minao=minao)
    iaos = lo.vec_lowdin(iaos, s)
    proj = mo_coeff.T @ s @ iaos
    labels = lo.iao.reference_mol(mol, minao).ao_labels(fmt=False)
    return proj**2, labels


def _mulliken_fractions(mol: gto.Mole, mo_coeff: np.ndarray) -> tuple[np.ndarray, list[AoLabel]]:
    """Gross populations w_iμ = C_μi (S C)_μi of each (normalised) MO."""
    s = mol.intor_symmetric("int1e_ovlp")
    return (mo_coeff * (s @ mo_coeff)).T, mol.ao_labels(fmt=False)


def orbital_composition(mol: gto.Mole, mo_coeff: np.ndarray, mo_occ: np.ndarray,
                        metal_index: int, ligand_of_atom: Sequence[int],
                        method: str = "iao", minao: str = "minao") -> Composition:
    """Composition of every MO of one spin channel (mo_coeff: nao × nmo)."""
    if mol.cart:
        raise ValueError("orbital_composition needs spherical AOs (mol.cart=False)")
    mo_coeff = np.asarray(mo_coeff)
    mo_occ = np.asarray(mo_occ)
    if mo_coeff.ndim != 2 or mo_occ.shape != mo_coeff.shape[1:]:
        raise ValueError("one spin channel: mo_coeff (nao, nmo) and mo_occ (nmo,)")
    ligand_of_atom = _check_ligand_map(mol.natm, metal_index, ligand_of_atom)
    if method == "iao":
        w, labels = _iao_fractions(mol, mo_coeff, mo_occ, minao)
    elif method == "mulliken":
        w, labels = _mulliken_fractions(mol, mo_coeff)
    else:
        raise ValueError(f"method must be one of {METHODS}, got {method!r}")

    atom = np.array([lab[0] for lab in labels])
    l_char = np.array([lab[2][-1] for lab in labels])
    on_metal = atom == metal_index
    per_atom = w @ (atom[:, None] == np.arange(mol.natm)[None, :])
    n_lig = int(ligand_of_atom.max()) + 1
    per_ligand = per_atom @ (ligand_of_atom[:, None] == np.arange(n_lig)[None, :])
    is_d = on_metal & (l_char == "d")
    comp = np.array([lab[3] for lab in labels])
    d_components = np.stack([w[:, is_d & (comp == c)].sum(axis=1) for c in D_COMPONENTS], axis=1)
    return Composition(
        method=method, metal_index=metal_index, labels=tuple(tuple(lab) for lab in labels),
        functions=w, per_atom=per_atom, per_ligand=per_ligand,
        ligand=per_ligand.sum(axis=1), metal=per_atom[:, metal_index],
        metal_s=w[:, on_metal & (l_char == "s")].sum(axis=1),
        metal_p=w[:, on_metal & (l_char == "p")].sum(axis=1),
        metal_d=w[:, is_d].sum(axis=1), metal_d_components=d_components,
        other=1.0 - w.sum(axis=1),
    )


def composition_per_spin(mol: gto.Mole, mo_coeff: np.ndarray, mo_occ: np.ndarray,
                         metal_index: int, ligand_of_atom: Sequence[int],
                         method: str = "iao", minao: str = "minao") -> tuple[Composition, ...]:
    """One Composition for restricted (2-D mo_coeff), two (α, β) for unrestricted (3-D)."""
    mo_coeff = np.asarray(mo_coeff)
    if mo_coeff.ndim == 2:
        return (orbital_composition(mol, mo_coeff, mo_occ, metal_index, ligand_of_atom,
                                    method, minao),)
    return tuple(orbital_composition(mol, c, o, metal_index, ligand_of_atom, method, minao)
                 for c, o in zip(mo_coeff, np.asarray(mo_occ)))


def metal_ligand_overlap(mol: gto.Mole, mo_coeff: np.ndarray, metal_index: int) -> np.ndarray:
    """Metal–rest overlap population per MO (per electron), Mulliken 1955:

        OP_i = 2 Σ_{μ∈M} Σ_{ν∉M} C_μi S_μν C_νi

    > 0 bonding, < 0 antibonding between the metal and the ligands.
    """
    s = mol.intor_symmetric("int1e_ovlp")
    on_metal = np.array([lab[0] == metal_index for lab in mol.ao_labels(fmt=False)])
    c_m, c_l = mo_coeff[on_metal], mo_coeff[~on_metal]
    return 2.0 * np.einsum("mi,mn,ni->i", c_m, s[np.ix_(on_metal, ~on_metal)], c_l)
