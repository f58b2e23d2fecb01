"""Render rows of key-value dicts as text, CSV, Markdown, HTML or JSON.

Every cell is escaped for its format: HTML via ``html.escape``; Markdown cells get
HTML entities for ``< > &`` and backslash escapes for the characters Markdown
treats as markup (CommonMark §2.4 backslash escapes — common practice).
"""

from __future__ import annotations

import csv
import html
import io
import json
import math
import re
from typing import Any, Sequence

FORMATS = ("text", "csv", "markdown", "html", "json")
Column = tuple[str, str]  # (key, header)
_MD_SPECIAL = re.compile(r"([\\`*_{}\[\]()#+!|~])")


def cell(value: Any, digits: int = 3) -> str:
    """Human text for one value (floats to ``digits`` decimals, missing as '–')."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.{digits}f}"
    return str(value)


def digits_for(key: str) -> int:
    """Decimals shown for a column: wavenumbers to whole cm⁻¹, kJ/mol to 0.1, others to 3."""
    if key.endswith("_cm1"):
        return 0
    if key.endswith(("_kJmol", "_kcalmol")):
        return 1
    return 3


def md_escape(text: str) -> str:
    text = html.escape(text, quote=False)
    return _MD_SPECIAL.sub(r"\\\1", text).replace("\n", " ")


def render(rows: Sequence[dict[str, Any]], columns: Sequence[Column], fmt: str = "text",
           title: str | None = None) -> str:
    if fmt == "json":
        return json.dumps([{k: r.get(k) for k, _ in columns} for r in rows], indent=2, ensure_ascii=False)
    if fmt == "csv":
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow([k for k, _ in columns])
        for r in rows:
            w.writerow(["" if r.get(k) is None else r.get(k) for k, _ in columns])
        return buf.getvalue().rstrip("\n")
    cells = [[cell(r.get(k), digits_for(k)) for k, _ in columns] for r in rows]
    heads = [h for _, h in columns]
    if fmt == "markdown":
        lines = [f"**{md_escape(title)}**", ""] if title else []
        lines.append("| " + " | ".join(md_escape(h) for h in heads) + " |")
        lines.append("|" + "|".join("---" for _ in heads) + "|")
        lines += ["| " + " | ".join(md_escape(c) for c in row) + " |" for row in cells]
        return "\n".join(lines)
    if fmt == "html":
        esc = html.escape
        out = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
               f"<title>{esc(title or 'dsplit archive')}</title></head><body>"]
        if title:
            out.append(f"<h1>{esc(title)}</h1>")
        out.append("<table>")
        out.append("<thead><tr>" + "".join(f"<th>{esc(h)}</th>" for h in heads) + "</tr></thead><tbody>")
        out += ["<tr>" + "".join(f"<td>{esc(c)}</td>" for c in row) + "</tr>" for row in cells]
        out.append("</tbody></table></body></html>")
        return "\n".join(out)
    if fmt != "text":
        raise ValueError(f"unknown format {fmt!r}")
    widths = [max([len(h)] + [len(row[i]) for row in cells]) for i, h in enumerate(heads)]
    lines = [title] if title else []
    lines.append("  ".join(h.ljust(w) for h, w in zip(heads, widths)).rstrip())
    lines += ["  ".join(c.ljust(w) for c, w in zip(row, widths)).rstrip() for row in cells]
    return "\n".join(lines)
