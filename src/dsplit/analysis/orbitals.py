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
from dsplit.qc.records import Calculation


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
    framework_group: str = ""  # the nuclear framework's exact group (labels may use a subgroup)

    @property
    def open_shell(self) -> bool:
        return len(self.channels) == 2


def _symmetries(calc: Calculation):
    """(exact Symmetry of the Mole, donor-set Symmetry) from dsplit.symmetry."""
    from dsplit.symmetry import mol_donor_symmetry, mol_symmetry

    mol = calc.mol
    cx = calc.complex
    exact = mol_symmetry(mol)
    donors = [pl.atom_indices[0] for pl in calc.complex.ligands if pl.ligand.donor != "X"]
    donor = mol_donor_symmetry(mol, 0, donors=cx.mole_atom_indices(donors)) if donors else exact
    return exact, donor


DENSITY_SYMMETRY_TOL = 1e-5  # max |R D Rᵀ − D| for an operation to count as a symmetry of the density


def density_symmetry(calc: Calculation, exact):
    """The subgroup of ``exact`` that leaves the α and β densities invariant.

    An open-shell state of a degenerate term (2E, 5T2g …) breaks the nuclear framework's
    symmetry in its orbitals; labelling them in the framework group only gives 'mixed'.
    The kept operations are turned into a Symmetry by detecting the point group of the
    molecule decorated with the orbit of one generic point under them.
    """
    from dsplit.symmetry import ao_representation, detect_point_group
    from dsplit.symmetry.detect import Symmetry

    dm = np.asarray(calc.mf.make_rdm1())
    dms = dm if dm.ndim == 3 else dm[None]
    reps = ao_representation(calc.mol, exact)
    keep = [k for k, r in enumerate(reps)
            if all(np.abs(r @ d @ r.T - d).max() < DENSITY_SYMMETRY_TOL for d in dms)]
    if len(keep) == len(reps):
        return exact
    from pyscf.data.nist import BOHR

    mol = calc.mol
    labels = [a[0] for a in mol._atom]
    pos = np.asarray(mol.atom_coords()) * BOHR
    p0 = np.array([0.31, 0.57, 0.83]) * 3.7 + exact.centre
    orbit = np.array([exact.ops[k] @ (p0 - exact.centre) + exact.centre for k in keep])
    found = detect_point_group(labels + ["He"] * len(orbit), np.vstack([pos, orbit]))
    n = len(labels)
    return Symmetry(found.name, found.group, found.rotation, found.ops, found.centre,
                    np.asarray(found.permutation)[:, :n], found.max_error)


def build_orbital_table(calc: Calculation, composition_method: str = "iao") -> OrbitalTable:
    """Label, decompose and pick the manifold for every spin channel of ``calc``."""
    from dsplit.symmetry import compare_with_pyscf, donor_set_labels, label_orbitals, ligand_salcs

    t0 = time.perf_counter()
    mol = calc.mol
    cx = calc.complex
    notes: list[str] = []
    exact, donor = _symmetries(calc)
    framework = exact.name
    if np.asarray(calc.mf.mo_occ).ndim == 2 or (np.asarray(calc.mf.mo_occ) == 1).any():
        try:
            exact = density_symmetry(calc, exact)
        except Exception as exc:  # keep the framework group, and say why
            notes.append(f"density symmetry not determined ({type(exc).__name__}: {exc})")
        if exact.name != framework:
            notes.append(f"the open-shell density has {exact.name} symmetry, lower than the framework's "
                         f"{framework}: orbitals are labelled in {exact.name}, d-based ones also in the "
                         f"donor-set group {donor.name}")
    ovlp = mol.intor_symmetric("int1e_ovlp")
    owner = [cx.ligand_of_atom[i] for i, s in enumerate(cx.atoms.get_chemical_symbols()) if s != "X"]
    chans = calc.channels
    names = ["restricted"] if len(chans) == 1 else ["alpha", "beta"]
    tables: list[ChannelTable] = []
    timings = {"labels": 0.0, "composition": 0.0}
    for k_ch, (name, (c, occ, e)) in enumerate(zip(names, chans)):
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
        abelian = calc.abelian_labels(k_ch)
        disagreements = []
        if mol.symmetry and abelian is not None:
            try:
                found = compare_with_pyscf(mol, lab, orbsym=abelian)
            except Exception as exc:  # PySCF's group not a subgroup of the density's
                notes.append(f"no cross-check with PySCF's labels in {exact.name} ({type(exc).__name__})")
                found = []
            for d in found:
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
    return OrbitalTable(exact.name, donor.name, calc.symmetry_group, tables, salcs, timings, notes,
                        framework_group=framework)
