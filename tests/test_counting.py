"""Electron counting against textbook complexes.

Source for every row: standard inorganic chemistry textbook facts (e.g.
Housecroft & Sharpe, Inorganic Chemistry, 4th ed., chapters on d-block
coordination chemistry) — from memory.
"""

from __future__ import annotations

import pytest

from tests.conftest import make

# (metal, ox, geometry, ligands, charge, d_count, multiplicities, default multiplicity, default configuration)
TEXTBOOK = [
    ("Ti", 4, "tetrahedral", {"chlorido": 4}, 0, 0, [1], 1, "e^0 t2^0"),            # TiCl4, d0
    ("Mn", 7, "tetrahedral", {"oxido": 4}, -1, 0, [1], 1, "e^0 t2^0"),              # permanganate, d0
    ("Ti", 3, "octahedral", {"aqua": 6}, 3, 1, [2], 2, "t2g^1 eg^0"),               # violet [Ti(H2O)6]3+
    ("V", 3, "octahedral", {"aqua": 6}, 3, 2, [1, 3], 3, "t2g^2 eg^0"),             # [V(H2O)6]3+ triplet
    ("Cr", 3, "octahedral", {"aqua": 6}, 3, 3, [2, 4], 4, "t2g^3 eg^0"),            # [Cr(H2O)6]3+ quartet
    ("Cr", 2, "octahedral", {"aqua": 6}, 2, 4, [1, 3, 5], 5, "t2g^3 eg^1"),         # high-spin Cr(II)
    # strong field cannot pair t2g^3 or t2g^4 further: S = 3/2 and S = 1 (low spin is not the smallest 2S+1)
    ("Cr", 3, "octahedral", {"cyanido": 6}, -3, 3, [2, 4], 4, "t2g^3 eg^0"),        # [Cr(CN)6]3− quartet
    ("Mo", 3, "octahedral", {"chlorido": 6}, -3, 3, [2, 4], 4, "t2g^3 eg^0"),       # [MoCl6]3− quartet
    ("Mn", 3, "octahedral", {"cyanido": 6}, -3, 4, [1, 3, 5], 3, "t2g^4 eg^0"),     # [Mn(CN)6]3− low spin, S = 1
    ("Os", 4, "octahedral", {"chlorido": 6}, -2, 4, [1, 3, 5], 3, "t2g^4 eg^0"),    # [OsCl6]2− low spin, S = 1
    ("Mn", 2, "octahedral", {"aqua": 6}, 2, 5, [2, 4, 6], 6, "t2g^3 eg^2"),         # high-spin Mn(II), sextet
    ("Fe", 3, "octahedral", {"cyanido": 6}, -3, 5, [2, 4, 6], 2, "t2g^5 eg^0"),     # low-spin ferricyanide
    ("Fe", 2, "octahedral", {"aqua": 6}, 2, 6, [1, 3, 5], 5, "t2g^4 eg^2"),         # high-spin Fe(II)
    ("Fe", 2, "octahedral", {"cyanido": 6}, -4, 6, [1, 3, 5], 1, "t2g^6 eg^0"),     # ferrocyanide, diamagnetic
    ("Co", 3, "octahedral", {"ammine": 6}, 3, 6, [1, 3, 5], 1, "t2g^6 eg^0"),       # [Co(NH3)6]3+ low spin
    ("Co", 3, "octahedral", {"fluorido": 6}, -3, 6, [1, 3, 5], 5, "t2g^4 eg^2"),    # [CoF6]3− high spin
    ("Cr", 0, "octahedral", {"carbonyl": 6}, 0, 6, [1, 3, 5], 1, "t2g^6 eg^0"),     # Cr(CO)6
    ("Co", 2, "tetrahedral", {"chlorido": 4}, -2, 7, [2, 4], 4, "e^4 t2^3"),        # blue [CoCl4]2−
    ("Ni", 2, "octahedral", {"aqua": 6}, 2, 8, [1, 3], 3, "t2g^6 eg^2"),            # green [Ni(H2O)6]2+
    ("Ni", 2, "tetrahedral", {"chlorido": 4}, -2, 8, [1, 3], 3, "e^4 t2^4"),        # paramagnetic [NiCl4]2−
    ("Pt", 2, "square-planar", {"chlorido": 4}, -2, 8, [1, 3], 1, "eg^4 b2g^2 a1g^2 b1g^0"),  # [PtCl4]2−
    ("Ni", 2, "square-planar", {"cyanido": 4}, -2, 8, [1, 3], 1, "eg^4 b2g^2 a1g^2 b1g^0"),   # [Ni(CN)4]2−
    ("Fe", 0, "trigonal-bipyramidal", {"carbonyl": 5}, 0, 8, [1, 3], 1, "e''^4 e'^4 a1'^0"),  # Fe(CO)5
    ("Cu", 2, "octahedral", {"aqua": 6}, 2, 9, [2], 2, "t2g^6 eg^3"),               # [Cu(H2O)6]2+
    ("Zn", 2, "tetrahedral", {"chlorido": 4}, -2, 10, [1], 1, "e^4 t2^6"),          # [ZnCl4]2−
    ("Ag", 1, "linear", {"ammine": 2}, 1, 10, [1], 1, "delta_g^4 pi_g^4 sigma_g^2"),  # [Ag(NH3)2]+
]


