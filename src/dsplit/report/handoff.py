"""Hand-off files of a run, in open formats, for the tools a chemist uses next.

Every verified run folder gets
- ``orbitals.molden`` — all MOs (both spins when unrestricted) with energies, occupations and
  the full-group irrep labels in the Sym field (Molden format, PySCF ``tools.molden``);
- ``active_space.fcidump`` — the frozen-core d-manifold Hamiltonian (FCIDUMP, PySCF
  ``tools.fcidump``; dsplit.qc.active_space);
- ``reproduce.py`` — a PySCF + numpy script that runs the ground SCF again (report/reproduce_script.py);
- ``qcschema_input.json`` / ``qcschema_output.json`` — the job and its energy in the MolSSI
  QCSchema (v1 AtomicInput / AtomicResult; a FailedOperation for a run that is not a result);
- ``d_orbital_*.png`` — isosurface pictures of the d-manifold MOs (report/orbital_pictures.py),
  when scikit-image is installed;
and with ``cubes`` Gaussian cube files of the d-manifold MOs (per spin when unrestricted),
the spin density (open shells) and ρ(excited) − ρ(ground) of the state estimator.

An unverified run gets only the QCSchema pair (its output a FailedOperation): orbitals and
energies that are not a result are not handed on.  Calculations live in dsplit.qc; this
module formats and writes.
"""

from __future__ import annotations

import io
import json
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from dsplit.qc.records import Calculation, spin_channels
from dsplit.qc.volumes import CubeGrid, VolumeField

MOLDEN = "orbitals.molden"
FCIDUMP = "active_space.fcidump"
REPRODUCE = "reproduce.py"
QCSCHEMA_INPUT = "qcschema_input.json"
QCSCHEMA_OUTPUT = "qcschema_output.json"


@dataclass
class HandoffRecord:
    """What was written (file names relative to the run folder) and what was left out, and why."""

    files: list[str] = field(default_factory=list)
    cubes: list[dict[str, Any]] = field(default_factory=list)
    pictures: list[dict[str, Any]] = field(default_factory=list)
    active_space: dict[str, Any] | None = None
    reproduce: dict[str, Any] | None = None
    notes: list[str] = field(default_factory=list)
    seconds: dict[str, float] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        return {"files": self.files, "cubes": self.cubes, "pictures": self.pictures,
                "active_space": self.active_space, "reproduce": self.reproduce, "notes": self.notes,
                "seconds": self.seconds}


# ---------------------------------------------------------------- Molden

def molden_text(calc: Calculation, table) -> str:
    """Molden file text: header once, then α (and β) MOs with full-group labels as Sym."""
    from pyscf.tools import molden

    buf = io.StringIO()
    molden.header(calc.mol, buf)
    chans = spin_channels(calc.mf)
    if not calc.unrestricted:  # one orbital set: restricted closed shell, or ROHF with 2/1/0
        chans = [(calc.mf.mo_coeff, np.asarray(calc.mf.mo_occ), calc.mf.mo_energy)]
    for k, ((c, occ, e), spin) in enumerate(zip(chans, ("Alpha", "Beta"))):
        labels = [_sym_field(x) for x in table.channels[k].irreps]
        molden.orbital_coeff(calc.mol, buf, c, spin=spin, symm=labels, ene=e, occ=occ)
    return buf.getvalue()


def _sym_field(label: str) -> str:
    """A Molden Sym value: one token (the format splits on blanks)."""
    return "".join(str(label).split()) or "A"


# ---------------------------------------------------------------- cube files

