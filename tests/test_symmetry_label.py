"""Full-group MO labels on tiny closed-shell PySCF runs.

Outside references:
* PySCF's own Abelian labels (``symm.label_orb_symm``) — every full-group label
  must subduce to them (dsplit.symmetry.pyscf_check);
* PySCF's libmsym interface (``pyscf.symm.msym``, libmsym library) — it runs the
  SCF in the full group; its labels must agree orbital by orbital;
* textbook ligand-field facts (Cotton, *Chemical Applications of Group Theory*,
  3rd ed., ch. 8; Figgis & Hitchman, *Ligand Field Theory and its Applications*
  — from memory): d-based orbitals are t2g/eg in Oh, e/t2 in Td with e lower,
  a1g/b1g/b2g/eg in square-planar D4h with b1g (x²−y²) empty for d8.
Runs are gas phase, STO-3G/3-21G (labels do not need a good model).
"""
from __future__ import annotations

import os
import sys

import numpy as np
import pytest

sys.path.insert(0, os.path.dirname(__file__))
from test_symmetry_geometry import hexaaqua_th, polyhedron, transform  # noqa: E402

pyscf = pytest.importorskip("pyscf")
from pyscf import gto, scf, symm  # noqa: E402

from dsplit.symmetry import (compare_with_pyscf, display_label, donor_set_labels,  # noqa: E402
                             label_orbitals, metal_d_indices, mol_donor_symmetry)
from dsplit.symmetry.label import MIXED  # noqa: E402


def _run(symbols, positions, charge, basis="sto-3g", cart=False):
    mol = gto.M(atom=list(zip(symbols, positions)), basis=basis, charge=charge, verbose=0,
                symmetry=True, cart=cart)
    mf = scf.RHF(mol)
    mf.conv_tol = 1e-10
    mf.kernel()
    assert mf.converged
    return mol, mf


def _d_norm(mol, mf, metal=0):
    idx = metal_d_indices(mol, metal)
    s = mol.intor_symmetric("int1e_ovlp")[np.ix_(idx, idx)]
    c = mf.mo_coeff[idx]
    return np.einsum("ai,ab,bi->i", c, s, c)


def _d_sets(res, dn, cut=0.5):
    return [(es.label, es.energy) for es in res.sets if dn[es.indices].mean() > cut]


@pytest.fixture(scope="module")
def tif6():
    return _run(*polyhedron("octahedral", "Ti", "F", 1.85), charge=-2)


@pytest.fixture(scope="module")
def ticl4():
    return _run(*polyhedron("tetrahedral", "Ti", "Cl", 2.17), charge=0)


@pytest.fixture(scope="module")
def nif4():
    return _run(*polyhedron("square-planar", "Ni", "F", 1.85), charge=-2, basis="3-21g")


def _libmsym_labels(mol):
    """Full-group SCF through PySCF's libmsym interface: (orbitals, energies, labels)."""
    pytest.importorskip("libmsym")
    from pyscf.symm import msym
    mm = msym.gen_mol_msym(mol, verbose=False)
    mf = scf.RHF(mm)
    mf.conv_tol = 1e-10
    mf.kernel()
    lab = symm.label_orb_symm(mm, mm.irrep_name, mm.symm_orb, mf.mo_coeff)
    # libmsym writes 'T2g_1' (partner index) and 'E1' where no E2 exists
    clean = [str(x).split("_")[0].lower() for x in lab]
    clean = [x.replace("e1", "e", 1) if x.startswith("e1") else x for x in clean]
    return mf, clean


