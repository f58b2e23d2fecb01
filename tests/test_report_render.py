"""report.md / report.html from synthetic result.json documents (no SCF is run)."""

from __future__ import annotations

import base64
import os
import re
from pathlib import Path

import pytest

from dsplit.report import render
from dsplit.report.blocks import Table
from dsplit.report.render import build_sections, write_reports
from test_report_docs import LEFTOVER_CM1, LEFTOVER_EV, failed_doc, full_doc, open_shell_doc

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG signature, ISO/IEC 15948 (RFC 2083) section 3.1
EVIL = "<script>alert(1)</script>"


def _tables(sections, caption_start: str) -> list[Table]:
    return [b for s in sections for b in s.blocks if isinstance(b, Table) and b.caption.startswith(caption_start)]


def test_full_document_writes_every_file(tmp_path: Path) -> None:
    paths = write_reports(full_doc(), tmp_path)
    names = {p.name for p in paths}
    # the brief's file list
    assert names == {"report.md", "report.html", "level_diagram.png", "level_diagram.svg", "spin_states.png"}
    assert all(p.is_file() and p.stat().st_size > 0 for p in paths)
    assert not list(tmp_path.glob(".*.part"))  # atomic writes leave no temporary file
    mask = os.umask(0)
    os.umask(mask)
    # files get the mode open(2) gives: 0666 minus the umask (POSIX open/umask, common practice)
    assert {p.stat().st_mode & 0o777 for p in paths} == {0o666 & ~mask}
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    for title in ("Cautions", "The complex", "Method", "Ligand-field splitting Δ", "Ligand-field models", "Checks",
                  "Measured bands", "Level diagram", "Frontier orbitals", "Ligand-field manifold", "Spin states",
                  "Geometry optimisation", "Notes and warnings", "Provenance"):
        assert f"## {title}" in md, title
    assert "NOT A RESULT" not in md
    # cautions near the top: before the method (requirement of the project issue)
    assert md.index("## Cautions") < md.index("## The complex") < md.index("## Method")


def test_failed_document_is_not_a_result_and_shows_no_splitting(tmp_path: Path) -> None:
    paths = write_reports(failed_doc(), tmp_path)
    assert {p.name for p in paths} == {"report.md", "report.html", "level_diagram.png", "level_diagram.svg"}
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    html_text = (tmp_path / "report.html").read_text(encoding="utf-8")
    for body in (md, html_text):
        assert "NOT A RESULT" in body
        assert "did not converge" in body
        assert body.index("NOT A RESULT") < body.index("The complex")
        # no splitting, model or check number survives, though the document (wrongly) carries them
        for shown in (f"{LEFTOVER_CM1:.0f}", f"{LEFTOVER_CM1:.4g}", f"{LEFTOVER_EV:.3f}", f"{LEFTOVER_EV:.2f}"):
            assert shown not in body
        for title in ("Ligand-field splitting", "Ligand-field models", "Checks", "Ligand-field manifold"):
            assert title not in body
    assert "Δ" not in md  # no estimator table, no Δ anywhere
    assert "Cautions" in md


def test_missing_cautions_fall_back_to_the_project_cautions(tmp_path: Path) -> None:
    from dsplit.report.result import CAUTIONS

    doc = full_doc()
    del doc["cautions"]
    write_reports(doc, tmp_path)
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert all(c in md for c in CAUTIONS)


def test_html_escapes_all_document_text(tmp_path: Path) -> None:
    doc = full_doc(EVIL)
    doc["complex"]["formula"] = "<b>Fe</b>"
    doc["warnings"].append(EVIL)
    doc["checks"][0]["detail"] = EVIL
    doc["level_diagram"]["ligand"][0]["label"] = EVIL
    write_reports(doc, tmp_path)
    page = (tmp_path / "report.html").read_text(encoding="utf-8")
    # HTML escaping of <, >, & (HTML Living Standard, "escaping a string"; Python html.escape)
    assert "<script" not in page and "<b>" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page
    assert "&lt;b&gt;Fe&lt;/b&gt;" in page


def test_html_is_self_contained(tmp_path: Path) -> None:
    write_reports(full_doc(), tmp_path)
    page = (tmp_path / "report.html").read_text(encoding="utf-8")
    for ref in ("http://", "https://", "<link", 'src="http', "<script", "@import", "url("):
        assert ref not in page, ref
    srcs = re.findall(r'src="([^"]+)"', page)
    assert len(srcs) == 2  # level diagram and spin states
    for src in srcs:
        # data URI with base64 payload (RFC 2397) holding a PNG (PNG signature, ISO/IEC 15948)
        assert src.startswith("data:image/png;base64,")
        assert base64.b64decode(src.split(",", 1)[1]).startswith(PNG_MAGIC)


