"""``<archive>/index.html``: every run on one self-contained page, rewritten on every commit.

One file: inline style sheet, one small inline script (sorting and filtering), figures as
base64 PNG; no external reference, so it works from ``file://``.  A Content-Security-Policy
lets only that script (by its SHA-256, CSP Level 2 hash source) and data: images run or
load.  Every string from a run (names, notes, methods) goes through ``html.escape``; the
script reads cells' text and ``data-`` attributes only, never writes markup.

Written atomically (temporary sibling + os.replace).  Writers queue on two locks so that
a burst of commits costs at most one extra page write: a committer that finds another
one already waiting leaves the page to it (that one reads the archive after the
waiter's run was indexed).
"""

from __future__ import annotations

import base64
import datetime as _dt
import hashlib
import html
import logging
from pathlib import Path
from typing import Any, Callable
from urllib.parse import quote

from dsplit.archive.page_data import DAMAGED, MISSING, NOT_VERIFIED, VERIFIED, ArchiveSnapshot, PageRun, collect
from dsplit.archive.page_figures import CAUTION, SeriesView, metal_label

PAGE_NAME = "index.html"
_e = html.escape
_SUP = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")
log = logging.getLogger(__name__)

CSS = """
:root{--ink:#1c1917;--soft:#57534e;--rule:#d6d3d1;--band:#292524;--gold:#ca8a04;--sheet:#fffdf8;
--bg:#f5f5f4;--ok:#15803d;--bad:#b91c1c;--warn:#a16207;--link:#1d4ed8}
*{box-sizing:border-box}
body{margin:0;background:var(--bg);color:var(--ink);
font:14px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,Ubuntu,Cantarell,"Noto Sans",sans-serif}
.top{background:var(--band);color:#fafaf9;padding:18px 26px 14px;border-bottom:4px solid var(--gold)}
.top .kicker{font-size:.72rem;letter-spacing:.18em;text-transform:uppercase;color:#fcd34d}
.top h1{margin:2px 0 2px;font-size:1.45rem;font-weight:600}
.top p{margin:0;color:#d6d3d1;font-size:.85rem;word-break:break-all}
main{padding:14px 26px 30px}
.tally{display:flex;gap:10px;flex-wrap:wrap;margin:4px 0 10px}
.tally div{background:var(--sheet);border:1px solid var(--rule);border-radius:4px;padding:6px 14px;min-width:110px}
.tally b{display:block;font-size:1.3rem;font-variant-numeric:tabular-nums}
.tally span{color:var(--soft);font-size:.78rem}
.tally .t-bad b{color:var(--bad)}
p.caution{margin:6px 0 12px;padding:6px 12px;border-left:4px solid var(--gold);background:#fefce8;color:#713f12;
font-size:.86rem}
h2{font-size:1.05rem;margin:22px 0 8px;padding-bottom:4px;border-bottom:2px solid var(--ink)}
.filters{display:flex;flex-wrap:wrap;gap:8px 14px;align-items:end;margin:6px 0 8px;font-size:.82rem;color:var(--soft)}
.filters label{display:flex;flex-direction:column;gap:2px}
.filters select,.filters input{font:inherit;color:var(--ink);padding:3px 6px;border:1px solid #a8a29e;border-radius:3px;
background:#fff;min-width:9em;max-width:18em}
.filters input{min-width:16em}
#shown{margin-left:auto;font-variant-numeric:tabular-nums}
.wrap{overflow-x:auto;background:var(--sheet);border:1px solid var(--rule)}
table{border-collapse:collapse;width:100%;font-size:.82rem}
th{position:sticky;top:0;background:#e7e5e4;text-align:left;vertical-align:bottom;border-bottom:2px solid #78716c;
padding:0}
th button{all:unset;box-sizing:border-box;display:block;width:100%;padding:6px 7px;cursor:pointer;font-weight:600;
white-space:nowrap}
th button:focus-visible{outline:2px solid var(--link)}
th[aria-sort=ascending] button::after{content:" \\25B2";color:var(--gold)}
th[aria-sort=descending] button::after{content:" \\25BC";color:var(--gold)}
td{padding:4px 7px;border-bottom:1px solid #e7e5e4;vertical-align:top}
td:first-child{min-width:11em;max-width:20em;overflow-wrap:anywhere}
td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
tbody tr:hover td{background:#fef9c3}
tr[hidden]{display:none}
a{color:var(--link)}
.sub{display:block;color:var(--soft);font-size:.76rem}
.note{display:block;color:var(--warn);font-size:.76rem;max-width:24em}
.est{display:block;color:var(--soft);font-size:.72rem}
.none{color:#a8a29e}
.pill{display:inline-block;padding:0 8px;border-radius:3px;font-size:.75rem;font-weight:600;white-space:nowrap;
border:1px solid}
.s-verified{color:var(--ok);border-color:#86efac;background:#f0fdf4}
.s-not-verified{color:var(--warn);border-color:#fde047;background:#fefce8}
.s-damaged,.s-missing{color:#fff;border-color:var(--bad);background:var(--bad)}
.views{display:grid;grid-template-columns:repeat(auto-fit,minmax(520px,1fr));gap:14px;align-items:start}
figure{margin:0;background:#fff;border:1px solid var(--rule);padding:10px}
figure img{max-width:100%;height:auto;display:block}
figcaption{color:var(--soft);font-size:.8rem;margin-top:6px}
figcaption ul{margin:4px 0 0;padding-left:18px}
.swap{color:#c2410c}
ul.problems li{margin:2px 0}
footer{color:var(--soft);font-size:.75rem;padding:8px 26px 18px}
"""

