"""Pictures of the d-manifold MOs: isosurfaces ψ = ±c drawn with matplotlib's 3-D axes.

The surface is triangulated by marching cubes (Lorensen & Cline, SIGGRAPH '87; the
Lewiner et al. variant in ``skimage.measure.marching_cubes``) on the orbital's values
on a coarse grid centred on the metal (dsplit.qc.volumes.picture_grid); the two signs
are drawn in two colours with Lambert shading (brightness ∝ max(n·l, 0) for a fixed
light direction l), the complex as balls (ASE's Jmol colours, radii ∝ covalent radii)
and sticks (atom pairs closer than 1.2 × the sum of covalent radii, common practice).

scikit-image is an optional extra (``pip install 'dsplit[pictures]'``): without it no
picture is drawn and the run's notes say so; nothing else changes.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from dsplit.units import BOHR_IN_ANGSTROM, hartree_to_ev
from dsplit.report.figures import figure_bytes, style

#: |ψ| of the drawn surface, Bohr^−3/2 (0.05 is a common choice for valence orbitals; common practice)
ISOVALUE = 0.05
#: picture grid spacing, Å: measured on [CrF6]3− (3-21G), five orbitals take 0.3 s to evaluate and
#: triangulate at 0.2 Å and draw with smooth lobes; 0.3 Å shows facets on the eg lobes
PICTURE_SPACING_ANGSTROM = 0.2
#: the grid reaches this far beyond the farthest donor atom, Å (the antibonding lobes on the donors)
PICTURE_REACH_BEYOND_DONOR = 1.4
POSITIVE = "#0f766e"
NEGATIVE = "#d97706"
LIGHT = np.array([0.35, -0.45, 0.82]) / np.linalg.norm([0.35, -0.45, 0.82])
VIEW = {"elev": 24.0, "azim": 35.0}
BOND_FACTOR = 1.2
LOBE_ALPHA = 0.62  # see-through lobes: the atoms inside stay visible


def skimage_available() -> bool:
    try:
        import skimage.measure  # noqa: F401
    except ImportError:
        return False
    return True


def lobe_triangles(values: np.ndarray, origin: np.ndarray, spacing: float, level: float) -> np.ndarray:
    """Triangles (n, 3, 3) in Å of the surface ``values = level`` (empty when the level is not reached)."""
    from skimage.measure import marching_cubes

    if not (values.min() < level < values.max()):
        return np.zeros((0, 3, 3))
    verts, faces, _, _ = marching_cubes(values, level=level, spacing=(spacing,) * 3)
    return (verts[faces] + origin) * BOHR_IN_ANGSTROM


def shaded(triangles: np.ndarray, colour: str) -> np.ndarray:
    """RGBA per triangle: the colour times 0.35 + 0.65·|n·l| (two-sided Lambert)."""
    from matplotlib.colors import to_rgb

    n = np.cross(triangles[:, 1] - triangles[:, 0], triangles[:, 2] - triangles[:, 0])
    n /= np.maximum(np.linalg.norm(n, axis=1, keepdims=True), 1e-12)
    light = 0.35 + 0.65 * np.abs(n @ LIGHT)
    rgb = np.clip(np.outer(light, to_rgb(colour)) + 0.12 * (1 - light)[:, None], 0, 1)
    return np.column_stack([rgb, np.full(len(rgb), LOBE_ALPHA)])


def bonds(symbols: list[str], xyz: np.ndarray) -> list[tuple[int, int]]:
    from ase.data import atomic_numbers, covalent_radii

    r = np.array([covalent_radii[atomic_numbers[s]] for s in symbols])
    out = []
    for i in range(len(xyz)):
        for j in range(i + 1, len(xyz)):
            if np.linalg.norm(xyz[i] - xyz[j]) < BOND_FACTOR * (r[i] + r[j]):
                out.append((i, j))
    return out


def orbital_figure(values: np.ndarray, origin: np.ndarray, spacing: float, symbols: list[str], xyz: np.ndarray,
                   size: float = 2.4):
    """One MO: ± isosurfaces and the complex (xyz in Å); no text (the report captions it)."""
    from ase.data import atomic_numbers, covalent_radii
    from ase.data.colors import jmol_colors
    from matplotlib.figure import Figure
    from mpl_toolkits.mplot3d.art3d import Poly3DCollection

    fig = Figure(figsize=(size, size))
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0), projection="3d", computed_zorder=False)
    tris = [lobe_triangles(values, origin, spacing, ISOVALUE), lobe_triangles(-values, origin, spacing, ISOVALUE)]
    faces = np.concatenate(tris)
    if len(faces):
        colours = np.concatenate([shaded(t, c) for t, c in zip(tris, (POSITIVE, NEGATIVE)) if len(t)])
        ax.add_collection3d(Poly3DCollection(faces, facecolors=colours, edgecolors="none", linewidths=0, zorder=1))
    for i, j in bonds(symbols, xyz):  # the complex is drawn over the lobes (zorder), which are see-through
        ax.plot(*np.array([xyz[i], xyz[j]]).T, color="#475569", lw=1.6, solid_capstyle="round", zorder=2)
    z = [atomic_numbers[s] for s in symbols]
    ax.scatter(*xyz.T, s=[90 * covalent_radii[k] ** 2 for k in z], c=[jmol_colors[k] for k in z],
               edgecolors="#334155", linewidths=0.4, depthshade=False, zorder=3)
    half = max(np.abs(xyz).max(), 1.0) * 1.02
    centre = xyz[0]
    for setter, c in zip((ax.set_xlim, ax.set_ylim, ax.set_zlim), centre):
        setter(c - half, c + half)
    ax.set_box_aspect((1, 1, 1), zoom=1.25)
    ax.view_init(**VIEW)
    ax.set_axis_off()
    return fig


def draw_d_orbitals(calc, table, notes: list[str]) -> list[tuple[str, bytes, dict[str, Any]]]:
    """(file name, PNG, caption data) of each d-manifold MO of the first spin channel (α or restricted)."""
    from dsplit.qc.volumes import d_manifold_orbitals, orbital_fields, picture_grid

    if not skimage_available():
        notes.append("d-orbital pictures not drawn: scikit-image is not installed (pip install 'dsplit[pictures]')")
        return []
    orbs = [o for o in d_manifold_orbitals(calc, table) if o.channel == 0]
    mol = calc.mol
    xyz = np.asarray(mol.atom_coords()) * BOHR_IN_ANGSTROM
    donors = [pl.distance for pl in calc.complex.ligands]
    grid = picture_grid(calc, PICTURE_SPACING_ANGSTROM, max(donors, default=2.0) + PICTURE_REACH_BEYOND_DONOR)
    fields = orbital_fields(calc, orbs, grid)
    symbols = [mol.atom_pure_symbol(i) for i in range(mol.natm)]
    out = []
    with style():
        for k, f in enumerate(fields, 1):
            fig = orbital_figure(f.values, grid.origin, grid.spacing, symbols, xyz)
            o = f.orbital
            meta = {"spin": o.spin, "spin_resolved": o.spin_resolved, "mo_index": o.index, "label": o.label, "frame_orbital": o.frame,
                    "energy_eV": hartree_to_ev(o.energy_hartree), "occupation": o.occupation, "metal_d": o.metal_d,
                    "isovalue": ISOVALUE}
            out.append((f"d_orbital_{k}.png", figure_bytes(fig, "png", dpi=150), meta))
    return out