def cube_text(mol, grid: CubeGrid, fld: VolumeField, version: str) -> str:
    """Gaussian cube text (two comment lines, atoms in Bohr, values x-slowest, 6 per line, %13.5E).

    Written here rather than by ``pyscf.tools.cubegen.Cube.write`` so that the file has no
    date in it (same run, same bytes); the layout is the one PySCF writes and reads.
    """
    from pyscf import gto

    nx, ny, nz = grid.shape
    head = [fld.title, f"dsplit {version}: {fld.kind} on a {nx}x{ny}x{nz} grid, spacing {grid.spacing:.6f} Bohr",
            f"{mol.natm:5d}" + "".join(f"{v:12.6f}" for v in grid.origin)]
    for k, n in enumerate(grid.shape):
        step = [0.0, 0.0, 0.0]
        step[k] = grid.spacing
        head.append(f"{n:5d}" + "".join(f"{v:12.6f}" for v in step))
    for ia in range(mol.natm):
        z = gto.charge(mol.atom_symbol(ia))
        head.append(f"{z:5d}{float(z):12.6f}" + "".join(f"{v:12.6f}" for v in mol.atom_coord(ia)))
    rows = np.asarray(fld.values, dtype=float).reshape(nx * ny, nz)
    full, rest = divmod(nz, 6)
    row_fmt = ("%13.5E" * 6 + "\n") * full + (("%13.5E" * rest + "\n") if rest else "")
    return "\n".join(head) + "\n" + "".join(row_fmt % tuple(r) for r in rows)


# ---------------------------------------------------------------- FCIDUMP

def fcidump_text(space) -> str:
    """FCIDUMP text of an ActiveSpace: header with ORBSYM / ISYM in the usual D2h-subgroup numbering."""
    from pyscf.tools import fcidump

    n = space.n_orbitals
    if space.orbsym is not None and space.group in fcidump.ORBSYM_MAP:
        table = fcidump.ORBSYM_MAP[space.group]
        orbsym, isym = [table[i] for i in space.orbsym], table[space.state_irrep or 0]
    else:
        orbsym, isym = [1] * n, 1
    buf = io.StringIO()
    buf.write(f" &FCI NORB={n:4d},NELEC={sum(space.n_electrons):2d},MS2={space.multiplicity_ms},\n")
    buf.write(f"  ORBSYM={','.join(str(x) for x in orbsym)},\n  ISYM={isym},\n &END\n")
    fcidump.write_eri(buf, space.h2, n, tol=fcidump.TOL)
    fcidump.write_hcore(buf, space.h1, n, tol=fcidump.TOL)
    buf.write(fcidump.DEFAULT_FLOAT_FORMAT % space.core_energy + "  0  0  0  0\n")
    return buf.getvalue()


def active_space_summary(space) -> dict[str, Any]:
    return {"file": FCIDUMP, "orbitals": space.n_orbitals, "electrons_alpha_beta": list(space.n_electrons),
            "core_orbitals": space.n_core, "core_energy_hartree": space.core_energy,
            "casci_energy_hartree": space.casci_energy, "group": space.group, "state_irrep_id": space.state_irrep,
            "orbitals_from": space.source, "core_occupation_min": space.core_occupation_min,
            "hamiltonian": "kinetic + nuclei + ECP + point-charge donors, exact integrals, no continuum solvent",
            "notes": list(space.notes)}


# ---------------------------------------------------------------- QCSchema

def qcschema_input(calc: Calculation, recipe, doc: dict[str, Any]) -> dict[str, Any]:
    """QCSchema v1 AtomicInput of the ground SCF (keywords in dsplit's own words)."""
    mol = calc.mol
    st = calc.setup
    keywords: dict[str, Any] = {"reference": recipe.reference.lower(), "scf_type": "df" if st.density_fitting else "pk",
                                "e_convergence": recipe.conv_tol, "maxiter": recipe.max_cycle,
                                "symmetry_group": recipe.group}
    if recipe.auxbasis is not None:
        keywords["df_basis_scf"] = recipe.auxbasis if isinstance(recipe.auxbasis, (str, dict)) else "custom"
    if recipe.grid_level is not None:
        keywords["dft_grid_level_pyscf"] = recipe.grid_level
    if recipe.ecp:
        keywords["ecp"] = recipe.ecp
    if recipe.pcm is not None:
        keywords["solvent"] = {"model": recipe.pcm["method"], "epsilon": recipe.pcm["eps"],
                               "name": st.solvent.name, "settings_pyscf": recipe.pcm}
    if recipe.point_charges:
        keywords["point_charges_bohr"] = [[*xyz, q] for xyz, q in recipe.point_charges]
    if recipe.irrep_nelec is not None:
        keywords["electrons_per_irrep"] = recipe.irrep_nelec
    return {
        "schema_name": "qcschema_input", "schema_version": 1, "id": str(doc.get("name")),
        "molecule": {"schema_name": "qcschema_molecule", "schema_version": 2,
                     "symbols": [mol.atom_pure_symbol(i) for i in range(mol.natm)],
                     "geometry": [float(v) for v in np.asarray(mol.atom_coords()).ravel()],
                     "molecular_charge": float(mol.charge), "molecular_multiplicity": int(mol.spin + 1),
                     "fix_com": True, "fix_orientation": True, "name": str((doc.get("complex") or {}).get("formula")),
                     "extras": {"complex_charge": (doc.get("complex") or {}).get("charge"),
                                "point_charge_donors": len(recipe.point_charges)}},
        "driver": "energy",
        "model": {"method": "hf" if st.is_hf else st.theory.lower(), "basis": st.basis.lower()},
        "keywords": keywords,
        "protocols": {},
        "extras": {"dsplit": {"spec_hash": doc.get("spec_hash"), "configuration": doc.get("configuration"),
                              "state_held_by": recipe.state_by}},
        "provenance": _provenance(doc),
    }


