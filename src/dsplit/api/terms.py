"""Python API behind ``dsplit terms``: the dⁿ multiplet model for given Δ, B, C or AOM parameters.

No quantum chemistry.  The one-electron field is either Δ times the geometry's field shape
(models.field_shape; σ-only angular overlap shape, exact up to its trace for octahedral and
tetrahedral fields, a model choice for the others) or the angular overlap matrix of per-ligand
eσ, eπ on the geometry's donor sites (models.aom; several ligands are placed as the chosen
isomer, geometry.isomers).  Point group: the polyhedron's for one ligand kind, otherwise detected
from the donor set (symmetry.detect_point_group) and used in the frame of the d orbitals.
With measured bands instead of Δ and B, Δ and B (and C) are fitted (models.band_fit).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from dsplit.errors import InputError
from dsplit.models.band_fit import BandFit, fit_bands
from dsplit.models.field_shape import FieldShape, delta_of, polyhedron_shape, shape_of_matrix
from dsplit.models.multiplet import (DEFAULT_C_OVER_B, FrameSymmetry, TermSpectrum, frame_symmetry, is_invariant,
                                     multiplet_states)

_AOM = re.compile(r"^\s*([A-Za-z][\w\-()]*)\s*(?:=\s*(\d+))?\s*:\s*([-+0-9.eE]+)\s*(?:,\s*([-+0-9.eE]+))?\s*$")
_STAND_INS = ("O", "N", "S", "P", "C", "F", "Cl", "Br")  # distinct labels per ligand kind for the detector


@dataclass(frozen=True)
class AOMLigand:
    name: str
    count: int
    e_sigma_cm1: float
    e_pi_cm1: float


@dataclass(frozen=True)
class TermsResult:
    """What ``dsplit terms`` prints (energies in cm⁻¹)."""

    d_count: int
    geometry: str
    point_group: str | None
    delta_cm1: float | None
    b_cm1: float | None
    c_cm1: float | None
    c_over_b: float
    shape: FieldShape
    spectrum: TermSpectrum | None
    aom: tuple[AOMLigand, ...] = ()
    fit: BandFit | None = None
    notes: tuple[str, ...] = field(default_factory=tuple)

    def to_dict(self) -> dict[str, Any]:
        states = [] if self.spectrum is None else [
            {"label": t.label, "energy_cm1": t.energy, "multiplicity": t.multiplicity, "irrep": t.irrep,
             "degeneracy": t.degeneracy, "spin_allowed": t.spin_allowed,
             "configurations": [{"configuration": c, "weight": w} for c, w in t.configurations]}
            for t in self.spectrum.terms]
        doc: dict[str, Any] = {
            "d_count": self.d_count, "geometry": self.geometry, "point_group": self.point_group,
            "delta_cm1": self.delta_cm1, "B_cm1": self.b_cm1, "C_cm1": self.c_cm1, "C_over_B": self.c_over_b,
            "aom": [{"ligand": a.name, "count": a.count, "e_sigma_cm1": a.e_sigma_cm1, "e_pi_cm1": a.e_pi_cm1}
                    for a in self.aom] or None,
            "spin_orbit_coupling": False, "states": states, "notes": list(self.notes)}
        if self.fit is not None:
            doc["fit"] = {**self.fit.to_dict(), "multiplicity": self.fit.multiplicity,
                          "bands_cm1": list(self.fit.bands_cm1), "model_cm1": list(self.fit.model_cm1),
                          "assigned": list(self.fit.assigned), "fitted": list(self.fit.fitted),
                          "held": dict(self.fit.held), "notes": list(self.fit.notes)}
        return doc

    @property
    def delta_over_b(self) -> float | None:
        return None if not (self.delta_cm1 and self.b_cm1) else self.delta_cm1 / self.b_cm1


def parse_aom(texts: tuple[str, ...] | list[str], coordination_number: int) -> tuple[AOMLigand, ...]:
    """'name[=count]:eσ[,eπ]' per ligand kind (cm⁻¹); one kind without a count takes every site."""
    out = []
    for text in texts:
        m = _AOM.match(text)
        if not m:
            raise InputError("--aom", f"cannot read '{text}'; write ligand:eσ,eπ in cm⁻¹, e.g. aqua:7500,1500 "
                                      "or chlorido=2:5500,1000 with a count for each of several ligands")
        try:
            es, ep = float(m.group(3)), float(m.group(4) or 0.0)
        except ValueError:
            raise InputError("--aom", f"'{text}': eσ and eπ must be numbers in cm⁻¹") from None
        count = int(m.group(2)) if m.group(2) else None
        out.append((m.group(1), count, es, ep))
    if len({name for name, *_ in out}) != len(out):
        raise InputError("--aom", "each ligand may be given once")
    if len(out) == 1 and out[0][1] is None:
        out = [(out[0][0], coordination_number, out[0][2], out[0][3])]
    if any(count is None for _, count, *_ in out):
        raise InputError("--aom", "with several ligands give each a count, e.g. chlorido=2:5500,1000")
    if sum(c for _, c, *_ in out) != coordination_number:
        raise InputError("--aom", f"the counts add up to {sum(c for _, c, *_ in out)} but the geometry has "
                                  f"{coordination_number} donor sites")
    return tuple(AOMLigand(n, c, es, ep) for n, c, es, ep in out)


def _aom_field(poly: Any, ligands: tuple[AOMLigand, ...],
               isomer: str | None) -> tuple[np.ndarray, FrameSymmetry | None]:
    """AOM matrix (cm⁻¹) of the ligands on the polyhedron's sites and its point group in the d frame."""
    from dsplit.geometry.isomers import choose_isomer
    from dsplit.models.aom import aom_matrix
    from dsplit.symmetry import detect_point_group

    if len(ligands) == 1:
        if isomer is not None:
            raise InputError("--isomer", "one ligand kind has no isomers; remove --isomer")
        assignment: tuple[str, ...] = (ligands[0].name,) * poly.coordination_number
    else:
        try:
            assignment = choose_isomer(poly, {a.name: a.count for a in ligands}, isomer).assignment
        except InputError as exc:
            raise InputError("--isomer", exc.message) from None
    by_name = {a.name: a for a in ligands}
    es = np.array([by_name[n].e_sigma_cm1 for n in assignment])
    ep = np.array([by_name[n].e_pi_cm1 for n in assignment])
    h = aom_matrix(poly.directions, es, ep)
    if len(ligands) == 1:
        symmetry: FrameSymmetry | None = frame_symmetry(poly.point_group)
    else:
        kinds = [a.name for a in ligands]
        labels = ["Fe"] + [_STAND_INS[kinds.index(n)] for n in assignment]
        positions = np.vstack([np.zeros(3), 2.0 * np.asarray(poly.directions)])
        found = detect_point_group(labels, positions)
        symmetry = FrameSymmetry(found.group, found.ops, linear=found.linear)
    if not is_invariant(h, symmetry):
        symmetry = None
    return h, symmetry


