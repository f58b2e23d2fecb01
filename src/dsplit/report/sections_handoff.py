"""Report sections about the hand-off: the d-orbital pictures and the files for other programs.

Read from result.json's ``handoff`` entry (written by report/handoff.py); nothing is recomputed.
"""

from __future__ import annotations

from typing import Any

from dsplit.report.blocks import Gallery, Image, Items, Para, Section, Table, num, pct, text

FRAME_NAMES = {"xy": "dxy", "yz": "dyz", "xz": "dxz", "z2": "dz²", "x2-y2": "dx²−y²"}
_SPIN = {"alpha": " (α)", "beta": " (β)"}

_WHAT = {
    "orbitals.molden": "all MOs with energies, occupations and full-group labels (Molden); open in a molecular viewer",
    "active_space.fcidump": "the d-manifold active-space Hamiltonian (FCIDUMP) for a CI or DMRG program",
    "reproduce.py": "runs this ground SCF again with plain PySCF and checks the energy",
    "qcschema_input.json": "the ground-state job in the MolSSI QCSchema",
    "qcschema_output.json": "its energy and provenance in the MolSSI QCSchema",
}


def picture_caption(p: dict[str, Any]) -> str:
    """'t2g · dxy (α)' newline '6.50 eV · d 84 %'."""
    frame = FRAME_NAMES.get(p.get("frame_orbital") or "")
    name = f"{text(p.get('label'))} · {frame}" if frame else text(p.get("label"))
    energy = f"{num(p.get('energy_eV'), 2)}\u00a0eV"
    spin = _SPIN.get(p.get("spin"), "") if p.get("spin_resolved") else ""
    return f"{name}{spin}\n{energy} · metal d {pct(p.get('metal_d'))}\u00a0%"


def handoff(doc: dict[str, Any]) -> dict[str, Any]:
    h = doc.get("handoff")
    return h if isinstance(h, dict) else {}


def d_orbitals_section(doc: dict[str, Any], available: set[str]) -> Section | None:
    """The d-orbital pictures (only those whose PNG is at hand)."""
    pics = [p for p in handoff(doc).get("pictures") or [] if p.get("file") in available]
    if not pics:
        return None
    iso = pics[0].get("isovalue")
    spin = pics[0].get("spin") if pics[0].get("spin_resolved") else None
    blocks: list = [Gallery([Image(p["file"], f"d orbital {text(p.get('label'))}", picture_caption(p))
                             for p in pics])]
    blocks.append(Para(f"Isosurfaces ψ = ±{text(iso)} Bohr⁻³ᐟ² of the ligand-field manifold MOs"
                       + (" (α spin; the β MOs look alike)" if spin == "alpha" else "")
                       + ": teal positive, orange negative; the complex as balls and sticks. The energy is the "
                       "orbital energy, the metal-d share its IAO population.", "note"))
    return Section("d orbitals", blocks)


def handoff_section(doc: dict[str, Any]) -> Section | None:
    """The files for other programs, what each holds, and what was left out."""
    h = handoff(doc)
    files = h.get("files") or []
    if not files:
        return None
    rows = [[f, _WHAT[f]] for f in files if f in _WHAT]
    cubes = h.get("cubes") or []
    if cubes:
        kinds = ", ".join(dict.fromkeys(str(c.get("kind")) for c in cubes))
        rows.append([f"{len(cubes)} × .cube", f"Gaussian cube files: {kinds} "
                     f"(spacing {num(cubes[0].get('spacing_angstrom'), 2)} Å)"])
    blocks: list = [Table(["file", "what it holds"], rows, "files for other programs")]
    space = h.get("active_space")
    if isinstance(space, dict):
        blocks.append(Para(f"Active space: {text(space.get('orbitals'))} orbitals, (α, β) electrons "
                           f"{text(space.get('electrons_alpha_beta'))}, {text(space.get('core_orbitals'))} core "
                           f"orbitals; lowest CASCI energy {num(space.get('casci_energy_hartree'), 8)} Eh "
                           f"({text(space.get('hamiltonian'))}).", "note"))
    rep = h.get("reproduce")
    if isinstance(rep, dict):
        held = ("electrons per symmetry block" if rep.get("state_held_by") == "irrep_nelec"
                else "maximum overlap with the run's occupied orbitals")
        blocks.append(Para(f"reproduce.py holds the state by {held}; it must give {num(rep.get('energy_hartree'), 8)} "
                           f"Eh within {text(rep.get('tolerance_hartree'))} Eh.", "note"))
    if h.get("notes"):
        blocks.append(Items([str(n) for n in h["notes"]], "note"))
    return Section("Hand-off files", blocks)