@pytest.mark.parametrize("case", ["tif6", "ticl4", "nif4"])
def test_against_pyscf_and_libmsym(case, request):
    mol, mf = request.getfixturevalue(case)
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    assert all(lab != MIXED for lab in res.labels)
    for es in res.sets:
        # PySCF's D2h SCF may mix near-degenerate core sets that share a D2h block
        # (a1g/b1g → ag) at the 1e-6 level; labels stay pure to 0.999
        assert es.leak < 1e-4 and es.weight > 0.999
        assert sum(es.weights.values()) == pytest.approx(1.0, abs=1e-8)
    # PySCF's own Abelian labels
    assert compare_with_pyscf(mol, res, mf.mo_coeff) == []
    # libmsym full-group SCF: same orbitals labelled by us, orbital by orbital ...
    mf2, theirs = _libmsym_labels(mol)
    assert mf2.e_tot == pytest.approx(mf.e_tot, abs=1e-7)
    ours = label_orbitals(mol, mf2.mo_coeff, mf2.mo_energy).labels
    assert ours == theirs
    # ... and our labels of the D2h run matched to theirs by energy: clusters of
    # orbitals within 1e-5 Ha (degenerate sets, plus accidental core near-degeneracy)
    order = np.argsort(mf.mo_energy)
    cuts = np.where(np.diff(mf.mo_energy[order]) > 1e-5)[0] + 1
    for cluster in np.split(order, cuts):
        lo, hi = mf.mo_energy[cluster].min() - 1e-5, mf.mo_energy[cluster].max() + 1e-5
        partner = np.where((mf2.mo_energy >= lo) & (mf2.mo_energy <= hi))[0]
        assert sorted(res.labels[i] for i in cluster) == sorted(theirs[i] for i in partner)


def test_ligand_field_labels(tif6, ticl4, nif4):
    mol, mf = tif6                                  # Oh d0: t2g below eg, both empty
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    d = _d_sets(res, _d_norm(mol, mf))
    assert [lab for lab, _ in d] == ["t2g", "eg"]
    mol, mf = ticl4                                 # Td d0: e below t2
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    d = _d_sets(res, _d_norm(mol, mf), cut=0.7)
    assert [lab for lab, _ in d][:2] == ["e", "t2"]
    mol, mf = nif4                                  # D4h d8 low spin
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    dn = _d_norm(mol, mf)
    occ_d = {es.label for es in res.sets if dn[es.indices].mean() > 0.3
             and mf.mo_occ[es.indices[0]] > 0}
    assert occ_d == {"a1g", "b2g", "eg"}
    empty_d = [es for es in res.sets if mf.mo_occ[es.indices[0]] == 0
               and dn[es.indices].mean() > 0.5]
    assert empty_d[0].label == "b1g" and dn[empty_d[0].indices[0]] > 0.9


def test_rotated_frame(tif6):
    # arbitrary orientation: PySCF keeps the input frame, labels must not change
    mol0, mf0 = tif6
    s, p = polyhedron("octahedral", "Ti", "F", 1.85)
    moved, _ = transform(p, seed=8)
    mol, mf = _run(s, moved, charge=-2)
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    ref = label_orbitals(mol0, mf0.mo_coeff, mf0.mo_energy)
    assert [es.label for es in res.sets] == [es.label for es in ref.sets]
    assert np.allclose([es.energy for es in res.sets], [es.energy for es in ref.sets], atol=1e-6)
    assert compare_with_pyscf(mol, res, mf.mo_coeff) == []


def test_cartesian_basis():
    mol, mf = _run(*polyhedron("octahedral", "Ti", "F", 1.85), charge=-2, cart=True)
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    assert all(lab != MIXED for lab in res.labels)
    assert compare_with_pyscf(mol, res, mf.mo_coeff) == []
    # a Cartesian d shell also holds the r² (a1g) combination; the true d sets stay t2g < eg
    d = [lab for lab, _ in _d_sets(res, _d_norm(mol, mf)) if lab in ("t2g", "eg")]
    assert d[:2] == ["t2g", "eg"]


