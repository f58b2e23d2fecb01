"""Values on a real-space grid: d-manifold orbitals, spin density, excited − ground density.

A grid is a box of points r_abc = origin + a·Δx + b·Δy + c·Δz (Bohr), the layout of the
Gaussian cube format (Gaussian 'cubegen' documentation; PySCF ``tools.cubegen``).  Orbital
values are ψ(r) = Σ_μ χ_μ(r) C_μi and densities ρ(r) = Σ_μν χ_μ(r) D_μν χ_ν(r), with the AOs
χ from ``pyscf.dft.numint.eval_ao`` in blocks of points.  A normalised orbital then gives
Σ |ψ|² ΔV ≈ 1 on a fine enough grid (the check in tests/test_handoff.py).

The excited density is read from the state estimator's checkpoint in the run folder
(PySCF ``scf.chkfile``), never from in-memory objects, so this stage depends only on files.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from dsplit.units import BOHR_IN_ANGSTROM
from dsplit.spec import CUBE_SPACING_ANGSTROM
from dsplit.qc.records import Calculation, spin_channels

#: box margin beyond the outermost atoms, Bohr (PySCF cubegen's default BOX_MARGIN)
CUBE_MARGIN_BOHR = 3.0
_BLOCK = 16384  # grid points per AO evaluation block (memory: block × nao × 8 bytes)


@dataclass(frozen=True)
class CubeGrid:
    """A rectangular grid, Bohr: ``origin`` and the per-axis step ``spacing``, ``shape`` points."""

    origin: np.ndarray
    spacing: float
    shape: tuple[int, int, int]

    @property
    def volume_element(self) -> float:
        """ΔV = Δx Δy Δz in Bohr³."""
        return self.spacing ** 3

    def axis(self, k: int) -> np.ndarray:
        return self.origin[k] + self.spacing * np.arange(self.shape[k])

    def coords(self) -> np.ndarray:
        """All points (x slowest, z fastest, as the cube format stores them), shape (n, 3)."""
        x, y, z = (self.axis(k) for k in range(3))
        return np.stack(np.meshgrid(x, y, z, indexing="ij"), axis=-1).reshape(-1, 3)


def cube_grid(points_bohr: np.ndarray, spacing_angstrom: float = CUBE_SPACING_ANGSTROM,
              margin_bohr: float = CUBE_MARGIN_BOHR) -> CubeGrid:
    """The box around ``points_bohr`` (atoms) plus a margin, with the given spacing (Å)."""
    pts = np.asarray(points_bohr, dtype=float).reshape(-1, 3)
    h = spacing_angstrom / BOHR_IN_ANGSTROM
    lo = pts.min(axis=0) - margin_bohr
    n = np.ceil((pts.max(axis=0) + margin_bohr - lo) / h).astype(int) + 1
    return CubeGrid(lo, float(h), (int(n[0]), int(n[1]), int(n[2])))


def orbital_values(mol, mo_coeff: np.ndarray, grid: CubeGrid) -> np.ndarray:
    """ψ_i on the grid for each column of ``mo_coeff``: shape (*grid.shape, k)."""
    from pyscf.dft import numint

    c = np.asarray(mo_coeff).reshape(mol.nao_nr(), -1)
    coords = grid.coords()
    out = np.empty((len(coords), c.shape[1]))
    for i0 in range(0, len(coords), _BLOCK):
        out[i0:i0 + _BLOCK] = numint.eval_ao(mol, coords[i0:i0 + _BLOCK]) @ c
    return out.reshape(*grid.shape, c.shape[1])


def density_values(mol, dm: np.ndarray, grid: CubeGrid) -> np.ndarray:
    """ρ(r) of a (total) density matrix on the grid, shape grid.shape."""
    from pyscf.dft import numint

    coords = grid.coords()
    out = np.empty(len(coords))
    for i0 in range(0, len(coords), _BLOCK):
        ao = numint.eval_ao(mol, coords[i0:i0 + _BLOCK])
        out[i0:i0 + _BLOCK] = numint.eval_rho(mol, ao, dm)
    return out.reshape(grid.shape)


@dataclass(frozen=True)
class DOrbital:
    """One d-manifold MO as drawn and written: where it is and what it is."""

    spin: str  # 'restricted', 'alpha' or 'beta'
    channel: int
    index: int  # MO index in its channel
    label: str  # full-group irrep (donor-set label when that differs)
    energy_hartree: float
    occupation: float
    metal_d: float  # IAO metal-d share
    frame: str | None  # the frame d orbital it is ≥ FRAME_SHARE of ('xy', 'z2', …), else None
    spin_resolved: bool = False  # True when α and β MOs differ (unrestricted); ROHF channels share MOs


#: an MO is named after one frame d orbital when that orbital holds this share of its d weight
FRAME_SHARE = 0.75


def d_manifold_orbitals(calc: Calculation, table) -> list[DOrbital]:
    """The ligand-field manifold MOs of every spin channel, in energy order per channel."""
    from dsplit.models.aom import D_ORBITALS
    from dsplit.qc.dcharacter import d_weights

    out: list[DOrbital] = []
    chans = spin_channels(calc.mf)
    for k, ch in enumerate(table.channels):
        idx = sorted(ch.manifold.indices, key=lambda m: ch.energies[m])
        w = d_weights(calc.mol, chans[k][0][:, idx])
        share = w / np.maximum(w.sum(axis=0), 1e-12)
        for j, m in enumerate(idx):
            best = int(np.argmax(share[:, j]))
            out.append(DOrbital(ch.spin, k, int(m), ch.donor_irreps.get(m, ch.irreps[m]), float(ch.energies[m]),
                                float(ch.occupations[m]), float(ch.composition.metal_d[m]),
                                D_ORBITALS[best] if share[best, j] >= FRAME_SHARE else None, calc.unrestricted))
    return out


def spins_differ(calc: Calculation) -> bool:
    """True for unrestricted runs (α and β MOs are different functions)."""
    return calc.unrestricted


@dataclass
class VolumeField:
    """One scalar field on a grid, ready to be written as a cube file."""

    name: str  # file stem
    title: str  # one line: what the values are
    kind: str  # 'orbital', 'spin density' or 'density difference'
    values: np.ndarray
    orbital: DOrbital | None = None
    integral: float = 0.0  # Σ values·ΔV (orbitals: Σ ψ² ΔV)
    notes: list[str] = field(default_factory=list)


def orbital_fields(calc: Calculation, orbitals: list[DOrbital], grid: CubeGrid) -> list[VolumeField]:
    """ψ of each given MO on the grid (one AO evaluation per spin channel)."""
    chans = spin_channels(calc.mf)
    out: list[VolumeField] = []
    for k in sorted({o.channel for o in orbitals}):
        mine = [o for o in orbitals if o.channel == k]
        vals = orbital_values(calc.mol, chans[k][0][:, [o.index for o in mine]], grid)
        for j, o in enumerate(mine):
            v = vals[..., j]
            spin = f"_{o.spin}" if o.spin_resolved else ""
            out.append(VolumeField(f"d_orbital{spin}_{o.index + 1}", f"MO {o.index + 1}{spin.replace('_', ' ')} "
                                   f"{o.label} E={o.energy_hartree:.6f} Eh", "orbital", v, o,
                                   float((v * v).sum() * grid.volume_element)))
    return out


def spin_density_field(calc: Calculation, grid: CubeGrid) -> VolumeField:
    """ρα − ρβ of the ground state."""
    dm = np.asarray(calc.mf.make_rdm1())
    if dm.ndim == 2:  # restricted open shell: PySCF's ROHF make_rdm1 gives (α, β); closed shell has none
        raise ValueError("a restricted closed-shell run has no spin density")
    v = density_values(calc.mol, dm[0] - dm[1], grid)
    return VolumeField("spin_density", "spin density rho_alpha - rho_beta (e/Bohr^3)", "spin density", v,
                       integral=float(v.sum() * grid.volume_element))


def checkpoint_density(chk: Path) -> tuple[np.ndarray, float]:
    """(total density matrix, e_tot) of the final state stored in a PySCF checkpoint."""
    from pyscf.scf import chkfile

    rec = chkfile.load(str(chk), "scf")
    c, occ = np.asarray(rec["mo_coeff"]), np.asarray(rec["mo_occ"])
    if occ.ndim == 2:
        dm = sum((c[s] * occ[s]) @ c[s].T for s in (0, 1))
    else:
        dm = (c * occ) @ c.T
    return dm, float(rec["e_tot"])


def density_difference_field(calc: Calculation, grid: CubeGrid, excited_chk: Path, excited_energy: float,
                             ground_chk: Path | None = None, ground_energy: float | None = None,
                             what: str = "excited") -> VolumeField:
    """ρ(excited) − ρ(ground) from checkpoint files, after checking each file holds the reported state.

    ``excited_energy`` (and ``ground_energy`` when ``ground_chk`` is given) are the energies the
    estimator reported; a checkpoint whose e_tot differs by more than 1e-7 Eh is not that state
    (a ValueError says so).  Without ``ground_chk`` the ground density is the calculation's own.
    """
    dm_x, e_x = checkpoint_density(excited_chk)
    if abs(e_x - excited_energy) > 1e-7:
        raise ValueError(f"{excited_chk.name} holds E = {e_x:.8f} Eh, not the reported {excited_energy:.8f} Eh")
    if ground_chk is not None:
        dm_g, e_g = checkpoint_density(ground_chk)
        if ground_energy is not None and abs(e_g - ground_energy) > 1e-7:
            raise ValueError(f"{ground_chk.name} holds E = {e_g:.8f} Eh, not the reported {ground_energy:.8f} Eh")
    else:
        dm_g = np.asarray(calc.mf.make_rdm1())
        dm_g = dm_g.sum(axis=0) if dm_g.ndim == 3 else dm_g
    v = density_values(calc.mol, dm_x - dm_g, grid)
    return VolumeField("density_difference", f"rho({what}) - rho(ground) (e/Bohr^3)", "density difference", v,
                       integral=float(v.sum() * grid.volume_element))


def picture_grid(calc: Calculation, spacing_angstrom: float, reach_angstrom: float) -> CubeGrid:
    """A cube centred on the metal, ± ``reach_angstrom`` (no margin): d orbitals live there."""
    metal = np.asarray(calc.mol.atom_coord(0))
    r = reach_angstrom / BOHR_IN_ANGSTROM
    return cube_grid(np.array([metal - r, metal + r]), spacing_angstrom, margin_bohr=0.0)
