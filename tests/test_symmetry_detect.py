"""Point-group detection, cross-checked against libmsym (independent library).

Expected groups: textbook assignments of ideal coordination polyhedra (Cotton,
*Chemical Applications of Group Theory*, 3rd ed., ch. 3 — from memory); every
case is also run through libmsym (``pip install libmsym``), which must agree.
"""
from __future__ import annotations

import os
import subprocess
import sys
import time

import numpy as np
import pytest

sys.path.insert(0, os.path.dirname(__file__))
from test_symmetry_geometry import (ammine, hexaaqua_th, polyhedron, transform,  # noqa: E402
                                    water, with_donors)

from dsplit.symmetry import detect_point_group  # noqa: E402

LIBMSYM_NAME = {"Dooh": "D0h", "Coov": "C0v"}   # libmsym spells ∞ as 0


ELEMENT = {"M": "Fe", "X": "Cl", "Y": "Br", "Z": "I"}


def libmsym_group(symbols, positions) -> str:
    """libmsym's point group; thresholds 1e-6 (its loose defaults fail on NH3 sets)."""
    msym = pytest.importorskip("libmsym")
    elems = [msym.Element(name=ELEMENT.get(s, s), coordinates=list(map(float, p)))
             for s, p in zip(symbols, positions)]
    t = 1e-6
    with msym.Context(elements=elems) as ctx:
        ctx.set_thresholds(zero=t, geometry=t, angle=t, equivalence=t, eigfact=t,
                           permutation=t, orthogonalization=t)
        return ctx.find_symmetry()


def _check_ops(sym, symbols, positions, tol=1e-3):
    """Independent verification of a detection result (pure numpy here)."""
    x = np.asarray(positions) - sym.centre
    r = sym.rotation
    assert np.allclose(r.T @ r, np.eye(3), atol=1e-9) and np.isclose(np.linalg.det(r), 1)
    assert np.allclose(sym.ops, np.einsum("ij,gjk,lk->gil", r, sym.group.ops, r), atol=1e-9)
    for g, perm in zip(sym.ops, sym.permutation):
        y = x @ g.T
        assert np.allclose(y, x[perm], atol=tol)
        assert all(symbols[i] == symbols[j] for i, j in enumerate(perm))
        assert sorted(perm) == list(range(len(symbols)))


def _mixed(kind, donors):
    return with_donors(kind, donors)


def _distorted_octahedron(scale):
    s, p = polyhedron("octahedral")
    return s, p * np.array(scale)[None, :]


def _trigonal_octahedron(stretch):
    s, p = polyhedron("octahedral")
    u = np.ones(3) / np.sqrt(3)
    return s, p + (stretch - 1) * np.outer(p @ u, u)


def _flattened_tetrahedron(cz):
    s, p = polyhedron("tetrahedral")
    return s, p * np.array([1, 1, cz])


def _twisted_prism(twist_deg):
    s, p = polyhedron("trigonal-prismatic")
    from scipy.spatial.transform import Rotation
    q = p.copy()
    top = q[:, 2] > 0.1
    q[top] = q[top] @ Rotation.from_euler("z", twist_deg, degrees=True).as_matrix().T
    return s, q


def _sandwich(staggered):
    ring = [(1.2 * np.cos(a), 1.2 * np.sin(a), 1.65) for a in np.arange(5) * 2 * np.pi / 5]
    ring2 = [(1.2 * np.cos(a + (np.pi / 5 if staggered else 0)),
              1.2 * np.sin(a + (np.pi / 5 if staggered else 0)), -1.65)
             for a in np.arange(5) * 2 * np.pi / 5]
    return ["Fe"] + ["C"] * 10, np.array([(0, 0, 0)] + ring + ring2, float)


def _hexaammine(vx):
    """Ammines on ±x, ±y, ±z; the spin vector of +x is vx, carried to +y, +z by the
    C3 (x→y→z) and to the opposite ligand by the inversion, so C3 and i hold by
    construction (S6).  vx = (0, 1, 1) adds the C2 about (1, −1, 0) → D3d."""
    vx = np.asarray(vx, float)
    c3 = lambda v: np.array([v[2], v[0], v[1]])  # noqa: E731
    spins = [vx, -vx, c3(vx), -c3(vx), c3(c3(vx)), -c3(c3(vx))]
    dirs = [(1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1)]
    atoms = [("M", np.zeros(3))]
    for u, v in zip(dirs, spins):
        atoms += ammine(u, v)
    return [a for a, _ in atoms], np.array([p for _, p in atoms])


def _diaqua_planar():
    atoms = [("M", np.zeros(3))] + water((1, 0, 0), (0, 1, 0)) + water((-1, 0, 0), (0, 1, 0))
    return [a for a, _ in atoms], np.array([p for _, p in atoms])


