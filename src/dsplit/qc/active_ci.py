"""Exact CI of one spin multiplicity in a small active space, as a PySCF FCI solver.

The five d orbitals hold at most C(5,3)·C(5,2) = 100 determinants at M_S = S, so H is built as a
matrix in that space (``direct_spin1.pspace`` with every determinant), S² once per electron count
(``spin_op.contract_ss`` on unit vectors), and H is diagonalised in the S(S+1) eigenspace of S².  Every state then
has pure spin by construction and no root can be missed, where an iterative solver with a spin
penalty (``fci.addons.fix_spin_``) relies on its start vectors.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
from pyscf.fci import cistring, direct_spin1, spin_op

SPIN_EIGENVALUE_TOL = 1e-6


class SpinAdaptedCI(direct_spin1.FCISolver):
    """The ``nroots`` lowest states of 2S+1 = ``multiplicity`` (CI vectors at M_S = S)."""

    def __init__(self, mol, multiplicity: int, nroots: int):
        super().__init__(mol)
        self.spin = multiplicity - 1
        self.nroots = nroots
        self.verbose = 0

    def kernel(self, h1e, eri, norb, nelec, ci0=None, ecore=0, **kwargs):
        n = int(np.sum(nelec))
        nelec = ((n + self.spin) // 2, (n - self.spin) // 2)
        na, nb = cistring.num_strings(norb, nelec[0]), cistring.num_strings(norb, nelec[1])
        ham = direct_spin1.pspace(h1e, eri, norb, nelec, np=na * nb)[1]  # every determinant, natural order
        space = _spin_eigenspace(norb, nelec, self.spin)
        e, c = np.linalg.eigh(space.T @ ((ham + ham.T) / 2) @ space)
        k = min(self.nroots, len(e))
        vecs = [(space @ c[:, i]).reshape(na, nb) for i in range(k)]
        self.converged = k == self.nroots
        energies = e[:k] + ecore
        self.eci, self.ci = (energies, vecs) if self.nroots > 1 else (energies[0], vecs[0])
        return self.eci, self.ci

    approx_kernel = kernel  # exact is cheap: the CASSCF micro-iterations use it too


@lru_cache(maxsize=32)
def _spin_eigenspace(norb: int, nelec: tuple[int, int], spin: int) -> np.ndarray:
    """Orthonormal basis (determinants × states) of the S(S+1) eigenspace of S², S = spin/2."""
    na, nb = cistring.num_strings(norb, nelec[0]), cistring.num_strings(norb, nelec[1])
    unit = np.eye(na * nb)
    ss = np.array([spin_op.contract_ss(v.reshape(na, nb), norb, nelec).ravel() for v in unit])
    s = spin / 2
    w, u = np.linalg.eigh((ss + ss.T) / 2)
    space = u[:, np.abs(w - s * (s + 1)) < SPIN_EIGENVALUE_TOL]
    space.setflags(write=False)
    return space


def spin_multiplicity(ci: np.ndarray, norb: int, nelec: tuple[int, int]) -> float:
    """2S+1 of a CI vector from ⟨S²⟩."""
    return float(spin_op.spin_square0(ci, norb, nelec)[1])
