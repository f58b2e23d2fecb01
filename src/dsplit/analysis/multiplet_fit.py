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
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from dsplit.models.aom import D_ORBITALS
from dsplit.models.determinants import rotate_ci
from dsplit.models.free_ion import nephelauxetic_ratio
from dsplit.models.multiplet import assign_to_sets
from dsplit.models.multiplet_lsq import StateBlock, UnderdeterminedFit, fit_effective_hamiltonian
from dsplit.models.units import hartree_to_cm1

__all__ = ["LigandFieldFit", "UnderdeterminedFit", "fit_ligand_field", "record_blocks"]

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
        return {"delta_cm1": self.delta_cm1, "B_cm1": self.b_cm1, "C_cm1": self.c_cm1, "beta": self.beta,
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
    labels = [s.label for s in d_sets]
    owner = assign_to_sets(v, d_sets)
    set_e = {lab: float(np.mean([w[j] for j in range(5) if owner[j] == k])) for k, lab in enumerate(labels)}
    notes = []
    weights = [float(x) for x in record.active_d_weight]
    low = [f"{k + 1} ({x:.2f})" for k, x in enumerate(weights) if x < LOW_D_WEIGHT]
    if low:
        notes.append("active orbitals with little metal-d weight: " + ", ".join(low)
                     + "; the fitted h absorbs the metal–ligand mixing")
    for j in range(5):
        weight = sum(v[D_ORBITALS.index(o), j] ** 2 for o in d_sets[owner[j]].orbitals)
        if weight < 0.5:
            notes.append(f"level {j + 1} is only {weight:.0%} in its d set {labels[owner[j]]}")
    return LigandFieldFit(
        h_cm1=fit.h, levels_cm1=tuple(float(x) for x in w), level_sets=tuple(labels[k] for k in owner),
        set_energies_cm1=set_e,
        delta_cm1=(max(set_e.values()) - min(set_e.values())) if len(set_e) == 2 else None,
        b_cm1=fit.b, c_cm1=fit.c, beta=nephelauxetic_ratio(fit.b, metal, oxidation_state),
        residual_cm1=fit.residual, source=energy.upper(), fitted=fit.fitted,
        held=fit.held, n_states=fit.n_states, notes=tuple(notes))