CASES = {
    # name: (builder, expected)  — expected from textbook geometry (from memory)
    "octahedral MF6": (lambda: polyhedron("octahedral", "Ti", "F"), "Oh"),
    "tetrahedral MCl4": (lambda: polyhedron("tetrahedral", "Ti", "Cl"), "Td"),
    "square planar": (lambda: polyhedron("square-planar", "Ni", "F"), "D4h"),
    "trigonal bipyramid": (lambda: polyhedron("trigonal-bipyramidal"), "D3h"),
    "square pyramid": (lambda: polyhedron("square-pyramidal"), "C4v"),
    "trigonal prism": (lambda: polyhedron("trigonal-prismatic"), "D3h"),
    "linear ML2": (lambda: polyhedron("linear", "Cu", "Cl"), "Dooh"),
    "linear M-NCS": (lambda: (["M", "N", "C", "S"],
                              np.array([[0, 0, 0], [0, 0, 2.0], [0, 0, 3.2], [0, 0, 4.8]])),
                     "Coov"),
    "hexaaqua Th": (hexaaqua_th, "Th"),
    "cis-MA4B2": (lambda: _mixed("octahedral", ["X", "X", "Y", "X", "Y", "X"]), "C2v"),
    "trans-MA4B2": (lambda: _mixed("octahedral", ["X", "X", "X", "X", "Y", "Y"]), "D4h"),
    "fac-MA3B3": (lambda: _mixed("octahedral", ["X", "Y", "X", "Y", "X", "Y"]), "C3v"),
    "mer-MA3B3": (lambda: _mixed("octahedral", ["X", "X", "X", "Y", "Y", "Y"]), "C2v"),
    "MA5B": (lambda: _mixed("octahedral", ["X", "X", "X", "X", "X", "Y"]), "C4v"),
    "tetragonal elongation": (lambda: _distorted_octahedron([1, 1, 1.1]), "D4h"),
    "rhombic distortion": (lambda: _distorted_octahedron([1, 1.05, 1.1]), "D2h"),
    "trigonal distortion": (lambda: _trigonal_octahedron(1.1), "D3d"),
    "flattened tetrahedron": (lambda: _flattened_tetrahedron(0.8), "D2d"),
    "twisted prism": (lambda: _twisted_prism(20), "D3"),
    "eclipsed sandwich": (lambda: _sandwich(False), "D5h"),
    "staggered sandwich": (lambda: _sandwich(True), "D5d"),
    "trans-diaqua planar": (_diaqua_planar, "D2h"),
    "hexaammine D3d": (lambda: _hexaammine((0, 1, 1)), "D3d"),
    "hexaammine S6": (lambda: _hexaammine((0, 1, -1)), "S6"),
    "SF4-like C2v": (lambda: (["S", "F", "F", "F", "F"],
                              np.array([[0, 0, 0], [1.6, 0, 0.3], [-1.6, 0, 0.3],
                                        [0, 1.5, -0.6], [0, -1.5, -0.6]])), "C2v"),
    "Cs": (lambda: (["M", "X", "Y", "Y"], np.array([[0, 0, 0], [2, 0, 0.1], [0, 2, 0.4],
                                                    [0, -2, 0.4]])), "Cs"),
    "Ci": (lambda: (["M", "X", "X", "Y", "Y", "Z", "Z"],
                    np.array([[0, 0, 0], [2, 0.3, 0.1], [-2, -0.3, -0.1], [0.2, 2.1, 0.5],
                              [-0.2, -2.1, -0.5], [0.4, -0.6, 1.9], [-0.4, 0.6, -1.9]])), "Ci"),
    "C1": (lambda: (["M", "X", "Y", "Z"], np.array([[0, 0, 0], [2, 0.1, 0], [0.3, 2, 0.2],
                                                    [0.1, -0.5, 2]])), "C1"),
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_detect_against_libmsym(case):
    build, expected = CASES[case]
    symbols, pos = build()
    sym = detect_point_group(symbols, pos)
    if expected is not None:
        assert sym.name == expected
    if sym.name != "C1":  # libmsym raises "no primary axis for reorientation" on C1
        assert LIBMSYM_NAME.get(sym.name, sym.name) == libmsym_group(symbols, pos)
    _check_ops(sym, symbols, pos)


@pytest.mark.parametrize("case", ["octahedral MF6", "tetrahedral MCl4", "hexaaqua Th",
                                  "square planar", "trigonal bipyramid", "twisted prism",
                                  "linear M-NCS", "staggered sandwich", "cis-MA4B2"])
def test_detect_rotated(case):
    build, expected = CASES[case]
    symbols, pos = build()
    ref = detect_point_group(symbols, pos)
    moved, rot = transform(pos)
    sym = detect_point_group(symbols, moved)
    assert sym.name == ref.name
    _check_ops(sym, symbols, moved)
    # same operations as a set, carried by the rotation (frame-independent detection);
    # groups with a free x axis (linear, C_n) are pinned by x_hint
    sym = detect_point_group(symbols, moved, x_hint=rot @ ref.rotation[:, 0])
    carried = np.einsum("ij,gjk,lk->gil", rot, ref.ops, rot)
    for g in carried:
        assert np.abs(sym.ops - g[None]).reshape(len(sym.ops), -1).max(axis=1).min() < 1e-8


def test_builder_frame_is_standard_frame():
    # Builder frame = standard frame: the rotation to the standard frame is the identity
    for case in ["octahedral MF6", "tetrahedral MCl4", "square planar", "trigonal bipyramid",
                 "square pyramid", "trigonal prism", "hexaaqua Th", "trans-MA4B2"]:
        symbols, pos = CASES[case][0]()
        assert np.allclose(detect_point_group(symbols, pos).rotation, np.eye(3), atol=1e-9), case


def test_c2_axes_through_ligands_for_d4h():
    # D4h: the C2' class (standard x) is the one through the donors (Mulliken's
    # convention, common practice) whatever the input orientation; checked by
    # rotating the square 45° about z.
    from scipy.spatial.transform import Rotation
    symbols, pos = polyhedron("square-planar")
    rz = Rotation.from_euler("z", 45, degrees=True).as_matrix()
    sym = detect_point_group(symbols, pos @ rz.T)
    x_std = sym.rotation[:, 0]
    assert np.max(np.abs(pos @ rz.T @ x_std)) == pytest.approx(2.0)


def test_tolerance():
    symbols, pos = hexaaqua_th()
    rng = np.random.default_rng(5)
    noisy = pos + rng.normal(scale=1e-4, size=pos.shape)
    assert detect_point_group(symbols, noisy, tol=1e-3).name == "Th"
    noisier = pos + rng.normal(scale=2e-2, size=pos.shape)
    assert detect_point_group(symbols, noisier, tol=1e-3).name == "C1"
    assert detect_point_group(symbols, noisier, tol=0.2).name == "Th"


@pytest.mark.parametrize("case", ["octahedral MF6", "trigonal bipyramid", "square pyramid",
                                  "mer-MA3B3", "rhombic distortion", "hexaammine D3d",
                                  "twisted prism"])
def test_noise_well_below_tolerance(case):
    # positional noise of tol/10 must not lower the group (the axes are re-fitted)
    symbols, pos = CASES[case][0]()
    ref = detect_point_group(symbols, pos).name
    rng = np.random.default_rng(17)
    for _ in range(4):
        noisy = pos + rng.normal(scale=1e-4, size=pos.shape)
        sym = detect_point_group(symbols, noisy, tol=1e-3)
        assert sym.name == ref
        _check_ops(sym, symbols, noisy, tol=1e-3)


def test_detection_is_fast():
    # the builder calls detection for several candidate orientations: milliseconds
    symbols, pos = hexaaqua_th()           # 19 atoms
    detect_point_group(symbols, pos)       # group tables are built once and cached
    times = []
    for _ in range(5):
        t = time.perf_counter()
        detect_point_group(symbols, pos)
        times.append(time.perf_counter() - t)
    assert np.median(times) < 0.05


def test_detection_does_not_import_pyscf():
    code = ("import sys, dsplit.symmetry as s; "
            "s.detect_point_group(['M','X','X'], [[0,0,0],[0,0,2],[0,0,-2]]); "
            "s.ligand_salcs; s.point_group('Oh'); "
            "assert 'pyscf' not in sys.modules, 'pyscf imported'")
    subprocess.run([sys.executable, "-c", code], check=True)


def _orbit_molecule(name):
    """Metal plus the orbits of two generic points under the standard group ``name``:
    a molecule whose group is exactly ``name`` (by construction)."""
    from dsplit.symmetry import point_group
    g = point_group(name)
    pts = [np.unique(np.round(np.einsum("gij,j->gi", g.ops, q), 9), axis=0)
           for q in ([0.83, 0.29, 0.47], [0.21, -0.13, 1.31])]
    symbols = ["Fe"] + ["H"] * len(pts[0]) + ["C"] * len(pts[1])
    return symbols, np.vstack([np.zeros((1, 3))] + pts)


@pytest.mark.parametrize("name", ["Cs", "C2", "C3", "C4", "S4", "S6", "S8", "C2v", "C3v",
                                  "C4v", "C6v", "C2h", "C3h", "C4h", "D2", "D3", "D4", "D6",
                                  "D2h", "D3h", "D4h", "D6h", "D2d", "D3d", "D4d", "D5d",
                                  "T", "Td", "Th", "O", "Oh"])
def test_generic_orbits(name):
    symbols, pos = _orbit_molecule(name)
    moved, _ = transform(pos, seed=len(name))
    sym = detect_point_group(symbols, moved)
    assert sym.name == name
    _check_ops(sym, symbols, moved)
    assert libmsym_group(symbols, moved) == name