SCRIPT = """(function () {
  "use strict";
  var table = document.getElementById("runs-table");
  var body = table.tBodies[0];
  var rows = Array.prototype.slice.call(body.rows);
  var heads = table.tHead.rows[0].cells;
  var sortCol = -1, sortDir = 1;
  function value(row, col, numeric) {
    var v = row.cells[col].getAttribute("data-v");
    if (v === null || v === "") { return null; }
    return numeric ? parseFloat(v) : v;
  }
  function sortBy(col) {
    var numeric = heads[col].getAttribute("data-type") === "num";
    sortDir = col === sortCol ? -sortDir : 1;
    sortCol = col;
    var keyed = rows.map(function (r, i) { return [value(r, col, numeric), i, r]; });
    keyed.sort(function (a, b) {
      if (a[0] === null || b[0] === null) {
        return a[0] === b[0] ? a[1] - b[1] : (a[0] === null ? 1 : -1);
      }
      var c = numeric ? a[0] - b[0] : (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0);
      return c !== 0 ? c * sortDir : a[1] - b[1];
    });
    keyed.forEach(function (k) { body.appendChild(k[2]); });
    for (var i = 0; i < heads.length; i++) {
      heads[i].setAttribute("aria-sort", i === col ? (sortDir > 0 ? "ascending" : "descending") : "none");
    }
  }
  Array.prototype.forEach.call(heads, function (th, i) {
    th.querySelector("button").addEventListener("click", function () { sortBy(i); });
  });
  var pick = {};
  ["metal", "ligand", "method", "state"].forEach(function (k) { pick[k] = document.getElementById("f-" + k); });
  var text = document.getElementById("f-text");
  var shown = document.getElementById("shown");
  function apply() {
    var want = text.value.trim().toLowerCase(), n = 0;
    rows.forEach(function (r) {
      var ok = (!pick.metal.value || r.getAttribute("data-metal") === pick.metal.value)
        && (!pick.ligand.value || r.getAttribute("data-ligands").split("|").indexOf(pick.ligand.value) >= 0)
        && (!pick.method.value || r.getAttribute("data-method") === pick.method.value)
        && (!pick.state.value || r.getAttribute("data-state") === pick.state.value)
        && (!want || (r.textContent + " " + r.getAttribute("data-search")).toLowerCase().indexOf(want) >= 0);
      r.hidden = !ok;
      if (ok) { n++; }
    });
    shown.textContent = n + " of " + rows.length + " runs shown";
  }
  Object.keys(pick).forEach(function (k) { pick[k].addEventListener("change", apply); });
  text.addEventListener("input", apply);
  apply();
})();"""

