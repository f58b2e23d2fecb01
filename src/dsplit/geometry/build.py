"""Build a Complex: place ligands on an ideal polyhedron and count electrons.

Default M–L distance: sum of covalent radii (Cordero et al., Dalton Trans. 2008,
2832, as tabulated in ``ase.data.covalent_radii``) — a start value to optimise.

Polyatomic ligands point their donor lone pair at the metal (local frame of
chem.ligands); their twist about the M–L axis is chosen from a few candidate
rules so that the complex keeps as many symmetry operations of the donor set as
possible (e.g. six aqua in the Th arrangement).  Every symmetry operation of the
complex maps donors onto donors, so the count over the donor set's operations is
the order of the exact group.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np
from ase import Atoms
from ase.data import atomic_numbers, covalent_radii

from dsplit.chem.counting import configuration_occupations, count_electrons, d_sets, format_configuration, \
    parse_configuration
from dsplit.chem.elements import check_oxidation_state, metal as lookup_metal
from dsplit.chem.ligands import Ligand, ligand as lookup_ligand
from dsplit.chem.spin_default import default_multiplicity
from dsplit.complex import Complex, PlacedLigand
from dsplit.errors import InputError
from dsplit.geometry.isomers import choose_isomer, site_permutations
from dsplit.geometry.polyhedra import Polyhedron, polyhedron

MIN_DISTANCE, MAX_DISTANCE = 1.0, 4.0  # Å, allowed M–L range
MIN_CONTACT = 0.7  # Å, closest allowed approach of any two atoms
POINT_DONOR_DISTANCE = 2.0  # Å, default for the model point donor


@dataclass(frozen=True)
class ComplexRequest:
    """What a spec asks the builder for (already type-checked by spec.py)."""

    name: str
    metal: str
    geometry: str
    ligands: dict[str, int]
    oxidation_state: int | None = None
    charge: int | None = None
    isomer: str | None = None
    bond_length: float | dict[str, float] | None = None
    multiplicity: int | None = None
    configuration: str | None = None
    apical_angle: float | None = None


def default_distance(metal_symbol: str, lig: Ligand) -> float:
    """Sum of covalent radii of metal and donor atom (Cordero 2008, via ASE)."""
    if lig.donor == "X":
        return POINT_DONOR_DISTANCE
    return float(covalent_radii[atomic_numbers[metal_symbol]] + covalent_radii[atomic_numbers[lig.donor]])


def _frame(direction: np.ndarray, reference: np.ndarray) -> np.ndarray:
    """Rotation whose columns are (x', y', z') with z' = direction, x' ∥ reference ⟂ z'."""
    z = direction / np.linalg.norm(direction)
    x = reference - reference.dot(z) * z
    if np.linalg.norm(x) < 1e-8:
        x = np.cross(z, [0.0, 1.0, 0.0]) if abs(z[1]) < 0.9 else np.cross(z, [1.0, 0.0, 0.0])
    x /= np.linalg.norm(x)
    return np.column_stack([x, np.cross(z, x), z])


def _reference(rule: str, d: np.ndarray) -> np.ndarray:
    """Candidate in-plane reference direction for a ligand on direction d."""
    if rule == "cyclic":
        return np.roll(d, 1) if np.count_nonzero(np.abs(d) > 1e-8) == 1 else np.cross(d, np.roll(d, 1))
    if rule == "polar":
        return np.array([0.0, 0.0, 1.0]) if abs(d[2]) < 0.99 else np.array([1.0, 0.0, 0.0])
    if rule == "tangential":
        t = np.cross([0.0, 0.0, 1.0], d)
        return t if np.linalg.norm(t) > 1e-8 else np.array([0.0, 1.0, 0.0])
    return np.array([1.0, 0.0, 0.0]) if abs(d[0]) < 0.99 else np.array([0.0, 1.0, 0.0])


ORIENTATION_RULES = ("cyclic", "polar", "tangential", "cartesian")


@lru_cache(maxsize=32)
def _donor_set_operations_cached(key: bytes, n: int) -> tuple[np.ndarray, ...]:
    dirs = np.frombuffer(key).reshape(n, 3)
    if n == 2:  # linear: a finite sample of D∞h big enough to rank orientations
        ops = []
        for k in range(12):
            a = 2 * np.pi * k / 12
            rz = np.array([[np.cos(a), -np.sin(a), 0], [np.sin(a), np.cos(a), 0], [0, 0, 1]])
            for extra in (np.eye(3), np.diag([1.0, 1.0, -1.0]), np.diag([1.0, -1.0, 1.0]), -np.eye(3)):
                ops.append(rz @ extra)
        return tuple(ops)
    ops = []
    for perm in _perms_for(dirs):
        for r in _orthogonal_maps(dirs, dirs[list(perm)]):
            if not any(np.allclose(r, o, atol=1e-6) for o in ops):
                ops.append(r)
    return tuple(ops)


def _orthogonal_maps(a: np.ndarray, b: np.ndarray) -> list[np.ndarray]:
    """Orthogonal R with R a_i = b_i for all i (Kabsch/SVD; both completions if planar)."""
    u, sv, vt = np.linalg.svd(b.T @ a)
    out = []
    for sign in (1.0, -1.0):
        r = u @ np.diag([1.0, 1.0, sign]) @ vt
        if np.allclose(a @ r.T, b, atol=1e-6):
            out.append(r)
        if sv[2] > 1e-8:  # third direction fixed by the sites: only one map
            break
    return out


def _perms_for(dirs: np.ndarray):
    poly = Polyhedron("sites", "", dirs, ("site",) * len(dirs), ())
    return site_permutations(poly)


def donor_set_operations(poly: Polyhedron) -> tuple[np.ndarray, ...]:
    """3×3 operations of the donor set (from its distance-preserving site permutations)."""
    d = np.ascontiguousarray(poly.directions, dtype=float)
    return _donor_set_operations_cached(d.tobytes(), len(d))


def count_symmetry_operations(numbers: np.ndarray, positions: np.ndarray, ops, tol: float = 1e-3) -> int:
    """How many of ``ops`` map the atoms onto atoms of the same element."""
    count = 0
    for r in ops:
        moved = positions @ r.T
        dist = np.linalg.norm(moved[:, None, :] - positions[None, :, :], axis=-1)
        same = numbers[:, None] == numbers[None, :]
        if np.all(np.any((dist < tol) & same, axis=1)):
            count += 1
    return count


def _hemisphere(d: np.ndarray) -> float:
    """+1 or −1: the sign of the first clearly non-zero component in the order z, y, x."""
    for c in (d[2], d[1], d[0]):
        if abs(c) > 1e-6:
            return float(np.sign(c))
    return 1.0


def _place(poly: Polyhedron, ligs: list[Ligand], dists: list[float], rule: str, twist: float,
           flip: str) -> tuple[list[str], np.ndarray, list[tuple[int, ...]]]:
    symbols: list[str] = []
    positions: list[np.ndarray] = []
    owners: list[tuple[int, ...]] = []
    for d, lig, r in zip(poly.directions, ligs, dists):
        ref = _reference(rule, d)
        lower = _hemisphere(d) < 0
        if lower and flip in ("reference", "both"):
            ref = -ref
        t = -twist if lower and flip in ("twist", "both") else twist
        rz = np.array([[np.cos(t), -np.sin(t), 0], [np.sin(t), np.cos(t), 0], [0, 0, 1]])
        frame = _frame(d, ref) @ rz
        start = 1 + len(symbols)
        for sym, loc in zip(lig.atoms, lig.local_positions):
            symbols.append(sym)
            positions.append(r * d + frame @ np.asarray(loc))
        owners.append(tuple(range(start, start + len(lig.atoms))))
    return symbols, np.array(positions), owners


def _orientation_candidates(ligs: list[Ligand]):
    if all(lig.is_linear for lig in ligs):
        return [("cartesian", 0.0, "none")]
    twists = (0.0, np.pi / 2, np.pi / 3, np.pi / 6, np.pi / 4)
    flips = ("none", "reference", "twist", "both")
    return [(rule, t, flip) for rule in ORIENTATION_RULES for t in twists for flip in flips]


def _numbers(symbols: list[str]) -> np.ndarray:
    return np.array([atomic_numbers[s] for s in symbols])


def place_ligands(metal_symbol: str, poly: Polyhedron, ligs: list[Ligand], dists: list[float]):
    """(symbols, positions, owners, symmetry order) with the most symmetric twist."""
    ops = donor_set_operations(poly)
    best = None
    for rule, twist, flip in _orientation_candidates(ligs):
        syms, pos, owners = _place(poly, ligs, dists, rule, twist, flip)
        all_syms = [metal_symbol] + syms
        all_pos = np.vstack([np.zeros(3), pos])
        order = count_symmetry_operations(_numbers(all_syms), all_pos, ops)
        if best is None or order > best[3]:
            best = (all_syms, all_pos, owners, order)
        if order == len(ops):
            break
    return best


def _distances(req: ComplexRequest, metal_symbol: str, ligs: list[Ligand]) -> list[float]:
    out = []
    for lig in ligs:
        bl = req.bond_length
        if isinstance(bl, dict):
            value = bl.get(lig.key)
        else:
            value = bl
        field = "complex.bond_length" + (f".{lig.key}" if isinstance(bl, dict) else "")
        r = default_distance(metal_symbol, lig) if value is None else float(value)
        if not MIN_DISTANCE <= r <= MAX_DISTANCE:
            raise InputError(field, f"{r} Å is outside {MIN_DISTANCE}–{MAX_DISTANCE} Å; give a metal–ligand distance in Å")
        out.append(r)
    return out


def exact_point_group(symbols: list[str], positions: np.ndarray) -> str:
    """Schoenflies symbol of the built complex (dsplit.symmetry detection, no PySCF)."""
    from dsplit.symmetry.detect import detect_point_group

    return detect_point_group(symbols, positions).name


def build_complex(req: ComplexRequest) -> Complex:
    """Validate a request and build the Complex (InputError on any bad field)."""
    m = lookup_metal(req.metal)
    poly = polyhedron(req.geometry, req.apical_angle)
    counts: dict[str, int] = {}
    for name, n in req.ligands.items():
        lig = lookup_ligand(name, field=f"complex.ligands.{name}")
        if not isinstance(n, int) or n < 1:
            raise InputError(f"complex.ligands.{name}", f"count must be a whole number ≥ 1, got {n!r}")
        counts[lig.key] = counts.get(lig.key, 0) + n
    if isinstance(req.bond_length, dict):
        for name in req.bond_length:
            key = lookup_ligand(name, field=f"complex.bond_length.{name}").key
            if key not in counts:
                raise InputError(f"complex.bond_length.{name}", "this ligand is not in complex.ligands")
        bl = {lookup_ligand(k).key: v for k, v in req.bond_length.items()}
        req = ComplexRequest(**{**req.__dict__, "bond_length": bl})
    isomer = choose_isomer(poly, counts, req.isomer)
    ligs = [lookup_ligand(k) for k in isomer.assignment]
    lig_charge = sum(lig.charge for lig in ligs)

    if req.oxidation_state is None and req.charge is None:
        raise InputError("complex.oxidation_state", "give the metal's oxidation_state (or the total charge)")
    ox = req.oxidation_state if req.oxidation_state is not None else req.charge - lig_charge
    charge = ox + lig_charge
    if req.charge is not None and req.charge != charge:
        raise InputError("complex.charge", f"charge {req.charge} does not match oxidation state {ox:+d} "
                                           f"with ligand charges {lig_charge:+d} (= {charge:+d}); give one of them")
    check_oxidation_state(m, ox, "complex.oxidation_state" if req.oxidation_state is not None else "complex.charge")
    d_count = m.d_count(ox)
    if not 0 <= d_count <= 10:
        raise InputError("complex.oxidation_state", f"{m.symbol}{ox:+d} would be d^{d_count}; impossible")

    dists = _distances(req, m.symbol, ligs)
    symbols, positions, owners, order = place_ligands(m.symbol, poly, ligs, dists)
    pair = np.linalg.norm(positions[:, None] - positions[None], axis=-1) + np.eye(len(positions)) * 1e9
    if pair.min() < MIN_CONTACT:
        i, j = np.unravel_index(np.argmin(pair), pair.shape)
        raise InputError("complex.bond_length",
                         f"atoms {symbols[i]}{i} and {symbols[j]}{j} come {pair.min():.2f} Å apart "
                         f"(< {MIN_CONTACT} Å); use longer metal–ligand distances")

    sets = d_sets(poly.directions, poly.d_set_labels)
    ec = count_electrons(m.atomic_number, d_count, [atomic_numbers[s] for s in symbols], charge,
                         n_sigma_donors=len(ligs), sets=sets)
    if req.multiplicity is None:
        mult, why = default_multiplicity(ec.multiplicities, m.row, poly.geometry, d_count, ox,
                                         [lig.key for lig in ligs], sets)
        mult_source = f"ligand-field default ({why})"
    else:
        mult = req.multiplicity
        if mult not in ec.multiplicities:
            allowed = ", ".join(map(str, ec.multiplicities))
            raise InputError("complex.multiplicity",
                             f"{mult} is impossible for d^{d_count} ({m.symbol}{ox:+d}); allowed: {allowed}")
        mult_source = "spec"
    if req.configuration is None:
        occ = configuration_occupations(sets, d_count, mult)
        conf_source = "ligand-field ground configuration"
    else:
        occ = parse_configuration(req.configuration, sets, d_count)
        unpaired_max = sum(min(n, 2 * s.degeneracy - n) for n, s in zip(occ, sets))
        if mult - 1 > unpaired_max or (unpaired_max - (mult - 1)) % 2:
            raise InputError("complex.configuration",
                             f"'{req.configuration}' cannot have multiplicity {mult} "
                             f"(at most {unpaired_max} unpaired electrons)")
        conf_source = "spec"
    configuration = format_configuration(sets, occ)

    atoms = Atoms(symbols=symbols, positions=positions)
    atoms.info.update({"charge": charge, "multiplicity": mult, "name": req.name})
    placed = [PlacedLigand(lig, site, tuple(float(x) for x in poly.directions[site]), r, owners[site])
              for site, (lig, r) in enumerate(zip(ligs, dists))]
    notes = []
    if req.bond_length is None or (isinstance(req.bond_length, dict) and len(req.bond_length) < len(counts)):
        notes.append("metal–ligand distances default to covalent-radius sums (Cordero 2008): "
                     "a start value, optimise before trusting energies")
    if any(lig.donor == "X" for lig in ligs):
        notes.append("'point' donors are −1 point charges without basis functions (crystal-field model)")
    exact = exact_point_group(symbols, positions)
    return Complex(
        name=req.name, atoms=atoms, metal=m, oxidation_state=ox, charge=charge,
        multiplicity=mult, multiplicity_source=mult_source, polyhedron=poly, isomer=isomer.name,
        ligands=placed, exact_point_group=exact, counts=ec, d_sets=sets,
        configuration=configuration, configuration_source=conf_source, notes=notes,
    )
