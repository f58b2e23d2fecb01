"""The multiplet estimator's report section and term diagram (synthetic documents, no SCF)."""

from __future__ import annotations

from pathlib import Path

from dsplit.report.blocks import Table
from dsplit.report.render import build_sections, write_reports
from test_report_docs import full_doc

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG signature, ISO/IEC 15948 (RFC 2083) section 3.1


def multiplet_doc() -> dict:
    """A d3 octahedral document with the multiplet keys (values invented for the layout only)."""
    doc = full_doc()
    doc["complex"].update({"d_electrons": 3, "geometry": "octahedral"})
    doc["splitting"]["multiplet"] = {"delta_eV": 2.1, "delta_cm1": 17000.0, "delta_kJmol": 203.0,
                                     "casscf_delta_cm1": 16000.0, "method": "SA-CASSCF(3,5)/NEVPT2",
                                     "converged": True, "configuration_verified": True, "residual_cm1": 300.0,
                                     "solvent": "PCM (ε = 78.36)", "measures": "fitted Δ", "notes": []}
    doc["ligand_field"] = {"delta_cm1": 17000.0, "B_cm1": 700.0, "C_cm1": 3150.0, "beta": 0.76,
                           "residual_cm1": 300.0, "levels_cm1": [-6800.0] * 3 + [10200.0] * 2, "source": "NEVPT2"}
    states = [(0.0, "A2g", 1), (17000.0, "T2g", 3), (17003.0, "T2g", 0), (24000.0, "T1g", 3)]
    doc["multiplet_states"] = [{"energy_cm1": e + k, "multiplicity": 4, "irrep": irrep, "spin_allowed": True,
                                "method": "NEVPT2", "configurations": "t2g^3 eg^0 1.00"}
                               for e, irrep, n in states for k in range(max(n, 1))]
    doc["measured_fit"] = {"bands_cm1": [17400.0, 24600.0]}
    return doc


def test_section_lists_each_level_once_and_the_parameters():
    sections = build_sections(multiplet_doc(), {"term_diagram": "term_diagram.png"})
    section = next(s for s in sections if s.title.startswith("d–d states"))
    tables = [b for b in section.blocks if isinstance(b, Table)]
    params = {row[0]: row[1] for row in tables[0].rows}
    assert params["Racah B"] == "700" and params["C/B"] == "4.50"
    levels = tables[1].rows
    # ⁴A2g, ⁴T2g (three + one partner within 20 cm⁻¹ shown as one level), ⁴T1g
    assert [r[4] for r in levels] == ["A2g", "T2g", "T1g"] and levels[1][5] == "4" and levels[0][6] == "ground state"


def test_term_diagram_is_written_with_the_point(tmp_path: Path):
    names = {p.name for p in write_reports(multiplet_doc(), tmp_path)}
    assert {"term_diagram.png", "term_diagram.svg"} <= names
    assert (tmp_path / "term_diagram.png").read_bytes()[:8] == PNG_MAGIC
    svg = (tmp_path / "term_diagram.svg").read_text(encoding="utf-8")
    assert "24.3" in svg  # Δ/B = 17000 / 700 drawn as this complex's point
    assert "confirm by experiment" in svg


def test_no_term_diagram_without_racah_b(tmp_path: Path):
    doc = multiplet_doc()
    doc["ligand_field"]["B_cm1"] = None
    assert "term_diagram.png" not in {p.name for p in write_reports(doc, tmp_path)}