STATE_ORDER = {VERIFIED: 0, NOT_VERIFIED: 1, DAMAGED: 2, MISSING: 3}


def _csp_hash(source: str) -> str:
    """CSP hash source: 'sha256-' + base64 of SHA-256 over the element's text (CSP Level 2, §4.2.4)."""
    return "'sha256-" + base64.b64encode(hashlib.sha256(source.encode("utf-8")).digest()).decode("ascii") + "'"


def _attr(value: Any) -> str:
    return _e("" if value is None else str(value), quote=True)


def _cell(inner: str, sort_value: Any = None, numeric: bool = False, title: str = "") -> str:
    cls = ' class="n"' if numeric else ""
    v = "" if sort_value is None else (repr(float(sort_value)) if numeric else str(sort_value).lower())
    tip = f' title="{_attr(title)}"' if title else ""
    return f'<td{cls} data-v="{_attr(v)}"{tip}>{inner}</td>'


def _missing(reason: str = "") -> str:
    return f'<span class="none" title="{_attr(reason)}">—</span>' if reason else '<span class="none">—</span>'


def _delta_cell(cm1: float | None, run: PageRun, estimator: str = "") -> str:
    """Δ in cm⁻¹ and the wavelength of a band at Δ (λ = 1/ν̃, dsplit.units.cm1_to_nm)."""
    from dsplit.units import cm1_to_nm

    if cm1 is None:
        why = "" if run.shows_values else f"withheld: run {run.state}"
        return _cell(_missing(why), None, numeric=True)
    nm = f'<span class="sub">{cm1_to_nm(cm1):.0f} nm</span>' if cm1 > 0 else ""
    est = f'<span class="est">{_e(estimator)}</span>' if estimator else ""
    return _cell(f"{cm1:,.0f} cm⁻¹{nm}{est}", cm1, numeric=True)


def _count_cell(n: int | None) -> str:
    return _cell(str(n) if n is not None else _missing(), n, numeric=True)


def _complex_cell(r: PageRun) -> str:
    name = _e(r.name)
    if r.has_report and r.state != MISSING:
        href = "/".join(quote(part, safe="") for part in (r.name, r.run_id)) + "/report.html"
        name = f'<a href="{_attr(href)}">{name}</a>'
    kind = f" · {_e(r.kind)}" if r.kind and r.kind != "compute" else ""
    gone = " · no report.html" if not r.has_report and r.state != MISSING else ""
    extra = f'<span class="sub">{_e(r.formula)}{kind}{gone}</span>'
    note = f'<span class="note">bands: {_e(r.note)}</span>' if r.note else ""
    return _cell(name + extra + note, r.name)


def _state_cell(r: PageRun) -> str:
    tip = "; ".join(r.problems)
    label = r.state + ("" if r.indexed or r.state == MISSING else " · not indexed")
    slug = r.state.replace(" ", "-")
    return _cell(f'<span class="pill s-{slug}">{_e(label)}</span>', f"{STATE_ORDER[r.state]} {label}", title=tip)


