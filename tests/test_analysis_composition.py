"""Orbital composition (IAO / Mulliken) on tiny PySCF runs."""

from __future__ import annotations

from functools import reduce

import numpy as np
import pytest
import scipy.linalg
from pyscf import gto, lo, scf

from dsplit.analysis.composition import (
    D_COMPONENTS,
    composition_per_spin,
    metal_ligand_overlap,
    orbital_composition,
)

OCTAHEDRON = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
TETRAHEDRON = np.array([[1, 1, 1], [-1, -1, 1], [-1, 1, -1], [1, -1, -1]], float) / np.sqrt(3)
T2G = [D_COMPONENTS.index(c) for c in ("xy", "yz", "xz")]
EG = [D_COMPONENTS.index(c) for c in ("z^2", "x2-y2")]
WATER = "O 0 0 0.1173; H 0 0.7572 -0.4692; H 0 -0.7572 -0.4692"


def complex_mol(metal: str, r: float, directions: np.ndarray, ligand: str, basis: str,
                charge: int, spin: int = 0) -> gto.Mole:
    atoms = [[metal, (0.0, 0.0, 0.0)]] + [[ligand, tuple(r * v)] for v in directions]
    return gto.M(atom=atoms, basis=basis, charge=charge, spin=spin, verbose=0)


@pytest.fixture(scope="module")
def tif6():
    # Ti–F 1.90 Å: close to Ti(IV)–F distances in hexafluoridotitanates (from memory).
    mol = complex_mol("Ti", 1.90, OCTAHEDRON, "F", "3-21g", charge=-2)
    mf = scf.RHF(mol).run()
    assert mf.converged
    return mol, mf


LIGANDS6 = [-1, 0, 1, 2, 3, 4, 5]


@pytest.mark.parametrize("method", ["iao", "mulliken"])
def test_fractions_add_up(tif6, method):
    mol, mf = tif6
    c = orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, LIGANDS6, method=method)
    nmo = mf.mo_coeff.shape[1]
    assert c.per_atom.shape == (nmo, 7) and c.per_ligand.shape == (nmo, 6)
    # Partition of unity (common practice: every basis function belongs to one atom).
    np.testing.assert_allclose(c.per_atom.sum(1) + c.other, 1.0, atol=1e-10)
    np.testing.assert_allclose(c.metal + c.ligand + c.other, 1.0, atol=1e-10)
    np.testing.assert_allclose(c.per_ligand.sum(1), c.ligand, atol=1e-12)
    # MINAO / 3-21G Ti carry s, p, d shells only.
    np.testing.assert_allclose(c.metal_s + c.metal_p + c.metal_d, c.metal, atol=1e-12)
    np.testing.assert_allclose(c.metal_d_components.sum(1), c.metal_d, atol=1e-12)
    if method == "iao":
        assert c.other.min() > -1e-10 and c.other.max() < 1 + 1e-10
        # Knizia 2013: the IAOs span the occupied space exactly (from memory).
        np.testing.assert_allclose(c.other[mf.mo_occ > 0], 0.0, atol=1e-8)


def valence_virtual_weight(mol: gto.Mole, mf: scf.hf.SCF) -> np.ndarray:
    """Weight of each virtual MO on B ∩ O⊥ (B: MINAO projected into the working basis,
    O: occupied space), by plain linear algebra."""
    s = mf.get_ovlp()
    pmol = lo.iao.reference_mol(mol)
    b = np.linalg.solve(s, gto.intor_cross("int1e_ovlp", mol, pmol))
    occ = mf.mo_coeff[:, mf.mo_occ > 0]
    y = scipy.linalg.null_space(occ.T @ s @ b)
    assert y.shape[1] == pmol.nao - occ.shape[1]
    k = lo.vec_lowdin(b @ y, s)
    return ((mf.mo_coeff[:, mf.mo_occ == 0].T @ s @ k) ** 2).sum(1)


