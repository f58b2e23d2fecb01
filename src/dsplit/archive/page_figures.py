"""Views across runs for the archive page: the measured spectrochemical series, Δ against
M–L distance, spin-state gaps per functional (matplotlib, Agg, no pyplot state).

The series view: homoleptic verified runs are grouped by metal, oxidation state,
geometry and method (theory/basis/solvent); within a group the ligands are ordered by
each estimator's Δ and set beside the textbook order of the same ligands
(``dsplit.models.spectrochemical``, Tsuchida's series as given in Shriver & Atkins,
from memory).  A pair of ligands whose computed order is the reverse of the textbook
order is a disagreement; both ligands are marked.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Iterable

from dsplit.archive.page_data import KNOWN_ESTIMATORS, PageRun
from dsplit.models.spectrochemical import SPECTROCHEMICAL_SERIES, order_by_field

if TYPE_CHECKING:
    from matplotlib.figure import Figure

CAUTION = "Computed values are approximations (method, basis, solvent, geometry); confirm by experiment."
RECOMMENDED = "recommended"
MAX_SERIES_GROUPS = 6  # groups drawn in the series figure (the largest first); the rest are listed
MAX_LADDERS = 40  # spin-state ladders drawn (the newest)
OK_COLOUR, OFF_COLOUR, LINE_COLOUR, MUTED = "#1d4ed8", "#c2410c", "#cbd5e1", "#64748b"

_MARKERS = {RECOMMENDED: "*", "orbital": "o", "state": "s", "excitation": "^", "multiplet": "D"}
_ROMAN = {1: "I", 2: "II", 3: "III", 4: "IV", 5: "V", 6: "VI", 7: "VII", 8: "VIII"}


def metal_label(metal: str, ox: int | None) -> str:
    """Fe(II): the metal with its oxidation state in Roman numerals (Stock notation)."""
    if ox is None:
        return metal
    return f"{metal}({_ROMAN.get(ox, str(ox)) if ox > 0 else str(ox)})"


@dataclass(frozen=True)
class SeriesView:
    """The ligands of one group ordered by one estimator's Δ, beside the textbook order."""

    group: str  # e.g. "Ti(III) octahedral · HF/sto-3g/none"
    estimator: str  # an estimator name or RECOMMENDED
    computed: tuple[tuple[str, float], ...]  # (ligand, Δ / cm⁻¹), weakest field first
    textbook: tuple[str, ...]  # the same ligands that the series knows, weakest first
    swapped: tuple[tuple[str, str], ...]  # (a, b): textbook a < b, but computed Δ(a) > Δ(b)

    @property
    def out_of_place(self) -> frozenset[str]:
        return frozenset(x for pair in self.swapped for x in pair)

    @property
    def not_in_series(self) -> tuple[str, ...]:
        return tuple(k for k, _ in self.computed if k not in SPECTROCHEMICAL_SERIES)


def compare_with_series(group: str, estimator: str, deltas: dict[str, float]) -> SeriesView:
    """Order ``deltas`` (ligand → Δ) and find the pairs that reverse the textbook order."""
    computed = tuple(sorted(deltas.items(), key=lambda kv: (kv[1], kv[0])))
    textbook = tuple(order_by_field(k for k in deltas if k in SPECTROCHEMICAL_SERIES))
    swapped = tuple((a, b) for i, a in enumerate(textbook) for b in textbook[i + 1:] if deltas[a] > deltas[b])
    return SeriesView(group, estimator, computed, textbook, swapped)


def series_views(runs: Iterable[PageRun]) -> list[list[SeriesView]]:
    """One list of views per group with ≥ 2 ligands (largest groups first).

    Only verified homoleptic runs count; if a ligand has several runs in a group the
    newest is used (``runs`` come newest first).
    """
    groups: dict[str, dict[str, PageRun]] = {}
    for r in runs:
        if not r.shows_values or len(r.ligands) != 1:
            continue
        key = f"{metal_label(r.metal, r.oxidation_state)} {r.geometry} · {r.method}"
        groups.setdefault(key, {}).setdefault(next(iter(r.ligands)), r)
    out = []
    for key, by_ligand in groups.items():
        if len(by_ligand) < 2:
            continue
        found = {e for r in by_ligand.values() for e in r.deltas_cm1}
        ests = [e for e in KNOWN_ESTIMATORS if e in found] + sorted(found - set(KNOWN_ESTIMATORS))
        views = []
        for est in [RECOMMENDED] + ests:
            deltas = {lig: (r.recommended_cm1 if est == RECOMMENDED else r.deltas_cm1.get(est))
                      for lig, r in by_ligand.items()}
            deltas = {k: v for k, v in deltas.items() if v is not None}
            if len(deltas) >= 2:
                views.append(compare_with_series(key, est, deltas))
        if views:
            out.append(views)
    out.sort(key=lambda vs: (-max(len(v.computed) for v in vs), vs[0].group))
    return out


