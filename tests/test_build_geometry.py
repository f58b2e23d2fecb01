"""Builder geometry checks against solid geometry (angles of ideal polyhedra)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from dsplit.geometry.polyhedra import GEOMETRIES, polyhedron
from tests.conftest import make

# Solid geometry: the angles between donor directions of each ideal polyhedron.
TD_ANGLE = np.degrees(np.arccos(-1.0 / 3.0))  # 109.4712°, arccos(−1/3)
EXPECTED_ANGLES = {
    "octahedral": {90.0, 180.0},
    "square-planar": {90.0, 180.0},
    "tetrahedral": {TD_ANGLE},
    "trigonal-bipyramidal": {90.0, 120.0, 180.0},
    "linear": {180.0},
}
# one ligand set per geometry for the monatomic and the polyatomic case
MONATOMIC = {"octahedral": 6, "square-planar": 4, "tetrahedral": 4, "trigonal-bipyramidal": 5,
             "square-pyramidal": 5, "trigonal-prismatic": 6, "linear": 2}


def _donor_angles(cx) -> set[float]:
    donors = [cx.atoms.positions[pl.atom_indices[0]] for pl in cx.ligands]
    out = set()
    for a, b in itertools.combinations(donors, 2):
        cos = np.dot(a, b) / np.linalg.norm(a) / np.linalg.norm(b)
        out.add(round(float(np.degrees(np.arccos(np.clip(cos, -1, 1)))), 4))
    return out


@pytest.mark.parametrize("geometry", GEOMETRIES)
@pytest.mark.parametrize("ligand", ["chlorido", "aqua", "ammine", "cyanido"])
def test_distances_exact_and_metal_at_origin(geometry, ligand):
    cx = make("Ni", geometry, {ligand: MONATOMIC[geometry]}, oxidation_state=2, bond_length=2.1)
    assert np.allclose(cx.atoms.positions[0], 0.0)
    for pl in cx.ligands:
        # every M–donor distance as requested (1e-8 Å)
        assert abs(np.linalg.norm(cx.atoms.positions[pl.atom_indices[0]]) - 2.1) < 1e-8
        # the ligand body points away from the metal: its other atoms are farther out
        for i in pl.atom_indices[1:]:
            assert np.linalg.norm(cx.atoms.positions[i]) > 2.1


@pytest.mark.parametrize("geometry", sorted(EXPECTED_ANGLES))
@pytest.mark.parametrize("ligand", ["fluorido", "aqua"])
def test_ideal_angles(geometry, ligand):
    cx = make("Co", geometry, {ligand: MONATOMIC[geometry]}, oxidation_state=2)
    expected = {round(a, 4) for a in EXPECTED_ANGLES[geometry]}
    assert _donor_angles(cx) == expected


def test_octahedral_donors_on_axes_and_tetrahedral_on_cube_corners():
    oh = polyhedron("octahedral").directions
    assert {tuple(np.round(d, 12)) for d in oh} == {(1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1)}
    td = polyhedron("tetrahedral").directions * np.sqrt(3.0)
    # alternate corners of the cube: the product of the coordinates is +1 for all four
    assert np.allclose(np.prod(td, axis=1), 1.0) and np.allclose(np.abs(td), 1.0)


def test_square_pyramid_apical_angle_and_prism():
    cx = make("Cu", "square-pyramidal", {"chlorido": 5}, oxidation_state=2, apical_angle=104.0)
    apical = cx.atoms.positions[cx.ligands[0].atom_indices[0]]
    assert np.allclose(apical / np.linalg.norm(apical), [0, 0, 1])
    for pl in cx.ligands[1:]:
        v = cx.atoms.positions[pl.atom_indices[0]]
        ang = np.degrees(np.arccos(v[2] / np.linalg.norm(v)))
        assert abs(ang - 104.0) < 1e-8
    # ideal trigonal prism with square side faces: triangle edge = prism height (solid geometry)
    d = polyhedron("trigonal-prismatic").directions
    edge = np.linalg.norm(d[0] - d[1])
    height = np.linalg.norm(d[0] - d[3])
    assert abs(edge - height) < 1e-10


def test_extxyz_roundtrip_keeps_charge_and_multiplicity(tmp_path):
    import ase.io

    from dsplit.api.build import write_geometry

    cx = make("Cr", "octahedral", {"fluorido": 6}, oxidation_state=3)
    path = write_geometry(cx, tmp_path / "cr.xyz")
    back = ase.io.read(path)
    assert back.info["charge"] == -3 and back.info["multiplicity"] == 4
    assert np.allclose(back.positions, cx.atoms.positions)