def test_iao_space_is_occupied_plus_valence_virtuals():
    """Knizia's construction, J. Chem. Theory Comput. 9, 4834 (2013) (from memory): with
    a working basis that contains MINAO exactly, the IAOs span O ⊕ (B ∩ O⊥)."""
    minao_plus = {
        "O": gto.basis.load("minao", "O") + [[0, [0.08, 1.0]], [1, [0.07, 1.0]], [2, [1.2, 1.0]]],
        "H": gto.basis.load("minao", "H") + [[0, [0.1, 1.0]], [1, [0.9, 1.0]]],
    }
    mol = gto.M(atom=WATER, basis=minao_plus, verbose=0)
    mf = scf.RHF(mol).run()
    c = orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, [-1, 0, 1])
    np.testing.assert_allclose(1.0 - c.other[mf.mo_occ == 0], valence_virtual_weight(mol, mf),
                               atol=1e-10)


def test_iao_space_near_valence_virtuals_in_3_21g(tif6):
    # 3-21G does not contain MINAO: the equality above holds only approximately
    # (measured 1.3e-4 here; bound ours).
    mol, mf = tif6
    c = orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, LIGANDS6)
    np.testing.assert_allclose(1.0 - c.other[mf.mo_occ == 0], valence_virtual_weight(mol, mf),
                               atol=1e-3)


def test_tif6_physical_sanity(tif6):
    mol, mf = tif6
    c = orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, LIGANDS6)
    occ = mf.mo_occ > 0
    nocc = int(occ.sum())
    # d0 octahedral: the lowest valence-like virtuals are the Ti d t2g* (3) and eg* (2)
    # (Cotton, Chemical Applications of Group Theory, 3rd ed., MO chapter on
    # octahedral complexes — from memory).
    # 3-21G adds diffuse Ti 4p below them, so skip virtuals mostly outside the IAO space.
    valence_vir = [i for i in range(nocc, len(occ)) if c.other[i] < 0.5]
    low5 = valence_vir[:5]
    assert c.metal_d[low5].min() > 0.6
    # Oh character table: (xz, yz, xy) span T2g, (z², x²−y²) span Eg (Cotton, Appendix —
    # from memory); t2g below eg.
    t2g, eg = low5[:3], low5[3:]
    assert c.metal_d_components[np.ix_(t2g, EG)].max() < 1e-6
    assert c.metal_d_components[np.ix_(eg, T2G)].max() < 1e-6
    assert mf.mo_energy[t2g].max() < mf.mo_energy[eg].min()
    # The top occupied set (t1g, F 2p with no metal partner in Oh) is all ligand.
    top = list(range(nocc - 3, nocc))
    assert c.ligand[top].min() > 0.95
    # Unsöld-type theorem: a complete degenerate set is totally symmetric, so the six
    # equivalent F share it equally (from memory).
    np.testing.assert_allclose(c.per_ligand[top].sum(0), c.ligand[top].sum() / 6, atol=1e-6)
    np.testing.assert_allclose(c.per_ligand[t2g].sum(0), c.ligand[t2g].sum() / 6, atol=1e-6)


def test_mulliken_matches_pyscf_population(tif6):
    mol, mf = tif6
    c = orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, LIGANDS6, method="mulliken")
    # Outside reference: PySCF's own Mulliken population analysis.
    pop, chg = mf.mulliken_pop(verbose=0)
    np.testing.assert_allclose(mf.mo_occ @ c.functions, pop, atol=1e-8)
    np.testing.assert_allclose(mol.atom_charges() - mf.mo_occ @ c.per_atom, chg, atol=1e-8)


