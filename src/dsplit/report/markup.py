"""Render report blocks as Markdown and as one self-contained HTML page.

HTML: every string from the document goes through html.escape; figures are embedded
as base64 PNG data URIs; the style sheet is inline; no external reference of any kind.
"""

from __future__ import annotations

import base64
import html
import re

from dsplit.report.blocks import Gallery, Image, Items, Para, Section, Table

# ---------------------------------------------------------------- Markdown

_MD_PREFIX = {"alert": "**NOT A RESULT.** ", "caution": "", "warning": "⚠ ", "note": "", "text": ""}


def _md_cell(s: str) -> str:
    return s.replace("\\", "\\\\").replace("|", "\\|").replace("\n", " ")


def _md_table(t: Table) -> list[str]:
    out = [f"*{t.caption}*", ""] if t.caption else []
    headers = t.headers if any(t.headers) else ["item", "value"]
    out.append("| " + " | ".join(_md_cell(h) for h in headers) + " |")
    out.append("|" + "|".join("---" for _ in headers) + "|")
    out += ["| " + " | ".join(_md_cell(c) for c in row) + " |" for row in t.rows]
    return out + [""]


def _md_image(b: Image) -> list[str]:
    caption = b.caption.replace("\n", " — ")  # a line break would end the emphasis in some readers
    return [f"![{b.alt}]({b.filename})", ""] + ([f"*{caption}*", ""] if caption else [])


def to_markdown(title: str, subtitle: str, sections: list[Section]) -> str:
    """The report as Markdown (GitHub-style tables); images by relative file name."""
    lines = [f"# {title}", "", subtitle, ""]
    for sec in sections:
        lines += [f"## {'⛔ ' if sec.kind == 'alert' else ''}{sec.title}", ""]
        for b in sec.blocks:
            if isinstance(b, Para):
                text = f"> {b.text}" if b.kind in ("alert", "caution") else f"{_MD_PREFIX.get(b.kind, '')}{b.text}"
                lines += [text, ""]
            elif isinstance(b, Items):
                mark = "> - " if b.kind in ("alert", "caution") else "- "
                lines += [f"{mark}{_MD_PREFIX['warning'] if b.kind == 'warning' else ''}{i}" for i in b.items] + [""]
            elif isinstance(b, Table):
                lines += _md_table(b)
            elif isinstance(b, Image):
                lines += _md_image(b)
            elif isinstance(b, Gallery):
                lines += [line for im in b.images for line in _md_image(im)]
    return "\n".join(lines).rstrip() + "\n"


# ---------------------------------------------------------------- HTML

CSS = """
:root { --ink:#1e293b; --muted:#64748b; --line:#e2e8f0; --accent:#0f766e; --paper:#f8fafc; }
* { box-sizing:border-box; }
body { margin:0; background:var(--paper); color:var(--ink);
       font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif; }
header { background:linear-gradient(120deg,#134e4a,#0f766e); color:#f0fdfa; padding:22px 28px 18px; }
header h1 { margin:0; font-size:1.55rem; font-weight:650; letter-spacing:.01em; }
header p { margin:4px 0 0; opacity:.85; }
main { max-width:1040px; margin:0 auto; padding:18px 22px 40px; }
section { background:#fff; border:1px solid var(--line); border-radius:10px; margin:16px 0; padding:4px 20px 14px; }
section h2 { font-size:1.08rem; color:var(--accent); border-bottom:1px solid var(--line); padding-bottom:6px; }
section.alert { border:2px solid #b91c1c; background:#fef2f2; }
section.alert h2 { color:#b91c1c; font-size:1.4rem; letter-spacing:.06em; }
section.caution { border-left:6px solid #d97706; background:#fffbeb; }
section.caution h2 { color:#92400e; }
.table-wrap { overflow-x:auto; }
table { border-collapse:collapse; margin:8px 0 12px; font-size:.9rem; }
caption { text-align:left; color:var(--muted); font-style:italic; padding:2px 0 4px; }
th, td { padding:4px 10px; border-bottom:1px solid var(--line); text-align:left; vertical-align:top; }
th { background:#f1f5f9; font-weight:600; }
tbody tr:nth-child(even) td { background:#fafcfd; }
table.kv th { display:none; }
table.kv td:first-child { color:var(--muted); white-space:nowrap; }
.badge { display:inline-block; padding:1px 9px; border-radius:999px; font-size:.82rem; font-weight:600; }
.v-agrees { background:#dcfce7; color:#166534; }
.v-differs { background:#fee2e2; color:#991b1b; }
.v-not-applicable { background:#e2e8f0; color:#475569; }
p.note { color:var(--muted); font-size:.88rem; }
p.warning, li.warning { color:#9a3412; }
p.alert, li.alert { color:#7f1d1d; font-weight:600; }
figure { margin:10px 0; }
figure img { max-width:100%; height:auto; border:1px solid var(--line); border-radius:6px; background:#fff; }
figcaption { color:var(--muted); font-size:.86rem; }
.gallery { display:flex; flex-wrap:wrap; gap:10px; }
.gallery figure { flex:1 1 170px; max-width:230px; margin:4px 0; text-align:center; }
.gallery figcaption { white-space:pre-line; }
footer { color:var(--muted); font-size:.8rem; text-align:center; padding:10px; }
"""

