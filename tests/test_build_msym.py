"""Every built complex's exact point group agrees with libmsym, an independent library
(PyPI `libmsym`, the library behind PySCF's `pyscf.symm.msym`).

The donor-set groups are the textbook ones for ideal polyhedra (solid geometry): Oh, Td, D4h,
D3h (trigonal bipyramid and trigonal prism), C4v, D∞h.
"""

from __future__ import annotations

import pytest

from dsplit.geometry.polyhedra import GEOMETRIES
from tests.conftest import make
from tests.test_symmetry_detect import LIBMSYM_NAME, libmsym_group

COUNT = {"octahedral": 6, "square-planar": 4, "tetrahedral": 4, "trigonal-bipyramidal": 5,
         "square-pyramidal": 5, "trigonal-prismatic": 6, "linear": 2}
DONOR_GROUP = {"octahedral": "Oh", "tetrahedral": "Td", "square-planar": "D4h", "trigonal-bipyramidal": "D3h",
               "square-pyramidal": "C4v", "trigonal-prismatic": "D3h", "linear": "Dooh"}


@pytest.mark.parametrize("geometry", GEOMETRIES)
@pytest.mark.parametrize("ligand", ["chlorido", "aqua", "ammine", "carbonyl"])
def test_exact_group_matches_libmsym(geometry, ligand):
    cx = make("Ni", geometry, {ligand: COUNT[geometry]}, oxidation_state=2)
    if ligand in ("chlorido", "carbonyl"):  # monatomic or linear ligands keep the donor-set group
        assert cx.exact_point_group == DONOR_GROUP[geometry]
    symbols = cx.atoms.get_chemical_symbols()
    if cx.exact_point_group != "C1":  # libmsym cannot orient C1 (no primary axis)
        assert LIBMSYM_NAME.get(cx.exact_point_group, cx.exact_point_group) == \
            libmsym_group(symbols, cx.atoms.positions)


@pytest.mark.parametrize("ligands,isomer", [({"ammine": 4, "chlorido": 2}, "cis"),
                                            ({"ammine": 4, "chlorido": 2}, "trans"),
                                            ({"fluorido": 3, "chlorido": 3}, "fac"),
                                            ({"fluorido": 3, "chlorido": 3}, "mer")])
def test_isomers_match_libmsym(ligands, isomer):
    cx = make("Co", "octahedral", ligands, oxidation_state=3, isomer=isomer)
    assert LIBMSYM_NAME.get(cx.exact_point_group, cx.exact_point_group) == \
        libmsym_group(cx.atoms.get_chemical_symbols(), cx.atoms.positions)
    if ligands == {"fluorido": 3, "chlorido": 3}:
        # textbook: fac-MA3B3 is C3v, mer-MA3B3 is C2v
        assert cx.exact_point_group == {"fac": "C3v", "mer": "C2v"}[isomer]


def test_six_aqua_is_th_and_hexaammine_d3d():
    # common practice (idealised structures): [M(H2O)6] in the Th arrangement; staggered ammines D3d
    assert make("Fe", "octahedral", {"aqua": 6}, oxidation_state=2).exact_point_group == "Th"
    assert make("Co", "octahedral", {"ammine": 6}, oxidation_state=3).exact_point_group == "D3d"
