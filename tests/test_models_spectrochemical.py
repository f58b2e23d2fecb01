"""Spectrochemical series (models/spectrochemical.py).

Order (Tsuchida's series as given in Shriver & Atkins, Inorganic Chemistry, and Miessler & Tarr,
Inorganic Chemistry — from memory): I⁻ < Br⁻ < SCN⁻(S) < Cl⁻ < F⁻ < OH⁻ < H₂O < NCS⁻(N) < NH₃ < CN⁻ < CO.
"""

import pytest

from dsplit.models.spectrochemical import (
    SPECTROCHEMICAL_SERIES,
    UNCERTAIN_PLACE,
    classify_ligand_set,
    order_by_field,
    series_rank,
)

TEXTBOOK = ["iodido", "bromido", "thiocyanato", "chlorido", "fluorido", "hydroxido",
            "aqua", "isothiocyanato", "ammine", "cyanido", "carbonyl"]


def test_order_matches_textbook():
    ours = [k for k in SPECTROCHEMICAL_SERIES if k not in UNCERTAIN_PLACE]
    assert ours == TEXTBOOK
    assert order_by_field(reversed(TEXTBOOK)) == TEXTBOOK


def test_project_keys_placed():
    for key in ["fluorido", "chlorido", "bromido", "iodido", "oxido", "hydroxido", "aqua",
                "ammine", "carbonyl", "cyanido", "isothiocyanato"]:
        series_rank(key)
    with pytest.raises(ValueError):
        series_rank("point")


def test_classification():
    # [Fe(H2O)6]2+ high spin, [Fe(CN)6]4- low spin, [CoF6]3- high spin (Shriver & Atkins — from memory)
    assert classify_ligand_set(["aqua"] * 6).spin == "high"
    assert classify_ligand_set(["cyanido"] * 6).spin == "low"
    assert classify_ligand_set(["fluorido"] * 6).strength == "weak"
    # [Fe(CN)5(H2O)]3- is low spin (Lever 1984 — from memory)
    assert classify_ligand_set(["cyanido"] * 5 + ["aqua"]).spin == "low"
    # [Co(NH3)6]3+ is low spin: a caller can move the boundary down to ammine
    assert classify_ligand_set(["ammine"] * 6).spin == "high"
    assert classify_ligand_set(["ammine"] * 6, strong_from="ammine").spin == "low"


def test_unknown():
    c = classify_ligand_set(["point"] * 6)
    assert c.strength == "unknown" and c.spin is None and "point" in c.detail
    assert classify_ligand_set([]).strength == "unknown"
    assert "uncertain" in classify_ligand_set(["oxido"] * 4).detail
