"""PySCF set-up for a Complex: Mole (basis, ECP, symmetry), mean-field object
(HF/DFT, restricted/unrestricted/restricted-open, density fitting, point charges,
PCM), threads and memory.  All names are checked before any SCF starts.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from dsplit.complex import Complex
from dsplit.errors import InputError
from dsplit.qc.solvents import Solvent, resolve_solvent
from dsplit.spec import MethodSpec

#: Abelian subgroups tried, in order, when PySCF's own symmetry set-up fails
SUBGROUP_FALLBACKS = ("D2h", "C2v", "D2", "C2h", "Cs", "C2", "Ci")


@dataclass
class MethodSetup:
    """Resolved method: what will run, and why (for the report)."""

    theory: str  # "HF" or the functional
    is_hf: bool
    exact_exchange: float
    basis: str
    ecp: str | None
    density_fitting: bool
    auxbasis: str | None
    solvent: Solvent
    open_shell: str
    grid_level: int
    max_cycles: int
    threads: int
    memory_mb: int | None
    notes: list[str] = field(default_factory=list)


def check_theory(theory: str) -> tuple[str, bool, float]:
    """(canonical name, is HF, exact-exchange fraction); InputError if PySCF rejects it."""
    name = theory.strip()
    if name.upper() in ("HF", "RHF", "UHF", "HARTREE-FOCK"):
        return "HF", True, 1.0
    from pyscf.dft import libxc

    try:
        libxc.parse_xc(name)
        hyb = libxc.hybrid_coeff(name)
    except Exception:
        raise InputError("method.theory", f"PySCF does not know the functional '{theory}'; "
                                          "use HF or a name such as B3LYP, PBE0, PBE, TPSSh") from None
    return name.upper(), False, float(hyb)


def check_basis(basis: str, symbols: list[str]) -> str | None:
    """Raise InputError unless every element has the basis; return the matching ECP name or None."""
    import warnings

    from pyscf import gto

    ecp = None
    for sym in sorted(set(symbols)):
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                shells = gto.basis.load(basis, sym)
        except Exception:
            shells = None
        if not shells:
            raise InputError("method.basis", f"basis '{basis}' has no functions for {sym} (or is unknown to PySCF); "
                                             "choose one that covers every element, e.g. def2-SVP")
        try:
            if gto.basis.load_ecp(basis, sym):
                ecp = basis
        except Exception:
            pass
    return ecp


def resolve_method(cx: Complex, method: MethodSpec, threads: int | None = None,
                   memory_mb: int | None = None) -> MethodSetup:
    """Validate and resolve a MethodSpec for this complex (no SCF yet)."""
    import os

    theory, is_hf, hyb = check_theory(method.theory)
    symbols = [s for s in cx.atoms.get_chemical_symbols() if s != "X"]
    ecp = check_basis(method.basis, symbols)
    solvent = resolve_solvent(method.solvent, cx.charge)
    n_threads = threads or os.cpu_count() or 1
    if n_threads < 1:
        raise InputError("--threads", "must be ≥ 1")
    notes = []
    if ecp:
        notes.append(f"effective core potential '{ecp}' attached for heavy elements")
    return MethodSetup(theory=theory, is_hf=is_hf, exact_exchange=hyb, basis=method.basis, ecp=ecp,
                       density_fitting=method.density_fitting, auxbasis=None, solvent=solvent,
                       open_shell=method.open_shell, grid_level=method.grid_level,
                       max_cycles=method.max_cycles, threads=n_threads, memory_mb=memory_mb, notes=notes)


def _atom_list(cx: Complex) -> tuple[list, np.ndarray, np.ndarray]:
    atoms, pc_coords, pc_charges = [], [], []
    for k, (sym, pos) in enumerate(zip(cx.atoms.get_chemical_symbols(), cx.atoms.positions)):
        if sym == "X":
            owner = cx.ligand_of_atom[k]
            pc_coords.append(pos)
            pc_charges.append(float(cx.ligands[owner].ligand.charge))
        else:
            atoms.append((sym, tuple(float(x) for x in pos)))
    return atoms, np.array(pc_coords).reshape(-1, 3), np.array(pc_charges)


def point_charges(cx: Complex) -> tuple[np.ndarray, np.ndarray]:
    """Coordinates (Å) and charges of 'point' donors."""
    _, coords, charges = _atom_list(cx)
    return coords, charges


def build_mole(cx: Complex, setup: MethodSetup, multiplicity: int | None = None, log_path: Path | None = None,
               use_symmetry: bool = True):
    """PySCF Mole with symmetry when PySCF can set it up (falls back to subgroups, then none)."""
    from pyscf import gto

    atoms, _, pc_charges = _atom_list(cx)
    charge = cx.charge - int(round(pc_charges.sum())) if len(pc_charges) else cx.charge
    spin = (multiplicity or cx.multiplicity) - 1
    common = dict(atom=atoms, basis=setup.basis, ecp=setup.ecp, charge=charge, spin=spin, unit="Angstrom",
                  verbose=4 if log_path else 0, max_memory=setup.memory_mb or 4000)
    if log_path is not None:
        common["output"] = str(log_path)
    attempts: list[tuple[object, str | None]] = [(True, None)] + [(True, g) for g in SUBGROUP_FALLBACKS]
    if not use_symmetry:
        attempts = []
    note = None
    for sym, sub in attempts:
        try:
            kw = dict(common, symmetry=sym)
            if sub:
                kw["symmetry_subgroup"] = sub
            mol = gto.M(**kw)
            if sub:
                note = f"PySCF could not use the full Abelian subgroup; ran in {mol.groupname}"
            return mol, note
        except Exception as exc:  # PySCF raises KeyError/PointGroupSymmetryError on some ligand sets
            note = f"PySCF symmetry set-up failed ({type(exc).__name__}: {exc})"
            continue
    mol = gto.M(**dict(common, symmetry=False))
    return mol, (note + "; ran without symmetry") if note else "symmetry off on request"


def memory_estimate_mb(mol, setup: MethodSetup) -> float:
    """Rough peak memory of the SCF: the 3-index DF tensor or the 4-index ERIs (8-byte floats)."""
    nao = mol.nao_nr()
    if setup.density_fitting:
        naux = 3 * nao  # JK-fit sets are about 3× the orbital basis (common practice)
        return naux * nao * (nao + 1) / 2 * 8 / 1e6 + 10 * nao * nao * 8 / 1e6
    return (nao ** 4 / 8) * 8 / 1e6


def make_mean_field(mol, cx: Complex, setup: MethodSetup, restricted: bool, template=None):
    """HF/KS object with DF, point charges and PCM.

    ``restricted``: RHF/RKS for closed shells, ROHF/ROKS for open shells;
    otherwise UHF/UKS (also for a spin-0 broken-symmetry determinant).
    ``template``: a converged mean field of the same molecule whose DFT grids and
    density-fitting integrals are reused (they do not depend on the state).
    """
    from pyscf import dft, scf

    closed = mol.spin == 0
    if setup.is_hf:
        mf = (scf.RHF(mol) if closed else scf.ROHF(mol)) if restricted else scf.UHF(mol)
    else:
        mf = (dft.RKS(mol) if closed else dft.ROKS(mol)) if restricted else dft.UKS(mol)
        mf.xc = setup.theory
        mf.grids.level = setup.grid_level
    mf.max_cycle = setup.max_cycles
    mf.conv_tol = 1e-9
    mf.init_guess = "atom"  # superposition of atomic densities
    if template is not None and not setup.is_hf and getattr(template, "grids", None) is not None:
        mf.grids = template.grids
    if setup.density_fitting:
        mf = mf.density_fit()
        tdf = getattr(template, "with_df", None)
        if tdf is not None and getattr(tdf, "_cderi", None) is not None and tdf.mol is mol:
            mf.with_df = tdf
    coords, charges = point_charges(cx)
    if len(charges):
        from pyscf import qmmm

        mf = qmmm.mm_charge(mf, coords, charges)
    if not setup.solvent.is_gas_phase:
        from dsplit.qc.pcm_factorised import attach_factorised_pcm

        mf = attach_factorised_pcm(mf, setup.solvent.epsilon)
    return mf
