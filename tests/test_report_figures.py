"""Level diagram and spin-state figures from synthetic documents (matplotlib Agg, no SCF)."""

from __future__ import annotations

import xml.etree.ElementTree as ET

from dsplit.report.figures import (METAL_COLOUR, REST_COLOUR, figure_bytes, level_diagram, level_sets,
                                   spin_state_figure, spread_labels, style)
from test_report_docs import failed_doc, full_doc, open_shell_doc

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG signature, ISO/IEC 15948 (RFC 2083) section 3.1
SVG_ROOT = "{http://www.w3.org/2000/svg}svg"  # SVG 1.1 namespace (W3C recommendation)


def test_png_and_svg_are_valid() -> None:
    with style():
        fig = level_diagram(full_doc())
        png, svg = figure_bytes(fig, "png"), figure_bytes(fig, "svg")
    assert png.startswith(PNG_MAGIC)
    assert ET.fromstring(svg).tag == SVG_ROOT


def test_octahedral_sets_have_textbook_degeneracies() -> None:
    # Oh: t2g threefold, eg twofold, t1u threefold, a1g single (character tables,
    # Cotton, Chemical Applications of Group Theory, 3rd ed., Appendix — from memory)
    sets = level_sets(full_doc(), "restricted")
    size = {s.label: len(s.orbitals) for s in sets}
    assert size["t2g"] == 3 and size["t1u"] == 3 and size["a1g"] == 1
    manifold = [(s.label, len(s.orbitals)) for s in sets if s.manifold]
    assert manifold == [("t2g", 3), ("eg", 2)]


def test_unlabelled_orbitals_group_by_energy_with_subgroup_labels() -> None:
    # without full-group labels a t2g set still is one set of three; D2h labels b1g+b2g+b3g
    # (Oh → D2h correlation, Cotton 3rd ed., correlation tables — from memory)
    sets = level_sets(failed_doc(), "restricted")
    assert not any(s.manifold for s in sets)  # no manifold highlighted in a failed run
    assert ("B1g+B2g+B3g", 3) in [(s.label, len(s.orbitals)) for s in sets]


def test_bar_fill_is_the_metal_d_share() -> None:
    doc = full_doc()
    with style():
        fig = level_diagram(doc)
    ax = fig.axes[0]
    lines = ax.get_lines()
    width = {round(ln.get_ydata()[0], 9): ln for ln in lines if ln.get_color() == REST_COLOUR}
    t2g = [o for o in doc["orbitals"] if o["in_manifold"] and o["irrep"] == "t2g"]
    for o in t2g:
        full = width[round(o["energy_eV"], 9)].get_xdata()
        part = next(ln.get_xdata() for ln in lines if ln.get_color() == METAL_COLOUR
                    and abs(ln.get_ydata()[0] - o["energy_eV"]) < 1e-12 and abs(ln.get_xdata()[0] - full[0]) < 1e-12)
        assert abs((part[1] - part[0]) / (full[1] - full[0]) - o["metal_d"]) < 1e-12


def test_doubly_occupied_orbitals_carry_paired_arrows() -> None:
    # a closed-shell orbital holds two electrons of opposite spin (Pauli principle)
    doc = full_doc()
    with style():
        fig = level_diagram(doc)
    texts = [t.get_text() for t in fig.axes[0].texts]
    shown = {o["index"] for s in level_sets(doc, "restricted") for o in s.orbitals}
    doubly = sum(1 for o in doc["orbitals"] if o["index"] in shown and o["occupation"] == 2.0)
    assert texts.count("↑↓") == doubly > 0


def test_unrestricted_diagram_shows_alpha_and_beta_and_fragments() -> None:
    with style():
        fig = level_diagram(open_shell_doc())
    labels = [t.get_text() for t in fig.axes[0].get_xticklabels()]
    assert labels == ["Co (metal)", "complex α", "complex β", "ligands"]
    texts = {t.get_text() for t in fig.axes[0].texts}
    assert {"Co 3d", "lone pairs"} <= texts and "↑" in texts and "↓" in texts


def test_spread_labels_keep_order_and_gap() -> None:
    ys = [0.0, 0.01, 0.02, 5.0, 5.001]
    out = spread_labels(ys, 0.5)
    order = sorted(out)
    assert out == sorted(out)  # input ascending stays ascending
    assert all(b - a >= 0.5 - 1e-12 for a, b in zip(order, order[1:]))
    assert abs(out[3] - 5.0) <= 0.5  # a label stays within one gap of its level


def test_spin_state_figure_panels() -> None:
    doc = full_doc()
    with style():
        fig = spin_state_figure(doc)
        assert figure_bytes(fig, "png").startswith(PNG_MAGIC)
    assert len(fig.axes) == 2
    line = fig.axes[1].get_lines()[-1]
    pts = sorted((100 * r["exact_exchange"], r["delta_hs_ls_kJmol"]) for r in doc["functional_spread"])
    assert list(zip(line.get_xdata(), line.get_ydata())) == pts
    doc.pop("functional_spread")
    with style():
        assert len(spin_state_figure(doc).axes) == 1
    doc.pop("spin_states")
    assert spin_state_figure(doc) is None