def run_row(r: PageRun, estimators: list[str]) -> str:
    """One <tr> of the runs table (every value escaped; data- attributes feed the filters)."""
    d = r.d_electrons
    group = r.point_group + (f" (orbitals {r.orbital_group})" if r.orbital_group else "")
    ladder = '<span class="sub">ladder ground</span>' if r.kind == "spin-states" else ""
    cells = [
        _complex_cell(r),
        _cell(_e(metal_label(r.metal, r.oxidation_state)) or _missing(),
              f"{r.metal} {r.oxidation_state if r.oxidation_state is not None else ''}"),
        _cell(f"d{str(d).translate(_SUP)}" if d is not None else _missing(), d, numeric=True),
        _cell(f"{_e(r.geometry) or _missing()}<span class=\"sub\">{_e(group)}</span>", f"{r.geometry} {group}"),
        _cell(f"{_e(r.theory)}<span class=\"sub\">{_e(r.basis)} · {_e(r.solvent)}</span>", r.method),
        _cell(str(r.ground_multiplicity) + ladder if r.ground_multiplicity is not None else
              _missing("" if r.shows_values else f"withheld: run {r.state}"), r.ground_multiplicity, numeric=True),
        _delta_cell(r.recommended_cm1, r, r.recommended_estimator),
        *[_delta_cell(r.deltas_cm1.get(est), r) for est in estimators],
        _count_cell(r.n_agrees), _count_cell(r.n_differs), _count_cell(r.n_not_applicable),
        _state_cell(r),
        _cell(_e(r.created[:16].replace("T", " ")) or _missing(), r.created),
    ]
    search = " ".join([r.folder, r.run_id, r.kind, " ".join(r.ligands), r.note]).lower()
    return (f'<tr data-metal="{_attr(r.metal)}" data-ligands="{_attr("|".join(sorted(r.ligands)))}" '
            f'data-method="{_attr(r.method)}" data-state="{_attr(r.state)}" data-search="{_attr(search)}">'
            + "".join(cells) + "</tr>")


def _headers(estimators: list[str]) -> list[tuple[str, str, str]]:
    """(header, type, tooltip) per column, in run_row's order."""
    return ([("complex", "text", "name (link to its report), formula, note"), ("metal", "text", "oxidation state"),
             ("dⁿ", "num", "d-electron count"), ("geometry", "text", "geometry · point group"),
             ("method", "text", "theory · basis · solvent"),
             ("2S+1", "num", "spin multiplicity of the computed state; for a spin-state ladder the lowest state's"),
             ("Δ recommended", "num", "the run's recommended Δ and the estimator it came from")]
            + [(f"Δ {est}", "num", f"Δ from the {est} estimator; band wavelength λ = 1/Δ") for est in estimators]
            + [("agrees", "num", "checks that agree"), ("differs", "num", "checks that differ"),
               ("n/a", "num", "checks not applicable"), ("status", "text", "verified / not verified / damaged / "
                                                                        "missing (quick check on every page write)"),
               ("date", "text", "when the run was committed (UTC)")])


def _select(key: str, label: str, values: list[str]) -> str:
    opts = "".join(f'<option value="{_attr(v)}">{_e(v)}</option>' for v in values)
    return f'<label>{_e(label)}<select id="f-{key}"><option value="">all</option>{opts}</select></label>'


def _filters(runs: tuple[PageRun, ...]) -> str:
    metals = sorted({r.metal for r in runs if r.metal})
    ligands = sorted({k for r in runs for k in r.ligands})
    methods = sorted({r.method for r in runs})
    states = [s for s in STATE_ORDER if any(r.state == s for r in runs)]
    return ('<div class="filters">' + _select("metal", "metal", metals) + _select("ligand", "ligand", ligands)
            + _select("method", "method", methods) + _select("state", "status", states)
            + '<label>text<input id="f-text" type="search" placeholder="name, formula, run-id, note…"></label>'
            + f'<span id="shown">{len(runs)} of {len(runs)} runs shown</span></div>')


def _table(snap: ArchiveSnapshot) -> str:
    ests = snap.estimators
    head = "".join(f'<th data-type="{t}" aria-sort="none" title="{_attr(tip)}"><button type="button">{_e(h)}'
                   "</button></th>" for h, t, tip in _headers(ests))
    body = "\n".join(run_row(r, ests) for r in snap.runs)
    return (f'<div class="wrap"><table id="runs-table"><thead><tr>{head}</tr></thead>'
            f"<tbody>\n{body}\n</tbody></table></div>")


def _tally(runs: tuple[PageRun, ...]) -> str:
    cards = []
    for state in STATE_ORDER:
        n = sum(r.state == state for r in runs)
        cls = ' class="t-bad"' if state in (DAMAGED, MISSING) and n else ""
        cards.append(f"<div{cls}><b>{n}</b><span>{_e(state)}</span></div>")
    return f'<div class="tally"><div><b>{len(runs)}</b><span>runs</span></div>{"".join(cards)}</div>'


