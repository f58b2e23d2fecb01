"""Ideal coordination polyhedra in the builder's frame.

Metal at the origin, principal axis on z.  Octahedral and square-planar donors on
±x, ±y (±z); tetrahedral donors on alternate cube corners; so that the real d
orbitals (xy, yz, z², xz, x²−y²) keep the meaning chemists give them.

Solid geometry only (no source needed beyond it): the ideal trigonal prism with
square side faces has its donors at polar angle θ = arcsin(2/√7) ≈ 49.1°.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from dsplit.errors import InputError

GEOMETRIES: tuple[str, ...] = (
    "octahedral",
    "tetrahedral",
    "square-planar",
    "trigonal-bipyramidal",
    "square-pyramidal",
    "trigonal-prismatic",
    "linear",
)

#: default angle between the apical bond and the basal bonds (common practice)
DEFAULT_APICAL_ANGLE = 100.0


@dataclass(frozen=True)
class Polyhedron:
    """Donor sites of an ideal geometry (unit vectors), site roles and symmetry."""

    geometry: str
    point_group: str
    directions: np.ndarray  # (n, 3) unit vectors
    site_roles: tuple[str, ...]  # e.g. "axial", "equatorial", "apical", "basal"
    d_set_labels: tuple[tuple[str, tuple[str, ...]], ...]  # (label, d orbitals)

    @property
    def coordination_number(self) -> int:
        return len(self.directions)


_OH = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], dtype=float)
_TD = np.array([[1, 1, 1], [1, -1, -1], [-1, 1, -1], [-1, -1, 1]], dtype=float) / np.sqrt(3.0)

_T2G_EG = (("t2g", ("xy", "yz", "xz")), ("eg", ("z2", "x2-y2")))
_E_T2 = (("e", ("z2", "x2-y2")), ("t2", ("xy", "yz", "xz")))
_D4H = (("eg", ("yz", "xz")), ("b2g", ("xy",)), ("a1g", ("z2",)), ("b1g", ("x2-y2",)))
_C4V = (("e", ("yz", "xz")), ("b2", ("xy",)), ("a1", ("z2",)), ("b1", ("x2-y2",)))
_D3H = (("e''", ("yz", "xz")), ("e'", ("xy", "x2-y2")), ("a1'", ("z2",)))
_DINFH = (("delta_g", ("xy", "x2-y2")), ("pi_g", ("yz", "xz")), ("sigma_g", ("z2",)))


def _ring(n: int, polar_deg: float, phase_deg: float = 0.0) -> np.ndarray:
    th = np.radians(polar_deg)
    phi = np.radians(phase_deg) + 2 * np.pi * np.arange(n) / n
    return np.column_stack([np.sin(th) * np.cos(phi), np.sin(th) * np.sin(phi), np.full(n, np.cos(th))])


def polyhedron(geometry: str, apical_angle: float | None = None) -> Polyhedron:
    """The ideal polyhedron for ``geometry`` (one of GEOMETRIES)."""
    g = geometry.strip().lower().replace("_", "-").replace(" ", "-")
    if g not in GEOMETRIES:
        raise InputError("complex.geometry", f"unknown geometry '{geometry}'; allowed: {', '.join(GEOMETRIES)}")
    if apical_angle is not None and g != "square-pyramidal":
        raise InputError("complex.apical_angle", "only square-pyramidal takes an apical angle; remove it")
    if g == "octahedral":
        return Polyhedron(g, "Oh", _OH.copy(), ("axial",) * 6, _T2G_EG)
    if g == "tetrahedral":
        return Polyhedron(g, "Td", _TD.copy(), ("vertex",) * 4, _E_T2)
    if g == "square-planar":
        return Polyhedron(g, "D4h", _OH[:4].copy(), ("equatorial",) * 4, _D4H)
    if g == "trigonal-bipyramidal":
        dirs = np.vstack([_OH[4:6], _ring(3, 90.0)])
        return Polyhedron(g, "D3h", dirs, ("axial",) * 2 + ("equatorial",) * 3, _D3H)
    if g == "square-pyramidal":
        angle = DEFAULT_APICAL_ANGLE if apical_angle is None else float(apical_angle)
        if not 90.0 <= angle < 135.0:
            raise InputError("complex.apical_angle", f"{angle}° is outside 90–135°; give the apical–basal angle in degrees")
        dirs = np.vstack([_OH[4:5], _ring(4, angle)])
        return Polyhedron(g, "C4v", dirs, ("apical",) + ("basal",) * 4, _C4V)
    if g == "trigonal-prismatic":
        theta = np.degrees(np.arcsin(2.0 / np.sqrt(7.0)))
        dirs = np.vstack([_ring(3, theta), _ring(3, 180.0 - theta)])
        return Polyhedron(g, "D3h", dirs, ("upper",) * 3 + ("lower",) * 3, _D3H)
    return Polyhedron(g, "Dinfh", _OH[4:6].copy(), ("axial",) * 2, _DINFH)


def coordination_numbers() -> dict[str, int]:
    return {g: polyhedron(g).coordination_number for g in GEOMETRIES}
