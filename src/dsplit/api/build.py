"""Python API behind ``dsplit build``: summaries, isomer tables, geometry files."""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

from dsplit.complex import Complex
from dsplit.errors import InputError
from dsplit.geometry.build import ComplexRequest, build_complex
from dsplit.geometry.isomers import enumerate_isomers
from dsplit.geometry.polyhedra import polyhedron
from dsplit.runfolder import write_with


def build_summary(cx: Complex) -> dict[str, Any]:
    """Machine-readable summary (the keys of ``dsplit build --json``)."""
    ec = cx.counts
    return {
        "name": cx.name,
        "formula": cx.formula,
        "metal": cx.metal.symbol,
        "oxidation_state": cx.oxidation_state,
        "charge": cx.charge,
        "d_electrons": cx.d_count,
        "total_electrons": ec.total_electrons,
        "ionic_valence_electrons": ec.ionic_valence_electrons,
        "multiplicities": ec.multiplicities,
        "multiplicity": cx.multiplicity,
        "multiplicity_source": cx.multiplicity_source,
        "geometry": cx.geometry,
        "isomer": cx.isomer,
        "point_group": cx.point_group,
        "exact_point_group": cx.exact_point_group,
        "d_sets": [{"label": s.label, "orbitals": list(s.orbitals)} for s in cx.d_sets],
        "configuration": cx.configuration,
        "high_spin_configuration": ec.high_spin,
        "low_spin_configuration": ec.low_spin,
        "metal_ligand_distances": cx.metal_ligand_distances(),
        "notes": cx.notes,
    }


def isomer_table(req: ComplexRequest) -> list[dict[str, Any]]:
    """Every isomer of the request's ligand set with the exact group it builds to."""
    from dsplit.chem.ligands import ligand

    poly = polyhedron(req.geometry, req.apical_angle)
    counts: dict[str, int] = {}
    for name, n in req.ligands.items():
        key = ligand(name, field=f"complex.ligands.{name}").key
        counts[key] = counts.get(key, 0) + n
    rows = []
    for iso in enumerate_isomers(poly, counts):
        cx = build_complex(ComplexRequest(**{**req.__dict__, "isomer": iso.name}))
        rows.append({"isomer": iso.name, "exact_point_group": cx.exact_point_group, "sites": list(iso.assignment)})
    return rows


def geometry_format(out: Path) -> str:
    """ASE format name for a file name (extended XYZ for .xyz); InputError if unknown."""
    from ase.io.formats import filetype, ioformats

    if out.suffix.lower() in (".xyz", ".extxyz"):
        return "extxyz"
    try:
        fmt = filetype(str(out), read=False)
    except Exception:
        fmt = None
    if fmt not in ioformats or not ioformats[fmt].can_write:
        raise InputError("--output", f"ASE cannot write '{out.suffix or out.name}' files; use .xyz, .pdb, .cif, .traj, …")
    return fmt


def write_geometry(cx: Complex, path: str | os.PathLike) -> Path:
    """Write the geometry whole (dsplit.runfolder.write_with); format from the extension."""
    import ase.io

    out = Path(path)
    if out.is_dir():
        raise InputError("--output", f"'{out}' is a folder; give a file name such as {cx.name}.xyz")
    fmt = geometry_format(out)
    out.parent.mkdir(parents=True, exist_ok=True)
    return write_with(out, lambda tmp: ase.io.write(str(tmp), cx.atoms, format=fmt))
