"""Metal-d character of MOs and the d configuration they describe.

Each MO is expanded in meta-Löwdin orthogonalised AOs (Sun et al., J. Chem.
Theory Comput. 10, 3784 (2014); ``pyscf.lo.orth_ao(mol, 'meta_lowdin')``), which
keep atomic character; the weight of MO i on metal d component k is
w_ki = Σ_shells (Uᵀ S C)²_{(shell,k), i}.  For each d set of the geometry (e.g.
t2g = {xy, yz, xz}) the g MOs with the largest weight on that set are its
d-based (antibonding) orbitals; the set's occupation is the sum of theirs.  This
is the configuration check the engine runs after every SCF.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from dsplit.chem.counting import DSet
from dsplit.models.aom import D_ORBITALS

_PYSCF_D_NAMES = {"xy": "xy", "yz": "yz", "z^2": "z2", "xz": "xz", "x2-y2": "x2-y2"}


def valence_d_shell(mol, metal_atom: int = 0) -> str:
    """PySCF's label of the metal's valence d shell: "3d", "4d" or "5d" (period − 1).

    PySCF numbers shells after an ECP core (``mol.ao_labels``), so the label is the same with
    and without an ECP; in meta-Löwdin AOs that shell is the valence (minimal-basis-like) one.
    """
    from ase.data import atomic_numbers

    z = atomic_numbers[mol.atom_pure_symbol(metal_atom)]
    period = 4 if z <= 36 else 5 if z <= 54 else 6 if z <= 86 else 7
    return f"{period - 1}d"


def metal_d_indices(mol, metal_atom: int = 0, valence_only: bool = False) -> dict[str, list[int]]:
    """AO indices of each real d component on the metal: all d shells, or only the valence one
    (``valence_only``; without an ECP a 4d/5d metal's filled inner d shells are left out)."""
    valence = valence_d_shell(mol, metal_atom) if valence_only else None
    out: dict[str, list[int]] = {k: [] for k in D_ORBITALS}
    for i, (atom, _sym, shell, comp) in enumerate(mol.ao_labels(fmt=False)):
        if atom == metal_atom and shell.endswith("d") and comp in _PYSCF_D_NAMES \
                and (valence is None or shell == valence):
            out[_PYSCF_D_NAMES[comp]].append(i)
    return out


def orthogonal_projector(mol) -> np.ndarray:
    """Uᵀ S: maps MO coefficients onto meta-Löwdin orthogonal AOs."""
    from pyscf import lo

    u = lo.orth_ao(mol, "meta_lowdin")
    return u.T @ mol.intor_symmetric("int1e_ovlp")


def d_weights(mol, mo_coeff: np.ndarray, projector: np.ndarray | None = None) -> np.ndarray:
    """(5, nmo) weights of every MO on the metal d components, in D_ORBITALS order."""
    proj = orthogonal_projector(mol) if projector is None else projector
    c = proj @ mo_coeff
    idx = metal_d_indices(mol)
    return np.array([np.sum(c[idx[k]] ** 2, axis=0) for k in D_ORBITALS])


def d_amplitudes(mol, mo_coeff: np.ndarray, projector: np.ndarray, mos: list[int]) -> np.ndarray:
    """(5, len(mos)) signed amplitudes of MOs ``mos`` on the frame d orbitals (D_ORBITALS order).

    Each frame orbital k has one amplitude per metal d shell (3d, 4d … of the basis); the
    shells are combined by the one shell vector u that carries most of these MOs' d
    amplitude (leading singular vector of the shells × (components · MOs) array), so the
    five results transform together as one d shell under rotations.
    """
    idx = metal_d_indices(mol)
    amp = projector @ np.asarray(mo_coeff)[:, list(mos)]
    shells = np.stack([amp[idx[k]] for k in D_ORBITALS], axis=1)  # (n_shells, 5, n)
    u, _, _ = np.linalg.svd(shells.reshape(shells.shape[0], -1), full_matrices=False)
    return np.einsum("s,skn->kn", u[:, 0], shells)


@dataclass
class SetPick:
    """The d-based MOs of one d set for one spin."""

    label: str
    mo_indices: list[int]
    weights: list[float]  # weight of each picked MO on the set's d subspace
    occupation: float


#: only MOs below ε_LUMO + this (Eh) can be d-based: inner-d and polarisation virtuals of
#: split-valence bases carry large d weights higher up (common practice: valence window).
#: Measured on [CrF6]3− (B3LYP/def2-SVP, PCM): the α t2g (occupied, −0.142 Eh) have d weight 0.71,
#: the second-d-shell virtuals at +0.755 Eh (0.67 Eh above the LUMO) 0.83 — a 1.0 Eh window let them
#: in and the check found t2g^0; 0.5 Eh keeps them out
VALENCE_WINDOW_ABOVE_LUMO = 0.5


def pick_d_based(weights: np.ndarray, mo_occ: np.ndarray, sets: list[DSet],
                 mo_energy: np.ndarray | None = None) -> list[SetPick]:
    """Greedy pick: the MOs with the largest weight on each set's d subspace (no MO twice),
    among the MOs of the valence window when energies are given."""
    per_set = []
    for s in sets:
        rows = [D_ORBITALS.index(o) for o in s.orbitals]
        per_set.append(weights[rows].sum(axis=0))
    per_set = np.array(per_set)
    if mo_energy is not None:
        e = np.asarray(mo_energy)
        empty = e[np.asarray(mo_occ) < 1e-6]
        top = (empty.min() if len(empty) else e.max()) + VALENCE_WINDOW_ABOVE_LUMO
        per_set[:, e > top] = -1.0  # never picked while a valence MO is left
    need = {i: s.degeneracy for i, s in enumerate(sets)}
    chosen: dict[int, list[int]] = {i: [] for i in range(len(sets))}
    used: set[int] = set()
    order = np.dstack(np.unravel_index(np.argsort(-per_set, axis=None), per_set.shape))[0]
    for set_i, mo in order:
        if need[set_i] and mo not in used:
            chosen[set_i].append(int(mo))
            used.add(int(mo))
            need[set_i] -= 1
        if not any(need.values()):
            break
    picks = []
    for i, s in enumerate(sets):
        mos = sorted(chosen[i])
        picks.append(SetPick(s.label, mos, [float(per_set[i, m]) for m in mos], float(np.sum(mo_occ[mos]))))
    return picks


def spin_resolved_target(sets: list[DSet], occupations: list[int], multiplicity: int) -> tuple[list[int], list[int]]:
    """α and β electrons per d set for a configuration at 2S+1 (Hund's rule within sets).

    Start from the most unpaired distribution per set (α = min(n, g)); pair up in
    the highest sets until the number of unpaired electrons is 2S.
    """
    alpha = [min(n, s.degeneracy) for n, s in zip(occupations, sets)]
    beta = [n - a for n, a in zip(occupations, alpha)]
    excess = sum(alpha) - sum(beta) - (multiplicity - 1)
    for i in reversed(range(len(sets))):
        while excess >= 2 and alpha[i] - beta[i] >= 2:
            alpha[i] -= 1
            beta[i] += 1
            excess -= 2
    if excess != 0:
        raise ValueError("configuration and multiplicity are incompatible")
    return alpha, beta


#: MOs of one d set within this many Eh of each other (same occupation and Abelian block) count as one
#: degenerate level; converged ideal complexes split a degenerate set by < 1e-6 Eh (measured, common practice)
DEGENERATE_EH = 1e-4


def align_degenerate_to_frame(mol, mo_coeff: np.ndarray, mo_energy: np.ndarray, mo_occ: np.ndarray,
                              picks: list[SetPick], sets: list[DSet], projector: np.ndarray,
                              symmetries: list[str] | None = None) -> int:
    """Rotate degenerate d-based MOs in place so each is one frame d orbital; returns how many groups moved.

    A degenerate level in one Abelian block (z² and x²−y² share Ag of D2h and A of D2) comes out of
    the eigensolver in an arbitrary mix.  For a group G of such MOs, b_kj = r_k · a_kj where a_kj are
    MO j's meta-Löwdin amplitudes on frame orbital k (all d shells) and r_k their leading singular
    vector; the orthogonal R maximising tr(B R) is R = V Uᵀ from B = U Σ Vᵀ (orthogonal Procrustes,
    Schönemann, Psychometrika 31, 1 (1966)).  C_G → C_G R leaves the density, the energy and every
    orbital energy unchanged (same level, same occupation).
    """
    idx = metal_d_indices(mol)
    moved = 0
    for pick, dset in zip(picks, sets):
        mos = sorted(pick.mo_indices, key=lambda m: mo_energy[m])
        groups: list[list[int]] = []
        for m in mos:
            g = groups[-1] if groups else None
            if (g and abs(mo_energy[m] - mo_energy[g[0]]) < DEGENERATE_EH and mo_occ[m] == mo_occ[g[0]]
                    and (symmetries is None or symmetries[m] == symmetries[g[0]])):
                g.append(m)
            else:
                groups.append([m])
        for g in groups:
            if len(g) < 2 or len(g) > len(dset.orbitals):
                continue
            amp = projector @ mo_coeff[:, g]
            rows = []
            for k in dset.orbitals:
                a = amp[idx[k]]  # (n_shells, n)
                u, _, _ = np.linalg.svd(a, full_matrices=False)
                rows.append(u[:, 0] @ a)
            b = np.array(rows)
            keep = np.argsort(-np.linalg.norm(b, axis=1))[: len(g)]
            u, _, vt = np.linalg.svd(b[np.sort(keep)])
            r = vt.T @ u.T
            mo_coeff[:, g] = mo_coeff[:, g] @ r
            moved += 1
    return moved


def align_manifold_to_frame(mf, picks: list[list[SetPick]], sets: list[DSet], projector: np.ndarray) -> None:
    """Rotate each degenerate d level of every spin channel onto the frame d orbitals, in place.

    Called once by the calculation stage on its own fresh mean-field object, before the
    Calculation record is handed on (later stages never change orbitals).
    """
    from dsplit.qc.targeting import orbital_symmetries

    occ = np.asarray(mf.mo_occ)
    if occ.ndim == 2:  # mf.mo_coeff[s] is the stored array (or a view of it): rotated in place
        channels = [(mf.mo_coeff[s], occ[s], np.asarray(mf.mo_energy[s])) for s in (0, 1)]
    else:  # restricted (closed or open shell): one orbital set, aligned once
        channels = [(mf.mo_coeff, occ, np.asarray(mf.mo_energy))]
    for ch, (c, o, e) in enumerate(channels):
        align_degenerate_to_frame(mf.mol, c, e, o, picks[ch], sets, projector, orbital_symmetries(mf, c))
