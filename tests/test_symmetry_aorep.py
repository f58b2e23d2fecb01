"""AO representation matrices vs PySCF's own AO values, and PySCF's frame behaviour.

Reference: the AOs themselves, evaluated by ``mol.eval_gto`` (PySCF): for every
operation g about the centre c, φ(c + gᵀ(r − c)) = φ(r) R(g) must hold at random
points (definition of R(g), dsplit.symmetry.aorep).  No SCF is run here.
"""
from __future__ import annotations

import os
import sys

import numpy as np
import pytest

sys.path.insert(0, os.path.dirname(__file__))
from test_symmetry_geometry import hexaaqua_th, polyhedron, transform  # noqa: E402

gto = pytest.importorskip("pyscf.gto")
from pyscf.data.nist import BOHR  # noqa: E402

from dsplit.symmetry import ao_representation, mol_symmetry, shell_rotation  # noqa: E402


def _residual(mol, sym, reps, npts=300):
    c = sym.centre / BOHR
    pts = np.random.default_rng(1).normal(size=(npts, 3)) * 1.5 + c
    phi = mol.eval_gto("GTOval", pts)
    worst = 0.0
    for g, r in zip(sym.ops, reps):
        img = mol.eval_gto("GTOval", c + (pts - c) @ g)      # rows: c + gᵀ(r − c)
        worst = max(worst, float(np.abs(img - phi @ r).max()))
    return worst


@pytest.mark.parametrize("cart", [False, True])
def test_rotated_aqua_with_f_functions(cart):
    s, p = hexaaqua_th("Ti")
    p, _ = transform(p)
    # cc-pVTZ on O carries d and f shells; H sto-3g keeps it small
    mol = gto.M(atom=list(zip(s, p)), basis={"Ti": "def2-svp", "O": "cc-pvtz", "H": "sto-3g"},
                cart=cart, charge=4, verbose=0)
    sym = mol_symmetry(mol)
    assert sym.name == "Th"
    reps = ao_representation(mol, sym)
    assert _residual(mol, sym, reps) < 1e-9
    s_ao = mol.intor_symmetric("int1e_ovlp")
    for r in reps:                                           # S-unitary
        assert np.allclose(r.T @ s_ao @ r, s_ao, atol=1e-9)


def test_homomorphism_and_p_block():
    s, p = polyhedron("octahedral", "Ti", "F", 1.9)
    mol = gto.M(atom=list(zip(s, p)), basis="def2-svp", verbose=0, charge=-2)
    sym = mol_symmetry(mol)
    reps = ao_representation(mol, sym)
    table = sym.group.ops
    for a in range(0, 48, 5):
        for b in range(0, 48, 7):
            ab = np.einsum("ij,jk->ik", table[a], table[b])
            k = int(np.argmin(np.abs(table - ab[None]).reshape(48, -1).max(axis=1)))
            assert np.allclose(reps[a] @ reps[b], reps[k], atol=1e-10)
    for g in sym.ops:                                        # p functions (x, y, z): D = g
        assert np.allclose(shell_rotation(1, g), g)


def test_pyscf_keeps_input_frame():
    # PySCF 2.14 with symmetry=True: atom_coords() equals the input geometry; the
    # symmetry frame is only recorded in _symm_axes/_symm_orig (see aorep docstring).
    s, p = polyhedron("octahedral", "Ti", "F", 1.9)
    moved, rot = transform(p)
    mol = gto.M(atom=list(zip(s, moved)), basis="sto-3g", charge=-2, verbose=0, symmetry=True)
    assert np.allclose(mol.atom_coords() * BOHR, moved, atol=1e-10)
    assert mol.topgroup == "Oh" and mol.groupname == "D2h"
    assert not np.allclose(np.abs(mol._symm_axes), np.eye(3), atol=1e-3)
    assert np.allclose(mol._symm_orig * BOHR, moved[0], atol=1e-8)
    # the symmetry-adapted AOs live in the input frame: each is an eigenvector of our
    # R(g) for PySCF's operations expressed in that frame
    from dsplit.symmetry.pyscf_check import pyscf_abelian
    _, h_ops, names, chars = pyscf_abelian(mol)
    sym = mol_symmetry(mol)
    reps = ao_representation(mol, sym)
    for so, irrep in zip(mol.symm_orb, mol.irrep_name):
        row = chars[names.index(irrep)]
        for h, chi in zip(h_ops, row):
            k = int(np.argmin(np.abs(sym.ops - h[None]).reshape(len(sym.ops), -1).max(axis=1)))
            assert np.allclose(reps[k] @ so, chi * so, atol=1e-8)
