"""The Complex stage: an ase.Atoms plus everything the later stages need to know."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from ase import Atoms

from dsplit.chem.counting import DSet, ElectronCount
from dsplit.chem.elements import Metal
from dsplit.chem.ligands import Ligand
from dsplit.geometry.polyhedra import Polyhedron


@dataclass(frozen=True)
class PlacedLigand:
    """One ligand on one donor site: which atoms of the complex belong to it."""

    ligand: Ligand
    site: int
    direction: tuple[float, float, float]
    distance: float
    atom_indices: tuple[int, ...]


@dataclass
class Complex:
    """A built complex: geometry, charge, spin, dⁿ and the ligand map.

    The metal is atom 0 at the origin; ``ligand_of_atom[i]`` is the ligand index
    of atom i (−1 for the metal).
    """

    name: str
    atoms: Atoms
    metal: Metal
    oxidation_state: int
    charge: int
    multiplicity: int
    multiplicity_source: str  # "spec" or "ligand-field default (…)"
    polyhedron: Polyhedron
    isomer: str
    ligands: list[PlacedLigand]
    exact_point_group: str
    counts: ElectronCount
    d_sets: list[DSet]
    configuration: str
    configuration_source: str  # "spec" or "ligand-field ground configuration"
    notes: list[str] = field(default_factory=list)

    @property
    def geometry(self) -> str:
        return self.polyhedron.geometry

    @property
    def point_group(self) -> str:
        """Idealised point group of the donor set."""
        return self.polyhedron.point_group

    @property
    def d_count(self) -> int:
        return self.counts.d_count

    @property
    def metal_index(self) -> int:
        return 0

    @property
    def ligand_of_atom(self) -> list[int]:
        owner = [-1] * len(self.atoms)
        for k, pl in enumerate(self.ligands):
            for i in pl.atom_indices:
                owner[i] = k
        return owner

    @property
    def formula(self) -> str:
        """Bracket formula such as [Cr(F)6]3- built from ligand formulas."""
        counts: dict[str, int] = {}
        for pl in self.ligands:
            counts[pl.ligand.key] = counts.get(pl.ligand.key, 0) + 1
        parts = []
        for key, n in counts.items():
            lig = next(pl.ligand for pl in self.ligands if pl.ligand.key == key)
            f = lig.formula.rstrip("+-").rstrip("0123456789") if lig.charge else lig.formula
            monatomic = len(f) == 1 or (len(f) == 2 and f[1].islower())
            parts.append((f if monatomic else f"({f})") + (str(n) if n > 1 else ""))
        c = self.charge
        tail = "" if c == 0 else (f"{abs(c)}" if abs(c) > 1 else "") + ("-" if c < 0 else "+")
        return f"[{self.metal.symbol}{''.join(parts)}]{tail}"

    def mole_atom_indices(self, complex_indices: list[int]) -> list[int]:
        """Indices of these atoms in the quantum-chemistry molecule, which leaves out point donors ('X')."""
        mapping, k = {}, 0
        for i, s in enumerate(self.atoms.get_chemical_symbols()):
            if s != "X":
                mapping[i] = k
                k += 1
        return [mapping[i] for i in complex_indices]

    def metal_ligand_distances(self) -> dict[str, float]:
        out: dict[str, float] = {}
        for pl in self.ligands:
            d = float(np.linalg.norm(self.atoms.positions[pl.atom_indices[0]]))
            out.setdefault(pl.ligand.key, round(d, 6))
        return out