def test_wavelengths_are_ten_million_over_wavenumber(tmp_path: Path) -> None:
    # λ/nm = 10⁷ / (ν̃/cm⁻¹): definition of the wavenumber ν̃ = 1/λ with 1 cm = 10⁷ nm
    doc = full_doc()
    sections = build_sections(doc)
    (table,) = _tables(sections, "Δ from each estimator")
    col = table.headers.index("band at Δ / nm")
    for row in table.rows:
        cm1 = doc["splitting"][row[0]]["delta_cm1"]
        assert row[col] == f"{1e7 / cm1:.1f}"
        assert row[table.headers.index("Δ / cm⁻¹")] == f"{cm1:.0f}"
    (roots,) = _tables(sections, "predicted bands")
    for row, root in zip(roots.rows, doc["splitting"]["excitation"]["roots"]):
        assert row[roots.headers.index("λ / nm")] == f"{1e7 / root['energy_cm1']:.1f}"
    write_reports(doc, tmp_path)
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    state = doc["splitting"]["state"]["delta_cm1"]
    assert f"| state | 2.850 | {state:.0f} |" in md and f"{1e7 / state:.1f}" in md
    assert f"{1e7 / 21000.0:.1f}" in md  # the measured band, 21000 cm⁻¹


def test_measured_band_percent_difference() -> None:
    doc = full_doc()
    (sec,) = [s for s in build_sections(doc) if s.title == "Measured bands"]
    row = sec.blocks[0].rows[0]
    state = doc["splitting"]["state"]["delta_cm1"]
    # percent error = 100 (computed − measured) / measured (common practice)
    assert f"({100 * (state - 21000.0) / 21000.0:+.1f} %)" in " ".join(row)


def test_measured_bands_from_document_or_spec() -> None:
    # λ/nm = 10⁷ / (ν̃/cm⁻¹), definition of the wavenumber
    for doc, band in ((full_doc(), 21000.0), (open_shell_doc(), 17400.0)):
        (sec,) = [s for s in build_sections(doc) if s.title == "Measured bands"]
        row = sec.blocks[0].rows[0]
        assert row[:2] == [f"{band:.0f}", f"{1e7 / band:.1f}"]


def test_open_shell_report_has_both_spins_and_per_spin_estimator() -> None:
    sections = build_sections(open_shell_doc())
    captions = [b.caption for s in sections for b in s.blocks if isinstance(b, Table)]
    assert "α orbitals around HOMO/LUMO" in captions and "β orbitals around HOMO/LUMO" in captions
    (per_spin,) = _tables(sections, "orbital estimator per spin")
    assert [r[0] for r in per_spin.rows] == ["α", "β"]
    assert not _tables(build_sections(full_doc()), "orbital estimator per spin")  # closed shell: one gap only


def test_cfse_per_spin_state_is_a_table() -> None:
    # document values: octahedral d6 CFSE −0.4 Δo (HS) and −2.4 Δo (LS), Housecroft & Sharpe,
    # Inorganic Chemistry — from memory; the report must show them as given, one row per state
    doc = full_doc()
    (table,) = _tables(build_sections(doc), "CFSE")
    cfse = doc["models"]["predictions"]["cfse"]
    assert [r[0] for r in table.rows] == list(cfse)
    col = table.headers.index("cfse delta units")
    assert [r[col] for r in table.rows] == [f"{cfse[k]['cfse_delta_units']:.4g}" for k in cfse]


def test_frontier_prefers_donor_irrep_and_shows_subgroup_label() -> None:
    doc = full_doc()
    top = max(o["index"] for o in doc["orbitals"] if o["occupation"] > 0)
    doc["orbitals"][top]["donor_irrep"] = "t2g-donor"
    (table,) = _tables(build_sections(doc), "restricted orbitals")
    row = next(r for r in table.rows if r[0] == str(top))
    assert row[3] == "t2g-donor" and row[4] == doc["orbitals"][top]["irrep_subgroup"]
    assert table.headers[3] == "irrep (Oh / D3d)"


def test_checks_carry_verdict_badges(tmp_path: Path) -> None:
    write_reports(full_doc(), tmp_path)
    page = (tmp_path / "report.html").read_text(encoding="utf-8")
    for v in ("agrees", "differs", "not-applicable"):
        assert f'class="badge v-{v}"' in page


def test_unconverged_spin_state_has_no_energy() -> None:
    (sec,) = [s for s in build_sections(full_doc()) if s.title == "Spin states"]
    table = sec.blocks[0]
    bad = next(r for r in table.rows if r[0] == "3")
    assert bad[2:7] == ["not a result"] * 5


def test_optional_sections_absent_when_keys_missing() -> None:
    doc = full_doc()
    for k in ("splitting", "models", "checks", "spec", "band_meaning", "spin_states", "functional_spread", "optimization",
              "level_diagram", "manifold"):
        doc.pop(k)
    titles = [s.title for s in build_sections(doc)]
    assert titles == ["Cautions", "The complex", "Method", "Frontier orbitals", "Notes and warnings", "Provenance"]


def test_output_is_deterministic(tmp_path: Path) -> None:
    a, b = tmp_path / "a", tmp_path / "b"
    a.mkdir()
    b.mkdir()
    for folder in (a, b):
        write_reports(open_shell_doc(), folder)
    for p in a.iterdir():
        assert p.read_bytes() == (b / p.name).read_bytes(), p.name


def test_a_broken_figure_is_reported_not_fatal(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    import dsplit.report.figures as figures

    def boom(doc):
        raise RuntimeError("no canvas")

    monkeypatch.setattr(figures, "level_diagram", boom)
    paths = render.write_reports(full_doc(), tmp_path)
    assert "level_diagram.png" not in {p.name for p in paths}
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "level diagram figure could not be drawn: RuntimeError: no canvas" in md