_e = html.escape


def _slug(s: str) -> str:
    return re.sub(r"[^a-z0-9]+", "-", s.lower()).strip("-")


def _html_table(t: Table) -> str:
    kv = not any(t.headers)
    head = "" if kv else "<thead><tr>" + "".join(f"<th>{_e(h)}</th>" for h in t.headers) + "</tr></thead>"
    body = []
    for row in t.rows:
        cells = []
        for k, c in enumerate(row):
            inner = f'<span class="badge v-{_slug(c)}">{_e(c)}</span>' if k == t.badge_column else _e(c)
            cells.append(f"<td>{inner}</td>")
        body.append("<tr>" + "".join(cells) + "</tr>")
    cap = f"<caption>{_e(t.caption)}</caption>" if t.caption else ""
    cls = ' class="kv"' if kv else ""
    return f'<div class="table-wrap"><table{cls}>{cap}{head}<tbody>{"".join(body)}</tbody></table></div>'


def _html_block(b: object, images: dict[str, bytes]) -> str:
    if isinstance(b, Para):
        return f'<p class="{_e(b.kind)}">{_e(b.text)}</p>'
    if isinstance(b, Items):
        return "<ul>" + "".join(f'<li class="{_e(b.kind)}">{_e(i)}</li>' for i in b.items) + "</ul>"
    if isinstance(b, Table):
        return _html_table(b)
    if isinstance(b, Image):
        png = images.get(b.filename)
        if png is None:
            return f'<p class="warning">{_e(b.alt)}: figure not available</p>'
        data = base64.b64encode(png).decode("ascii")
        cap = f"<figcaption>{_e(b.caption)}</figcaption>" if b.caption else ""
        return f'<figure><img alt="{_e(b.alt)}" src="data:image/png;base64,{data}">{cap}</figure>'
    if isinstance(b, Gallery):
        return '<div class="gallery">' + "".join(_html_block(im, images) for im in b.images) + "</div>"
    raise TypeError(f"unknown block {type(b).__name__}")


def to_html(title: str, subtitle: str, sections: list[Section], images: dict[str, bytes]) -> str:
    """One self-contained HTML page; ``images`` maps an Image's filename to its PNG bytes."""
    parts = [f'<section class="{_e(s.kind)}" id="{_slug(s.title)}"><h2>{_e(s.title)}</h2>'
             + "".join(_html_block(b, images) for b in s.blocks) + "</section>" for s in sections]
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            '<meta name="viewport" content="width=device-width, initial-scale=1">'
            f"<title>{_e(title)}</title><style>{CSS}</style></head><body>"
            f"<header><h1>{_e(title)}</h1><p>{_e(subtitle)}</p></header><main>"
            + "\n".join(parts) + "</main><footer>dsplit report</footer></body></html>\n")
