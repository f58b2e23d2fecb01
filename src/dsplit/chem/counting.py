"""Electron counting: charge, dⁿ, electron totals, spin multiplicities, d configurations.

- Charge = oxidation state + Σ ligand charges (ionic model).
- dⁿ = group − oxidation state (see chem.elements).
- Allowed multiplicities 2S+1 for dⁿ: S from (n mod 2)/2 up to min(n, 10−n)/2.
- d configurations: the d sets of the geometry ordered by a σ/π angular overlap
  model (models.aom, eσ = 1, eπ = 0.15 eσ: a σ-donor with weak π-donation, common
  practice); the configuration of 2S unpaired electrons fills (n − 2S)/2 pairs into
  the lowest orbitals and 2S single electrons into the next (the lowest-orbital-energy
  configuration of that spin).  High spin is the largest S, low spin the smallest.
- Ionic valence count ("18-electron" style, common practice): dⁿ + 2 per σ-donor
  ligand; ligands counted by their donor valence shell only.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from dsplit.errors import InputError
from dsplit.models.aom import D_ORBITALS, aom_matrix

#: eπ/eσ used only to order the d sets of each geometry (see module docstring)
ORDERING_PI_RATIO = 0.15


@dataclass(frozen=True)
class DSet:
    """One set of d orbitals of a geometry: label, orbitals, model energy (eσ units)."""

    label: str
    orbitals: tuple[str, ...]
    energy: float

    @property
    def degeneracy(self) -> int:
        return len(self.orbitals)


def allowed_multiplicities(d_count: int) -> list[int]:
    """2S+1 values allowed for dⁿ (ascending)."""
    if not 0 <= d_count <= 10:
        raise InputError("complex.oxidation_state", f"d^{d_count} is impossible (0 ≤ n ≤ 10)")
    max_unpaired = min(d_count, 10 - d_count)
    return list(range(d_count % 2 + 1, max_unpaired + 2, 2))


def d_sets(directions: np.ndarray, d_set_labels) -> list[DSet]:
    """The d sets (label, frame orbitals) of donors along ``directions``, in ascending model energy.

    Energies from the σ/π AOM of the module docstring; ``d_set_labels`` pairs each label with
    its frame d orbitals (as ``geometry.polyhedra.Polyhedron.d_set_labels``).
    """
    diagonal = np.diag(aom_matrix(directions, 1.0, ORDERING_PI_RATIO))
    out = []
    for label, orbs in d_set_labels:
        idx = [D_ORBITALS.index(o) for o in orbs]
        # in the builder frame the AOM matrix is diagonal over each set's orbitals
        out.append(DSet(label, tuple(orbs), float(np.mean(diagonal[idx]))))
    return sorted(out, key=lambda s: s.energy)


def configuration_occupations(sets: list[DSet], d_count: int, multiplicity: int) -> list[int]:
    """Electrons per d set for dⁿ at 2S+1 (lowest-orbital-energy filling)."""
    unpaired = multiplicity - 1
    if multiplicity not in allowed_multiplicities(d_count):
        raise InputError("complex.multiplicity",
                         f"{multiplicity} is not allowed for d^{d_count}; allowed: "
                         f"{', '.join(map(str, allowed_multiplicities(d_count)))}")
    pairs = (d_count - unpaired) // 2
    orbitals = [i for i, s in enumerate(sets) for _ in range(s.degeneracy)]
    occ = [0] * len(sets)
    for k, set_index in enumerate(orbitals):
        if k < pairs:
            occ[set_index] += 2
        elif k < pairs + unpaired:
            occ[set_index] += 1
    return occ


def format_configuration(sets: list[DSet], occupations: list[int]) -> str:
    """e.g. 't2g^4 eg^2' (sets in ascending energy)."""
    return " ".join(f"{s.label}^{n}" for s, n in zip(sets, occupations))


def parse_configuration(text: str, sets: list[DSet], d_count: int,
                        field: str = "complex.configuration") -> list[int]:
    """Occupations per set from 'label^n label^n …'; checks labels, capacity and dⁿ."""
    by_label = {s.label: i for i, s in enumerate(sets)}
    occ = [0] * len(sets)
    allowed = " ".join(f"{s.label}^n" for s in sets)
    for token in text.split():
        label, sep, count = token.partition("^")
        if not sep or label not in by_label or not count.isdigit():
            raise InputError(field, f"cannot read '{token}'; write {allowed} with this geometry's sets")
        i = by_label[label]
        occ[i] = int(count)
        if occ[i] > 2 * sets[i].degeneracy:
            raise InputError(field, f"{label} holds at most {2 * sets[i].degeneracy} electrons, got {count}")
    if sum(occ) != d_count:
        raise InputError(field, f"'{text}' holds {sum(occ)} electrons but the metal is d^{d_count}")
    return occ


def spin_configurations(sets: list[DSet], d_count: int) -> dict[int, str]:
    """Configuration string for every allowed multiplicity of dⁿ."""
    return {m: format_configuration(sets, configuration_occupations(sets, d_count, m))
            for m in allowed_multiplicities(d_count)}


@dataclass(frozen=True)
class ElectronCount:
    charge: int
    d_count: int
    total_electrons: int
    ionic_valence_electrons: int
    multiplicities: list[int]
    high_spin: str
    low_spin: str


def count_electrons(metal_z: int, d_count: int, atomic_numbers: list[int], charge: int,
                    n_sigma_donors: int, sets: list[DSet]) -> ElectronCount:
    """All counts for a complex (ghost/point donors have Z = 0 and add nothing)."""
    mults = allowed_multiplicities(d_count)
    confs = spin_configurations(sets, d_count)
    return ElectronCount(
        charge=charge,
        d_count=d_count,
        total_electrons=int(sum(atomic_numbers)) - charge,
        ionic_valence_electrons=d_count + 2 * n_sigma_donors,
        multiplicities=mults,
        high_spin=confs[mults[-1]],
        low_spin=confs[mults[0]],
    )
