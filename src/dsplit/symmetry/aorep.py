"""Representation matrices of point-group operations on a PySCF AO basis.

For an operation g (3×3 orthogonal, acting about the symmetry centre) the
operator (O_g f)(r) = f(g⁻¹ r) maps an AO of atom A to AOs of atom B = g(A):

    O_g φ_{A,μ} = Σ_ν φ_{B,ν} D_νμ(g),    Y_μ(g⁻¹ r) = Σ_ν Y_ν(r) D_νμ(g),

so R(g) (nao × nao) is the atom permutation times one D block per shell, and an
MO with coefficients c goes to R(g) c.  For p functions D(g) = g (x, y, z order).

* Spherical AOs (PySCF's default; m = −l…l, p as x, y, z): a proper rotation p
  uses ``pyscf.symm.Dmatrix.Dmatrix(l, α, β, γ, reorder_p=True)`` with
  ``get_euler_angles(I, pᵀ)`` (this pairing reproduces D = p for l = 1 — checked
  on every call); an improper g = det(g)·p multiplies the shell by det(g)^l
  (inversion acts on Y_lm as (−1)^l).  To avoid Euler-angle singularities at the
  axis-aligned operations of point groups, D(p) is formed as D(Q) D(Qᵀ p) with a
  fixed generic rotation Q (D is a homomorphism).
* Cartesian AOs (``mol.cart=True``): monomials x^a y^b z^c of degree l in PySCF
  order (xx, xy, xz, yy, yz, zz, ...) transform as M(g⁻¹ r) = M(r) D; D is solved
  exactly from 2·ncart random points.  PySCF gives all Cartesian components of
  a shell one normalisation factor, so D applies to the AOs unchanged (the
  test suite checks both cases against ``mol.eval_gto``).

Frame: PySCF ≥ 2.x keeps the input geometry when ``symmetry=True``
(``mol.atom_coords()`` equals the input; the symmetry frame is only recorded
in ``mol._symm_orig`` (Bohr) and ``mol._symm_axes`` (rows = PySCF's x, y, z in
the input frame)), and its symmetry-adapted AOs are rotated back into the input
frame.  AOs, MO coefficients and these matrices therefore all live in the frame
of ``mol.atom_coords()``, which is the frame handed to detection here.

Public API
----------
mol_symmetry(mol, tol=1e-3) -> Symmetry            detection on the mol's atoms
shell_rotation(l, g, cart=False) -> ndarray        D^l(g) for one shell
ao_representation(mol, symmetry) -> ndarray         (|G|, nao, nao), order = symmetry.ops
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np

from .detect import Symmetry, detect_point_group
from .ops import rotation

__all__ = ["mol_symmetry", "shell_rotation", "ao_representation"]

_Q = rotation([0.3, -0.5, 0.81], 0.977)  # fixed generic rotation (no Euler singularity)


def mol_symmetry(mol, tol: float = 1e-3) -> Symmetry:
    """Detect the point group of a PySCF Mole in its AO frame (atom labels keep
    atoms with different basis/ECP labels inequivalent).  Where the standard x
    axis is free (linear, C_n, ...) PySCF's x axis is used, so that PySCF's
    operations are among ours."""
    from pyscf.data.nist import BOHR
    labels = [a[0] for a in mol._atom]
    axes = getattr(mol, "_symm_axes", None)
    hint = None if axes is None else np.asarray(axes)[0]   # PySCF's x where ours is free
    return detect_point_group(labels, np.asarray(mol.atom_coords()) * BOHR, tol=tol,
                              x_hint=hint)


def _euler_dmatrix(l: int, p: np.ndarray) -> np.ndarray:
    from pyscf.symm.Dmatrix import Dmatrix, get_euler_angles
    alpha, beta, gamma = get_euler_angles(np.eye(3), p.T)
    return Dmatrix(l, alpha, beta, gamma, reorder_p=True)


@lru_cache(maxsize=4096)
def _sph_cached(l: int, key: tuple) -> np.ndarray:
    p = np.array(key).reshape(3, 3)
    d = _euler_dmatrix(l, _Q) @ _euler_dmatrix(l, _Q.T @ p)
    if l == 1 and not np.allclose(d, p, atol=1e-8):
        raise ArithmeticError("Dmatrix convention check failed (D1 != g)")
    return d


def _cart_monomials(l: int, r: np.ndarray) -> np.ndarray:
    cols = []
    for a in range(l, -1, -1):          # PySCF Cartesian order: x^a y^b z^c, a then b descending
        for b in range(l - a, -1, -1):
            c = l - a - b
            cols.append(r[:, 0] ** a * r[:, 1] ** b * r[:, 2] ** c)
    return np.array(cols).T


@lru_cache(maxsize=4096)
def _cart_cached(l: int, key: tuple) -> np.ndarray:
    g = np.array(key).reshape(3, 3)
    ncart = (l + 1) * (l + 2) // 2
    pts = np.random.default_rng(11).normal(size=(2 * ncart + 3, 3))
    m_r = _cart_monomials(l, pts)
    m_g = _cart_monomials(l, pts @ g)   # rows g⁻¹ r = gᵀ r  ⇒  r @ g
    d, *_ = np.linalg.lstsq(m_r, m_g, rcond=None)
    return d


def shell_rotation(l: int, g: np.ndarray, cart: bool = False) -> np.ndarray:
    """D^l(g) with Y_μ(g⁻¹ r) = Σ_ν Y_ν(r) D_νμ(g) in PySCF's AO order for one shell."""
    g = np.asarray(g, dtype=float)
    key = tuple(np.round(g, 12).ravel())
    if l == 0:
        return np.ones((1, 1))
    if cart:
        return _cart_cached(l, key)
    det = float(np.sign(np.linalg.det(g)))
    p = det * g
    return det ** l * _sph_cached(l, tuple(np.round(p, 12).ravel()))


def ao_representation(mol, symmetry: Symmetry) -> np.ndarray:
    """R(g) for every operation of ``symmetry`` (detected on this mol's atoms)."""
    natm = mol.natm
    if symmetry.permutation.shape[1] != natm:
        raise ValueError("symmetry was not detected on this molecule's atoms")
    nao = mol.nao_nr()
    slices = mol.aoslice_nr_by_atom() if hasattr(mol, "aoslice_nr_by_atom") else mol.aoslice_by_atom()
    ao_loc = mol.ao_loc_nr()
    reps = np.zeros((len(symmetry.ops), nao, nao))
    for k, g in enumerate(symmetry.ops):
        perm = symmetry.permutation[k]
        for a in range(natm):
            b = int(perm[a])
            sh_a = range(slices[a, 0], slices[a, 1])
            sh_b = range(slices[b, 0], slices[b, 1])
            if len(sh_a) != len(sh_b):
                raise ValueError(f"atoms {a} and {b} are mapped but carry different bases")
            for ia, ib in zip(sh_a, sh_b):
                l = mol.bas_angular(ia)
                if mol.bas_angular(ib) != l or mol.bas_nctr(ia) != mol.bas_nctr(ib):
                    raise ValueError(f"atoms {a} and {b} have different shell structures")
                d = shell_rotation(l, g, cart=mol.cart)
                n = d.shape[0]
                for c in range(mol.bas_nctr(ia)):
                    i0 = ao_loc[ia] + c * n
                    j0 = ao_loc[ib] + c * n
                    reps[k, j0:j0 + n, i0:i0 + n] = d
    return reps
