"""`dsplit terms` (cli.terms + api.terms) and the term-diagram drawer (report.term_diagram)."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from dsplit.cli import main


def _run(*args: str):
    return CliRunner().invoke(main, ["terms", *args])


def _json(*args: str) -> dict:
    result = _run(*args, "--json")
    assert result.exit_code == 0, result.output
    return json.loads(result.output)


def test_terms_json_d3_octahedral():
    doc = _json("--d", "3", "--delta", "17400", "--B", "729")
    states = doc["states"]
    assert doc["point_group"] == "Oh" and doc["spin_orbit_coupling"] is False
    assert {"energy_cm1", "multiplicity", "irrep", "spin_allowed"} <= set(states[0])
    assert states[0]["multiplicity"] == 4 and states[0]["irrep"] == "A2g" and states[0]["energy_cm1"] == 0.0
    quartets = [s for s in states if s["multiplicity"] == 4]
    assert [s["irrep"] for s in quartets] == ["A2g", "T2g", "T1g", "T1g"]
    assert quartets[1]["energy_cm1"] == pytest.approx(17400.0)  # ν1 = Δ (Tanabe & Sugano 1954 — from memory)
    assert all(s["spin_allowed"] == (s["multiplicity"] == 4) for s in states)
    assert doc["C_cm1"] == pytest.approx(4.5 * 729)


def test_terms_fit_bands_json():
    # [Cr(H2O)6]3+ bands 17,400 and 24,600 cm⁻¹ (Lever 1984 — from memory): Δ = 17,400, B ≈ 725, β ≈ 0.79
    doc = _json("--d", "3", "--bands", "17400,24600", "--metal", "Cr", "--oxidation-state", "3")
    fit = doc["fit"]
    assert {"delta_cm1", "B_cm1", "C_cm1", "beta", "residual_cm1"} <= set(fit)
    assert fit["delta_cm1"] == pytest.approx(17400, abs=1)
    assert fit["B_cm1"] == pytest.approx(725, abs=15) and fit["beta"] == pytest.approx(0.79, abs=0.02)
    assert fit["residual_cm1"] < 1.0
    assert doc["states"][0]["irrep"] == "A2g"


def test_aom_homoleptic_gives_delta_3esigma_minus_4epi():
    # octahedral AOM: Δo = 3eσ − 4eπ (Schäffer & Jørgensen, Mol. Phys. 9, 401 (1965))
    doc = _json("--d", "3", "--aom", "aqua:6000,1000", "--B", "700")
    assert doc["delta_cm1"] == pytest.approx(14000.0)
    t2g = [s for s in doc["states"] if s["multiplicity"] == 4][1]
    assert t2g["energy_cm1"] == pytest.approx(14000.0)


def test_aom_mixed_ligands_lower_the_symmetry():
    cis = _json("--d", "8", "--aom", "chlorido=2:4000,800", "--aom", "ammine=4:4500,0", "--isomer", "cis",
                "--B", "900")
    trans = _json("--d", "8", "--aom", "chlorido=2:4000,800", "--aom", "ammine=4:4500,0", "--isomer", "trans",
                  "--B", "900")
    assert cis["point_group"] == "C2v" and trans["point_group"] == "D4h"
    assert sum(s["degeneracy"] * s["multiplicity"] for s in cis["states"]) == 45  # C(10, 8)


@pytest.mark.parametrize("columns", ["80", "160"])
def test_terms_table_and_figures(tmp_path, monkeypatch, columns):
    # an 80-column terminal (CI sets COLUMNS) must still show the headers and numbers uncut
    monkeypatch.setenv("COLUMNS", columns)
    png, svg = tmp_path / "t.png", tmp_path / "t.svg"
    result = _run("--d", "6", "--delta", "20000", "--B", "650", "--C-over-B", "4.8", "--figure", str(png))
    assert result.exit_code == 0, result.output
    assert "E / cm⁻¹" in result.output and "¹A1g" in result.output and "…" not in result.output
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert _run("--d", "2", "--geometry", "tetrahedral", "--delta", "4000", "--B", "700", "--figure",
                str(svg)).exit_code == 0
    assert "confirm by experiment" in svg.read_text()


@pytest.mark.parametrize("args, flag", [
    (["--d", "0", "--delta", "1", "--B", "1"], "--d"),
    (["--d", "3", "--delta", "17000"], "--B"),
    (["--d", "3", "--B", "700"], "--delta"),
    (["--d", "3", "--bands", "17400,abc"], "--bands"),
    (["--d", "3", "--bands", "17400", "--delta", "17000"], "--bands"),
    (["--d", "3", "--geometry", "cube", "--delta", "1", "--B", "1"], "--geometry"),
    (["--d", "3", "--aom", "aqua=5:6000,0", "--B", "700"], "--aom"),
    (["--d", "3", "--delta", "17000", "--B", "-5"], "--B"),
    (["--d", "3", "--delta", "17000", "--B", "700", "--metal", "Cr", "--oxidation-state", "2"], "--oxidation-state"),
    (["--d", "3", "--delta", "17000", "--B", "700", "--C", "3000", "--C-over-B", "4"], "--C"),
    (["--d", "1", "--bands", "10000,20000"], "--bands"),
])
def test_bad_input_is_one_line_exit_2(tmp_path, args, flag):
    fig = tmp_path / "never.png"
    result = _run(*args, "--figure", str(fig))
    assert result.exit_code == 2
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith(f"dsplit: error: {flag}:")
    assert not fig.exists()


def test_terms_is_listed():
    result = CliRunner().invoke(main, ["--help"])
    assert "terms" in result.output


def test_term_diagram_drawer_marks_point_and_bands():
    from dsplit.geometry.polyhedra import polyhedron
    from dsplit.models.field_shape import polyhedron_shape
    from dsplit.models.term_curves import term_curves
    from dsplit.report.term_diagram import CAUTION, draw_term_diagram

    curves = term_curves(2, polyhedron_shape(polyhedron("octahedral")), 4.5, points=41)
    # d² Oh: 11 terms (³T1g ×2, ³T2g, ³A2g; ¹Eg ×2, ¹T2g ×2, ¹A1g ×2, ¹T1g), each one curve
    assert len(curves.curves) == 11
    assert all(c.energies.min() >= -1e-9 for c in curves.curves)
    fig = draw_term_diagram(curves, point=25.0, bands_cm1=[17000, 25000], b_cm1=650)
    texts = [t.get_text() for t in fig.texts]
    assert CAUTION in texts
    ax = fig.axes[0]
    assert any(line.get_marker() == "D" for line in ax.lines)
    assert ax.get_xlim()[1] == pytest.approx(40.0)
