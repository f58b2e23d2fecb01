"""Steering an SCF into a chosen d configuration.

From converged orbitals, the target occupation vector keeps every non-d MO as it
is, occupies in each d set the number of d-based MOs the target asks for
(already-occupied ones first, then the lowest), and restores the electron count
by aufbau among the non-d MOs.  Two ways to converge there:
- ``irrep_nelec``: fix the electron count per Abelian symmetry block (PySCF),
  possible when the blocks separate the sets;
- maximum-overlap method (Gilbert, Besley & Gill, J. Phys. Chem. A 112, 13164
  (2008); ``pyscf.scf.addons.mom_occ``) otherwise.
"""

from __future__ import annotations

from collections import Counter

import numpy as np

from dsplit.qc.dcharacter import SetPick


def target_occupation(mo_energy: np.ndarray, mo_occ: np.ndarray, picks: list[SetPick], target: list[int],
                      n_electrons: int, per_orbital: float = 1.0,
                      preferred: dict[str, list[int]] | None = None) -> np.ndarray:
    """Occupation vector with ``target[i]`` electrons in the d-based MOs of set i.

    ``per_orbital`` is 1 for a spin channel, 2 for a closed-shell restricted run.
    ``preferred`` optionally orders the MOs of a set (first = filled first).
    """
    occ = np.array(mo_occ, dtype=float).copy()
    d_mos = {m for p in picks for m in p.mo_indices}
    for p, n in zip(picks, target):
        order = (preferred or {}).get(p.label)
        if order is None:
            order = sorted(p.mo_indices, key=lambda m: (-mo_occ[m], mo_energy[m]))
        left = float(n)
        for m in order:
            take = min(per_orbital, left)
            occ[m] = take
            left -= take
    missing = n_electrons - occ.sum()
    others = [m for m in np.argsort(mo_energy) if m not in d_mos]
    if missing > 0:
        for m in others:
            if missing <= 0:
                break
            room = per_orbital - occ[m]
            if room > 0:
                add = min(room, missing)
                occ[m] += add
                missing -= add
    elif missing < 0:
        for m in reversed(others):
            if missing >= 0:
                break
            take = min(occ[m], -missing)
            occ[m] -= take
            missing += take
    return occ


def irrep_counts(orbsym_names: list[str], occ: np.ndarray) -> Counter:
    """Electrons per symmetry block for an occupation vector."""
    c: Counter = Counter()
    for name, n in zip(orbsym_names, occ):
        if n > 0:
            c[name] += float(n)
    return c


def orbital_symmetries(mf, mo_coeff: np.ndarray) -> list[str] | None:
    """PySCF's Abelian-subgroup label of each MO (None without symmetry)."""
    mol = mf.mol
    if not mol.symmetry:
        return None
    from pyscf import symm

    try:
        return list(symm.label_orb_symm(mol, mol.irrep_name, mol.symm_orb, mo_coeff, check=False))
    except Exception:
        return None


def maximum_overlap(mf, mo_coeff: np.ndarray, mo_occ: np.ndarray):
    """``mf`` holding, every cycle, the orbitals of most overlap with the occupied ``mo_coeff[:, mo_occ > 0]``.

    The maximum-overlap method (Gilbert, Besley & Gill, J. Phys. Chem. A 112, 13164 (2008)):
    orbital j is occupied when p_j = Σ_i |⟨ψ_i^ref|ψ_j⟩|² is among the largest.  Unrestricted
    and restricted-open runs use ``pyscf.scf.addons.mom_occ``; the restricted closed shell is
    done here, because PySCF 2.14's mom_occ gives each chosen orbital one electron there
    (water RHF/STO-3G: every orbital singly occupied, −46.42 instead of −74.96 Eh; measured).
    """
    from pyscf import scf

    if isinstance(mf, (scf.uhf.UHF, scf.rohf.ROHF)):
        return scf.addons.mom_occ(mf, mo_coeff, mo_occ)
    occ_ref = np.asarray(mo_occ)
    reference = np.asarray(mo_coeff)[:, occ_ref > 0]
    n_doubly = int(np.count_nonzero(occ_ref > 0))
    overlap = mf.get_ovlp()

    def get_occ(mo_energy=None, mo_coeff=None):
        c = mf.mo_coeff if mo_coeff is None else mo_coeff
        s = reference.T @ overlap @ c
        chosen = np.argsort(np.einsum("ij,ij->j", s, s), kind="stable")[::-1][:n_doubly]
        occ = np.zeros(c.shape[1])
        occ[chosen] = 2.0
        return occ

    mf.get_occ = get_occ
    return mf
