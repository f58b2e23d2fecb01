"""Figures of a run: the orbital level diagram and the spin-state energies (matplotlib, Agg).

Level diagram (our layout): the complex orbitals of the frontier window sit in the
centre (α and β side by side for unrestricted runs); each degenerate set is drawn as
short bars side by side; the coloured part of a bar, from its left end, is the
orbital's metal-d share (IAO); arrows are electrons; ligand-field manifold sets sit
on a pale band with a bold label.  Metal levels (left) and ligand levels (right)
come from doc["level_diagram"] when present.  matplotlib is imported only here,
inside the functions, and no pyplot state is used.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from dsplit.report.blocks import is_number, text
from dsplit.report.sections_run import SPIN_NAMES, d_label, is_result, spins

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

DEGENERACY_TOL_EV = 0.01  # orbitals closer than this with the same label form one set (common practice)
DIAGRAM_AROUND = 6  # orbitals below the HOMO / above the LUMO per spin
METAL_COLOUR = "#0f766e"  # metal-d share, metal levels
REST_COLOUR = "#cbd5e1"  # the rest of a bar
LIGAND_COLOUR = "#475569"
MANIFOLD_COLOUR = "#fde68a"
MANIFOLD_TEXT = "#92400e"
INK = "#1e293b"
ALERT = "#b91c1c"
THEORY_COLOURS = ("#0f766e", "#b45309", "#4338ca", "#be123c", "#15803d", "#7c2d12")

#: rc settings for every figure: deterministic SVG ids, no mathtext in document text.
STYLE = {"svg.hashsalt": "dsplit", "text.parse_math": False, "font.size": 8, "axes.edgecolor": "#94a3b8",
         "axes.labelcolor": INK, "xtick.color": INK, "ytick.color": INK}


@contextlib.contextmanager
def style() -> Iterator[None]:
    """matplotlib rc context used while figures are drawn and saved."""
    import matplotlib

    with matplotlib.rc_context(STYLE):
        yield


def figure_bytes(fig: Figure, fmt: str, dpi: int = 150) -> bytes:
    """PNG or SVG bytes of a figure, without creation dates (deterministic)."""
    import io

    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(fig)
    buf = io.BytesIO()
    meta = {"Date": None} if fmt == "svg" else {"Software": None}
    fig.savefig(buf, format=fmt, dpi=dpi, metadata=meta)
    return buf.getvalue()


@dataclass
class LevelSet:
    """A degenerate set of complex orbitals as drawn."""

    energy: float
    label: str
    orbitals: list[dict[str, Any]] = field(default_factory=list)
    metal_d: float | None = None
    manifold: bool = False


def _full_label(o: dict[str, Any]) -> str | None:
    return o.get("donor_irrep") or o.get("irrep")


def _set_label(rows: list[dict[str, Any]]) -> str:
    full = _full_label(rows[0])
    if full:
        return str(full)
    return "+".join(dict.fromkeys(str(o["irrep_subgroup"]) for o in rows if o.get("irrep_subgroup")))


def _mean_d(rows: list[dict[str, Any]]) -> float | None:
    vals = [o["metal_d"] for o in rows if is_number(o.get("metal_d"))]
    return sum(vals) / len(vals) if vals else None


def level_sets(doc: dict[str, Any], spin: str, around: int = DIAGRAM_AROUND) -> list[LevelSet]:
    """Sets of one spin channel in the diagram window: manifold sets as given, others by energy and label."""
    from dsplit.report.terminal import frontier_rows

    every = {o["index"]: o for o in doc.get("orbitals") or [] if o.get("spin") == spin}
    chosen = {o["index"]: o for o in frontier_rows(doc, spin, around)}
    sets: list[LevelSet] = []
    if is_result(doc):
        for m in doc.get("manifold") or []:
            if m.get("spin") == spin:
                rows = [every[i] for i in m.get("orbitals") or [] if i in every]
                if rows:
                    d = m.get("metal_d") if is_number(m.get("metal_d")) else _mean_d(rows)
                    e = m.get("energy_eV")
                    e = e if is_number(e) else sum(o["energy_eV"] for o in rows) / len(rows)
                    sets.append(LevelSet(float(e), text(m.get("irrep")), rows, d, True))
                    for o in rows:
                        chosen.pop(o["index"], None)
    group: list[dict[str, Any]] = []
    for o in sorted(chosen.values(), key=lambda r: r["energy_eV"]) + [None]:
        if group and (o is None or o["energy_eV"] - group[-1]["energy_eV"] > DEGENERACY_TOL_EV
                      or _full_label(o) != _full_label(group[0])):
            sets.append(LevelSet(sum(r["energy_eV"] for r in group) / len(group), _set_label(group), group,
                                 _mean_d(group)))
            group = []
        if o is not None:
            group.append(o)
    return sorted(sets, key=lambda s: s.energy)


def spread_labels(ys: list[float], gap: float) -> list[float]:
    """Label heights at least ``gap`` apart, each as close to its own level as the order allows."""
    order = sorted(range(len(ys)), key=lambda i: ys[i])
    out = [ys[i] for i in order]
    for k in range(1, len(out)):
        out[k] = max(out[k], out[k - 1] + gap)
    shift = (sum(out) - sum(ys[i] for i in order)) / max(len(out), 1)  # recentre the pushed block
    out = [y - shift for y in out]
    for k in range(1, len(out)):
        out[k] = max(out[k], out[k - 1] + gap)
    res = [0.0] * len(ys)
    for k, i in enumerate(order):
        res[i] = out[k]
    return res


def _electrons(o: dict[str, Any], spin: str) -> str:
    occ = o.get("occupation") or 0.0
    if spin == "restricted":
        return {2: "↑↓", 1: "↑"}.get(round(occ), "")
    return ("↑" if spin == "alpha" else "↓") if occ > 0.5 else ""


def _draw_column(ax: Axes, x: float, sets: list[LevelSet], spin: str, gap: float) -> None:
    from matplotlib import patheffects
    from matplotlib.patches import Rectangle

    halo = [patheffects.withStroke(linewidth=2.2, foreground="white")]
    ext = []
    for s in sets:
        n = len(s.orbitals)
        bw = min(0.3, 0.9 / n) if spin == "restricted" else min(0.22, 0.72 / n)
        total = n * bw + (n - 1) * 0.04
        x0 = x - total / 2
        if s.manifold:
            ax.add_patch(Rectangle((x0 - 0.05, s.energy - gap * 0.45), total + 0.1, gap * 0.9,
                                   color=MANIFOLD_COLOUR, zorder=1, lw=0))
        for k, o in enumerate(sorted(s.orbitals, key=lambda r: r["index"])):
            a = x0 + k * (bw + 0.04)
            ax.plot([a, a + bw], [o["energy_eV"]] * 2, color=REST_COLOUR, lw=4.5, solid_capstyle="butt", zorder=2)
            d = o.get("metal_d") if is_number(o.get("metal_d")) else None
            if d:
                ax.plot([a, a + bw * min(max(d, 0.0), 1.0)], [o["energy_eV"]] * 2, color=METAL_COLOUR, lw=4.5,
                        solid_capstyle="butt", zorder=3)
            ax.text(a + bw / 2, o["energy_eV"], _electrons(o, spin), ha="center", va="center", fontsize=8,
                    color=INK, zorder=4, fontweight="bold", path_effects=halo)
        ext.append(x0 + total)
    ys = spread_labels([s.energy for s in sets], gap)
    for s, right, y in zip(sets, ext, ys):
        ax.plot([right + 0.02, right + 0.08], [s.energy, y], color="#94a3b8", lw=0.5, zorder=2)
        ax.text(right + 0.1, y, s.label, ha="left", va="center", fontsize=7, zorder=4,
                color=MANIFOLD_TEXT if s.manifold else INK, fontweight="bold" if s.manifold else "normal")


def _draw_fragment(ax: Axes, x: float, levels: list[dict[str, Any]], colour: str, side: str, gap: float) -> None:
    levels = [lv for lv in levels if is_number(lv.get("energy_eV"))]
    ys = spread_labels([float(lv["energy_eV"]) for lv in levels], gap)
    for lv, y in zip(levels, ys):
        e = float(lv["energy_eV"])
        ax.plot([x - 0.25, x + 0.25], [e, e], color=colour, lw=2.5, solid_capstyle="butt", zorder=2)
        edge, tx, ha = (x - 0.27, x - 0.33, "right") if side == "left" else (x + 0.27, x + 0.33, "left")
        ax.plot([edge, tx], [e, y], color="#94a3b8", lw=0.5)
        ax.text(tx + (-0.02 if side == "left" else 0.02), y, text(lv.get("label")), ha=ha, va="center", fontsize=7,
                color=colour)


def _title(doc: dict[str, Any]) -> str:
    cx, m = doc.get("complex") or {}, doc.get("method") or {}
    sol = (m.get("solvent") or {}).get("name")
    line1 = f"{text(cx.get('formula'))} · {text(m.get('theory'))}/{text(m.get('basis'))}" + (f", {sol}" if sol else "")
    line2 = f"{text(cx.get('geometry'))}, {d_label(cx.get('d_electrons'))}, 2S+1 = {text(doc.get('multiplicity'))}"
    return f"{line1}\n{line2}"


THUMB_INCHES = 0.56  # d-orbital thumbnail size beside the manifold levels
THUMB_COLUMN = 1.75  # data units reserved for them (up to three side by side)


def _pictured_spin(channels: list[tuple[str, list[LevelSet]]], thumbs: dict[tuple[str, int], bytes]) -> str | None:
    for spin, sets in channels:
        if any((spin, o["index"]) in thumbs for s in sets if s.manifold for o in s.orbitals):
            return spin
    return None


def _draw_thumbnails(ax: Axes, x0: float, sets: list[LevelSet], spin: str, thumbs: dict[tuple[str, int], bytes],
                     fig_height_in: float) -> None:
    """Each manifold set's d-orbital pictures in a row at (about) its energy, joined to the level by a line."""
    import io

    from matplotlib.image import imread
    from matplotlib.offsetbox import AnnotationBbox, OffsetImage

    rows = [s for s in sets if s.manifold and any((spin, o["index"]) in thumbs for o in s.orbitals)]
    lo, hi = ax.get_ylim()
    x_lo, x_hi = ax.get_xlim()
    bbox = ax.get_position()
    per_inch_y = (hi - lo) / (bbox.height * fig_height_in)
    per_inch_x = (x_hi - x_lo) / (bbox.width * ax.figure.get_figwidth())
    ys = spread_labels([s.energy for s in rows], THUMB_INCHES * 1.08 * per_inch_y)
    for s, y in zip(rows, ys):
        pics = [thumbs[(spin, o["index"])] for o in sorted(s.orbitals, key=lambda r: r["index"])
                if (spin, o["index"]) in thumbs]
        ax.plot([x0 - 0.28, x0 - 0.05], [s.energy, y], color="#94a3b8", lw=0.5, zorder=2)
        for k, png in enumerate(pics):
            img = imread(io.BytesIO(png), format="png")
            zoom = THUMB_INCHES * 72.0 / img.shape[0]  # OffsetImage draws one pixel per point × zoom
            box = AnnotationBbox(OffsetImage(img, zoom=zoom), (x0 + (k + 0.5) * THUMB_INCHES * per_inch_x, y),
                                 frameon=False, box_alignment=(0.5, 0.5), zorder=5)
            ax.add_artist(box)


