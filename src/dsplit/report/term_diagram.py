"""Draw a dⁿ term diagram (E/B against Δ/B) from models.term_curves data (matplotlib, Agg).

Our layout: one line per term, coloured by multiplicity; where a term has the ground term's
multiplicity (spin-allowed from the ground state) it is drawn bold, elsewhere thin and pale, so
a high-spin/low-spin crossing shows as the bold set changing.  Optional marks: the computed point
(a vertical line at Δ/B) and measured bands (hollow diamonds at ν/B on that line, B from the fit
or the calculation).  A footer states that the diagram comes from a model.  Pure: data in,
Figure out; no pyplot state.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from dsplit.models.multiplet import SUPERSCRIPT
from dsplit.models.term_curves import TermCurves
from dsplit.report.figures import INK, figure_bytes, spread_labels, style

if TYPE_CHECKING:
    from matplotlib.figure import Figure

CAUTION = ("computed with a ligand-field model (dⁿ, Racah B and C, no spin–orbit coupling); "
           "approximations — confirm by experiment")
#: colour per multiplicity 2S+1 (our palette)
MULTIPLICITY_COLOURS = {1: "#475569", 2: "#b45309", 3: "#0f766e", 4: "#4338ca", 5: "#be123c", 6: "#15803d"}
_NAMES = {1: "singlets", 2: "doublets", 3: "triplets", 4: "quartets", 5: "quintets", 6: "sextets"}


def _segments(x: np.ndarray, y: np.ndarray, mask: np.ndarray) -> list[np.ndarray]:
    """Runs of consecutive grid points where ``mask`` holds, as (n, 2) polylines."""
    out, start = [], None
    for i, m in enumerate(list(mask) + [False]):
        if m and start is None:
            start = i
        elif not m and start is not None:
            out.append(np.column_stack([x[start:i], y[start:i]]))
            start = None
    return out


def draw_term_diagram(curves: TermCurves, *, point: float | None = None, bands_cm1: Sequence[float] | None = None,
                      b_cm1: float | None = None, title: str | None = None, y_max: float | None = None) -> Figure:
    """The term diagram as a matplotlib Figure (module docstring).

    ``point``: Δ/B of the complex; ``bands_cm1`` with ``b_cm1``: measured bands drawn at ν/B on
    that line (or as short ticks at the right edge when no point is given).
    """
    from matplotlib.collections import LineCollection
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    x = curves.x
    with style():
        fig = Figure(figsize=(6.4, 5.2))
        ax = fig.add_axes((0.11, 0.14, 0.72, 0.76))
        top = y_max if y_max is not None else _default_top(curves)
        for c in curves.curves:
            colour = MULTIPLICITY_COLOURS.get(c.multiplicity, INK)
            allowed = curves.ground_multiplicity == c.multiplicity
            ax.plot(x, c.energies, color=colour, linewidth=0.6, alpha=0.35)
            ax.add_collection(LineCollection(_segments(x, c.energies, allowed), colors=colour, linewidths=1.8))
        labelled = [c for c in curves.curves if curves.ground_multiplicity[-1] == c.multiplicity
                    and c.energies[-1] <= top]
        heights = spread_labels([float(c.energies[-1]) for c in labelled], gap=top / 45.0)
        for c, yl in zip(labelled, heights):
            ax.annotate(c.label, (x[-1], c.energies[-1]), xytext=(x[-1] + 0.012 * (x[-1] - x[0]), yl),
                        textcoords="data", va="center", fontsize=7, annotation_clip=False,
                        color=MULTIPLICITY_COLOURS.get(c.multiplicity, INK))
        if point is not None:
            ax.axvline(point, color=INK, linestyle="--", linewidth=0.8)
            ax.annotate(f"this complex: Δ/B = {point:.1f}", (point, 0.0), xytext=(-10, 4),
                        textcoords="offset points", fontsize=7, color=INK, rotation=90, va="bottom")
        if bands_cm1 and b_cm1:
            yb = np.asarray(bands_cm1, dtype=float) / b_cm1
            xb = np.full(len(yb), point if point is not None else x[-1])
            ax.plot(xb, yb, linestyle="none", marker="D", markersize=6, markerfacecolor="none",
                    markeredgecolor="#b91c1c", markeredgewidth=1.2, clip_on=False)
        ax.set_xlim(x[0], x[-1])
        ax.set_ylim(0.0, top)
        ax.set_xlabel("Δ/B (ligand-field splitting over Racah B)")
        ax.set_ylabel("E/B (energy above the ground term over Racah B)")
        group = f" ({curves.point_group})" if curves.point_group else ""
        ax.set_title(title or f"d{str(curves.d_count).translate(SUPERSCRIPT)}{group} terms, C/B = {curves.c_over_b:g}",
                     color=INK)
        present = sorted({c.multiplicity for c in curves.curves})
        handles = [Line2D([], [], color=MULTIPLICITY_COLOURS.get(m, INK), linewidth=1.8,
                          label=f"2S+1 = {m} ({_NAMES.get(m, '')})") for m in present]
        handles.append(Line2D([], [], color=INK, linewidth=1.8, label="bold: spin-allowed from the ground term"))
        if bands_cm1 and b_cm1:
            handles.append(Line2D([], [], linestyle="none", marker="D", markerfacecolor="none",
                                  markeredgecolor="#b91c1c", label="measured bands"))
        ax.legend(handles=handles, loc="upper left", fontsize=6.5, frameon=True, framealpha=0.9, edgecolor="none")
        fig.text(0.01, 0.015, CAUTION, fontsize=6.5, color="#b91c1c")
    return fig


def _default_top(curves: TermCurves) -> float:
    """Up to the fourth spin-allowed term at the right edge, at least E/B = 20 (our choice for readability)."""
    allowed = sorted(c.energies[-1] for c in curves.curves if curves.ground_multiplicity[-1] == c.multiplicity)
    every = sorted(c.energies[-1] for c in curves.curves)
    pick = allowed[min(3, len(allowed) - 1)] if len(allowed) > 1 else every[min(4, len(every) - 1)]
    return float(max(1.1 * pick, 20.0))


def term_diagram_bytes(curves: TermCurves, fmt: str = "png", **kwargs) -> bytes:
    """PNG or SVG bytes of draw_term_diagram (deterministic; keyword arguments as there)."""
    with style():
        return figure_bytes(draw_term_diagram(curves, **kwargs), fmt)
