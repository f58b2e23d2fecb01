"""Term-diagram data: every term of dⁿ as E/B against Δ/B along one field shape, C/B fixed.

The energies are homogeneous of degree one in (Δ, B, C), so E/B depends only on Δ/B and C/B
(the construction of Tanabe & Sugano, J. Phys. Soc. Jpn. 9, 753 (1954): energies above the
ground term at each Δ/B).  Terms of one multiplicity and irrep do not cross (non-crossing rule,
von Neumann & Wigner 1929), so the k-th eigenvalue of each (2S+1, Γ) block is one continuous
curve.  A term is spin-allowed at a point when its multiplicity is that of the ground term there.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from dsplit.models.field_shape import FieldShape
from dsplit.models.multiplet import SUPERSCRIPT, allowed_multiplicities, solve_blocks


@dataclass(frozen=True)
class TermCurve:
    multiplicity: int
    irrep: str
    energies: np.ndarray  # E/B above the ground term, one per grid point

    @property
    def label(self) -> str:
        return f"{str(self.multiplicity).translate(SUPERSCRIPT)}{self.irrep}"


@dataclass(frozen=True)
class TermCurves:
    """E/B of every term on a grid of Δ/B (one dⁿ, one field shape, one C/B)."""

    d_count: int
    point_group: str | None
    c_over_b: float
    x: np.ndarray  # Δ/B grid
    curves: tuple[TermCurve, ...]
    ground_multiplicity: np.ndarray  # per grid point

    def to_dict(self) -> dict:
        return {"d_count": self.d_count, "point_group": self.point_group, "C_over_B": self.c_over_b,
                "delta_over_B": self.x.tolist(), "ground_multiplicity": self.ground_multiplicity.tolist(),
                "curves": [{"multiplicity": c.multiplicity, "irrep": c.irrep, "E_over_B": c.energies.tolist()}
                           for c in self.curves]}


def term_curves(d_count: int, shape: FieldShape, c_over_b: float, x_max: float = 40.0,
                points: int = 121) -> TermCurves:
    """E/B of all terms for Δ/B from 0 to ``x_max`` (B = 1, C = c_over_b)."""
    x = np.linspace(0.0, float(x_max), int(points))
    series: dict[tuple[int, str, int], list[float]] = {}
    ground = np.zeros(len(x), dtype=int)
    for i, xi in enumerate(x):
        rows = []
        for m in allowed_multiplicities(d_count):
            count: dict[str, int] = {}
            for energy, block, _ in sorted(solve_blocks(shape.matrix(xi), 1.0, c_over_b, d_count, m, shape.symmetry),
                                           key=lambda t: t[0]):
                k = count.get(block.irrep, 0)
                count[block.irrep] = k + 1
                rows.append(((m, block.irrep, k), energy))
        e0 = min(e for _, e in rows)
        ground[i] = max(key[0] for key, e in rows if e - e0 < 1e-9)
        for key, e in rows:
            series.setdefault(key, []).append(e - e0)
    curves = tuple(TermCurve(m, irrep, np.array(vals)) for (m, irrep, _), vals in
                   sorted(series.items(), key=lambda kv: (kv[1][-1], -kv[0][0])))
    return TermCurves(d_count, None if shape.symmetry is None else shape.symmetry.name, float(c_over_b), x,
                      curves, ground)
