"""Ligand library: donor atom, charge, σ/π role, internal geometry.

Every ligand is stored in a local frame: donor atom at the origin, the rest of
the ligand on the +z side (pointing away from the metal, so the donor lone pair
points along −z at the metal).  For non-linear ligands the local xz plane holds
one reference atom (the H–O–H plane of aqua, one N–H of ammine), so a twist
about z sets the orientation.

Internal geometries come from ``ase.build.molecule`` (the G2 set) where ASE has
the molecule (equivalent H atoms put on an exact ring, keeping ASE's mean distances); the others are typical bond lengths (from memory, Allen et al.,
J. Chem. Soc. Perkin Trans. 2 (1987) S1 style averages): O–H 0.97 Å in
hydroxido, N–C 1.18 Å and C–S 1.62 Å in isothiocyanato.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from dsplit.errors import InputError


@dataclass(frozen=True)
class Ligand:
    """One ligand kind.  ``atoms``/``local_positions`` are in the local frame."""

    key: str
    formula: str
    aliases: tuple[str, ...]
    donor: str
    charge: int
    role: str  # "σ-donor", "σ/π-donor", "σ-donor/π-acceptor"
    atoms: tuple[str, ...]
    local_positions: tuple[tuple[float, float, float], ...]
    geometry_source: str
    note: str = ""
    extra: dict = field(default_factory=dict, compare=False, hash=False)

    @property
    def is_monatomic(self) -> bool:
        return len(self.atoms) == 1

    @property
    def is_linear(self) -> bool:
        xy = np.asarray(self.local_positions)[:, :2]
        return bool(np.all(np.abs(xy) < 1e-8))

    @property
    def twist_period_deg(self) -> float:
        """Rotation about the M–L axis that maps the ligand onto itself."""
        if self.is_linear:
            return 0.0
        return {"aqua": 180.0, "ammine": 120.0}.get(self.key, 360.0)


def _from_ase(name: str, donor_index: int, plane_atom: int | None = None) -> tuple[tuple[str, ...], np.ndarray]:
    """Put an ASE G2 molecule in the local frame: donor at origin, body on +z."""
    from ase.build import molecule

    mol = molecule(name)
    symbols = mol.get_chemical_symbols()
    pos = mol.positions - mol.positions[donor_index]
    others = np.delete(np.arange(len(mol)), donor_index)
    axis = pos[others].mean(axis=0)
    axis /= np.linalg.norm(axis)
    # rotate ``axis`` onto +z
    rot = _rotation_onto(axis, np.array([0.0, 0.0, 1.0]))
    pos = pos @ rot.T
    if plane_atom is not None:
        px, py = pos[plane_atom, 0], pos[plane_atom, 1]
        phi = -np.arctan2(py, px)
        c, s = np.cos(phi), np.sin(phi)
        pos = pos @ np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]]).T
    order = [donor_index] + list(others)
    pos = _symmetrise_ring(symbols, pos, others)
    pos[np.abs(pos) < 1e-12] = 0.0
    return tuple(symbols[i] for i in order), pos[order]


def _symmetrise_ring(symbols: list[str], pos: np.ndarray, others) -> np.ndarray:
    """Place equivalent off-axis atoms exactly on a regular ring about the local z axis.

    ASE's G2 coordinates are given to 3 decimals, so NH3 is C3v only to ~1e-4 Å; the mean
    radius and height are kept and the atoms put at exact 360°/n steps from the first one.
    """
    pos = pos.copy()
    off = [i for i in others if np.hypot(pos[i, 0], pos[i, 1]) > 1e-6]
    groups: dict[str, list[int]] = {}
    for i in off:
        groups.setdefault(symbols[i], []).append(i)
    for members in groups.values():
        if len(members) < 2:
            continue
        rho = float(np.mean([np.hypot(pos[i, 0], pos[i, 1]) for i in members]))
        z = float(np.mean(pos[members, 2]))
        phi0 = float(np.arctan2(pos[members[0], 1], pos[members[0], 0]))
        ordered = sorted(members, key=lambda i: (np.arctan2(pos[i, 1], pos[i, 0]) - phi0) % (2 * np.pi))
        for k, i in enumerate(ordered):
            phi = phi0 + 2 * np.pi * k / len(members)
            pos[i] = (rho * np.cos(phi), rho * np.sin(phi), z)
    return pos


def _rotation_onto(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Proper rotation taking unit vector a onto unit vector b (Rodrigues)."""
    v = np.cross(a, b)
    c = float(np.dot(a, b))
    if np.linalg.norm(v) < 1e-12:
        if c > 0:
            return np.eye(3)
        perp = np.array([1.0, 0.0, 0.0]) if abs(a[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
        perp -= perp.dot(a) * a
        perp /= np.linalg.norm(perp)
        return 2.0 * np.outer(perp, perp) - np.eye(3)
    vx = np.array([[0, -v[2], v[1]], [v[2], 0, -v[0]], [-v[1], v[0], 0]])
    return np.eye(3) + vx + vx @ vx / (1.0 + c)


def _tuple(pos: np.ndarray) -> tuple[tuple[float, float, float], ...]:
    return tuple(tuple(float(x) for x in p) for p in pos)


def _build_library() -> dict[str, Ligand]:
    lib: list[Ligand] = []
    for key, formula, aliases, sym, role in (
        ("fluorido", "F-", ("F", "fluoride", "fluoro"), "F", "σ/π-donor"),
        ("chlorido", "Cl-", ("Cl", "chloride", "chloro"), "Cl", "σ/π-donor"),
        ("bromido", "Br-", ("Br", "bromide", "bromo"), "Br", "σ/π-donor"),
        ("iodido", "I-", ("I", "iodide", "iodo"), "I", "σ/π-donor"),
    ):
        lib.append(Ligand(key, formula, aliases, sym, -1, role, (sym,), ((0.0, 0.0, 0.0),), "monatomic"))
    lib.append(Ligand("oxido", "O2-", ("O", "oxide", "oxo"), "O", -2, "σ/π-donor", ("O",), ((0.0, 0.0, 0.0),), "monatomic"))
    # hydroxido: M–O–H bent at 120° in the local xz plane (O–H 0.97 Å, from memory)
    oh_len, angle = 0.97, np.radians(120.0)
    h = (float(oh_len * np.sin(np.pi - angle)), 0.0, float(oh_len * np.cos(np.pi - angle)))
    lib.append(Ligand("hydroxido", "OH-", ("OH", "HO-", "hydroxide", "hydroxo"), "O", -1, "σ/π-donor",
                      ("O", "H"), ((0.0, 0.0, 0.0), h), "O–H 0.97 Å, M–O–H 120° (from memory)"))
    atoms, pos = _from_ase("H2O", 0, plane_atom=1)
    lib.append(Ligand("aqua", "H2O", ("OH2", "water", "aquo"), "O", 0, "σ-donor (weak π-donor)",
                      atoms, _tuple(pos), "ase.build.molecule('H2O') (G2)",
                      note="metal in the H–O–H plane bisector (trigonal O)"))
    atoms, pos = _from_ase("NH3", 0, plane_atom=1)
    lib.append(Ligand("ammine", "NH3", ("H3N", "ammonia"), "N", 0, "σ-donor",
                      atoms, _tuple(pos), "ase.build.molecule('NH3') (G2)"))
    atoms, pos = _from_ase("CO", 1)
    lib.append(Ligand("carbonyl", "CO", ("OC", "carbon monoxide"), "C", 0, "σ-donor/π-acceptor",
                      atoms, _tuple(pos), "ase.build.molecule('CO') (G2)"))
    atoms, pos = _from_ase("CN", 0)
    lib.append(Ligand("cyanido", "CN-", ("CN", "NC-", "cyanide", "cyano"), "C", -1, "σ-donor/π-acceptor",
                      atoms, _tuple(pos), "ase.build.molecule('CN') (G2, radical geometry)"))
    lib.append(Ligand("isothiocyanato", "NCS-", ("NCS", "SCN-", "thiocyanate-N", "isothiocyanate"), "N", -1,
                      "σ/π-donor", ("N", "C", "S"), ((0.0, 0.0, 0.0), (0.0, 0.0, 1.18), (0.0, 0.0, 2.80)),
                      "N–C 1.18 Å, C–S 1.62 Å, linear M–N–C–S (from memory)"))
    lib.append(Ligand("point", "X-", ("X", "point-charge", "pc"), "X", -1, "σ (electrostatic model)",
                      ("X",), ((0.0, 0.0, 0.0),), "model point donor (charge −1)",
                      note="a −1 point charge, no basis functions: a crystal-field model ligand"))
    return {lig.key: lig for lig in lib}


@lru_cache(maxsize=1)
def library() -> dict[str, Ligand]:
    """All ligands by key (built once; ASE's molecule table read lazily)."""
    return _build_library()


def _index() -> dict[str, str]:
    idx: dict[str, str] = {}
    for lig in library().values():
        for name in (lig.key, lig.formula, *lig.aliases):
            idx[name.lower()] = lig.key
    return idx


def ligand(name: str, field: str = "complex.ligands") -> Ligand:
    """Find a ligand by IUPAC name, formula or alias (case-insensitive)."""
    key = _index().get(name.strip().lower())
    if key is None:
        allowed = ", ".join(f"{lig.key} ({lig.formula})" for lig in library().values())
        raise InputError(field, f"unknown ligand '{name}'; known: {allowed}")
    return library()[key]