def level_diagram(doc: dict[str, Any], thumbnails: dict[tuple[str, int], bytes] | None = None) -> Figure | None:
    """The orbital level diagram of one run (None when the document has no orbitals).

    ``thumbnails`` maps (spin, MO index) to a PNG of that orbital (report/orbital_pictures.py);
    they are drawn in a column beside the manifold levels of their spin channel.
    """
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    channels = [(s, level_sets(doc, s)) for s in spins(doc)]
    channels = [(s, sets) for s, sets in channels if sets]
    if not channels:
        return None
    thumbs = thumbnails or {}
    pictured = _pictured_spin(channels, thumbs) if is_result(doc) else None
    frag = doc.get("level_diagram") or {}
    metal, ligand = list(frag.get("metal") or []), list(frag.get("ligand") or [])
    energies = [o["energy_eV"] for _, sets in channels for s in sets for o in s.orbitals]
    energies += [float(lv["energy_eV"]) for lv in metal + ligand if is_number(lv.get("energy_eV"))]
    lo, hi = min(energies), max(energies)
    span = max(hi - lo, 1.0)
    gap = 0.028 * span
    cols: list[tuple[str, float]] = []
    x = 0.0
    if metal:
        cols.append((f"{text((doc.get('complex') or {}).get('metal'))} (metal)", x))
        x += 1.5
    thumb_x = None
    for spin, _ in channels:
        cols.append((f"complex {SPIN_NAMES[spin]}" if spin != "restricted" else "complex", x))
        x += 1.6
        if spin == pictured:
            thumb_x = x - 0.55
            x += THUMB_COLUMN
    if ligand:
        cols.append(("ligands", x - 0.1))
    extra = THUMB_COLUMN if thumb_x is not None else 0.0
    fig = Figure(figsize=(2.0 + 1.6 * len(cols) + extra, 6.8))
    ax = fig.add_axes((0.1, 0.12, 0.86, 0.75))
    k = 1 if metal else 0
    if metal:
        _draw_fragment(ax, cols[0][1], metal, METAL_COLOUR, "left", gap)
    for (spin, sets), (_, cx) in zip(channels, cols[k:]):
        _draw_column(ax, cx, sets, spin, gap)
    if ligand:
        _draw_fragment(ax, cols[-1][1], ligand, LIGAND_COLOUR, "right", gap)
    right = cols[-1][1] + (1.0 if ligand else 0.9)
    if thumb_x is not None:
        right = max(right, thumb_x + THUMB_COLUMN)
    ax.set_xlim(cols[0][1] - (1.0 if metal else 0.7), right)
    ax.set_ylim(lo - 0.06 * span, hi + 0.06 * span)
    if thumb_x is not None:
        _draw_thumbnails(ax, thumb_x, dict(channels)[pictured], pictured, thumbs, fig.get_figheight())
    ax.set_xticks([c for _, c in cols], [n for n, _ in cols])
    ax.tick_params(axis="x", length=0)
    ax.set_ylabel("orbital energy / eV")
    for side in ("top", "right", "bottom"):
        ax.spines[side].set_visible(False)
    fig.suptitle(_title(doc), fontsize=9.5, color=INK, y=0.975)
    if not is_result(doc):
        fig.text(0.5, 0.885, "NOT A RESULT — diagnostic only", ha="center", color=ALERT, fontsize=10,
                 fontweight="bold")
    have_d = any(is_number(o.get("metal_d")) for _, sets in channels for s in sets for o in s.orbitals)
    handles = [Line2D([], [], color=METAL_COLOUR, lw=4.5, solid_capstyle="butt",
                      label="metal-d share of the bar" if have_d else "metal-d share (none in this document)"),
               Line2D([], [], color=REST_COLOUR, lw=4.5, solid_capstyle="butt", label="rest (ligand, metal s/p)"),
               Patch(color=MANIFOLD_COLOUR, label="ligand-field manifold set"),
               Line2D([], [], ls="none", label="↑ ↓ electrons (α, β)")]
    fig.legend(handles=handles, loc="lower center", ncol=2, fontsize=7, frameon=False, bbox_to_anchor=(0.5, 0.01))
    return fig