@pytest.mark.parametrize("metal,ox,geometry,ligands,charge,dn,mults,mult,conf", TEXTBOOK)
def test_textbook_counts(metal, ox, geometry, ligands, charge, dn, mults, mult, conf):
    cx = make(metal, geometry, ligands, oxidation_state=ox)
    assert cx.charge == charge
    assert cx.d_count == dn
    assert cx.counts.multiplicities == mults
    assert cx.multiplicity == mult
    assert cx.configuration == conf


def test_oxidation_state_from_charge():
    cx = make("Fe", "octahedral", {"cyanido": 6}, charge=-3)
    assert cx.oxidation_state == 3 and cx.d_count == 5


@pytest.mark.parametrize("dn,hs,ls", [
    # Oh high/low-spin configurations for d4–d7 (textbook, from memory)
    (4, "t2g^3 eg^1", "t2g^4 eg^0"),
    (5, "t2g^3 eg^2", "t2g^5 eg^0"),
    (6, "t2g^4 eg^2", "t2g^6 eg^0"),
    (7, "t2g^5 eg^2", "t2g^6 eg^1"),
])
def test_octahedral_high_and_low_spin(dn, hs, ls):
    metal = {4: ("Cr", 2), 5: ("Mn", 2), 6: ("Fe", 2), 7: ("Co", 2)}[dn]
    cx = make(metal[0], "octahedral", {"aqua": 6}, oxidation_state=metal[1])
    assert cx.counts.high_spin == hs and cx.counts.low_spin == ls


def test_electron_totals_and_ionic_count():
    # [Fe(CN)6]4−: Z(Fe)=26 + 6×(6+7) + 4 = 108 electrons; ionic count 6 + 12 = 18 (18-electron rule)
    cx = make("Fe", "octahedral", {"cyanido": 6}, oxidation_state=2)
    assert cx.counts.total_electrons == 108
    assert cx.counts.ionic_valence_electrons == 18


def test_mixed_isomers_listed():
    from dsplit.api.build import isomer_table
    from dsplit.geometry.build import ComplexRequest

    # MA4B2 has cis and trans; MA3B3 fac and mer (textbook isomer counts); MA2B2C2 five geometric isomers
    rows = isomer_table(ComplexRequest("t", "Co", "octahedral", {"ammine": 4, "chlorido": 2}, oxidation_state=3))
    assert sorted(r["isomer"] for r in rows) == ["cis", "trans"]
    rows = isomer_table(ComplexRequest("t", "Co", "octahedral", {"ammine": 3, "chlorido": 3}, oxidation_state=3))
    assert sorted(r["isomer"] for r in rows) == ["fac", "mer"]
    rows = isomer_table(ComplexRequest("t", "Co", "octahedral", {"ammine": 2, "chlorido": 2, "aqua": 2},
                                       oxidation_state=3))
    assert len(rows) == 5
    rows = isomer_table(ComplexRequest("t", "Fe", "trigonal-bipyramidal", {"carbonyl": 4, "ammine": 1},
                                       oxidation_state=0))
    assert sorted(r["isomer"] for r in rows) == ["axial", "equatorial"]
