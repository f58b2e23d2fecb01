"""The dⁿ ligand-field multiplet model (models.multiplet, models.determinants) against PySCF and textbooks."""

from __future__ import annotations

from collections import Counter
from math import comb

import numpy as np
import pytest
from scipy.optimize import brentq

from dsplit.geometry.polyhedra import polyhedron
from dsplit.models.determinants import rotate_ci, spin_counts, spin_squared, strings
from dsplit.models.field_shape import polyhedron_shape
from dsplit.models.multiplet import frame_symmetry, hamiltonian, multiplet_states
from dsplit.models.racah import racah_eri

OH = polyhedron_shape(polyhedron("octahedral"))
TD = polyhedron_shape(polyhedron("tetrahedral"))


def _random_h(seed: int = 1, scale: float = 1.0) -> np.ndarray:
    h = np.random.default_rng(seed).normal(scale=scale, size=(5, 5))
    return h + h.T


def _oh(d: int, delta: float, b: float, c: float, shape=OH, **kw):
    return multiplet_states(shape.matrix(delta), b, c, d, symmetry=shape.symmetry, d_sets=shape.d_sets, **kw)


# ----------------------------------------------------------------------------- PySCF as reference
def test_strings_follow_pyscf_order():
    from pyscf.fci import cistring

    for n in range(6):
        assert list(strings(n)) == [int(s) for s in cistring.make_strings(range(5), n)]


@pytest.mark.parametrize("d, ms2", [(1, 1), (2, 0), (3, 1), (4, 2), (5, 1), (6, 0), (8, 2)])
def test_hamiltonian_equals_pyscf_direct_spin1(d, ms2):
    # The same h1 + our Racah eri given to PySCF's FCI (reference library) gives the same matrix,
    # eigenvalues and CI vectors (up to sign).
    from pyscf import fci

    h1, b, c = _random_h(d), 0.11, 0.43
    eri = racah_eri(0.0, b, c)
    na, nb = spin_counts(d, ms2)
    ours = hamiltonian(h1, b, c, d, ms2)
    n = len(ours)
    h2 = fci.direct_spin1.absorb_h1e(h1, eri, 5, (na, nb), 0.5)
    theirs = np.array([fci.direct_spin1.contract_2e(h2, np.eye(n)[i], 5, (na, nb)).ravel() for i in range(n)]).T
    assert np.abs(ours - theirs).max() < 1e-12
    roots = min(4, n)
    e_p, c_p = fci.direct_spin1.FCI().kernel(h1, eri, 5, (na, nb), nroots=roots)
    e_p, c_p = np.atleast_1d(e_p), c_p if roots > 1 else [c_p]
    w, v = np.linalg.eigh(ours)
    assert w[:roots] == pytest.approx(e_p, abs=1e-9)
    for k in range(roots):
        assert abs(v[:, k] @ np.asarray(c_p[k]).ravel()) == pytest.approx(1.0, abs=1e-7)


def test_spin_squared_equals_pyscf():
    from pyscf.fci.spin_op import spin_square

    w, v = np.linalg.eigh(hamiltonian(_random_h(4), 0.1, 0.4, 4, 0))
    s2 = spin_squared(2, 2)
    for k in range(0, 36, 7):
        assert v[:, k] @ s2 @ v[:, k] == pytest.approx(spin_square(v[:, k].reshape(10, 10), 5, (2, 2))[0], abs=1e-10)


def test_rotate_ci_matches_pyscf_in_rotated_orbitals():
    # FCI over φ_a = Σ_i d_i U_ia (integrals transformed) → rotate_ci → the same state over the d orbitals
    from pyscf import fci

    h1, eri = _random_h(7), racah_eri(0.0, 0.12, 0.5)
    u, _ = np.linalg.qr(np.random.default_rng(3).normal(size=(5, 5)))
    h_phi = u.T @ h1 @ u
    eri_phi = np.einsum("ia,jb,kc,ld,ijkl->abcd", u, u, u, u, eri)
    for d, ms2 in ((3, 1), (6, 2)):
        na, nb = spin_counts(d, ms2)
        _, c_phi = fci.direct_spin1.FCI().kernel(h_phi, eri_phi, 5, (na, nb), nroots=2)
        w, v = np.linalg.eigh(hamiltonian(h1, 0.12, 0.5, d, ms2))
        for k in range(2):
            moved = rotate_ci(c_phi[k], u, d, ms2).ravel()
            assert abs(moved @ v[:, k]) == pytest.approx(1.0, abs=1e-8)


# ----------------------------------------------------------------------------- counting and symmetry
@pytest.mark.parametrize("d", range(1, 10))
def test_total_state_count_is_binomial(d):
    # dⁿ has C(10, n) states counting M_S and spatial degeneracy (Pauli principle; common practice)
    assert _oh(d, 1.7, 0.1, 0.45).state_count == comb(10, d)


def test_d3_has_ten_quartets():
    # ⁴A2g + ⁴T2g + ⁴T1g(F) + ⁴T1g(P) = 10 spatial states (Tanabe & Sugano 1954 — from memory)
    quartets = _oh(3, 20000.0, 700.0, 3150.0).of_multiplicity(4)
    assert sorted(t.irrep for t in quartets) == ["A2g", "T1g", "T1g", "T2g"]
    assert sum(t.degeneracy for t in quartets) == 10


