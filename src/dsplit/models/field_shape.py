"""The shape of a ligand field: a 5×5 matrix scaled so that one unit of it is Δ = 1.

Δ of a one-electron matrix h over the d sets of a geometry is the highest minus the lowest
set mean (for two-set geometries the usual Δo, Δt, 10Dq; common practice), set means taken
over the eigenvectors of h assigned to each set (multiplet.assign_to_sets).  A term diagram or a
band fit moves along the ray Δ·ĥ with ĥ = h / Δ(h); in cubic symmetry the ray is the whole
one-electron field (up to its trace), elsewhere it fixes the ratios of the splittings.

For an ideal geometry the default shape is the σ-only angular overlap matrix (eπ = 0 unless a
ratio eπ/eσ is given; Schäffer & Jørgensen, Mol. Phys. 9, 401 (1965)).  The geometry is passed
as a duck-typed polyhedron (``.directions``, ``.point_group``, ``.d_set_labels``, e.g.
geometry.polyhedra.polyhedron(name)) because geometry/ sits above models/ in the import order.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from dsplit.models.aom import aom_matrix
from dsplit.models.multiplet import FrameSymmetry, assign_to_sets, frame_symmetry, is_invariant, set_pairs


@dataclass(frozen=True)
class FieldShape:
    """ĥ (5×5, Δ(ĥ) = 1), its point group in the d frame (or None) and the d sets."""

    h: np.ndarray
    symmetry: FrameSymmetry | None
    d_sets: tuple[tuple[str, tuple[str, ...]], ...]

    def matrix(self, delta: float) -> np.ndarray:
        return delta * self.h


def set_energies(h: np.ndarray, d_sets: Sequence) -> dict[str, float]:
    """Mean eigenvalue of h per d set (eigenvectors assigned to the set holding most of them)."""
    w, v = np.linalg.eigh(np.asarray(h, dtype=float))
    owner = assign_to_sets(v, d_sets)
    labels = [label for label, _ in set_pairs(d_sets)]
    return {lab: float(np.mean([w[j] for j in range(5) if owner[j] == k])) for k, lab in enumerate(labels)}


def delta_of(h: np.ndarray, d_sets: Sequence) -> float:
    """Highest minus lowest set mean of h (module docstring)."""
    e = set_energies(h, d_sets)
    return max(e.values()) - min(e.values())


def shape_of_matrix(h: np.ndarray, d_sets: Sequence, symmetry: FrameSymmetry | None = None) -> FieldShape:
    """The shape of any one-electron matrix: h / Δ(h) (ValueError when Δ(h) = 0)."""
    h = np.asarray(h, dtype=float)
    pairs = tuple(set_pairs(d_sets))
    delta = delta_of(h, pairs)
    if abs(delta) < 1e-12 * max(1.0, float(np.abs(h).max())):
        raise ValueError("the ligand-field matrix does not split the d sets (Δ = 0)")
    if symmetry is not None and not is_invariant(h, symmetry):
        symmetry = None
    return FieldShape(h / delta, symmetry, pairs)


def polyhedron_shape(polyhedron: Any, pi_ratio: float = 0.0) -> FieldShape:
    """σ(+π) AOM shape of an ideal polyhedron, in its own point group (module docstring)."""
    h = aom_matrix(polyhedron.directions, 1.0, pi_ratio)
    return shape_of_matrix(h, polyhedron.d_set_labels, frame_symmetry(polyhedron.point_group))