def _caution(fig: Figure, margins: tuple[float, float, float, float], hspace: float = 0.0) -> None:
    """The one-line caution at the foot of every page figure, below fixed margins (inches: left,
    right, top, bottom above the caution) — fixed rather than tight_layout, which draws the figure twice."""
    w, h = fig.get_size_inches()
    left, right, top, bottom = margins
    fig.text(0.01, 0.08 / h, CAUTION, fontsize=6.5, color=MUTED, ha="left", va="bottom")
    fig.subplots_adjust(left=left / w, right=1 - right / w, top=1 - top / h, bottom=(bottom + 0.25) / h,
                        hspace=hspace)


def _short(name: str, width: int = 32) -> str:
    return name if len(name) <= width else name[: width - 1] + "…"


def _tidy(ax) -> None:
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)


def _series_panel(ax, views: list[SeriesView]) -> None:
    ligands = sorted({k for v in views for k, _ in v.computed})
    columns = [("textbook", None)] + [(v.estimator, v) for v in views]
    positions: dict[str, list[tuple[int, int]]] = {k: [] for k in ligands}
    textbook = [k for k in SPECTROCHEMICAL_SERIES if k in ligands]
    for k, name in enumerate(textbook):
        positions[name].append((0, k))
        ax.text(0, k, f"{name} ", ha="right", va="center", fontsize=7, color="#1e293b")
        ax.plot([0], [k], "o", color=MUTED, ms=4)
    for x, (_, view) in enumerate(columns[1:], start=1):
        for k, (lig, delta) in enumerate(view.computed):
            positions[lig].append((x, k))
            off = lig in view.out_of_place
            ax.plot([x], [k], "X" if off else "o", color=OFF_COLOUR if off else OK_COLOUR, ms=6 if off else 4)
            ax.annotate(f"{lig} {delta:,.0f}" + (" ✗" if off else ""), (x, k), xytext=(0, 4),
                        textcoords="offset points", ha="center", va="bottom", fontsize=6.5,
                        color=OFF_COLOUR if off else "#1e293b")
    for pts in positions.values():
        if len(pts) > 1:
            ax.plot([p[0] for p in pts], [p[1] for p in pts], color=LINE_COLOUR, lw=1, zorder=0)
    ax.set_xticks(range(len(columns)), [c[0] for c in columns], fontsize=7)
    ax.set_xlim(-0.9, len(columns) - 0.2)
    n = max(len(ligands), 2)
    ax.set_ylim(-0.5, n - 0.3)
    ax.set_yticks([0, n - 1], ["weaker field", "stronger field"], fontsize=6.5, color=MUTED)
    ax.set_title(f"{views[0].group}   (Δ / cm⁻¹)", fontsize=8, loc="left")
    _tidy(ax)


def series_figure(groups: list[list[SeriesView]]) -> Figure | None:
    """Per group: textbook order, then the order by each estimator's Δ / cm⁻¹ (swaps marked ✗)."""
    from matplotlib.figure import Figure

    groups = groups[:MAX_SERIES_GROUPS]
    if not groups:
        return None
    width = max(2.9 + 1.55 * len(vs) for vs in groups)
    rows = [0.5 + 0.32 * max(len(v.computed) for v in vs) for vs in groups]
    height = sum(rows) + 0.6 * (len(groups) - 1) + 0.85  # panels, gaps for titles, margins and caution
    fig = Figure(figsize=(max(width, 5.0), height))
    axes = fig.subplots(len(groups), 1, squeeze=False, gridspec_kw={"height_ratios": rows})[:, 0]
    for ax, views in zip(axes, groups):
        _series_panel(ax, views)
    _caution(fig, (0.85, 0.1, 0.3, 0.3), hspace=0.6 / (sum(rows) / len(rows)))
    return fig