def _state_panel(ax: Axes, states: list[dict[str, Any]], ground: Any) -> None:
    from dsplit.report.sections_results import state_ok

    good = [s for s in states if state_ok(s) and is_number(s.get("relative_kJmol"))]
    mults = sorted({s.get("multiplicity") for s in good}, key=lambda m: (m is None, m))
    theories = list(dict.fromkeys(s.get("theory") for s in good))
    w = 0.6 / max(len(theories), 1)
    for s in good:
        t = theories.index(s.get("theory"))
        x = mults.index(s.get("multiplicity")) - 0.3 + (t + 0.5) * w
        y = float(s["relative_kJmol"])
        c = THEORY_COLOURS[t % len(THEORY_COLOURS)]
        ax.plot([x - w * 0.42, x + w * 0.42], [y, y], color=c, lw=3, solid_capstyle="butt")
        low = abs(y) < 1e-9
        ax.text(x, y, f"{y:.1f}\n{text(s.get('configuration'))}" if len(theories) == 1 else f"{y:.0f}", ha="center",
                va="bottom", fontsize=6.5, color=INK, fontweight="bold" if low else "normal")
    if len(theories) > 1:
        from matplotlib.lines import Line2D

        ax.legend(handles=[Line2D([], [], color=THEORY_COLOURS[i % len(THEORY_COLOURS)], lw=3, label=text(t))
                           for i, t in enumerate(theories)], fontsize=7, frameon=False)
    ax.set_xticks(range(len(mults)), [f"2S+1 = {text(m)}" for m in mults])
    ax.set_xlim(-0.6, len(mults) - 0.4)
    ax.set_ylabel("energy relative to the lowest state / kJ mol⁻¹")
    ys = [float(s["relative_kJmol"]) for s in good] or [0.0]
    pad = 0.15 * max(max(ys) - min(ys), 1.0)
    ax.set_ylim(min(ys) - pad, max(ys) + 2 * pad)
    bad = len(states) - len(good)
    title = "spin states" + (f" (lowest: 2S+1 = {text(ground)})" if ground is not None else "")
    ax.set_title(title + (f"\n{bad} state(s) not converged/verified: not shown" if bad else ""), fontsize=8.5)