def _swap_lines(groups: list[list[SeriesView]]) -> str:
    """One line per group: the estimators that keep the textbook order, then each one that swaps a pair."""
    items = []
    for views in groups:
        same = [v.estimator for v in views if not v.swapped]
        parts = [f"{', '.join(same)}: same order as the textbook"] if same else []
        parts += [f"{v.estimator}: " + "; ".join(f"{b} below {a}" for a, b in v.swapped) + " (textbook: the reverse)"
                  for v in views if v.swapped]
        outside = sorted({k for v in views for k in v.not_in_series})
        parts += [f"not in the series: {', '.join(outside)}"] if outside else []
        cls = ' class="swap"' if any(v.swapped for v in views) else ""
        items.append(f"<li{cls}><b>{_e(views[0].group)}</b> — {_e(' · '.join(parts))}</li>")
    return f"<ul>{''.join(items)}</ul>"


def _figure(png: bytes | None, alt: str, caption: str, empty: str) -> str:
    if png is None:
        return f'<figure><figcaption><b>{_e(alt)}</b>: {empty}</figcaption></figure>'
    data = base64.b64encode(png).decode("ascii")
    img = f'<img alt="{_attr(alt)}" src="data:image/png;base64,{data}">'
    return f"<figure>{img}<figcaption>{caption}</figcaption></figure>"


def _draw(make: Callable[[], Any], problems: list[str], what: str) -> bytes | None:
    """PNG bytes of ``make()`` (None: nothing to draw, or it failed — then named in ``problems``)."""
    from dsplit.report.figures import figure_bytes, style

    try:
        with style():
            fig = make()
            return None if fig is None else figure_bytes(fig, "png", dpi=110)
    except Exception as exc:  # a figure bug must not cost the page
        problems.append(f"{what} could not be drawn: {type(exc).__name__}: {exc}")
        return None


def _views(snap: ArchiveSnapshot, problems: list[str]) -> str:
    from dsplit.archive import page_figures as pf

    groups = pf.series_views(snap.runs)
    series = _draw(lambda: pf.series_figure(groups), problems, "the series figure")
    more = len(groups) - pf.MAX_SERIES_GROUPS
    cap = ("Ligands ordered by computed Δ per metal, oxidation state, geometry and method (homoleptic verified runs; "
           "the newest run per ligand), beside the textbook spectrochemical series (Tsuchida; as given in "
           "Shriver &amp; Atkins). ✗ marks a ligand in a pair whose order is the reverse of the textbook's."
           + (f" {more} more group(s) are listed but not drawn." if more > 0 else "") + _swap_lines(groups))
    parts = [_figure(series, "spectrochemical series measured by this archive", cap,
                     "needs two or more verified homoleptic runs of one metal, oxidation state, geometry and "
                     "method with different ligands")]
    dist = _draw(lambda: pf.distance_figure(snap.runs), problems, "the distance figure")
    parts.append(_figure(dist, "Δ against metal–ligand distance",
                         "Every verified run's Δ (each estimator, and the recommended one where given) against its "
                         "count-weighted mean metal–ligand distance.", "no verified run with a Δ yet"))
    gaps = _draw(lambda: pf.spin_gap_figure(snap.runs), problems, "the spin-state figure")
    n_ladders = sum(1 for r in snap.runs if r.spin_gaps)
    more = (f" The newest {pf.MAX_LADDERS} of {n_ladders} ladders are drawn." if n_ladders > pf.MAX_LADDERS
            else "")
    parts.append(_figure(gaps, "spin-state gaps per functional",
                         "E(highest 2S+1) − E(lowest 2S+1) of each functional in every spin-state ladder "
                         "(dsplit spin-states runs), from the ladder's own relative energies; a functional is drawn "
                         "only when both of its states are verified (* marks a ladder with an unverified state)."
                         f"{more}", "no spin-state ladder with a verified pair of states in this archive yet"))
    return f'<div class="views">{"".join(parts)}</div>'


