"""dⁿ filling, CFSE, pairing and spin-only moments (models/filling.py) against textbook tables."""

import numpy as np
import pytest

from dsplit.models.filling import (
    configurations,
    ground_spin_state,
    high_spin,
    low_spin,
    spin_only_moment,
)

# Oh: t2g at −0.4Δo, eg at +0.6Δo; Td: e at −0.6Δt, t2 at +0.4Δt (in units of Δ)
OH = (np.array([-0.4, 0.6]), np.array([3, 2]))
TD = (np.array([-0.6, 0.4]), np.array([2, 3]))

# CFSE / Δo and unpaired electrons, d0–d10 (Shriver & Atkins, Inorganic Chemistry, table of
# ligand-field stabilisation energies; Figgis & Hitchman 2000, ch. 1 — from memory)
OH_HS = [0, -0.4, -0.8, -1.2, -0.6, 0, -0.4, -0.8, -1.2, -0.6, 0]
OH_LS = [0, -0.4, -0.8, -1.2, -1.6, -2.0, -2.4, -1.8, -1.2, -0.6, 0]
OH_HS_UNPAIRED = [0, 1, 2, 3, 4, 5, 4, 3, 2, 1, 0]
OH_LS_UNPAIRED = [0, 1, 2, 3, 2, 1, 0, 1, 2, 1, 0]
# extra pairs of low spin relative to the free ion: d4 1, d5 2, d6 2, d7 1 (same sources)
OH_LS_EXTRA = [0, 0, 0, 0, 1, 2, 2, 1, 0, 0, 0]
# CFSE / Δt, tetrahedral high spin (same sources)
TD_HS = [0, -0.6, -1.2, -0.8, -0.4, 0, -0.6, -1.2, -0.8, -0.4, 0]


@pytest.mark.parametrize("n", range(11))
def test_octahedral_cfse_table(n):
    hs, ls = high_spin(*OH, n), low_spin(*OH, n)
    assert hs.cfse == pytest.approx(OH_HS[n], abs=1e-12)
    assert ls.cfse == pytest.approx(OH_LS[n], abs=1e-12)
    assert hs.unpaired == OH_HS_UNPAIRED[n] and ls.unpaired == OH_LS_UNPAIRED[n]
    assert hs.extra_pairs == 0 and ls.extra_pairs == OH_LS_EXTRA[n]
    assert sum(hs.occupations) == n


@pytest.mark.parametrize("n", range(11))
def test_tetrahedral_cfse_table(n):
    assert high_spin(*TD, n).cfse == pytest.approx(TD_HS[n], abs=1e-12)


def test_occupations_d6():
    # d6 Oh: HS t2g⁴eg², LS t2g⁶, intermediate t2g⁵eg¹ (same sources)
    confs = configurations(*OH, 6)
    assert [c.occupations for c in confs] == [(4, 2), (5, 1), (6, 0)]
    assert [c.multiplicity for c in confs] == [5, 3, 1]
    assert confs[1].cfse == pytest.approx(-1.4)


@pytest.mark.parametrize("n", [4, 5, 6, 7])
def test_spin_crossover_at_delta_equals_p(n):
    # Oh d4–d7 are low spin when Δo > P, high spin when Δo < P (Shriver & Atkins — from memory)
    e, g = OH
    p = 1.0
    assert ground_spin_state(e * 1.2, g, n, p).unpaired == OH_LS_UNPAIRED[n]
    assert ground_spin_state(e * 0.8, g, n, p).unpaired == OH_HS_UNPAIRED[n]


def test_tie_goes_to_high_spin():
    # At Δo = P the d6 HS, IS and LS energies coincide (−0.4Δo); Hund's rule picks the quintet
    # (arithmetic of the table above; common practice for the tie)
    e, g = OH
    assert ground_spin_state(e * 17000.0, g, 6, 17000.0).multiplicity == 5


def test_square_planar_d8_is_low_spin():
    # Square-planar d8 (x²−y² far above the rest) is diamagnetic (e.g. Ni(CN)4²⁻;
    # Shriver & Atkins — from memory). σ-only AOM levels: xz, yz, xy 0; z² eσ; x²−y² 3eσ (eσ = 1)
    e = np.array([0.0, 1.0, 3.0])
    g = np.array([3, 1, 1])
    assert ground_spin_state(e, g, 8, pairing_energy=1.0).unpaired == 0


@pytest.mark.parametrize("n,mu", [(1, 1.73), (2, 2.83), (3, 3.87), (4, 4.90), (5, 5.92)])
def test_spin_only_moment(n, mu):
    # μ = √(n(n+2)) μB: 1.73, 2.83, 3.87, 4.90, 5.92 (Shriver & Atkins, spin-only table — from memory)
    assert spin_only_moment(n) == pytest.approx(mu, abs=0.005)


def test_bad_input():
    # five d orbitals, 0 ≤ n ≤ 10 (definition of a d shell)
    with pytest.raises(ValueError):
        high_spin(np.array([0.0, 1.0]), np.array([3, 3]), 4)
    with pytest.raises(ValueError):
        configurations(*OH, 11)
