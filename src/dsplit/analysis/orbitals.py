"""The OrbitalTable stage: per spin channel, every MO's energy, occupation,
full point-group label (and PySCF's Abelian label), IAO composition, and the
ligand-field manifold; plus the ligand SALC table of the donor set.

Reads a finished Calculation; never re-runs the SCF.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np

from dsplit.analysis.composition import Composition, orbital_composition
from dsplit.analysis.manifold import Manifold, ligand_field_manifold
from dsplit.qc.engine import Calculation, _channels
from dsplit.qc.targeting import orbital_symmetries


@dataclass
class ChannelTable:
    """One spin channel ('restricted', 'alpha' or 'beta')."""

    spin: str
    energies: np.ndarray  # Hartree
    occupations: np.ndarray
    irreps: list[str]
    irrep_weights: list[float]
    set_of: list[int]  # degenerate-set index of each MO (labelling sets)
    irrep_abelian: list[str] | None
    donor_irreps: dict[int, str]  # MO index → donor-set label (only when the groups differ)
    composition: Composition
    manifold: Manifold
    disagreements: list[dict] = field(default_factory=list)


@dataclass
class OrbitalTable:
    point_group: str  # exact group used for the labels
    donor_point_group: str
    abelian_group: str
    channels: list[ChannelTable]
    salcs: object | None
    timings: dict[str, float]
    notes: list[str] = field(default_factory=list)

    @property
    def open_shell(self) -> bool:
        return len(self.channels) == 2


def _symmetries(calc: Calculation):
    """(exact Symmetry of the Mole, donor-set Symmetry) from dsplit.symmetry."""
    from dsplit.symmetry import mol_donor_symmetry, mol_symmetry

    mol = calc.mol
    exact = mol_symmetry(mol)
    donors = [pl.atom_indices[0] for pl in calc.complex.ligands if pl.ligand.donor != "X"]
    donor = mol_donor_symmetry(mol, 0, donors=_mol_indices(calc, donors)) if donors else exact
    return exact, donor


def _mol_indices(calc: Calculation, complex_indices: list[int]) -> list[int]:
    """Map atom indices of the Complex onto the Mole (point donors are not Mole atoms)."""
    symbols = calc.complex.atoms.get_chemical_symbols()
    mapping, k = {}, 0
    for i, s in enumerate(symbols):
        if s != "X":
            mapping[i] = k
            k += 1
    return [mapping[i] for i in complex_indices]


def build_orbital_table(calc: Calculation, composition_method: str = "iao") -> OrbitalTable:
    """Label, decompose and pick the manifold for every spin channel of ``calc``."""
    from dsplit.symmetry import compare_with_pyscf, donor_set_labels, label_orbitals, ligand_salcs

    t0 = time.perf_counter()
    mol = calc.mol
    cx = calc.complex
    notes: list[str] = []
    exact, donor = _symmetries(calc)
    ovlp = mol.intor_symmetric("int1e_ovlp")
    owner = [cx.ligand_of_atom[i] for i, s in enumerate(cx.atoms.get_chemical_symbols()) if s != "X"]
    chans = _channels(calc.mf)
    names = ["restricted"] if len(chans) == 1 else ["alpha", "beta"]
    tables: list[ChannelTable] = []
    timings = {"labels": 0.0, "composition": 0.0}
    for name, (c, occ, e) in zip(names, chans):
        t1 = time.perf_counter()
        lab = label_orbitals(mol, c, e, exact, ovlp=ovlp)
        set_of = [0] * len(e)
        for k, s in enumerate(lab.sets):
            for i in s.indices:
                set_of[i] = k
        donor_irreps: dict[int, str] = {}
        if donor.name != exact.name:
            for dl in donor_set_labels(mol, lab, c, 0, donor, ovlp=ovlp):
                for i in dl.indices:
                    donor_irreps[i] = dl.label
        abelian = orbital_symmetries(calc.mf, c)
        disagreements = []
        if mol.symmetry and abelian is not None:
            for d in compare_with_pyscf(mol, lab, orbsym=abelian):
                disagreements.append({"indices": list(d.indices), "label": d.label, "expected": d.expected,
                                      "found": d.found, "reason": d.reason})
        timings["labels"] += time.perf_counter() - t1
        t1 = time.perf_counter()
        comp = orbital_composition(mol, c, occ, 0, owner, method=composition_method)
        timings["composition"] += time.perf_counter() - t1
        man_labels = [donor_irreps.get(i, lab.labels[i]) for i in range(len(e))]
        man = ligand_field_manifold(e, occ, comp.metal_d, irreps=man_labels, set_ids=set_of)
        tables.append(ChannelTable(name, np.asarray(e), np.asarray(occ), list(lab.labels), list(lab.weights),
                                   set_of, abelian, donor_irreps, comp, man, disagreements))
    salcs = None
    donor_pos = [cx.atoms.positions[pl.atom_indices[0]] for pl in cx.ligands]
    try:
        salcs = ligand_salcs(donor, np.zeros(3), np.array(donor_pos))
    except Exception as exc:  # a group the SALC reduction cannot handle: say so
        notes.append(f"ligand SALCs not reduced ({type(exc).__name__}: {exc})")
    timings["total"] = time.perf_counter() - t0
    return OrbitalTable(exact.name, donor.name, calc.symmetry_group, tables, salcs, timings, notes)
