"""Ligand-field parameters (h, Δ, B, C, β) fitted to the states of a multiplet calculation.

Input: a MultipletRecord from qc/multiplet.py (SA-CASSCF/NEVPT2 over the five d-based MOs;
duck-typed here: ``n_electrons``, ``active_d_projection``, ``active_d_weight``, ``states``
with ``multiplicity``, ``ms2``, ``energy_casscf_hartree``, ``energy_nevpt2_hartree``, ``ci``,
``converged``, ``verified``).  Each CI vector is carried from the active orbitals to the frame
d determinants (models.determinants.rotate_ci with U = active_d_projection), and the dⁿ model is
fitted by models.multiplet_lsq (the ab initio ligand-field route of Atanasov, Ganyushin,
Sivalingam & Neese, Struct. Bond. 143, 149 (2012)): Löwdin-orthonormalised states per
(2S+1, M_S) block, one constant shared by all blocks.

Output in cm⁻¹: the traceless 5×5 h, its five eigenvalues (the fitted d levels, barycentre 0),
each level's d set (the set whose orbitals hold most of its eigenvector, each set filled to its
size), set means, Δ = highest − lowest set mean when the geometry has two sets, B, C, β, and the
RMS deviation of the fitted model's state energies from the computed ones.

describe_states labels each computed state: energy above the lowest state, the irrep of its
degenerate group (states of one block within ``degeneracy_cm1`` at CASSCF; character
χ(g) = tr(Ψ̃ᵀ R(g) Ψ̃) of the group's Löwdin-orthonormalised frame-d vectors, reduced with the
point group's table; None when the characters do not reduce to whole irreps, i.e. the
calculation broke the symmetry) and its d-set configuration weights.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from dsplit.models.aom import D_ORBITALS
from dsplit.models.determinants import rotate_ci
from dsplit.models.free_ion import nephelauxetic_ratio
from dsplit.models.multiplet import (FrameSymmetry, assign_to_sets, configuration_weights,
                                     determinant_representation, set_pairs)
from dsplit.models.multiplet_lsq import StateBlock, UnderdeterminedFit, fit_effective_hamiltonian
from dsplit.units import hartree_to_cm1

__all__ = ["ComputedState", "LigandFieldFit", "UnderdeterminedFit", "describe_states", "fit_ligand_field",
           "record_blocks"]

#: an active orbital with less metal-d weight than this is flagged (common practice)
LOW_D_WEIGHT = 0.6


@dataclass(frozen=True)
class LigandFieldFit:
    """The ligand-field Hamiltonian fitted to computed multiplet states (cm⁻¹)."""

    h_cm1: np.ndarray  # 5×5 over aom.D_ORBITALS, traceless
    levels_cm1: tuple[float, ...]  # eigenvalues of h, ascending
    level_sets: tuple[str, ...]  # d set of each level
    set_energies_cm1: dict[str, float]  # mean level per d set
    delta_cm1: float | None  # highest − lowest set mean (two-set geometries only)
    b_cm1: float | None
    c_cm1: float | None
    beta: float | None
    residual_cm1: float  # RMS of model − computed state energies
    source: str  # 'NEVPT2' or 'CASSCF'
    fitted: tuple[str, ...]  # among 'h', 'B', 'C'
    held: dict[str, str] = field(default_factory=dict)
    n_states: int = 0
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """The result.json ``ligand_field`` block."""
        return {"delta_cm1": self.delta_cm1, "h_cm1": np.asarray(self.h_cm1).tolist(), "B_cm1": self.b_cm1, "C_cm1": self.c_cm1, "beta": self.beta,
                "residual_cm1": self.residual_cm1, "levels_cm1": list(self.levels_cm1),
                "level_sets": list(self.level_sets), "set_energies_cm1": dict(self.set_energies_cm1),
                "source": self.source, "fitted": list(self.fitted), "held": dict(self.held),
                "n_states": self.n_states, "notes": list(self.notes)}


def _energy(state: Any, energy: str) -> float:
    value = state.energy_nevpt2_hartree if energy == "nevpt2" else state.energy_casscf_hartree
    if value is None:
        raise ValueError(f"state 2S+1 = {state.multiplicity} has no {energy.upper()} energy; "
                         "fit with energy='casscf'")
    return float(value)


def record_blocks(record: Any, energy: str = "nevpt2") -> list[StateBlock]:
    """The record's states as StateBlocks over the frame d determinants, energies in cm⁻¹ above the lowest."""
    if energy not in ("nevpt2", "casscf"):
        raise ValueError(f"energy must be 'nevpt2' or 'casscf', not {energy!r}")
    u = np.asarray(record.active_d_projection, dtype=float)
    n = int(record.n_electrons)
    lowest = min(_energy(s, energy) for s in record.states)
    groups: dict[tuple[int, int], list[tuple[np.ndarray, float]]] = {}
    for s in record.states:
        vec = rotate_ci(s.ci, u, n, int(s.ms2))
        groups.setdefault((int(s.multiplicity), int(s.ms2)), []).append(
            (vec, hartree_to_cm1(_energy(s, energy) - lowest)))
    return [StateBlock(m, ms2, np.array([v for v, _ in items]), np.array([e for _, e in items]))
            for (m, ms2), items in sorted(groups.items())]