def iao_and_mulliken_charges(basis: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    mol = gto.M(atom=WATER, basis=basis, verbose=0)
    mf = scf.RHF(mol).run()
    ours = [mol.atom_charges() - mf.mo_occ @ orbital_composition(
        mol, mf.mo_coeff, mf.mo_occ, 0, [-1, 0, 1], method=m).per_atom
        for m in ("iao", "mulliken")]
    # PySCF's documented IAO population example (examples/local_orb, "Mulliken population
    # analysis with IAO orbitals"): IAO -> Löwdin -> Mulliken with unit overlap.
    s = mf.get_ovlp()
    occ = mf.mo_coeff[:, mf.mo_occ > 0]
    a = lo.vec_lowdin(lo.iao.iao(mol, occ), s)
    mo = reduce(np.dot, (a.T, s, occ))
    _, ref = mf.mulliken_pop(lo.iao.reference_mol(mol), 2 * mo @ mo.T, s=np.eye(a.shape[1]),
                             verbose=0)
    return ours[0], ref, ours[1]


def test_water_iao_charges():
    charges = {b: iao_and_mulliken_charges(b) for b in ("cc-pvdz", "cc-pvtz", "aug-cc-pvdz")}
    for iao_q, ref_q, _ in charges.values():
        np.testing.assert_allclose(iao_q, ref_q, atol=1e-8)
        assert iao_q[0] < 0 and abs(iao_q.sum()) < 1e-8
    # Knizia 2013: IAO charges barely change with the basis (diffuse functions included),
    # Mulliken charges do (from memory).
    o_iao = [q[0][0] for q in charges.values()]
    o_mul = [q[2][0] for q in charges.values()]
    assert np.ptp(o_iao) < 0.05
    assert np.ptp(o_iao) < np.ptp(o_mul) / 3


def test_unrestricted_per_spin():
    # VCl4, V(IV) d1, V–Cl 2.14 Å (gas-phase structure, from memory).
    mol = complex_mol("V", 2.14, TETRAHEDRON, "Cl", "3-21g", charge=0, spin=1)
    mf = scf.UHF(mol).run()
    assert mf.converged
    alpha, beta = composition_per_spin(mol, mf.mo_coeff, mf.mo_occ, 0, [-1, 0, 1, 2, 3])
    for c, occ in zip((alpha, beta), mf.mo_occ):
        np.testing.assert_allclose(c.metal + c.ligand + c.other, 1.0, atol=1e-10)
        np.testing.assert_allclose(c.other[occ > 0], 0.0, atol=1e-8)
    # Outside reference: PySCF's own UHF Mulliken spin population.
    mul = composition_per_spin(mol, mf.mo_coeff, mf.mo_occ, 0, [-1, 0, 1, 2, 3], "mulliken")
    _, spin_ref = mf.mulliken_spin_pop(verbose=0)
    np.testing.assert_allclose(mf.mo_occ[0] @ mul[0].per_atom - mf.mo_occ[1] @ mul[1].per_atom,
                               spin_ref, atol=1e-8)
    # d1: the unpaired electron sits in V d (common practice); UHF spin polarisation
    # raises the V d spin above 1 (measured 1.54).
    d_spin = mf.mo_occ[0] @ alpha.metal_d - mf.mo_occ[1] @ beta.metal_d
    assert d_spin > 0.8
    restricted = composition_per_spin(mol, mf.mo_coeff[0], mf.mo_occ[0], 0, [-1, 0, 1, 2, 3])
    assert len(restricted) == 1
    np.testing.assert_allclose(restricted[0].functions, alpha.functions, atol=1e-12)


def test_overlap_population_signs(tif6):
    mol, mf = tif6
    c = orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, LIGANDS6)
    op = metal_ligand_overlap(mol, mf.mo_coeff, 0)
    nocc = int((mf.mo_occ > 0).sum())
    valence_vir = [i for i in range(nocc, mol.nao) if c.other[i] < 0.5][:5]
    # Empty t2g*/eg* are metal–ligand antibonding; the filled σ eg set bonding
    # (Mulliken overlap-population sign convention, J. Chem. Phys. 23, 1833 (1955)).
    assert op[valence_vir].max() < 0
    sigma_eg = [i for i in range(nocc) if c.metal_d_components[i, EG].sum() > 0.1]
    assert sigma_eg and op[sigma_eg].min() > 0
    # Total over occupied orbitals: net metal–ligand bonding.
    assert mf.mo_occ @ op > 0


def test_bad_ligand_map(tif6):
    mol, mf = tif6
    with pytest.raises(ValueError):
        orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, [0, 0, 1, 2, 3, 4, 5])
    with pytest.raises(ValueError):
        orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, [-1, 0, 1])
    with pytest.raises(ValueError):
        orbital_composition(mol, mf.mo_coeff, mf.mo_occ, 0, LIGANDS6, method="lowdin")