def _problems(snap: ArchiveSnapshot, problems: list[str]) -> str:
    items = [f"<li><b>{_e(r.folder)}</b> — {_e(r.state)}: {_e('; '.join(r.problems))}</li>"
             for r in snap.runs if r.state in (DAMAGED, MISSING)]
    items += [f"<li><b>{_e(r.folder)}</b> — not in index.db; run 'dsplit archive rebuild-index'</li>"
              for r in snap.runs if not r.indexed and r.state != MISSING]
    items += [f"<li>{_e(p)}</li>" for p in ([snap.index_problem] if snap.index_problem else []) + problems]
    if not items:
        return ""
    return ('<h2 id="problems">Damaged, missing and unindexed</h2><ul class="problems">' + "".join(items)
            + "</ul><p class=\"sub\">The page checks each run's manifest, result.json's SHA-256 and every listed "
            "file's size; run 'dsplit archive verify' for a full check.</p>")


def page_html(snap: ArchiveSnapshot, written: str) -> str:
    """The whole page as text (``written``: the time shown in the header)."""
    problems: list[str] = []
    views = _views(snap, problems)
    csp = (f"default-src 'none'; img-src data:; style-src {_csp_hash(CSS)}; script-src {_csp_hash(SCRIPT)}; "
           "base-uri 'none'; form-action 'none'")
    n = len(snap.runs)
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f'<meta http-equiv="Content-Security-Policy" content="{_attr(csp)}">'
            '<meta name="viewport" content="width=device-width, initial-scale=1"><link rel="icon" href="data:,">'
            f"<title>dsplit archive — {_e(snap.root.name)} ({n} runs)</title><style>{CSS}</style></head><body>"
            f'<header class="top"><div class="kicker">dsplit archive</div><h1>{_e(snap.root.name)}</h1>'
            f"<p>{_e(str(snap.root))} · {n} run(s) · page written {_e(written)}</p></header><main>"
            + _tally(snap.runs) + f'<p class="caution">{_e(CAUTION)} Values of runs that are not verified, damaged '
            "or missing are withheld (—).</p>"
            + '<h2 id="runs">Runs</h2>' + _filters(snap.runs) + _table(snap)
            + '<h2 id="views">Across runs</h2>' + views + _problems(snap, problems)
            + "</main><footer>Click a column header to sort (again to reverse); Δ columns in cm⁻¹ with the "
            "wavelength of a band at Δ. Rewritten on every commit; 'dsplit archive page' rewrites it by hand."
            f"</footer><script>{SCRIPT}</script></body></html>\n")


def _write(root: Path) -> tuple[Path, int]:
    from dsplit.runfolder import write_text

    snap = collect(root)
    written = _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    path = root / PAGE_NAME
    write_text(path, page_html(snap, written))
    return path, len(snap.runs)


def write_page(root: Path) -> tuple[Path, int]:
    """Rewrite ``root/index.html`` now (waits for another writer); returns (path, runs shown)."""
    from dsplit.archive.locks import file_lock, lock_path

    with file_lock(lock_path(root, "page")):
        return _write(root)


def refresh_page(root: Path) -> Path | None:
    """After a commit: rewrite the page unless a writer is already queued; never raises.

    A failure is one warning line (the run itself is archived and indexed already).
    """
    from dsplit.archive.locks import file_lock, lock_path

    try:
        queue = file_lock(lock_path(root, "page-queue"), timeout=0)
        try:
            queue.__enter__()
        except TimeoutError:
            return None  # the queued writer reads the archive after this run was indexed
        queued = True
        try:
            with file_lock(lock_path(root, "page")):
                queue.__exit__(None, None, None)
                queued = False
                return _write(root)[0]
        finally:
            if queued:
                queue.__exit__(None, None, None)
    except Exception as exc:  # the page is a view: it must never fail a committed run
        log.warning("dsplit: %s not rewritten (%s: %s); the run is archived — run 'dsplit archive page'",
                    Path(root) / PAGE_NAME, type(exc).__name__, exc)
        return None
