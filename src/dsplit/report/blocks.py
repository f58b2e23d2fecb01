"""Format-neutral report blocks (paragraphs, tables, lists, images) and value formatting.

The section builders produce these from result.json; report.md and report.html are
two renderings of the same blocks, so both always say the same thing.  Every string
in a block is plain text: escaping belongs to the renderer.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Union

MISSING = "—"


@dataclass
class Para:
    """A paragraph; kind 'text', 'alert' (NOT A RESULT), 'caution', 'note' or 'warning'."""

    text: str
    kind: str = "text"


@dataclass
class Items:
    """A bulleted list."""

    items: list[str]
    kind: str = "text"


@dataclass
class Table:
    """A table of plain-text cells; ``badge_column`` holds verdicts to be styled."""

    headers: list[str]
    rows: list[list[str]]
    caption: str = ""
    badge_column: int | None = None


@dataclass
class Image:
    """A figure written beside the report (``filename``) and embedded in the HTML."""

    filename: str
    alt: str
    caption: str = ""


@dataclass
class Gallery:
    """Pictures side by side, each with its own caption (HTML: one row that wraps)."""

    images: list[Image]


Block = Union[Para, Items, Table, Image, Gallery]


@dataclass
class Section:
    """A titled part of the report; kind 'alert' marks the NOT A RESULT section."""

    title: str
    blocks: list[Block] = field(default_factory=list)
    kind: str = ""


def is_number(x: Any) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(float(x))


def num(x: Any, digits: int = 3) -> str:
    """A fixed-point number, or MISSING for None / NaN / non-numbers."""
    if not is_number(x):
        return MISSING
    return f"{float(x):.{digits}f}"


def pct(fraction: Any) -> str:
    """A fraction 0…1 as a whole percentage."""
    return num(100.0 * fraction, 0) if is_number(fraction) else MISSING


def text(x: Any) -> str:
    """Any JSON value as short plain text (numbers to 4 significant digits)."""
    if x is None:
        return MISSING
    if isinstance(x, bool):
        return "yes" if x else "no"
    if isinstance(x, int):
        return str(x)
    if isinstance(x, float):
        return f"{x:.4g}" if math.isfinite(x) else MISSING
    if isinstance(x, dict):
        return "; ".join(f"{k}: {text(v)}" for k, v in x.items()) or MISSING
    if isinstance(x, (list, tuple)):
        return ", ".join(text(v) for v in x) or MISSING
    return str(x)


_UNITS = {"cm-1": "cm⁻¹", "kj/mol": "kJ mol⁻¹", "ev": "eV", "hartree": "Eh"}


def unit(u: Any) -> str:
    """A unit string in report spelling (cm-1 → cm⁻¹)."""
    return _UNITS.get(str(u).lower(), str(u))


def value(key: str, x: Any) -> str:
    """``text(x)``, but total energies (a key naming hartree) keep 8 decimals."""
    if "hartree" in key.lower() and is_number(x):
        return num(x, 8)
    return x if isinstance(x, str) else text(x)


def because(shown: Any, reason: Any) -> str:
    """'value — reason', or just the value when no reason is given."""
    shown = shown if isinstance(shown, str) else text(shown)
    return f"{shown} — {reason}" if reason else shown


def key_values(pairs: list[tuple[str, Any]], caption: str = "") -> Table:
    """A two-column table of the pairs whose value is present."""
    rows = [[k, value(k, v)] for k, v in pairs if v is not None and v != ""]
    return Table(["", ""], rows, caption)
