"""Test geometries for the symmetry tests (metal at the origin, builder frame).

Frames follow the structure builder's conventions (see dsplit.symmetry.groups).
Other test_symmetry_* modules import these helpers; the tests here check the
helpers themselves against their definitions.
"""
from __future__ import annotations

import numpy as np
from scipy.spatial.transform import Rotation

SQ3 = np.sqrt(3.0)
VERTICES = {
    "octahedral": [(1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1)],
    "tetrahedral": [tuple(np.array(v) / SQ3) for v in
                    [(1, 1, 1), (1, -1, -1), (-1, 1, -1), (-1, -1, 1)]],
    "square-planar": [(1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0)],
    "linear": [(0, 0, 1), (0, 0, -1)],
}


def _ring(n: int, polar_deg: float, phase: float = 0.0, sign: float = 1.0) -> list[tuple]:
    t = np.radians(polar_deg)
    return [(np.sin(t) * np.cos(phase + a), np.sin(t) * np.sin(phase + a), sign * np.cos(t))
            for a in np.arange(n) * 2 * np.pi / n]


VERTICES["trigonal-bipyramidal"] = [(0, 0, 1), (0, 0, -1)] + _ring(3, 90)
VERTICES["square-pyramidal"] = [(0, 0, 1)] + _ring(4, 100)
VERTICES["trigonal-prismatic"] = _ring(3, 50) + _ring(3, 50, sign=-1)


def polyhedron(kind: str, metal: str = "M", donor: str = "X", d: float = 2.0):
    """(symbols, positions) of a metal with identical monatomic donors."""
    v = d * np.array(VERTICES[kind], dtype=float)
    return [metal] + [donor] * len(v), np.vstack([np.zeros(3), v])


def with_donors(kind: str, donors: list[str], metal: str = "M", d: float = 2.0):
    """Polyhedron with the donor labels given vertex by vertex (mixed ligand sets)."""
    s, p = polyhedron(kind, metal, "X", d)
    return [metal] + list(donors), p


def water(direction, plane_vec, d=2.1, oh=0.96, hoh=104.5):
    """O on ``d``·direction, H's in the plane of (direction, plane_vec), pointing away."""
    u = np.asarray(direction, float) / np.linalg.norm(direction)
    v = np.asarray(plane_vec, float) / np.linalg.norm(plane_vec)
    o = d * u
    h = np.radians(hoh / 2)
    return [("O", o), ("H", o + oh * (np.cos(h) * u + np.sin(h) * v)),
            ("H", o + oh * (np.cos(h) * u - np.sin(h) * v))]


AQUA_TH = [((1, 0, 0), (0, 1, 0)), ((-1, 0, 0), (0, 1, 0)), ((0, 1, 0), (0, 0, 1)),
           ((0, -1, 0), (0, 0, 1)), ((0, 0, 1), (1, 0, 0)), ((0, 0, -1), (1, 0, 0))]


def hexaaqua_th(metal: str = "M", d: float = 2.1):
    """Six aqua ligands: water on ±x in the xy plane, ±y in yz, ±z in zx (Th)."""
    atoms = [(metal, np.zeros(3))]
    for u, v in AQUA_TH:
        atoms += water(u, v, d)
    return [a for a, _ in atoms], np.array([p for _, p in atoms])


def ammine(direction, spin_vec, d=2.15, nh=1.01, hnh=106.7):
    """NH3 on ``d``·direction, C3 axis along the M–N bond, one H in the (direction,
    spin_vec) plane, H's pointing away from the metal."""
    u = np.asarray(direction, float) / np.linalg.norm(direction)
    v = np.asarray(spin_vec, float)
    v = v - (v @ u) * u
    v /= np.linalg.norm(v)
    w = np.cross(u, v)
    # angle between N–H and the C3 axis from the H–N–H angle
    c = np.cos(np.radians(hnh))
    beta = np.arccos(np.sqrt((1 + 2 * c) / 3))
    n = d * u
    out = [("N", n)]
    for a in np.arange(3) * 2 * np.pi / 3:
        out.append(("H", n + nh * (np.cos(beta) * u + np.sin(beta) * (np.cos(a) * v
                                                                        + np.sin(a) * w))))
    return out


def transform(positions, seed: int = 3, shift=(0.37, -0.21, 0.55)):
    """A random proper rotation plus a shift (returns positions and the rotation)."""
    r = Rotation.random(random_state=seed).as_matrix()
    return np.asarray(positions) @ r.T + np.asarray(shift), r


def test_hexaaqua_geometry():
    s, p = hexaaqua_th()
    assert s.count("O") == 6 and s.count("H") == 12
    for k in range(6):
        o, h1, h2 = p[1 + 3 * k], p[2 + 3 * k], p[3 + 3 * k]
        # the definition: O–H 0.96 Å, H–O–H 104.5°, H farther from M than O
        assert np.isclose(np.linalg.norm(h1 - o), 0.96)
        cosang = (h1 - o) @ (h2 - o) / (np.linalg.norm(h1 - o) * np.linalg.norm(h2 - o))
        assert np.isclose(np.degrees(np.arccos(cosang)), 104.5)
        assert np.linalg.norm(h1) > np.linalg.norm(o) and np.linalg.norm(h2) > np.linalg.norm(o)
    # water on +x lies in the xy plane, on +y in yz, on +z in zx
    assert np.allclose(p[1:4, 2], 0) and np.allclose(p[7:10, 0], 0) and np.allclose(p[13:16, 1], 0)


def test_ammine_geometry():
    atoms = ammine((0, 0, 1), (1, 0, 0))
    n = atoms[0][1]
    hs = [p for _, p in atoms[1:]]
    for a, b in [(0, 1), (1, 2), (0, 2)]:
        va, vb = hs[a] - n, hs[b] - n
        ang = np.degrees(np.arccos(va @ vb / (np.linalg.norm(va) * np.linalg.norm(vb))))
        assert np.isclose(ang, 106.7)
    assert all(np.isclose(np.linalg.norm(h - n), 1.01) for h in hs)
    assert all(h[2] > n[2] for h in hs)


def test_polyhedra_distances():
    for kind in VERTICES:
        _, p = polyhedron(kind, d=2.0)
        assert np.allclose(np.linalg.norm(p[1:], axis=1), 2.0)
