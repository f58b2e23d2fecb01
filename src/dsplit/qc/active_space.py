"""The d-manifold active space as integrals: the input of an external CI/DMRG solver (FCIDUMP).

With n_c doubly occupied core orbitals C_c and n_a active orbitals C_a the electronic
Hamiltonian in the active space is (frozen-core CASCI; Roos, Taylor & Siegbahn, Chem.
Phys. 48, 157 (1980); PySCF ``mcscf.CASCI.get_h1eff`` / ``get_h2eff``)

    h'_tu = (C_aᵀ [h + J(D_c) − ½ K(D_c)] C_a)_tu,        D_c = 2 C_c C_cᵀ
    E_core = E_nuc + Σ_μν (h + ½ J(D_c) − ¼ K(D_c))_μν D_c,νμ
    (tu|vw) over the active orbitals,

with h the one-electron operator of the run (kinetic, nuclei, ECP, point-charge donors) and
exact four-index integrals (no density fitting, so the file does not depend on an auxiliary
basis).  The continuum solvent is not in the Hamiltonian: an FCIDUMP has no place for a
reaction field, and the d–d states differ little in it.

Default orbitals (:func:`ground_d_orbitals`): the five d-manifold MOs of the ground state
(α MOs for unrestricted runs) and, as core, the n_c = (N − n_d)/2 natural orbitals of the
ground density with the active space projected out,  Q D Q with Q = 1 − |a⟩⟨a| in Löwdin
orthogonalised AOs.  For RHF and ROHF that is exactly the doubly occupied non-d space; for
UHF it is the best doubly occupied approximation (its smallest occupation is recorded).
Any other active orbitals (e.g. state-averaged CASSCF ones) go in through
:func:`active_space_integrals` with their own core.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from dsplit.qc.records import Calculation

#: the lowest core natural occupation accepted as "doubly occupied" (common practice: near 2)
CORE_OCCUPATION_MIN = 1.9
FCI_CONV_TOL = 1e-12  # Eh; the energy is read to 1e-8 Eh


@dataclass
class ActiveSpace:
    """Frozen-core active-space Hamiltonian, its lowest CASCI energy, and where it came from."""

    h1: np.ndarray  # (n, n) effective one-electron integrals, Eh
    h2: np.ndarray  # (tu|vw) packed with 4-fold symmetry (PySCF ao2mo form)
    core_energy: float  # E_core incl. nuclear repulsion, Eh
    n_orbitals: int
    n_electrons: tuple[int, int]  # (α, β)
    orbsym: list[int] | None  # PySCF irrep ids of the active orbitals (None without symmetry)
    group: str | None
    state_irrep: int | None  # PySCF irrep id of the lowest CASCI root (largest-weight block when degenerate)
    casci_energy: float  # lowest eigenvalue with (α, β) electrons, Eh
    n_core: int
    source: str  # what the orbitals are
    mo_active: np.ndarray
    mo_core: np.ndarray
    core_occupation_min: float | None = None  # smallest natural occupation taken into the core
    notes: list[str] = field(default_factory=list)

    @property
    def multiplicity_ms(self) -> int:
        """2 M_S = N_α − N_β."""
        return self.n_electrons[0] - self.n_electrons[1]


def _lowdin(mol) -> tuple[np.ndarray, np.ndarray]:
    """(S^½, S^−½) of the AO overlap."""
    s = mol.intor_symmetric("int1e_ovlp")
    w, v = np.linalg.eigh(s)
    return (v * np.sqrt(w)) @ v.T, (v / np.sqrt(w)) @ v.T


def core_from_density(mol, dm_total: np.ndarray, mo_active: np.ndarray, n_core: int) -> tuple[np.ndarray, float]:
    """(n_core core orbitals, their smallest natural occupation): natural orbitals of Q D Q (module docstring)."""
    s_half, s_inv_half = _lowdin(mol)
    a = s_half @ mo_active
    a, _ = np.linalg.qr(a)  # orthonormal active space in the Löwdin basis
    q = np.eye(len(a)) - a @ a.T
    d = q @ (s_half @ dm_total @ s_half) @ q
    occ, vec = np.linalg.eigh((d + d.T) / 2)
    order = np.argsort(occ)[::-1][:n_core]
    return s_inv_half @ vec[:, order], float(occ[order[-1]]) if n_core else 2.0


def ground_d_orbitals(calc: Calculation, table) -> tuple[np.ndarray, np.ndarray, tuple[int, int], float, str]:
    """(core, active, (nα, nβ), smallest core occupation, description) for the ground-state d manifold."""
    from dsplit.qc.records import spin_channels

    chans = spin_channels(calc.mf)
    ch = table.channels[0]
    idx = sorted(ch.manifold.indices, key=lambda m: ch.energies[m])
    mo_active = chans[0][0][:, idx]
    n_d = int(sum(calc.target_alpha) + sum(calc.target_beta))
    n_alpha, n_beta = calc.mol.nelec
    n_core = (calc.mol.nelectron - n_d) // 2
    dm = np.asarray(calc.mf.make_rdm1())
    dm = dm.sum(axis=0) if dm.ndim == 3 else dm
    mo_core, occ_min = core_from_density(calc.mol, dm, mo_active, n_core)
    spin = "α " if calc.unrestricted else ""
    what = (f"the {len(idx)} {spin}d-manifold MOs of the ground state; core: {n_core} doubly occupied "
            "natural orbitals of the ground density outside them")
    return mo_core, mo_active, (n_alpha - n_core, n_beta - n_core), occ_min, what


def hamiltonian_scf(calc: Calculation):
    """A plain HF object of the run's molecule (no symmetry, density fitting or solvent), point charges kept.

    It only supplies h, J, K and the nuclear energy of the CASCI Hamiltonian.
    """
    from pyscf import scf

    from dsplit.qc.setup import point_charges

    mol = calc.mol.copy()
    mol.symmetry = False
    mol.verbose = 0
    mol.output = None
    mol.build(False, False)
    mf = scf.RHF(mol) if mol.spin == 0 else scf.ROHF(mol)
    coords, charges = point_charges(calc.complex)
    if len(charges):
        from pyscf import qmmm

        mf = qmmm.mm_charge(mf, coords, charges)
    return mf


def active_orbsym(mol, mo_active: np.ndarray) -> tuple[list[int] | None, str | None]:
    """PySCF irrep ids of the active orbitals in the run's Abelian group, or (None, None)."""
    if not mol.symmetry or mol.groupname == "C1":
        return None, None
    from pyscf import symm

    try:
        ids = symm.label_orb_symm(mol, mol.irrep_id, mol.symm_orb, mo_active, tol=1e-5)
    except ValueError:  # orbitals that mix blocks (e.g. a CASSCF run without symmetry)
        return None, None
    return [int(i) for i in ids], str(mol.groupname)