def test_sets_split_merge_and_mixed(tif6):
    mol, mf = tif6
    c, e = mf.mo_coeff.copy(), mf.mo_energy.copy()
    ref = label_orbitals(mol, c, e)
    by = {es.label: es for es in ref.sets if mf.mo_occ[es.indices[0]] == 0}
    eg, a1g, t2g = by["eg"].indices, by["a1g"].indices, by["t2g"].indices
    # (1) an eg partner pushed 2.5 mHa away (beyond degen_tol, within merge_tol): merged back
    e1 = e.copy()
    e1[eg[1]] += 2.5e-3
    res = label_orbitals(mol, c, e1)
    assert [res.labels[i] for i in eg] == ["eg", "eg"]
    # without merging the lone partners are not closed sets: 'mixed', never 'eg'
    res = label_orbitals(mol, c, e1, merge_tol=0.0)
    assert [res.labels[i] for i in eg] == [MIXED, MIXED]
    assert all("not closed" in es.note for es in res.sets if eg[0] in es.indices)
    # a lone partner (the other one far away) next to a complete t1u set: the
    # merge does not close, is undone, and only the lone orbital is 'mixed'
    t1u = [es for es in ref.sets if es.label == "t1u" and mf.mo_occ[es.indices[0]] == 0][0]
    e4 = e.copy()
    e4[eg[1]] += 0.5
    e4[t1u.indices] = e[eg[0]] + 5e-3
    res = label_orbitals(mol, c, e4)
    assert res.labels[eg[0]] == MIXED and [res.labels[i] for i in t1u.indices] == ["t1u"] * 3
    # (2) accidental near-degeneracy of a1g with t2g: one chain, split by irrep
    e2 = e.copy()
    e2[a1g[0]] = e[t2g[0]] + 5e-4
    res = label_orbitals(mol, c, e2)
    assert res.labels[a1g[0]] == "a1g" and [res.labels[i] for i in t2g] == ["t2g"] * 3
    # (3) a1g and one eg partner rotated into each other at one energy: the set is
    # closed (a1g + eg) but no orbital is pure → 'mixed'
    e3, c3 = e.copy(), c.copy()
    i, j = a1g[0], eg[0]
    c3[:, i], c3[:, j] = (c[:, i] + c[:, j]) / np.sqrt(2), (c[:, i] - c[:, j]) / np.sqrt(2)
    e3[[i] + eg] = e[eg[0]]
    res = label_orbitals(mol, c3, e3)
    mixed = [es for es in res.sets if i in es.indices][0]
    assert mixed.label == MIXED and sorted(mixed.indices) == sorted([i] + eg)
    assert mixed.weights["eg"] == pytest.approx(2 / 3) and mixed.weights["a1g"] == pytest.approx(1 / 3)


def test_hexaaqua_th_and_donor_labels():
    s, p = hexaaqua_th("Sc")
    mol, mf = _run(s, p, charge=3)
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    assert res.group == "Th"
    assert compare_with_pyscf(mol, res, mf.mo_coeff) == []
    dsym = mol_donor_symmetry(mol, 0)
    assert dsym.name == "Oh"
    dn = _d_norm(mol, mf)
    donor = donor_set_labels(mol, res, mf.mo_coeff, 0, dsym)
    virt_d = [(es.label, dl.label) for es, dl in zip(res.sets, donor)
              if dn[es.indices].mean() > 0.5 and mf.mo_occ[es.indices[0]] == 0]
    # Th tg ↔ Oh t2g, Th eg ↔ Oh eg (d functions; correlation Oh → Th, Cotton — from memory)
    assert virt_d[:2] == [("tg", "t2g"), ("eg", "eg")]
    for dl in donor:
        if dl.d_norm > 0.05:
            assert dl.weight > 0.999


def test_linear_dooh():
    mol, mf = _run(["Cu", "Cl", "Cl"], np.array([[0, 0, 0], [0, 0, 2.1], [0, 0, -2.1]]),
                   charge=-1)
    res = label_orbitals(mol, mf.mo_coeff, mf.mo_energy)
    assert res.group == "Dooh"
    assert compare_with_pyscf(mol, res, mf.mo_coeff) == []
    dn = _d_norm(mol, mf)
    # πg d orbitals share ~50 % with Cl p (bonding/antibonding pair): cut at 0.4
    names = {display_label(res, es.indices[0]) for es in res.sets
             if dn[es.indices].mean() > 0.4}
    # Cu 3d in D∞h: σg+ (z²), πg (xz, yz), δg (xy, x²−y²) — common practice
    assert names == {"sigma_g+", "pi_g", "delta_g"}