def fit_ligand_field(record: Any, d_sets: Sequence, energy: str = "nevpt2", c_over_b: float | None = None,
                     metal: str | None = None, oxidation_state: int | None = None,
                     held_b_cm1: float | None = None) -> LigandFieldFit:
    """Fit h, B, C to a verified MultipletRecord (module docstring).

    ``d_sets``: DSet-like objects (``.label``, ``.orbitals`` names from aom.D_ORBITALS) in the
    frame of the record, e.g. chem.counting.d_sets(polyhedron).  ``c_over_b``: None fits C when
    the states fix it (else holds 4.5); a number holds C/B.  ``metal``/``oxidation_state`` give β.
    Raises ValueError for an unconverged/unverified record, UnderdeterminedFit when the states
    cannot fix h.
    """
    if not (record.converged and record.verified):
        raise ValueError("the multiplet calculation is not converged and verified; no ligand-field fit")
    fit = fit_effective_hamiltonian(record_blocks(record, energy), int(record.n_electrons), c_over_b, held_b_cm1)
    w, v = np.linalg.eigh(fit.h)
    d_sets = set_pairs(d_sets)
    labels = [lab for lab, _ in d_sets]
    owner = assign_to_sets(v, d_sets)
    set_e = {lab: float(np.mean([w[j] for j in range(5) if owner[j] == k])) for k, lab in enumerate(labels)}
    notes = []
    weights = [float(x) for x in record.active_d_weight]
    low = [f"{k + 1} ({x:.2f})" for k, x in enumerate(weights) if x < LOW_D_WEIGHT]
    if low:
        notes.append("active orbitals with little metal-d weight: " + ", ".join(low)
                     + "; the fitted h absorbs the metal–ligand mixing")
    for j in range(5):
        weight = sum(v[D_ORBITALS.index(o), j] ** 2 for o in d_sets[owner[j]][1])
        if weight < 0.5:
            notes.append(f"level {j + 1} is only {weight:.0%} in its d set {labels[owner[j]]}")
    return LigandFieldFit(
        h_cm1=fit.h, levels_cm1=tuple(float(x) for x in w), level_sets=tuple(labels[k] for k in owner),
        set_energies_cm1=set_e,
        delta_cm1=(max(set_e.values()) - min(set_e.values())) if len(set_e) == 2 else None,
        b_cm1=fit.b, c_cm1=fit.c, beta=nephelauxetic_ratio(fit.b, metal, oxidation_state),
        residual_cm1=fit.residual, source=energy.upper(), fitted=fit.fitted,
        held=fit.held, n_states=fit.n_states, notes=tuple(notes))