def _spread_panel(ax: Axes, rows: list[dict[str, Any]]) -> None:
    pts = sorted((100 * float(r["exact_exchange"]), float(r["delta_hs_ls_kJmol"]), text(r.get("theory")))
                 for r in rows if is_number(r.get("exact_exchange")) and is_number(r.get("delta_hs_ls_kJmol")))
    ax.axhline(0.0, color="#94a3b8", lw=0.8, ls="--")
    if pts:
        ax.plot([p[0] for p in pts], [p[1] for p in pts], color=THEORY_COLOURS[0], lw=1, marker="o", ms=5)
        for xv, yv, name in pts:
            ax.annotate(name, (xv, yv), textcoords="offset points", xytext=(4, 5), fontsize=7, color=INK)
    ax.set_xlabel("exact-exchange fraction / %")
    ax.set_ylabel("ΔE(HS − LS) / kJ mol⁻¹")
    ax.set_title("functional spread\nabove 0: low spin lower · below 0: high spin lower", fontsize=8.5)


def spin_state_figure(doc: dict[str, Any]) -> Figure | None:
    """Relative energies per multiplicity and, with several functionals, ΔE(HS−LS) vs exact exchange."""
    from matplotlib.figure import Figure

    from dsplit.report.sections_results import functional_spread_rows, spin_state_rows

    states, spread = spin_state_rows(doc), functional_spread_rows(doc)
    if not states and not spread:
        return None
    panels = int(bool(states)) + int(bool(spread))
    fig = Figure(figsize=(4.2 * panels + 0.6, 4.4))
    axes = fig.subplots(1, panels, squeeze=False)[0]
    if states:
        _state_panel(axes[0], states, doc.get("ground_multiplicity"))
    if spread:
        _spread_panel(axes[-1], spread)
    for ax in axes:
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
    fig.suptitle(text((doc.get("complex") or {}).get("formula")), fontsize=9.5, color=INK)
    fig.tight_layout()
    return fig
