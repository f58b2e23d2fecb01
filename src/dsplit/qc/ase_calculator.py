"""An ASE calculator that runs dsplit's verified PySCF engine: energy and forces.

``DsplitCalculator`` is an ``ase.calculators.calculator.Calculator``: attach it
to any ``ase.Atoms`` with the same atoms (same order) as the template Complex
and every ASE tool (optimisers, ``ase.calculators.test`` finite differences,
vibrations) can use it.  Each evaluation is one ``run_calculation`` (SCF ladder,
stability on the first call only, configuration check) started from the
previous evaluation's checkpoint, followed by PySCF's analytic nuclear gradient
(including the PCM term when a solvent is on).

Units: PySCF gives E in Hartree and ∂E/∂R in Hartree/Bohr; ASE wants eV and
eV/Å, so E·``ase.units.Hartree`` and F = −∂E/∂R·``Hartree/Bohr`` (CODATA via ASE).
An SCF that fails to converge or lands in another d configuration raises
``CalculationError``: an optimiser must never walk on an unverified surface.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import numpy as np
from ase.calculators.calculator import Calculator, all_changes
from ase.units import Bohr, Hartree

from dsplit.complex import Complex
from dsplit.errors import CalculationError, InputError
from dsplit.qc.resources import pyscf_threads, pyscf_warnings_to_notes


def complex_at(cx: Complex, positions: np.ndarray) -> Complex:
    """A copy of ``cx`` with new Cartesian positions (Å); ligand distances updated from the donors."""
    atoms = cx.atoms.copy()
    atoms.positions = np.asarray(positions, dtype=float)
    centre = atoms.positions[cx.metal_index]
    ligands = [replace(pl, distance=float(np.linalg.norm(atoms.positions[pl.atom_indices[0]] - centre)))
               for pl in cx.ligands]
    return replace(cx, atoms=atoms, ligands=ligands)


def check_gradient_support(cx: Complex) -> None:
    """InputError if analytic forces of this complex are not available (point-charge donors)."""
    if any(pl.ligand.donor == "X" for pl in cx.ligands):
        raise InputError("complex.ligands", "'point' donors are fixed point charges without nuclei; "
                                            "geometry optimisation needs real ligand atoms")


def nuclear_gradient(calc) -> np.ndarray:
    """∂E/∂R in Hartree/Å for every atom of ``calc.complex`` (PySCF analytic gradient, incl. PCM).

    PySCF symmetrises the gradient only when it ran in the molecule's top group (it
    fails, e.g., for Td run in D2); otherwise the raw gradient is used — from a
    symmetric density it is symmetric to numerical precision.
    """
    with pyscf_threads(calc.setup.threads), pyscf_warnings_to_notes():
        grad = calc.mf.nuc_grad_method()
        grad.verbose = calc.mf.verbose
        mol = calc.mf.mol
        if mol.symmetry and mol.groupname != mol.topgroup:  # PySCF symmetrises in the top group only
            grad.symmetrize = lambda de, atmlst=None: de
        de = grad.kernel()
        de = np.asarray(de, dtype=float)
    if de.shape != calc.complex.atoms.positions.shape:
        raise CalculationError(f"gradient has shape {de.shape}, expected {calc.complex.atoms.positions.shape}")
    return de / Bohr


def carry_checkpoint(previous: Path, cx: Complex, setup, multiplicity: int | None, path: Path) -> Path:
    """A checkpoint of ``previous``'s orbitals made fit for the geometry of ``cx``.

    The occupied MOs of each spin are Löwdin-orthonormalised in the new overlap S′:
    C′ = C (Cᵀ S′ C)^(−1/2) (Löwdin, J. Chem. Phys. 18, 365 (1950)), so the guess
    density holds exactly N electrons at the new positions; PySCF's own chkfile guess
    keeps the old coefficients, whose density no longer integrates to N once the atoms
    have moved (the engine then falls back to atoms).  Same basis and atoms required,
    else ``previous`` is returned unchanged.
    """
    from pyscf import gto
    from pyscf.scf import chkfile

    from dsplit.qc.setup import build_mole

    from pyscf.lo.orth import vec_lowdin

    with pyscf_warnings_to_notes():
        old_mol, rec = chkfile.load_scf(str(previous))
        mol, _ = build_mole(cx, setup, multiplicity)
    if old_mol.natm != mol.natm or not gto.same_basis_set(old_mol, mol):
        return previous
    s = mol.intor_symmetric("int1e_ovlp")

    def orthonormal(c: np.ndarray, occ: np.ndarray) -> np.ndarray:
        c = np.array(c, dtype=float)
        idx = np.asarray(occ) > 0
        c[:, idx] = vec_lowdin(c[:, idx], s)
        return c

    mo, occ = np.asarray(rec["mo_coeff"]), np.asarray(rec["mo_occ"])
    new = orthonormal(mo, occ) if occ.ndim == 1 else np.array([orthonormal(mo[k], occ[k]) for k in range(2)])
    chkfile.dump_scf(mol, str(path), float(rec["e_tot"]), rec["mo_energy"], new, occ)
    return path


class DsplitCalculator(Calculator):
    """ASE calculator over dsplit's engine (see module docstring).

    ``template``: the Complex whose charge, multiplicity, d sets and ligand map
    apply; ``setup``: a resolved MethodSetup; ``folder``: where logs and
    checkpoints go (``tag``-NNN.log/.chk), None for no files; ``multiplicity`` /
    ``target_occupations``: the state to follow; ``start_from``: a first checkpoint.
    """

    implemented_properties = ["energy", "forces"]

    def __init__(self, template: Complex, setup, folder: Path | None = None, *, multiplicity: int | None = None,
                 target_occupations: list[int] | None = None, start_from: Path | None = None,
                 tag: str = "step", keep_checkpoints: bool = False, progress=None, **kwargs) -> None:
        super().__init__(**kwargs)
        check_gradient_support(template)
        self.template = template
        self.setup = setup
        self.folder = Path(folder) if folder is not None else None
        self.multiplicity = multiplicity
        self.target_occupations = target_occupations
        self.start_from = Path(start_from) if start_from is not None else None
        self.tag = tag
        self.keep_checkpoints = keep_checkpoints
        self.progress = progress
        self.calculations: list = []  # one finished Calculation per evaluation
        self.gradients: list[np.ndarray] = []  # Hartree/Å, one per evaluation

    @property
    def last(self):
        return self.calculations[-1] if self.calculations else None

    def evaluate(self, positions: np.ndarray):
        """Verified SCF + analytic gradient at ``positions`` (Å); returns (Calculation, ∂E/∂R in Eh/Å)."""
        from dsplit.qc.engine import run_calculation

        cx = complex_at(self.template, positions)
        n = len(self.calculations)
        ok = [c for c in self.calculations if c.ok and c.chk_path is not None]
        prev = ok[-1].chk_path if ok else self.start_from
        guess = None
        if prev is not None and Path(prev).is_file() and self.folder is not None:
            guess = carry_checkpoint(Path(prev), cx, self.setup, self.multiplicity,
                                     self.folder / f"{self.tag}-{n:03d}-guess.chk")
        calc = run_calculation(cx, self.setup, self.folder, multiplicity=self.multiplicity,
                               target_occupations=self.target_occupations, start_from=guess,
                               stability=n == 0, progress=self.progress, tag=f"{self.tag}-{n:03d}")
        if guess is not None and guess != prev:
            guess.unlink(missing_ok=True)
        if not calc.ok:
            self.calculations.append(calc)
            raise CalculationError(f"evaluation {n}: " + ("; ".join(calc.warnings) or "SCF not verified"))
        g = nuclear_gradient(calc)
        if not self.keep_checkpoints and prev is not None and prev != self.start_from and Path(prev).is_file():
            Path(prev).unlink()
        self.calculations.append(calc)
        self.gradients.append(g)
        return calc, g

    def calculate(self, atoms=None, properties=("energy",), system_changes=all_changes) -> None:
        super().calculate(atoms, properties, system_changes)
        if list(self.atoms.get_chemical_symbols()) != list(self.template.atoms.get_chemical_symbols()):
            raise InputError("atoms", "the atoms differ from the complex this calculator was made for")
        calc, g = self.evaluate(self.atoms.positions)
        self.results["energy"] = calc.energy_hartree * Hartree
        self.results["free_energy"] = self.results["energy"]
        self.results["forces"] = -g * Hartree