@dataclass(frozen=True)
class ComputedState:
    """One computed multiplet state, labelled (energies in cm⁻¹ above the lowest state)."""

    index: int  # position in record.states
    multiplicity: int
    energy_cm1: float
    irrep: str | None  # e.g. 'T2g' (None: no whole irrep, symmetry broken or no group given)
    configurations: tuple[tuple[str, float], ...]  # d-set configurations, weight ≥ 0.05
    d_weight: float  # ‖rotated CI vector‖²: the part of the state inside the frame d determinants

    def to_dict(self, method: str) -> dict[str, Any]:
        """The result.json ``multiplet_states`` row."""
        return {"energy_cm1": self.energy_cm1, "multiplicity": self.multiplicity, "irrep": self.irrep,
                "method": method, "configurations": [{"configuration": c, "weight": w}
                                                     for c, w in self.configurations]}


def _group_irrep(vectors: np.ndarray, reps: np.ndarray, symmetry: FrameSymmetry) -> str | None:
    v = _lowdin(vectors.T)
    chars = np.einsum("ia,gij,ja->g", v, reps, v)
    counts = symmetry.group.decompose(chars)
    if any(abs(n - round(n)) > 0.1 for n in counts.values()):
        return None
    labels = [symmetry.label(k) for k, n in counts.items() for _ in range(int(round(n)))]
    return "+".join(lab[:1].upper() + lab[1:] for lab in labels) or None


def _lowdin(v: np.ndarray) -> np.ndarray:
    w, u = np.linalg.eigh(v.T @ v)
    return v @ (u / np.sqrt(w)) @ u.T


def describe_states(record: Any, d_sets: Sequence, symmetry: FrameSymmetry | None = None,
                    energy: str = "nevpt2", degeneracy_cm1: float = 10.0) -> tuple[ComputedState, ...]:
    """Energy, irrep and d-set configurations of every state of the record (module docstring).

    ``symmetry``: the complex's point group with its operations in the frame of the record
    (e.g. FrameSymmetry(s.group, s.ops, s.linear) from symmetry.detect_point_group); None
    leaves ``irrep`` None.  Energies from ``energy`` ('nevpt2' or 'casscf'); degenerate groups
    are formed from the CASSCF energies (the CI vectors are CASSCF's).
    """
    u = np.asarray(record.active_d_projection, dtype=float)
    n = int(record.n_electrons)
    lowest = min(_energy(s, energy) for s in record.states)
    vecs = [rotate_ci(s.ci, u, n, int(s.ms2)) for s in record.states]
    irreps: dict[int, str | None] = {}
    if symmetry is not None:
        blocks: dict[tuple[int, int], list[int]] = {}
        for i, s in enumerate(record.states):
            blocks.setdefault((int(s.multiplicity), int(s.ms2)), []).append(i)
        for (_, ms2), members in blocks.items():
            reps = determinant_representation(symmetry, n, ms2)
            members.sort(key=lambda i: record.states[i].energy_casscf_hartree)
            groups: list[list[int]] = []
            for i in members:
                e = hartree_to_cm1(record.states[i].energy_casscf_hartree)
                if groups and e - hartree_to_cm1(record.states[groups[-1][-1]].energy_casscf_hartree) <= degeneracy_cm1:
                    groups[-1].append(i)
                else:
                    groups.append([i])
            for g in groups:
                label = _group_irrep(np.array([vecs[i].ravel() for i in g]), reps, symmetry)
                for i in g:
                    irreps[i] = label
    return tuple(ComputedState(index=i, multiplicity=int(s.multiplicity),
                               energy_cm1=hartree_to_cm1(_energy(s, energy) - lowest), irrep=irreps.get(i),
                               configurations=configuration_weights(vecs[i] / np.linalg.norm(vecs[i]), n,
                                                                    int(s.ms2), d_sets),
                               d_weight=float(np.sum(vecs[i] ** 2)))
                 for i, s in enumerate(record.states))