def _check_ion(d_count: int, metal: str | None, oxidation_state: int | None) -> None:
    if (metal is None) != (oxidation_state is None):
        raise InputError("--metal" if metal is None else "--oxidation-state",
                         "give --metal and --oxidation-state together (they are needed only for β)")
    if metal is not None:
        from dsplit.chem.elements import metal as lookup

        m = lookup(metal, field="--metal")
        n = m.d_count(int(oxidation_state))
        if n != d_count:
            raise InputError("--oxidation-state", f"{m.symbol} in +{oxidation_state} is d^{n}, not d^{d_count}")


def compute_terms(d_count: int, geometry: str = "octahedral", *, delta_cm1: float | None = None,
                  b_cm1: float | None = None, c_cm1: float | None = None, c_over_b: float | None = None,
                  aom: tuple[str, ...] | list[str] = (), isomer: str | None = None,
                  bands_cm1: list[float] | None = None, metal: str | None = None,
                  oxidation_state: int | None = None) -> TermsResult:
    """Validate the inputs (InputError naming the flag) and solve or fit the multiplet model."""
    from dsplit.geometry.polyhedra import polyhedron

    if not 1 <= d_count <= 9:
        raise InputError("--d", f"d^{d_count} has no d–d terms; give 1 … 9")
    try:
        poly = polyhedron(geometry)
    except InputError as exc:
        raise InputError("--geometry", exc.message) from None
    _check_ion(d_count, metal, oxidation_state)
    if c_cm1 is not None and c_over_b is not None:
        raise InputError("--C", "give either --C or --C-over-B, not both")
    for name, value in (("--delta", delta_cm1), ("--B", b_cm1), ("--C", c_cm1), ("--C-over-B", c_over_b)):
        if value is not None and not value > 0:
            raise InputError(name, f"{value} must be a positive number")
    ratio = DEFAULT_C_OVER_B if c_over_b is None else float(c_over_b)
    notes = ["spin–orbit coupling is not included; states are pure 2S+1 and point-group terms"]
    ligands = parse_aom(aom, poly.coordination_number) if aom else ()
    if bands_cm1 is not None:
        if delta_cm1 is not None or b_cm1 is not None or ligands or c_cm1 is not None:
            raise InputError("--bands", "fit the bands alone: drop --delta, --B, --C and --aom (--C-over-B holds C/B)")
        shape = polyhedron_shape(poly)
        fit = fit_bands(d_count, shape, bands_cm1, ratio, metal, oxidation_state, field_name="--bands")
        if poly.point_group not in ("Oh", "Td"):
            notes.append(f"Δ scales a σ-only angular-overlap shape for {poly.geometry}; the ratios of its splittings "
                         "are a model choice")
        spectrum = None
        if fit.b_cm1 is not None or d_count in (1, 9):
            spectrum = multiplet_states(shape.matrix(fit.delta_cm1), fit.b_cm1 or 0.0, fit.c_cm1 or 0.0, d_count,
                                        symmetry=shape.symmetry, d_sets=shape.d_sets)
        else:
            notes.append("the bands do not fix B, so only the fit is shown; give --delta and --B to list every term")
        fitted_ratio = fit.c_cm1 / fit.b_cm1 if fit.b_cm1 and fit.c_cm1 is not None else ratio
        return TermsResult(d_count, poly.geometry, shape.symmetry.name if shape.symmetry else None, fit.delta_cm1,
                           fit.b_cm1, fit.c_cm1, fitted_ratio, shape, spectrum, fit=fit, notes=tuple(notes))
    if b_cm1 is None:
        raise InputError("--B", "give Racah B in cm⁻¹ (or --bands to fit it)")
    c = float(c_cm1) if c_cm1 is not None else ratio * b_cm1
    if ligands:
        if delta_cm1 is not None:
            raise InputError("--delta", "--aom sets the field; drop --delta")
        h, symmetry = _aom_field(poly, ligands, isomer)
        try:
            shape = shape_of_matrix(h, poly.d_set_labels, symmetry)
        except ValueError:
            raise InputError("--aom", "these eσ, eπ do not split the d orbitals of this geometry") from None
        delta = delta_of(h, poly.d_set_labels)
    else:
        if delta_cm1 is None:
            raise InputError("--delta", "give Δ in cm⁻¹, or --aom ligand:eσ,eπ, or --bands")
        if isomer is not None:
            raise InputError("--isomer", "--isomer goes with several --aom ligands")
        shape, delta = polyhedron_shape(poly), float(delta_cm1)
        h = shape.matrix(delta)
        if poly.point_group not in ("Oh", "Td"):
            notes.append(f"Δ scales a σ-only angular-overlap shape for {poly.geometry}; the ratios of its splittings "
                         "are a model choice (give --aom for your own)")
    spectrum = multiplet_states(h, b_cm1, c, d_count, symmetry=shape.symmetry, d_sets=shape.d_sets)
    return TermsResult(d_count, poly.geometry, shape.symmetry.name if shape.symmetry else None, delta, float(b_cm1),
                       c, c / b_cm1, shape, spectrum, aom=ligands, notes=tuple(notes))


def term_figure(result: TermsResult, fmt: str = "png") -> bytes:
    """The term diagram of the result (E/B against Δ/B) with its point and any measured bands."""
    from dsplit.models.term_curves import term_curves
    from dsplit.report.term_diagram import term_diagram_bytes

    point = result.delta_over_b
    x_max = max(40.0, 1.4 * point) if point else 40.0
    curves = term_curves(result.d_count, result.shape, result.c_over_b, x_max=x_max)
    bands = list(result.fit.bands_cm1) if result.fit is not None else None
    return term_diagram_bytes(curves, fmt, point=point, bands_cm1=bands, b_cm1=result.b_cm1)
