"""Report stage: result.json document → report.md, report.html and figures in the run folder.

Reporting never recomputes physics: every number comes from the document (unit changes
through dsplit.units).  Each file is written atomically (temporary file in the
same folder, then os.replace) and the output is deterministic for a given document.
A figure that cannot be drawn is named in the report instead of aborting the run.
"""

from __future__ import annotations

import functools
from pathlib import Path
from typing import Any, Callable

from dsplit.report import sections_handoff as hand
from dsplit.report import sections_multiplet as mult
from dsplit.report import sections_results as res
from dsplit.report import sections_run as run
from dsplit.report.blocks import Section, text
from dsplit.report.markup import to_html, to_markdown
from dsplit.runfolder import write_bytes, write_text

LEVEL_DIAGRAM = "level_diagram"
SPIN_STATES = "spin_states"


def write_atomic(path: Path, data: bytes | str) -> None:
    """Write a file whole (dsplit.runfolder: temporary sibling, then os.replace)."""
    if isinstance(data, str):
        write_text(path, data)
    else:
        write_bytes(path, data)


def report_title(doc: dict[str, Any]) -> tuple[str, str]:
    """(title, subtitle) of the report."""
    cx, m = doc.get("complex") or {}, doc.get("method") or {}
    title = f"{text(cx.get('formula'))} — {text(doc.get('name'))}"
    sub = (f"{text(cx.get('geometry'))}, {run.d_label(cx.get('d_electrons'))}, 2S+1 = {text(doc.get('multiplicity'))}"
           f" · {text(m.get('theory'))}/{text(m.get('basis'))}")
    return title, sub + ("" if run.is_result(doc) else " · NOT A RESULT")


def build_sections(doc: dict[str, Any], figures: dict[str, str] | None = None,
                   problems: list[str] | None = None, pictures: set[str] | None = None) -> list[Section]:
    """All report sections in order; ``figures`` maps 'level_diagram'/'spin_states' to PNG file names,
    ``pictures`` names the d-orbital PNGs at hand.

    Splitting, model, check and measured-vs-computed numbers appear only when the
    run converged and its configuration was verified.
    """
    figures = figures or {}
    ok = run.is_result(doc)
    parts: list[Section | None] = [run.status_section(doc), run.cautions_section(doc), run.complex_section(doc),
                                   run.method_section(doc)]
    if ok:
        parts += [res.splitting_section(doc), mult.multiplet_section(doc, figures.get(mult.TERM_DIAGRAM)),
                  res.models_section(doc), res.checks_section(doc)]
    parts += [res.measured_section(doc, with_computed=ok)]
    parts += [res.level_diagram_section(figures.get(LEVEL_DIAGRAM), problems or [])]
    if ok:
        parts += [hand.d_orbitals_section(doc, pictures or set())]
    parts += [run.frontier_section(doc)]
    if ok:
        parts += [run.manifold_section(doc)]
    parts += [res.spin_states_section(doc, figures.get(SPIN_STATES)), res.optimization_section(doc),
              hand.handoff_section(doc), run.notes_section(doc), run.provenance_section(doc)]
    return [p for p in parts if p is not None]


def _draw(name: str, make: Callable[[dict[str, Any]], Any], doc: dict[str, Any], formats: tuple[str, ...],
          problems: list[str]) -> dict[str, bytes]:
    """Figure bytes per format ({} when there is nothing to draw or drawing failed)."""
    from dsplit.report.figures import figure_bytes, style

    try:
        with style():
            fig = make(doc)
            return {} if fig is None else {f: figure_bytes(fig, f) for f in formats}
    except Exception as exc:  # a figure bug must not discard a finished calculation
        problems.append(f"{name} figure could not be drawn: {type(exc).__name__}: {exc}")
        return {}


def orbital_pictures(doc: dict[str, Any], folder: Path) -> dict[str, bytes]:
    """The d-orbital PNGs the hand-off wrote into ``folder`` (file name → bytes), as listed in the document."""
    out = {}
    for p in (doc.get("handoff") or {}).get("pictures") or []:
        path = folder / str(p.get("file"))
        if path.is_file():
            out[path.name] = path.read_bytes()
    return out


def write_reports(doc: dict[str, Any], folder: Path) -> list[Path]:
    """Write report.md, report.html, level_diagram.png/.svg, term_diagram.png/.svg (when B is known)
    and (with spin states) spin_states.png.

    The d-orbital pictures listed in ``doc["handoff"]`` are read from ``folder`` and embedded
    (and drawn beside the manifold levels).  Returns the paths written, in writing order.
    """
    from dsplit.report.figures import level_diagram, spin_state_figure

    folder = Path(folder)
    problems: list[str] = []
    pictures = orbital_pictures(doc, folder)
    thumbs = {(p.get("spin"), p.get("mo_index")): pictures[p["file"]]
              for p in (doc.get("handoff") or {}).get("pictures") or [] if p.get("file") in pictures}
    diagram = functools.partial(level_diagram, thumbnails=thumbs) if thumbs else level_diagram
    drawn = {LEVEL_DIAGRAM: _draw("level diagram", diagram, doc, ("png", "svg"), problems),
             SPIN_STATES: _draw("spin-state", spin_state_figure, doc, ("png",), problems),
             mult.TERM_DIAGRAM: _draw("term diagram", mult.term_diagram_figure, doc, ("png", "svg"), problems)
             if run.is_result(doc) else {}}
    written: list[Path] = []
    for name, formats in drawn.items():
        for fmt, data in formats.items():
            path = folder / f"{name}.{fmt}"
            write_atomic(path, data)
            written.append(path)
    figures = {name: f"{name}.png" for name, formats in drawn.items() if "png" in formats}
    images = {f"{name}.png": formats["png"] for name, formats in drawn.items() if "png" in formats}
    images.update(pictures)
    sections = build_sections(doc, figures, problems, set(pictures))
    title, subtitle = report_title(doc)
    for fname, body in (("report.md", to_markdown(title, subtitle, sections)),
                        ("report.html", to_html(title, subtitle, sections, images))):
        write_atomic(folder / fname, body)
        written.append(folder / fname)
    return written
