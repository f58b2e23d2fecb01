"""Racah/Slater–Condon repulsion over the real d orbitals (models.racah) against outside sources."""

from __future__ import annotations

import numpy as np
import pytest

from dsplit.models.aom import QUADRATIC_FORMS as _Q
from dsplit.models.multiplet import multiplet_states
from dsplit.models.racah import _angular, gaunt_d, slater_eri, wigner_3j


def test_wigner_3j_closed_forms():
    # (j m j −m | 0 0) = (−1)^(j−m)/√(2j+1) and (2 2 2; 0 0 0) = −√(2/35)
    # (Edmonds, Angular Momentum in Quantum Mechanics, 1957, tables — from memory)
    assert wigner_3j(1, 1, 0, 1, -1, 0) == pytest.approx(1 / np.sqrt(3))
    assert wigner_3j(2, 2, 0, 1, -1, 0) == pytest.approx(-1 / np.sqrt(5))
    assert wigner_3j(2, 2, 2, 0, 0, 0) == pytest.approx(-np.sqrt(2 / 35))
    assert wigner_3j(2, 4, 2, 0, 0, 0) == pytest.approx(np.sqrt(2 / 35))
    assert wigner_3j(2, 2, 2, 1, 1, 0) == 0.0  # m1 + m2 + m3 ≠ 0


def test_condon_shortley_gaunt_table():
    # c^k(2m, 2m) for d electrons: c² = −2/7, 1/7, 2/7 and c⁴ = 1/21, −4/21, 6/21 for |m| = 2, 1, 0
    # (Condon & Shortley, The Theory of Atomic Spectra, 1935, table 1⁶ — from memory)
    assert [gaunt_d(2, m, m) * 7 for m in (2, 1, 0)] == pytest.approx([-2, 1, 2])
    assert [gaunt_d(4, m, m) * 21 for m in (2, 1, 0)] == pytest.approx([1, -4, 6])
    assert gaunt_d(0, 1, 1) == pytest.approx(1.0)


def test_pyscf_d_shell_integrals_are_exactly_slater_condon():
    # PySCF (reference library) computes (ij|kl) for one real d shell; it must lie exactly in the span
    # of our three angular tensors (so the complex→real transform and its signs are PySCF's).
    from pyscf import gto

    mol = gto.M(atom="Ni 0 0 0", basis={"Ni": [[2, [1.3, 1.0]]]}, charge=26, spin=0, verbose=0)
    assert [lab.split()[-1] for lab in mol.ao_labels()] == ["3dxy", "3dyz", "3dz^2", "3dxz", "3dx2-y2"]
    eri = mol.intor("int2e_sph")
    basis = np.array([_angular(k).ravel() for k in (0, 2, 4)]).T
    coef, *_ = np.linalg.lstsq(basis, eri.ravel(), rcond=None)
    assert np.abs(basis @ coef - eri.ravel()).max() < 1e-12
    assert coef[0] > coef[1] > coef[2] > 0  # R⁰ > R² > R⁴ > 0 for one radial function (common practice)
    f0, f2, f4 = coef[0], coef[1] / 49, coef[2] / 441
    assert np.allclose(slater_eri(f0, f2, f4), eri, atol=1e-12)


def test_real_d_orbitals_have_pyscf_signs():
    # PySCF's real d functions evaluated on points equal + rᵀ Q_i r (our quadratic forms) up to one
    # common positive radial factor: same order and the same sign for every orbital.
    from pyscf import gto

    mol = gto.M(atom="Ni 0 0 0", basis={"Ni": [[2, [1.0, 1.0]]]}, charge=26, spin=0, verbose=0)
    pts = np.random.default_rng(0).normal(size=(20, 3))
    ao = mol.eval_gto("GTOval_sph", pts)
    ours = np.einsum("pa,iab,pb->pi", pts, _Q, pts)
    ratio = ao / ours
    assert np.allclose(ratio / ratio[:, :1], 1.0, atol=1e-10)
    assert np.all(ratio > 0)


def _free_ion(d: int, b: float = 1.0, c: float = 4.0) -> dict[int, list[float]]:
    spec = multiplet_states(np.zeros((5, 5)), b, c, d)
    out: dict[int, list[float]] = {}
    for t in spec.terms:
        out.setdefault(t.multiplicity, []).append(round(t.energy, 8))
    return {m: sorted(set(v)) for m, v in out.items()}


def test_free_ion_d2_terms():
    # d² terms (Racah 1942; Griffith 1961, table A20 — from memory): ³F = A − 8B, ³P = A + 7B,
    # ¹D = A − 3B + 2C, ¹G = A + 4B + 2C, ¹S = A + 14B + 7C
    b, c = 1.0, 4.0
    terms = _free_ion(2, b, c)
    assert terms[3] == pytest.approx([0.0, 15 * b])
    assert terms[1] == pytest.approx([5 * b + 2 * c, 12 * b + 2 * c, 22 * b + 7 * c])


def test_free_ion_d3_and_d5_spacings():
    # d³: E(⁴P) − E(⁴F) = 15B; d⁵: E(⁴G) − E(⁶S) = 10B + 5C (Griffith 1961, tables A21, A23 — from memory)
    b, c = 1.0, 4.3
    assert _free_ion(3, b, c)[4] == pytest.approx([0.0, 15 * b])
    d5 = _free_ion(5, b, c)
    assert d5[6] == [0.0]
    assert min(d5[4]) == pytest.approx(10 * b + 5 * c)


def test_racah_a_shifts_every_state():
    # A adds A·n(n−1)/2 to every state of dⁿ (Griffith 1961, ch. 4 — from memory)
    from dsplit.models.multiplet import hamiltonian

    for d, ms2 in ((2, 0), (3, 1), (5, 5)):
        h = hamiltonian(np.zeros((5, 5)), 0.0, 0.0, d, ms2, a=1.0)
        assert np.allclose(h, d * (d - 1) / 2 * np.eye(len(h)))
