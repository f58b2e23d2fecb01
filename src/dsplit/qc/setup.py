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
    if not name:
        raise InputError("method.theory", "is empty; use HF or a functional name such as B3LYP, PBE0, PBE, TPSSh")
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


def _load_shells(basis: str, symbol: str):
    import warnings

    from pyscf import gto

    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return gto.basis.load(basis, symbol)
    except Exception:
        return None


def check_basis(basis: str, symbols: list[str]) -> str | None:
    """Raise InputError unless every element has the basis; return the matching ECP name or None.

    A name PySCF does not know at all gets the closest names of its basis library in the
    message (difflib), not an element-by-element complaint.
    """
    import difflib

    from pyscf import gto

    elements = sorted(set(symbols))
    missing = [sym for sym in elements if not _load_shells(basis, sym)]
    if missing and len(missing) == len(elements):
        key = gto.basis._format_basis_name(basis)
        close = difflib.get_close_matches(key, list(gto.basis.ALIAS), n=4, cutoff=0.6)
        hint = f"close names: {', '.join(close)}" if close else "e.g. def2-SVP, def2-TZVP, 6-31G*, cc-pVDZ"
        raise InputError("method.basis", f"PySCF does not know the basis '{basis}'; {hint}")
    if missing:
        raise InputError("method.basis", f"basis '{basis}' has no functions for {', '.join(missing)}; "
                                         "choose one that covers every element, e.g. def2-SVP")
    ecp = None
    for sym in elements:
        try:
            if gto.basis.load_ecp(basis, sym):
                ecp = basis
        except Exception:
            pass
    return ecp


def resolve_method(cx: Complex, method: MethodSpec, threads: int | None = None,
                   memory_mb: int | None = None) -> MethodSetup:
    """Validate and resolve a MethodSpec for this complex (no SCF yet)."""

    theory, is_hf, hyb = check_theory(method.theory)
    symbols = [s for s in cx.atoms.get_chemical_symbols() if s != "X"]
    ecp = check_basis(method.basis, symbols)
    solvent = resolve_solvent(method.solvent, cx.charge)
    check_resources(threads, memory_mb)
    n_threads = threads if threads is not None else default_threads()
    notes = []
    if ecp:
        notes.append(f"effective core potential '{ecp}' attached for heavy elements")
    return MethodSetup(theory=theory, is_hf=is_hf, exact_exchange=hyb, basis=method.basis, ecp=ecp,
                       density_fitting=method.density_fitting, auxbasis=None, solvent=solvent,
                       open_shell=method.open_shell, grid_level=method.grid_level,
                       max_cycles=method.max_cycles, threads=n_threads, memory_mb=memory_mb, notes=notes)


#: the smallest memory limit a run can work with (PySCF's own buffers, common practice)
MIN_MEMORY_MB = 100


def default_threads() -> int:
    """Threads when none are asked for: $OMP_NUM_THREADS when it is a whole number ≥ 1, else every core.

    (OpenMP programs read that variable the same way, common practice.)
    """
    import os

    value = os.environ.get("OMP_NUM_THREADS", "").strip()
    if value.isdigit() and int(value) >= 1:
        return int(value)
    return os.cpu_count() or 1


def check_resources(threads: int | None, memory_mb: int | None) -> None:
    """InputError unless ``threads`` ≥ 1 and ``memory_mb`` ≥ MIN_MEMORY_MB (None: the defaults)."""
    if threads is not None and (isinstance(threads, bool) or threads < 1):
        raise InputError("--threads", f"must be a whole number ≥ 1, got {threads}; leave it out to use all cores")
    if memory_mb is not None and (isinstance(memory_mb, bool) or memory_mb < MIN_MEMORY_MB):
        raise InputError("--memory", f"{memory_mb} MB is too small; give at least {MIN_MEMORY_MB} MB")


def preflight(spec, threads: int | None = None, memory_mb: int | None = None) -> tuple[Complex, "MethodSetup"]:
    """Everything that can be validated without an SCF: the complex, the method, the memory.

    Returns (complex, method set-up); InputError (exit 2) on any bad field.
    """
    from dsplit.geometry.build import build_complex

    check_resources(threads, memory_mb)
    cx = build_complex(spec.complex)
    setup = resolve_method(cx, spec.method, threads=threads, memory_mb=memory_mb)
    if memory_mb is not None:
        mol, _ = build_mole(cx, setup, use_symmetry=False)
        need = memory_estimate_mb(mol, setup)
        if need > memory_mb:
            raise InputError("--memory", f"{memory_mb} MB is too small for this run (about {need:.0f} MB "
                                         "needed); raise --memory or keep density fitting on")
    return cx, setup


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

    atoms, _, pc_charges = _atom_list(cx)
    charge = cx.charge - int(round(pc_charges.sum())) if len(pc_charges) else cx.charge
    spin = (multiplicity or cx.multiplicity) - 1
    common = dict(atom=atoms, basis=setup.basis, ecp=setup.ecp, charge=charge, spin=spin, unit="Angstrom",
                  verbose=4 if log_path else 0, max_memory=setup.memory_mb or 4000)
    attempts: list[tuple[object, str | None]] = [(True, None)] + [(True, g) for g in SUBGROUP_FALLBACKS]
    if not use_symmetry:
        attempts = []
    note = None
    for sym, sub in attempts:
        try:
            kw = dict(common, symmetry=sym)
            if sub:
                kw["symmetry_subgroup"] = sub
            mol = _mole(kw, log_path)
            if sub:
                note = f"PySCF could not use the full Abelian subgroup; ran in {mol.groupname}"
            return mol, note
        except Exception as exc:  # PySCF raises KeyError/PointGroupSymmetryError on some ligand sets
            note = f"PySCF symmetry set-up failed ({type(exc).__name__}: {exc})"
            continue
    mol = _mole(dict(common, symmetry=False), log_path)
    return mol, (note + "; ran without symmetry") if note else "symmetry off on request"


def _mole(fields: dict, log_path: Path | None):
    """A built Mole whose log (PySCF's ``stdout`` of this molecule and its mean fields) is ``log_path``.

    The stream is given before ``build`` so that PySCF never writes the log, or its
    'output file:' line, on the terminal (``gto.M(output=…)`` would print that line).
    """
    from pyscf import gto

    mol = gto.Mole()
    for key, value in fields.items():
        setattr(mol, key, value)
    if log_path is not None:
        import weakref

        mol.stdout = open(log_path, "w", encoding="utf-8")  # noqa: SIM115 - PySCF writes to it as long as mol lives
        weakref.finalize(mol, mol.stdout.close)  # closed with the molecule (its copies share the stream)
    mol.build()
    return mol


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