# L → Oh subduction (Griffith 1961, table A16; Cotton 1990, ch. 9 — from memory)
_SUBDUCE = {"S": ["A1"], "P": ["T1"], "D": ["E", "T2"], "F": ["A2", "T1", "T2"], "G": ["A1", "E", "T1", "T2"],
            "H": ["E", "T1", "T1", "T2"], "I": ["A1", "A2", "E", "T1", "T2", "T2"]}
# Russell–Saunders terms of d² and d³ (Condon & Shortley 1935 — from memory)
_FREE_ION_TERMS = {2: ["3F", "3P", "1G", "1D", "1S"], 3: ["4F", "4P", "2H", "2G", "2F", "2D", "2D", "2P"]}


@pytest.mark.parametrize("d", [2, 3])
def test_oh_irreps_are_the_subduced_free_ion_terms(d):
    expected = Counter(f"{t[0]}{g}g" for t in _FREE_ION_TERMS[d] for g in _SUBDUCE[t[1]])
    got = Counter(f"{t.multiplicity}{t.irrep}" for t in _oh(d, 1.3, 0.1, 0.45).terms)
    assert got == expected


def test_d2_oh_and_td_ground_terms():
    # Oh d² ground ³T1g(F); Td d² ground ³A2 (the hole of Oh d⁸ ³A2g); Oh d⁸ ground ³A2g (Lever 1984 — from memory)
    assert _oh(2, 15000, 700, 3150).ground.label == "³T1g"
    assert _oh(2, 5000, 700, 3150, shape=TD).ground.label == "³A2"
    assert _oh(8, 9000, 900, 4050).ground.label == "³A2g"


def test_configurations_in_the_strong_field():
    spec = _oh(3, 20000.0, 700.0, 3150.0)
    assert spec.ground.configurations == (("t2g^3 eg^0", 1.0),)  # ⁴A2g is pure t2g³
    t2 = [t for t in spec.terms if t.label == "⁴T2g"][0]
    assert t2.leading_configuration == "t2g^2 eg^1" and t2.configurations[0][1] == pytest.approx(1.0)


def test_symmetry_must_hold_for_h():
    with pytest.raises(ValueError, match="not invariant"):
        multiplet_states(_random_h(2), 0.1, 0.4, 2, symmetry=frame_symmetry("Oh"))


# ----------------------------------------------------------------------------- textbook closed forms
def _ts_t1(delta: float, b: float) -> tuple[float, float]:
    # ⁴T1g(F), ⁴T1g(P) of d³ Oh (and ³T1g of d⁸) above the A2g ground: the 2×2 secular equation
    # E = 7.5B + 1.5Δ ∓ ½√(225B² − 18BΔ + Δ²) (Lever, Inorganic Electronic Spectroscopy, 1984 — from memory)
    root = np.sqrt(225 * b * b - 18 * b * delta + delta * delta)
    return 7.5 * b + 1.5 * delta - 0.5 * root, 7.5 * b + 1.5 * delta + 0.5 * root


@pytest.mark.parametrize("d, mult", [(3, 4), (8, 3)])
@pytest.mark.parametrize("delta, b", [(17400.0, 730.0), (8500.0, 930.0), (25000.0, 600.0)])
def test_tanabe_sugano_closed_forms(d, mult, delta, b):
    bands = _oh(d, delta, b, 4.5 * b, multiplicities=(mult,)).spin_allowed_bands()
    assert [t.irrep for t in bands] == ["T2g", "T1g", "T1g"]
    assert bands[0].energy == pytest.approx(delta, abs=1e-6)  # ν1 = Δ exactly
    assert [bands[1].energy, bands[2].energy] == pytest.approx(list(_ts_t1(delta, b)), abs=1e-6)


def test_d6_spin_crossover_near_delta_over_b_20():
    # The ⁵T2g/¹A1g crossing of Oh d⁶ lies near Δ/B ≈ 20 at C/B = 4.8 (Tanabe & Sugano 1954 — from memory)
    def gap(x):
        spec = _oh(6, x, 1.0, 4.8, multiplicities=(1, 5))
        return spec.of_multiplicity(5)[0].absolute_energy - spec.of_multiplicity(1)[0].absolute_energy

    x = brentq(gap, 10.0, 30.0)
    assert 19.0 < x < 21.0
    assert _oh(6, 0.9 * x, 1.0, 4.8).ground.label == "⁵T2g"
    assert _oh(6, 1.1 * x, 1.0, 4.8).ground.label == "¹A1g"


@pytest.mark.parametrize("d", [1, 2, 3, 4, 7, 8])
def test_hole_rule_td_dn_equals_oh_d10_minus_n(d):
    # dⁿ in Td has the spectrum of d¹⁰⁻ⁿ in Oh for the same Δ, B, C (Griffith 1961, ch. 9 — from memory)
    td = _oh(d, 6000.0, 800.0, 3600.0, shape=TD)
    oh = _oh(10 - d, 6000.0, 800.0, 3600.0)
    key = sorted((t.multiplicity, t.irrep, round(t.energy, 4)) for t in td.terms)
    key_oh = sorted((t.multiplicity, t.irrep.rstrip("g"), round(t.energy, 4)) for t in oh.terms)
    assert key == key_oh
