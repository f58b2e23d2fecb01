"""Point-charge crystal field (models/crystal_field.py) against closed-form textbook results."""

import numpy as np
import pytest

from dsplit.models.aom import D_ORBITALS
from dsplit.models.crystal_field import point_charge_levels, point_charge_matrix
from dsplit.units import BOHR_IN_ANGSTROM

A = 2.0  # Å
R2, R4 = 0.7, 1.3  # Å², Å⁴: arbitrary radial moments
OCT = A * np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
TET = A / np.sqrt(3) * np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]], float)
CUBE = A / np.sqrt(3) * np.array([[x, y, z] for x in (1, -1) for y in (1, -1) for z in (1, -1)], float)
# Dq = Ze²⟨r⁴⟩/(6a⁵) for six charges −Ze at a (Figgis & Hitchman 2000, ch. 2 — from memory); Hartree
DQ = R4 / (6 * A**5) * BOHR_IN_ANGSTROM


def gap(w, n_low):
    return np.mean(w[n_low:]) - np.mean(w[:n_low])


def test_octahedral_dq():
    # Oh point charges: t2g at −4Dq, eg at +6Dq (same source)
    w, c = point_charge_levels(OCT, -1.0, R2, R4)
    assert w / DQ == pytest.approx([-4, -4, -4, 6, 6], abs=1e-9)
    eg = np.sum(c[:, 3:] ** 2, axis=1)
    assert eg[D_ORBITALS.index("z2")] == pytest.approx(1) and eg[D_ORBITALS.index("x2-y2")] == pytest.approx(1)


def test_charge_scales_linearly():
    # V ∝ Z (same formula)
    assert point_charge_matrix(OCT, -2.0, R2, R4) == pytest.approx(2 * point_charge_matrix(OCT, -1.0, R2, R4))


def test_tetrahedral_four_ninths_and_inversion():
    # Td: Δt = (4/9)Δo with e below t2 (Figgis & Hitchman 2000, ch. 2 — from memory)
    wo, _ = point_charge_levels(OCT, -1.0, R2, R4)
    wt, ct = point_charge_levels(TET, -1.0, R2, R4)
    assert wt[0] == pytest.approx(wt[1]) and wt[2] == pytest.approx(wt[4])
    e_low = np.sum(ct[:, :2] ** 2, axis=1)
    assert e_low[D_ORBITALS.index("z2")] == pytest.approx(1)
    assert gap(wt, 2) / gap(wo, 3) == pytest.approx(4 / 9)


def test_cube_eight_ninths():
    # Cube of 8 charges: Δ = (8/9)Δo, e below t2 (same source)
    wo, _ = point_charge_levels(OCT, -1.0, R2, R4)
    wc, _ = point_charge_levels(CUBE, -1.0, R2, R4)
    assert gap(wc, 2) / gap(wo, 3) == pytest.approx(8 / 9)


@pytest.mark.parametrize("positions", [OCT, TET, CUBE])
def test_l2_term_vanishes_for_cubic_sets(positions):
    # The quadrupole (l = 2) field is zero in cubic symmetry (same source)
    assert np.abs(point_charge_matrix(positions, -1.0, R2, R4, multipoles=(2,))).max() < 1e-14


def test_tetragonal_ds_dt():
    # Tetragonal elongation, 4 charges at a, 2 at b (Figgis & Hitchman 2000, ch. 2 / 3 — from memory):
    # Ds = (2/7)Ze²⟨r²⟩(1/a³ − 1/b³), Dt = (2/21)Ze²⟨r⁴⟩(1/a⁵ − 1/b⁵), Dq from a, and
    # E(b1g) = 6Dq + 2Ds − Dt, E(a1g) = 6Dq − 2Ds − 6Dt, E(b2g) = −4Dq + 2Ds − Dt, E(eg) = −4Dq − Ds + 4Dt
    b = 2.5
    pos = np.array([[A, 0, 0], [-A, 0, 0], [0, A, 0], [0, -A, 0], [0, 0, b], [0, 0, -b]])
    v = point_charge_matrix(pos, -1.0, R2, R4) / BOHR_IN_ANGSTROM
    dq = R4 / (6 * A**5)
    ds = 2 / 7 * R2 * (1 / A**3 - 1 / b**3)
    dt = 2 / 21 * R4 * (1 / A**5 - 1 / b**5)
    expect = {
        "x2-y2": 6 * dq + 2 * ds - dt,
        "z2": 6 * dq - 2 * ds - 6 * dt,
        "xy": -4 * dq + 2 * ds - dt,
        "xz": -4 * dq - ds + 4 * dt,
        "yz": -4 * dq - ds + 4 * dt,
    }
    assert np.allclose(v, np.diag(np.diag(v)), atol=1e-14)
    for k, e in expect.items():
        assert v[D_ORBITALS.index(k), D_ORBITALS.index(k)] == pytest.approx(e, rel=1e-10)


def test_monopole_shift():
    # l = 0: uniform shift −Σq/R (Coulomb's law), no splitting
    v0 = point_charge_matrix(OCT, -1.0, R2, R4, multipoles=(0,))
    assert v0 == pytest.approx(np.eye(5) * 6 / A * BOHR_IN_ANGSTROM)


def test_bad_multipole():
    with pytest.raises(ValueError):
        point_charge_matrix(OCT, -1.0, multipoles=(1,))