def _provenance(doc: dict[str, Any]) -> dict[str, Any]:
    versions = (doc.get("provenance") or {}).get("versions") or {}
    return {"creator": "dsplit", "version": str(versions.get("dsplit", "")), "routine": "dsplit.api.compute.compute",
            "engine": "pyscf", "engine_version": str(versions.get("pyscf", ""))}


def qcschema_output(calc: Calculation, job: dict[str, Any], doc: dict[str, Any]) -> dict[str, Any]:
    """QCSchema v1 AtomicResult, or a FailedOperation when the run is not a result."""
    if not calc.ok:
        why = "; ".join(doc.get("warnings") or []) or "the calculation did not converge or was not verified"
        return {"id": job["id"], "input_data": job, "success": False,
                "error": {"error_type": "convergence_error" if not calc.converged else "unverified_configuration",
                          "error_message": why}, "extras": {"dsplit": {"configuration": doc.get("configuration")}}}
    e = calc.energy_hartree
    n_alpha, n_beta = calc.mol.nelec
    mo = np.asarray(calc.mf.mo_coeff)
    props = {"return_energy": e, "scf_total_energy": e, "nuclear_repulsion_energy": float(calc.mol.energy_nuc()),
             "scf_iterations": int(sum(r.cycles for r in calc.rungs)), "calcinfo_nbasis": int(calc.mol.nao_nr()),
             "calcinfo_nmo": int(mo.shape[-1]), "calcinfo_nalpha": int(n_alpha), "calcinfo_nbeta": int(n_beta),
             "calcinfo_natom": int(calc.mol.natm)}
    out = dict(job, schema_name="qcschema_output", return_result=e, success=True, properties=props)
    out["extras"] = dict(job["extras"], dsplit=dict(job["extras"]["dsplit"], spin_square=doc.get("spin_square")))
    return out


def _json(doc: dict[str, Any]) -> str:
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"


# ---------------------------------------------------------------- the state estimator's checkpoints

def state_checkpoints(doc: dict[str, Any], folder: Path) -> tuple[Path, float, Path | None, float | None, str] | None:
    """(excited chk, its energy, ground chk or None, its energy, what) of the verified state estimator.

    Names as the state estimator writes them: ``state.chk`` (open shell), ``state-mixed.chk``
    (closed shell: the mixed-spin determinant, whose density is that of the excited
    configuration), ``state-restricted-open.chk`` against ``restricted-open.chk`` when the
    ΔSCF was redone restricted-open.
    """
    st = ((doc.get("splitting") or {}).get("state")) or {}
    if not st.get("configuration_verified"):
        return None
    what = f"excited configuration {st.get('excited_configuration')}"
    if "restricted open" in str(st.get("method") or ""):
        return (folder / "state-restricted-open.chk", st["energy_excited_hartree"], folder / "restricted-open.chk",
                st.get("energy_ground_hartree"), what + ", restricted-open")
    if st.get("energy_mixed_hartree") is not None:
        return folder / "state-mixed.chk", st["energy_mixed_hartree"], None, None, what + ", mixed-spin determinant"
    return folder / "state.chk", st["energy_excited_hartree"], None, None, what
