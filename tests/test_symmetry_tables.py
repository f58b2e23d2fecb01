"""Character tables: computed tables vs published ones, orthogonality, class sizes.

Published tables typed from F. A. Cotton, *Chemical Applications of Group Theory*,
3rd ed. (Wiley, 1990), Appendix IIA — from memory.  Columns are identified by a
representative operation built here with scipy (not with dsplit's own helpers),
in the standard frame stated in dsplit.symmetry.groups (principal axis z, first
C2' on x, σv = xz plane, σd of D_nd/Td/Oh through the x = y diagonal).
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from dsplit.symmetry.groups import SUPPORTED, point_group


def C(axis, n, k=1):
    """Proper rotation by 2πk/n about axis (scipy)."""
    a = np.asarray(axis, float)
    return Rotation.from_rotvec(a / np.linalg.norm(a) * 2 * np.pi * k / n).as_matrix()


def sigma(normal):
    n = np.asarray(normal, float)
    n = n / np.linalg.norm(n)
    return np.eye(3) - 2 * np.outer(n, n)


def S(axis, n, k=1):
    return sigma(axis) @ C(axis, n, k)


E, I = np.eye(3), -np.eye(3)
X, Y, Z, D111 = (1, 0, 0), (0, 1, 0), (0, 0, 1), (1, 1, 1)

# group: (columns [(class size, representative op)], rows {label: characters})
PUBLISHED = {
    "Oh": ([(1, E), (8, C(D111, 3)), (6, C((1, 1, 0), 2)), (6, C(Z, 4)), (3, C(Z, 2)), (1, I),
            (6, S(Z, 4)), (8, S(D111, 6)), (3, sigma(Z)), (6, sigma((1, -1, 0)))],
           {"a1g": [1, 1, 1, 1, 1, 1, 1, 1, 1, 1],
            "a2g": [1, 1, -1, -1, 1, 1, -1, 1, 1, -1],
            "eg": [2, -1, 0, 0, 2, 2, 0, -1, 2, 0],
            "t1g": [3, 0, -1, 1, -1, 3, 1, 0, -1, -1],
            "t2g": [3, 0, 1, -1, -1, 3, -1, 0, -1, 1],
            "a1u": [1, 1, 1, 1, 1, -1, -1, -1, -1, -1],
            "a2u": [1, 1, -1, -1, 1, -1, 1, -1, -1, 1],
            "eu": [2, -1, 0, 0, 2, -2, 0, 1, -2, 0],
            "t1u": [3, 0, -1, 1, -1, -3, -1, 0, 1, 1],
            "t2u": [3, 0, 1, -1, -1, -3, 1, 0, 1, -1]}),
    "Td": ([(1, E), (8, C(D111, 3)), (3, C(Z, 2)), (6, S(Z, 4)), (6, sigma((1, -1, 0)))],
           {"a1": [1, 1, 1, 1, 1], "a2": [1, 1, 1, -1, -1], "e": [2, -1, 2, 0, 0],
            "t1": [3, 0, -1, 1, -1], "t2": [3, 0, -1, -1, 1]}),
    "D4h": ([(1, E), (2, C(Z, 4)), (1, C(Z, 2)), (2, C(X, 2)), (2, C((1, 1, 0), 2)), (1, I),
             (2, S(Z, 4)), (1, sigma(Z)), (2, sigma(Y)), (2, sigma((1, -1, 0)))],
            {"a1g": [1, 1, 1, 1, 1, 1, 1, 1, 1, 1],
             "a2g": [1, 1, 1, -1, -1, 1, 1, 1, -1, -1],
             "b1g": [1, -1, 1, 1, -1, 1, -1, 1, 1, -1],
             "b2g": [1, -1, 1, -1, 1, 1, -1, 1, -1, 1],
             "eg": [2, 0, -2, 0, 0, 2, 0, -2, 0, 0],
             "a1u": [1, 1, 1, 1, 1, -1, -1, -1, -1, -1],
             "a2u": [1, 1, 1, -1, -1, -1, -1, -1, 1, 1],
             "b1u": [1, -1, 1, 1, -1, -1, 1, -1, -1, 1],
             "b2u": [1, -1, 1, -1, 1, -1, 1, -1, 1, -1],
             "eu": [2, 0, -2, 0, 0, -2, 0, 2, 0, 0]}),
    "D3h": ([(1, E), (2, C(Z, 3)), (3, C(X, 2)), (1, sigma(Z)), (2, S(Z, 3)), (3, sigma(Y))],
            {"a1'": [1, 1, 1, 1, 1, 1], "a2'": [1, 1, -1, 1, 1, -1], "e'": [2, -1, 0, 2, -1, 0],
             "a1''": [1, 1, 1, -1, -1, -1], "a2''": [1, 1, -1, -1, -1, 1],
             "e''": [2, -1, 0, -2, 1, 0]}),
    "C4v": ([(1, E), (2, C(Z, 4)), (1, C(Z, 2)), (2, sigma(Y)), (2, sigma((1, -1, 0)))],
            {"a1": [1, 1, 1, 1, 1], "a2": [1, 1, 1, -1, -1], "b1": [1, -1, 1, 1, -1],
             "b2": [1, -1, 1, -1, 1], "e": [2, 0, -2, 0, 0]}),
    "D3d": ([(1, E), (2, C(Z, 3)), (3, C(X, 2)), (1, I), (2, S(Z, 6)), (3, sigma(X))],
            {"a1g": [1, 1, 1, 1, 1, 1], "a2g": [1, 1, -1, 1, 1, -1], "eg": [2, -1, 0, 2, -1, 0],
             "a1u": [1, 1, 1, -1, -1, -1], "a2u": [1, 1, -1, -1, -1, 1],
             "eu": [2, -1, 0, -2, 1, 0]}),
    "D2d": ([(1, E), (2, S(Z, 4)), (1, C(Z, 2)), (2, C(X, 2)), (2, sigma((1, -1, 0)))],
            {"a1": [1, 1, 1, 1, 1], "a2": [1, 1, 1, -1, -1], "b1": [1, -1, 1, 1, -1],
             "b2": [1, -1, 1, -1, 1], "e": [2, 0, -2, 0, 0]}),
    "C2v": ([(1, E), (1, C(Z, 2)), (1, sigma(Y)), (1, sigma(X))],
            {"a1": [1, 1, 1, 1], "a2": [1, 1, -1, -1], "b1": [1, -1, 1, -1],
             "b2": [1, -1, -1, 1]}),
    "D2h": ([(1, E), (1, C(Z, 2)), (1, C(Y, 2)), (1, C(X, 2)), (1, I), (1, sigma(Z)),
             (1, sigma(Y)), (1, sigma(X))],
            {"ag": [1, 1, 1, 1, 1, 1, 1, 1], "b1g": [1, 1, -1, -1, 1, 1, -1, -1],
             "b2g": [1, -1, 1, -1, 1, -1, 1, -1], "b3g": [1, -1, -1, 1, 1, -1, -1, 1],
             "au": [1, 1, 1, 1, -1, -1, -1, -1], "b1u": [1, 1, -1, -1, -1, -1, 1, 1],
             "b2u": [1, -1, 1, -1, -1, 1, -1, 1], "b3u": [1, -1, -1, 1, -1, 1, 1, -1]}),
    # Th: the separably degenerate E pair as one real 'e' (characters ε + ε* = −1)
    "Th": ([(1, E), (4, C(D111, 3)), (4, C(D111, 3, 2)), (3, C(Z, 2)), (1, I),
            (4, S(D111, 6)), (4, S(D111, 6, 5)), (3, sigma(Z))],
           {"ag": [1, 1, 1, 1, 1, 1, 1, 1], "eg": [2, -1, -1, 2, 2, -1, -1, 2],
            "tg": [3, 0, 0, -1, 3, 0, 0, -1], "au": [1, 1, 1, 1, -1, -1, -1, -1],
            "eu": [2, -1, -1, 2, -2, 1, 1, -2], "tu": [3, 0, 0, -1, -3, 0, 0, 1]}),
    "O": ([(1, E), (6, C(Z, 4)), (3, C(Z, 2)), (8, C(D111, 3)), (6, C((1, 1, 0), 2))],
          {"a1": [1, 1, 1, 1, 1], "a2": [1, -1, 1, 1, -1], "e": [2, 0, 2, -1, 0],
           "t1": [3, 1, -1, 0, -1], "t2": [3, -1, -1, 0, 1]}),
    "C3v": ([(1, E), (2, C(Z, 3)), (3, sigma(Y))],
            {"a1": [1, 1, 1], "a2": [1, 1, -1], "e": [2, -1, 0]}),
    "D4": ([(1, E), (2, C(Z, 4)), (1, C(Z, 2)), (2, C(X, 2)), (2, C((1, 1, 0), 2))],
           {"a1": [1, 1, 1, 1, 1], "a2": [1, 1, 1, -1, -1], "b1": [1, -1, 1, 1, -1],
            "b2": [1, -1, 1, -1, 1], "e": [2, 0, -2, 0, 0]}),
    "C2h": ([(1, E), (1, C(Z, 2)), (1, I), (1, sigma(Z))],
            {"ag": [1, 1, 1, 1], "bg": [1, -1, 1, -1], "au": [1, 1, -1, -1],
             "bu": [1, -1, -1, 1]}),
    "S4": ([(1, E), (1, S(Z, 4)), (1, C(Z, 2)), (1, S(Z, 4, 3))],
           {"a": [1, 1, 1, 1], "b": [1, -1, 1, -1], "e": [2, 0, -2, 0]}),
}


def _class_index(group, op) -> int:
    diff = np.abs(group.ops - op[None]).reshape(len(group.ops), -1).max(axis=1)
    k = int(np.argmin(diff))
    assert diff[k] < 1e-8, "representative operation is not in the group"
    return int(group.class_of[k])


@pytest.mark.parametrize("name", sorted(PUBLISHED))
def test_published_table(name):
    columns, rows = PUBLISHED[name]
    g = point_group(name)
    sizes = [n for n, _ in columns]
    assert g.order == sum(sizes)                       # group order
    cls = [_class_index(g, op) for _, op in columns]
    assert sorted(cls) == list(range(len(g.classes)))  # every class once
    assert [len(g.classes[c]) for c in cls] == sizes   # class sizes
    assert sorted(g.labels) == sorted(rows)            # Mulliken labels
    for lab, chars in rows.items():
        got = g.irrep(lab).chars[cls]
        assert np.allclose(got, chars, atol=1e-9), (name, lab, got)


@pytest.mark.parametrize("name", SUPPORTED)
def test_orthogonality(name):
    g = point_group(name)
    chi = g.complex_chars                       # (n_irrep, n_class), complex
    h = g.class_sizes
    # great orthogonality (rows) and column orthogonality — common practice
    assert chi.shape[0] == chi.shape[1] == len(g.classes)
    assert np.allclose((chi * h) @ chi.conj().T, g.order * np.eye(len(h)), atol=1e-8)
    assert np.allclose(chi.conj().T @ chi, np.diag(g.order / h), atol=1e-8)
    assert np.isclose(np.sum(np.abs(chi[:, 0]) ** 2), g.order)      # Σ d² = |G|
    # the real irreps used for labelling
    real = np.array([r.chars for r in g.irreps])
    comp = np.array([r.n_components for r in g.irreps])
    assert np.allclose((real * h) @ real.T, g.order * np.diag(comp), atol=1e-8)
    assert sum(r.n_components for r in g.irreps) == len(g.classes)
    assert len(set(g.labels)) == len(g.labels)
    assert sum(h) == g.order and len(g.ops) == g.order


@pytest.mark.parametrize("name,order", [("Oh", 48), ("O", 24), ("Td", 24), ("Th", 24),
                                        ("T", 12), ("D4h", 16), ("D3h", 12), ("D3d", 12),
                                        ("D2d", 8), ("C4v", 8), ("C3v", 6), ("C2v", 4),
                                        ("D2h", 8), ("S6", 6), ("S4", 4), ("D6h", 24),
                                        ("D5d", 20), ("Cs", 2), ("C1", 1)])
def test_group_orders(name, order):
    # orders: Cotton 3rd ed., Appendix IIA — from memory
    assert point_group(name).order == order


def test_ops_are_orthogonal_and_closed():
    for name in SUPPORTED:
        g = point_group(name)
        assert np.allclose(np.einsum("gji,gjk->gik", g.ops, g.ops), np.eye(3), atol=1e-10)
        prods = np.einsum("aij,bjk->abik", g.ops, g.ops).reshape(-1, 9)
        flat = g.ops.reshape(len(g.ops), 9)
        assert np.abs(prods[:, None, :] - flat[None]).max(axis=2).min(axis=1).max() < 1e-8


# libmsym (independent library) names its irreps per group; it writes E1 for E
# where no E2 exists, A1/A1g for the totally symmetric irrep of D2/D2h, and upper case.
@pytest.mark.parametrize("name", ["Oh", "Td", "D4h", "D3h", "C4v", "D3d", "C2v", "D2h",
                                  "D2d", "C3v", "D4", "Th", "O"])
def test_irrep_names_match_libmsym(name):
    msym = pytest.importorskip("libmsym")
    # an atom set whose group is exactly `name` in the standard frame: orbit of a generic point
    g = point_group(name)
    pts = np.unique(np.round(np.einsum("gij,j->gi", g.ops, [0.83, 0.29, 0.47]), 9), axis=0)
    pts2 = np.unique(np.round(np.einsum("gij,j->gi", g.ops, [0.2, 0.1, 1.3]), 9), axis=0)
    elems = ([msym.Element(name="Fe", coordinates=[0.0, 0.0, 0.0])]
             + [msym.Element(name="H", coordinates=list(map(float, p))) for p in pts]
             + [msym.Element(name="C", coordinates=list(map(float, p))) for p in pts2])
    with msym.Context(elements=elems) as ctx:
        assert ctx.find_symmetry() == name
        theirs = [s.name.lower() for s in ctx.character_table.symmetry_species]
    if not any(t.startswith("e2") for t in theirs):
        theirs = [t.replace("e1", "e", 1) if t.startswith("e1") else t for t in theirs]
    if name in ("D2", "D2h"):
        theirs = [t.replace("a1", "a", 1) for t in theirs]
    assert sorted(theirs) == sorted(g.labels)