def distance_figure(runs: Iterable[PageRun]) -> Figure | None:
    """Δ / cm⁻¹ of every verified run against its mean M–L distance; colour = metal, marker = estimator."""
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    from dsplit.report.figures import THEORY_COLOURS

    pts = []
    for r in runs:
        if not r.shows_values or r.mean_distance is None:
            continue
        values = dict(r.deltas_cm1)
        if r.recommended_cm1 is not None:
            values[RECOMMENDED] = r.recommended_cm1
        pts += [(r.mean_distance, v, r.metal, est) for est, v in values.items()]
    if not pts:
        return None
    metals = sorted({p[2] for p in pts})
    ests = [e for e in (RECOMMENDED, *KNOWN_ESTIMATORS) if any(p[3] == e for p in pts)]
    ests += sorted({p[3] for p in pts} - set(ests))
    spare = iter("v<>Ph")
    markers = {e: _MARKERS.get(e) or next(spare, "o") for e in ests}
    height = 3.6
    fig = Figure(figsize=(7.0, height))
    ax = fig.subplots()
    for i, metal in enumerate(metals):  # one artist per metal and estimator (hundreds of runs stay cheap)
        for est in ests:
            mine = [(d, v) for d, v, m, e in pts if m == metal and e == est]
            if mine:
                ax.plot([p[0] for p in mine], [p[1] for p in mine], markers[est], ls="",
                        color=THEORY_COLOURS[i % len(THEORY_COLOURS)], ms=7 if est == RECOMMENDED else 5, alpha=0.85,
                        mfc="none" if est == "orbital" else None)
    ax.set_xlabel("mean metal–ligand distance / Å")
    ax.set_ylabel("Δ / cm⁻¹")
    ax.grid(alpha=0.25)
    first = ax.legend(handles=[Line2D([], [], ls="", marker="o", color=THEORY_COLOURS[i % len(THEORY_COLOURS)],
                                      label=m) for i, m in enumerate(metals)], title="metal", fontsize=7,
                      title_fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False)
    ax.add_artist(first)
    ax.legend(handles=[Line2D([], [], ls="", marker=markers[e], color=MUTED, label=e,
                              mfc="none" if e == "orbital" else MUTED) for e in ests],
              title="estimator", fontsize=7, title_fontsize=7, loc="lower left", bbox_to_anchor=(1.01, 0.0),
              frameon=False)
    _tidy(ax)
    _caution(fig, (0.75, 1.2, 0.15, 0.45))
    return fig


def spin_gap_figure(runs: Iterable[PageRun]) -> Figure | None:
    """E(high spin) − E(low spin) / kJ mol⁻¹ per functional of every spin-state ladder, from pairs of
    verified states only (* marks a ladder with unverified states); newest on top, at most MAX_LADDERS."""
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D

    from dsplit.report.figures import THEORY_COLOURS

    ladders = [r for r in runs if r.spin_gaps][:MAX_LADDERS]
    if not ladders:
        return None
    theories = list(dict.fromkeys(g.theory for r in ladders for g in r.spin_gaps))
    h = 0.8 / max(len(theories), 1)
    height = 1.3 + 0.16 * len(ladders) * max(len(theories), 2)
    fig = Figure(figsize=(7.0, height))
    ax = fig.subplots()
    ax.axvline(0.0, color="#94a3b8", lw=0.8, ls="--")
    for y, r in enumerate(reversed(ladders)):
        for g in r.spin_gaps:
            t = theories.index(g.theory)
            yt = y + 0.4 - (t + 0.5) * h
            ax.barh([yt], [g.gap_kjmol], height=h * 0.9, color=THEORY_COLOURS[t % len(THEORY_COLOURS)])
            ax.annotate(f"{g.gap_kjmol:.0f}", (g.gap_kjmol, yt), xytext=(3 if g.gap_kjmol >= 0 else -3, 0),
                        textcoords="offset points", ha="left" if g.gap_kjmol >= 0 else "right", va="center",
                        fontsize=6)
    names = [f"{_short(r.name)} · {r.formula} · {r.basis}" + ("" if r.shows_values else " *") for r in ladders]
    ax.set_yticks(range(len(ladders)), names[::-1], fontsize=6.5)
    ax.set_ylim(-0.6, len(ladders) - 0.4)
    ax.set_xlabel("E(high spin) − E(low spin) / kJ mol⁻¹")
    ax.set_title("right of 0: low spin lies lower · left of 0: high spin lies lower", fontsize=7.5, color=MUTED)
    ax.margins(x=0.12)
    ax.legend(handles=[Line2D([], [], color=THEORY_COLOURS[i % len(THEORY_COLOURS)], lw=6, label=t)
                       for i, t in enumerate(theories)], title="functional", fontsize=7, title_fontsize=7,
              frameon=False, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    _tidy(ax)
    _caution(fig, (2.6, 1.0, 0.35, 0.45))
    return fig