def active_space_integrals(calc: Calculation, mo_active: np.ndarray, mo_core: np.ndarray,
                           n_electrons: tuple[int, int], source: str) -> ActiveSpace:
    """Frozen-core Hamiltonian over ``mo_active`` (core ``mo_core``) and its lowest CASCI energy."""
    from pyscf import fci, mcscf

    mf = hamiltonian_scf(calc)
    n_act, n_core = mo_active.shape[1], mo_core.shape[1]
    if calc.mol.nelectron - 2 * n_core != sum(n_electrons):
        raise ValueError(f"{n_core} core orbitals and {n_electrons} active electrons do not add up to "
                         f"{calc.mol.nelectron}")
    mc = mcscf.CASCI(mf, n_act, n_electrons)
    mo = np.hstack([mo_core, mo_active])
    h1, e_core = mc.get_h1eff(mo)
    h2 = mc.get_h2eff(mo)
    solver = fci.direct_spin1.FCI()
    solver.conv_tol = FCI_CONV_TOL
    e_cas, ci = solver.kernel(h1, h2, n_act, n_electrons, ecore=e_core)
    orbsym, group = active_orbsym(calc.mol, mo_active)
    state_irrep = None if orbsym is None else int(fci.addons.guess_wfnsym(ci, n_act, n_electrons, orbsym))
    return ActiveSpace(np.asarray(h1), np.asarray(h2), float(e_core), n_act, tuple(int(x) for x in n_electrons),
                       orbsym, group, state_irrep, float(e_cas), n_core, source, mo_active, mo_core)


def ground_d_active_space(calc: Calculation, table) -> ActiveSpace:
    """:func:`active_space_integrals` over the ground state's five d-manifold MOs (module docstring)."""
    mo_core, mo_active, nelec, occ_min, what = ground_d_orbitals(calc, table)
    space = active_space_integrals(calc, mo_active, mo_core, nelec, what)
    space.core_occupation_min = occ_min
    if occ_min < CORE_OCCUPATION_MIN:
        space.notes.append(f"the smallest core natural occupation is {occ_min:.3f} (< {CORE_OCCUPATION_MIN}): "
                           "the ground density is not a closed core plus the d manifold")
    return space
