"""Which hand-off files a run gets, in which order: the calculations (qc) and the writers (report).

Every verified run: QCSchema input/output, orbitals.molden, reproduce.py, active_space.fcidump,
the d-orbital pictures; with ``cubes`` the Gaussian cube files too.  A part that fails is
named in the record's notes and the rest is still written (one hand-off file must never
discard a finished run).  The file formats are in dsplit.report.handoff.
"""

from __future__ import annotations

import time
from pathlib import Path
from typing import Any

from dsplit.qc.records import Calculation
from dsplit.report.handoff import (FCIDUMP, MOLDEN, QCSCHEMA_INPUT, QCSCHEMA_OUTPUT, REPRODUCE, HandoffRecord,
                                   _json, active_space_summary, cube_text, fcidump_text, molden_text,
                                   qcschema_input, qcschema_output, state_checkpoints)
from dsplit.runfolder import write_bytes, write_text
from dsplit.spec import CUBE_SPACING_ANGSTROM


def write_handoff_files(calc: Calculation, table, folder: Path, *, doc: dict[str, Any], cubes: bool = False,
                        spacing: float = CUBE_SPACING_ANGSTROM, pictures: bool = True,
                        active_space=None) -> HandoffRecord:
    """Write the hand-off files of one run into ``folder`` (see the module docstring).

    ``doc``: the run's result document (energies, state estimator, provenance).
    ``active_space``: an :class:`dsplit.qc.active_space.ActiveSpace` to write instead of the
    ground-state d manifold (e.g. from a CASSCF run).  Returns what was written; a part that
    fails is named in ``notes`` and the rest is still written.
    """
    from dsplit.qc.recipe import scf_recipe

    folder = Path(folder)
    rec = HandoffRecord()
    t0 = time.perf_counter()
    recipe = scf_recipe(calc) if calc.converged else None
    job = qcschema_input(calc, recipe, doc) if recipe is not None else _bare_job(calc, doc)
    _put(folder, QCSCHEMA_INPUT, _json(job), rec)
    _put(folder, QCSCHEMA_OUTPUT, _json(qcschema_output(calc, job, doc)), rec)
    rec.seconds["qcschema"] = time.perf_counter() - t0
    if not calc.ok:
        rec.notes.append("not a result: no orbitals, cubes, FCIDUMP or reproduce.py written")
        return rec
    versions = (doc.get("provenance") or {}).get("versions") or {}
    _timed(rec, "molden", lambda: _put(folder, MOLDEN, molden_text(calc, table), rec))
    _timed(rec, "reproduce", lambda: _write_reproduce(recipe, doc, versions, folder, rec))
    _timed(rec, "fcidump", lambda: _write_fcidump(calc, table, folder, rec, active_space))
    if cubes:
        _timed(rec, "cubes", lambda: _write_cubes(calc, table, folder, doc, spacing, versions, rec))
    if pictures:
        _timed(rec, "pictures", lambda: _write_pictures(calc, table, folder, rec))
    return rec


def _bare_job(calc: Calculation, doc: dict[str, Any]) -> dict[str, Any]:
    """The QCSchema input of a run whose SCF did not converge (no recipe to read off)."""
    from dsplit.qc.recipe import ScfRecipe, reference_name

    st, mol = calc.setup, calc.mol
    recipe = ScfRecipe(atoms=[], charge=mol.charge, spin=mol.spin, basis=st.basis, ecp=st.ecp, symmetry=False,
                       symmetry_subgroup=None, group=calc.symmetry_group, reference=reference_name(calc.mf),
                       xc=None, grid_level=None if st.is_hf else st.grid_level, auxbasis=None, point_charges=[],
                       pcm=None, conv_tol=float(calc.mf.conv_tol), max_cycle=int(calc.mf.max_cycle),
                       energy_hartree=float("nan"), state_by="none", irrep_nelec=None)
    return qcschema_input(calc, recipe, doc)


def _put(folder: Path, name: str, text: str, rec: HandoffRecord) -> None:
    write_text(folder / name, text)
    rec.files.append(name)


def _timed(rec: HandoffRecord, name: str, step) -> None:
    t0 = time.perf_counter()
    try:
        step()
    except Exception as exc:  # one hand-off file failing must not discard the run
        rec.notes.append(f"{name} not written: {type(exc).__name__}: {exc}")
    rec.seconds[name] = time.perf_counter() - t0


def _write_reproduce(recipe, doc, versions, folder: Path, rec: HandoffRecord) -> None:
    from dsplit.report.reproduce_script import TOLERANCE_HARTREE, reproduce_script

    title = f"dsplit run '{doc.get('name')}' ({(doc.get('complex') or {}).get('formula')})"
    _put(folder, REPRODUCE, reproduce_script(recipe, title, versions), rec)
    rec.reproduce = {"file": REPRODUCE, "state_held_by": recipe.state_by, "why": list(recipe.notes),
                     "energy_hartree": recipe.energy_hartree, "tolerance_hartree": TOLERANCE_HARTREE}


def _write_fcidump(calc, table, folder: Path, rec: HandoffRecord, active_space) -> None:
    from dsplit.qc.active_space import ground_d_active_space

    space = active_space if active_space is not None else ground_d_active_space(calc, table)
    _put(folder, FCIDUMP, fcidump_text(space), rec)
    rec.active_space = active_space_summary(space)


def _cube_orbitals(calc, table):
    from dsplit.qc.volumes import d_manifold_orbitals

    orbs = d_manifold_orbitals(calc, table)
    return orbs if calc.unrestricted else [o for o in orbs if o.channel == 0]


def _write_cubes(calc, table, folder: Path, doc, spacing: float, versions, rec: HandoffRecord) -> None:
    from dsplit.qc.volumes import cube_grid, density_difference_field, orbital_fields, spin_density_field

    grid = cube_grid(calc.mol.atom_coords(), spacing)
    fields = orbital_fields(calc, _cube_orbitals(calc, table), grid)
    if calc.multiplicity > 1:
        fields.append(spin_density_field(calc, grid))
    found = state_checkpoints(doc, folder)
    if found is None:
        rec.notes.append("no density-difference cube: the state estimator has no verified excited state")
    else:
        xchk, xe, gchk, ge, what = found
        try:
            fields.append(density_difference_field(calc, grid, xchk, xe, gchk, ge, what))
        except (OSError, KeyError, ValueError) as exc:
            rec.notes.append(f"no density-difference cube: {exc}")
    for f in fields:
        name = f"{f.name}.cube"
        _put(folder, name, cube_text(calc.mol, grid, f, str(versions.get("dsplit", ""))), rec)
        entry = {"file": name, "kind": f.kind, "title": f.title, "integral": f.integral,
                 "grid": list(grid.shape), "spacing_angstrom": spacing}
        if f.orbital is not None:
            o = f.orbital
            entry.update({"spin": o.spin if o.spin_resolved else "restricted", "mo_index": o.index, "label": o.label})
        rec.cubes.append(entry)


def _write_pictures(calc, table, folder: Path, rec: HandoffRecord) -> None:
    from dsplit.report.orbital_pictures import draw_d_orbitals

    for name, png, meta in draw_d_orbitals(calc, table, rec.notes):
        write_bytes(folder / name, png)
        rec.files.append(name)
        rec.pictures.append(dict(meta, file=name))
