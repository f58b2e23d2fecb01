"""The ab initio ligand-field fit (analysis.multiplet_fit) on model-made and PySCF CASCI states."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pytest

from dsplit.analysis.multiplet_fit import UnderdeterminedFit, fit_ligand_field
from dsplit.chem.counting import d_sets
from dsplit.geometry.polyhedra import polyhedron
from dsplit.models.determinants import rotate_ci
from dsplit.models.field_shape import polyhedron_shape
from dsplit.models.multiplet import multiplet_states
from dsplit.units import cm1_to_hartree


@dataclass(frozen=True)
class State:  # the shape of qc.multiplet.MultipletState
    multiplicity: int
    ms2: int
    energy_casscf_hartree: float
    energy_nevpt2_hartree: float | None
    ci: np.ndarray


@dataclass(frozen=True)
class Record:  # the shape of qc.multiplet.MultipletRecord
    n_electrons: int
    active_d_projection: np.ndarray
    active_d_weight: tuple[float, ...]
    states: tuple[State, ...]
    converged: bool = True
    verified: bool = True
    method: str = "test"
    solvent: str = "none"
    timings: dict = field(default_factory=dict)
    notes: tuple = ()
    warnings: tuple = ()


OCT = polyhedron("octahedral")
OH_SETS = d_sets(OCT.directions, OCT.d_set_labels)


def _record(h, b, c, d, mults, u=None, nevpt2_shift=None, seed_offset=-1500.0) -> Record:
    """States of the model itself, CI vectors carried to orbitals φ = d·U (U orthogonal)."""
    u = np.eye(5) if u is None else u
    spec = multiplet_states(h, b, c, d, multiplicities=mults)
    states = []
    for t in spec.terms:
        for vec in t.vectors:
            e = seed_offset + cm1_to_hartree(t.absolute_energy)
            e2 = None if nevpt2_shift is None else e + cm1_to_hartree(nevpt2_shift * t.absolute_energy)
            states.append(State(t.multiplicity, t.multiplicity - 1, e, e2,
                                rotate_ci(vec, u.T, d, t.multiplicity - 1)))
    return Record(d, u, (1.0,) * 5, tuple(states))


def _random_orthogonal(seed: int) -> np.ndarray:
    return np.linalg.qr(np.random.default_rng(seed).normal(size=(5, 5)))[0]


def test_general_low_symmetry_h_recovered_exactly():
    h = np.random.default_rng(11).normal(scale=4000.0, size=(5, 5))
    h = h + h.T
    rec = _record(h, 710.0, 3300.0, 2, (1, 3), u=_random_orthogonal(5))
    fit = fit_ligand_field(rec, OH_SETS, energy="casscf")
    traceless = h - np.trace(h) / 5 * np.eye(5)
    assert np.abs(fit.h_cm1 - traceless).max() < 1e-6
    assert fit.b_cm1 == pytest.approx(710.0, abs=1e-6) and fit.c_cm1 == pytest.approx(3300.0, abs=1e-6)
    assert fit.fitted == ("h", "B", "C") and fit.held == {}
    assert fit.residual_cm1 < 1e-6 and fit.n_states == 25  # 10 triplets + 15 singlets (spatial states at M_S = S)
    assert fit.levels_cm1 == pytest.approx(list(np.linalg.eigvalsh(traceless)), abs=1e-6)


def test_octahedral_quartets_fix_delta_and_b_but_not_c():
    # d³ quartets (⁴F, ⁴P parentage) hold no C (Griffith 1961 — from memory): C is held at C/B
    shape = polyhedron_shape(OCT)
    rec = _record(shape.matrix(17400.0), 729.0, 3300.0, 3, (4,), u=_random_orthogonal(2), nevpt2_shift=0.0)
    fit = fit_ligand_field(rec, OH_SETS, metal="Cr", oxidation_state=3)
    assert fit.source == "NEVPT2"
    assert fit.delta_cm1 == pytest.approx(17400.0, abs=1e-5)
    assert fit.b_cm1 == pytest.approx(729.0, abs=1e-6)
    assert fit.fitted == ("h", "B") and "C" in fit.held
    assert fit.c_cm1 == pytest.approx(4.5 * 729.0)
    assert fit.beta == pytest.approx(729.0 / 918.0)
    assert set(fit.level_sets) == {"t2g", "eg"}
    assert fit.set_energies_cm1["eg"] - fit.set_energies_cm1["t2g"] == pytest.approx(17400.0, abs=1e-5)


def test_high_spin_d6_quintets_fix_h_only():
    shape = polyhedron_shape(OCT)
    rec = _record(shape.matrix(10400.0), 800.0, 3600.0, 6, (5,))
    fit = fit_ligand_field(rec, OH_SETS, energy="casscf")
    assert fit.delta_cm1 == pytest.approx(10400.0, abs=1e-5)
    assert fit.b_cm1 is None and fit.c_cm1 is None and fit.fitted == ("h",)


def test_nevpt2_energies_are_used_when_asked():
    shape = polyhedron_shape(OCT)
    rec = _record(shape.matrix(17400.0), 729.0, 3300.0, 3, (2, 4), nevpt2_shift=0.1)
    assert fit_ligand_field(rec, OH_SETS, energy="nevpt2").delta_cm1 == pytest.approx(1.1 * 17400.0, rel=1e-9)
    assert fit_ligand_field(rec, OH_SETS, energy="casscf").delta_cm1 == pytest.approx(17400.0, rel=1e-9)


def test_describe_states_labels_irreps_and_configurations():
    from dsplit.analysis.multiplet_fit import describe_states
    from dsplit.models.multiplet import frame_symmetry

    shape = polyhedron_shape(OCT)
    rec = _record(shape.matrix(17400.0), 729.0, 3300.0, 3, (2, 4), u=_random_orthogonal(4))
    model = multiplet_states(shape.matrix(17400.0), 729.0, 3300.0, 3, symmetry=shape.symmetry, d_sets=OH_SETS)
    expected = [(t.multiplicity, t.irrep, round(t.energy, 3)) for t in model.terms for _ in range(t.degeneracy)]
    got = describe_states(rec, OH_SETS, frame_symmetry("Oh"), energy="casscf")
    assert sorted((s.multiplicity, s.irrep, round(s.energy_cm1, 3)) for s in got) == sorted(expected)
    first_band = [s for s in got if s.multiplicity == 4 and s.irrep == "T2g"]
    assert len(first_band) == 3 and first_band[0].configurations[0] == ("t2g^2 eg^1", 1.0)
    assert all(abs(s.d_weight - 1.0) < 1e-10 for s in got)
    assert got[0].to_dict("CASSCF")["method"] == "CASSCF"


def test_refusals():
    shape = polyhedron_shape(OCT)
    rec = _record(shape.matrix(17400.0), 729.0, 3300.0, 3, (4,))
    with pytest.raises(ValueError, match="NEVPT2"):
        fit_ligand_field(rec, OH_SETS, energy="nevpt2")
    with pytest.raises(ValueError, match="not converged"):
        fit_ligand_field(Record(**{**rec.__dict__, "verified": False}), OH_SETS, energy="casscf")
    sextet = _record(shape.matrix(14000.0), 800.0, 3600.0, 5, (6,))
    with pytest.raises(UnderdeterminedFit):
        fit_ligand_field(sextet, OH_SETS, energy="casscf")


def test_pyscf_casci_recovers_the_basis_racah_parameters():
    # A real PySCF CASCI: Ni²⁺ (STO-3G) in six point charges, d⁸ in the five pure 3d functions (rotated at
    # random), core from the bare-ion ROHF with its d part removed.  The active-space problem is then exactly
    # a d⁸ ligand-field problem, so the fit must return the B and C of the basis's own 3d shell (PySCF
    # int2e, projected on the Slater–Condon form) with zero residual, and a positive Δ (charges repel eg).
    from pyscf import fci, gto, lib, mcscf, qmmm, scf

    from dsplit.models.racah import _angular
    from dsplit.units import hartree_to_cm1

    threads = lib.num_threads()
    lib.num_threads(1)
    try:
        mol = gto.M(atom="Ni 0 0 0", basis="sto-3g", charge=2, spin=2, verbose=0)
        bare = scf.ROHF(mol).run()
        assert bare.converged
        d_ao = [i for i, lab in enumerate(mol.ao_labels()) if "3d" in lab]
        s = mol.intor("int1e_ovlp")
        core = bare.mo_coeff[:, :9].copy()
        core[d_ao] = 0.0
        w, v = np.linalg.eigh(core.T @ s @ core)
        core = core @ v @ np.diag(w ** -0.5) @ v.T
        u = _random_orthogonal(9)
        active = np.zeros((mol.nao, 5))
        active[d_ao] = u
        mo = np.hstack([core, active])
        field = qmmm.mm_charge(scf.ROHF(mol), 1.9 * np.vstack([np.eye(3), -np.eye(3)]), -np.ones(6))
        states = []
        for nelec, nroots in (((5, 3), 10), ((4, 4), 25)):
            mc = mcscf.CASCI(field, 5, nelec)
            mc.fcisolver.nroots = nroots
            mc.kernel(mo)
            for e, ci in zip(mc.e_tot, mc.ci):
                mult = round(fci.spin_op.spin_square(ci, 5, nelec)[1])
                if mult == nelec[0] - nelec[1] + 1:
                    states.append(State(mult, nelec[0] - nelec[1], float(e), None, ci))
    finally:
        lib.num_threads(threads)
    assert len(states) == 10 + 15  # ³F + ³P, ¹D + ¹G + ¹S
    eri = mol.intor("int2e_sph")[np.ix_(d_ao, d_ao, d_ao, d_ao)]
    basis = np.array([_angular(k).ravel() for k in (0, 2, 4)]).T
    r, *_ = np.linalg.lstsq(basis, eri.ravel(), rcond=None)
    f2, f4 = r[1] / 49, r[2] / 441
    fit = fit_ligand_field(Record(8, u, (1.0,) * 5, tuple(states)), OH_SETS, energy="casscf",
                           metal="Ni", oxidation_state=2)
    assert fit.b_cm1 == pytest.approx(hartree_to_cm1(f2 - 5 * f4), abs=1e-3)
    assert fit.c_cm1 == pytest.approx(hartree_to_cm1(35 * f4), abs=1e-3)
    assert fit.residual_cm1 < 1e-3
    assert fit.delta_cm1 > 100.0
