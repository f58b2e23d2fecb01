"""What it takes to run a ground SCF again with plain PySCF: read off the finished run.

Everything is read from the converged mean-field object, not from the spec, so the
recipe is what actually ran: the Mole's internal coordinates (Bohr), basis, ECP, charge,
2S, the Abelian group PySCF used; the reference (RHF/ROHF/UHF, RKS/ROKS/UKS); the
functional and grid level; the auxiliary basis PySCF resolved for density fitting; the
point-charge donors; the PCM settings of the project's factorised PCM, which solves the
equations of PySCF's own ``pcm.PCM`` (qc/pcm_factorised.py), so the plain class with the
same settings gives the same energy.

Landing in the same state.  The recipe fixes the electrons per symmetry block (PySCF
``irrep_nelec``, per spin for open shells) of the verified state.  An SCF with fixed block
counts fills each block by aufbau, so it reaches the same determinant only if, at the
converged orbitals, each block's occupied MOs are its lowest ones
(:func:`dsplit.qc.engine.block_aufbau_reaches`).  When they are not (a maximum-overlap
steered state, a hole under a filled orbital of its block) or the run had no symmetry,
the recipe carries the verified occupation pattern with the occupied orbitals as the
start, and the SCF keeps them occupied by maximum overlap (Gilbert, Besley & Gill,
J. Phys. Chem. A 112, 13164 (2008)).  The script applies that rule itself (a dozen
lines): ``pyscf.scf.addons.mom_occ`` on a restricted closed shell gives every MO one
electron in PySCF 2.14 (measured on water/STO-3G: occupations all 1, E −46.4 instead
of −75.0 Eh).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from dsplit.qc.excited import block_aufbau_reaches
from dsplit.qc.records import Calculation, spin_channels
from dsplit.qc.targeting import irrep_counts, orbital_symmetries

PCM_SETTINGS = ("method", "eps", "vdw_scale", "r_probe", "lebedev_order", "surface_discretization_method")


@dataclass
class ScfRecipe:
    """Plain data (JSON-able apart from the start orbitals) for one ground SCF."""

    atoms: list[tuple[str, tuple[float, float, float]]]  # symbol, Bohr
    charge: int
    spin: int  # 2S = Nα − Nβ
    basis: str
    ecp: str | None
    symmetry: bool
    symmetry_subgroup: str | None  # passed to gto.M when the run needed a fallback subgroup
    group: str  # PySCF's group name ('C1' without symmetry)
    reference: str  # 'RHF', 'ROHF', 'UHF', 'RKS', 'ROKS' or 'UKS'
    xc: str | None
    grid_level: int | None
    auxbasis: str | dict | None  # None: no density fitting
    point_charges: list[tuple[tuple[float, float, float], float]]  # Bohr, e
    pcm: dict | None  # PCM_SETTINGS of the solvent model, None in the gas phase
    conv_tol: float
    max_cycle: int
    energy_hartree: float
    state_by: str  # 'irrep_nelec' or 'maximum-overlap'
    irrep_nelec: dict[str, int | list[int]] | None
    #: per spin channel, (occupied MO coefficients, their occupation) groups (maximum-overlap recipes only)
    start_groups: list[list[tuple[np.ndarray, float]]] | None = None
    nelec: tuple[int, int] = (0, 0)
    nao: int = 0
    notes: list[str] = field(default_factory=list)


def reference_name(mf) -> str:
    """'RHF', 'ROHF', 'UHF', 'RKS', 'ROKS' or 'UKS' for any (wrapped) PySCF mean field."""
    from pyscf import dft, scf

    ks = isinstance(mf, dft.rks.KohnShamDFT)
    if isinstance(mf, scf.uhf.UHF):
        return "UKS" if ks else "UHF"
    if isinstance(mf, scf.rohf.ROHF):
        return "ROKS" if ks else "ROHF"
    return "RKS" if ks else "RHF"


def _auxbasis(mf) -> str | dict | None:
    """The auxiliary basis PySCF used: its name (per element when they differ) or the shells."""
    with_df = getattr(mf, "with_df", None)
    if with_df is None:
        return None
    aux = with_df.auxbasis
    if isinstance(aux, str) or (isinstance(aux, dict) and all(isinstance(v, str) for v in aux.values())):
        return aux
    return {k: [list(map(_plain, shell)) for shell in v] for k, v in with_df.auxmol._basis.items()}


def _plain(x):
    return [_plain(y) for y in x] if isinstance(x, (list, tuple)) else float(x) if isinstance(x, float) else x


def _point_charges(mf) -> list[tuple[tuple[float, float, float], float]]:
    mm = getattr(mf, "mm_mol", None)
    if mm is None:
        return []
    return [(tuple(float(v) for v in r), float(q)) for r, q in zip(mm.atom_coords(), mm.atom_charges())]


def _pcm(mf) -> dict | None:
    ws = getattr(mf, "with_solvent", None)
    if ws is None:
        return None
    if getattr(ws, "radii_table", None) is not None:
        raise ValueError("custom PCM radii are not carried into the recipe")
    return {k: getattr(ws, k) for k in PCM_SETTINGS}


def block_state(calc: Calculation) -> tuple[dict[str, int | list[int]] | None, str]:
    """(electrons per symmetry block, why) when they pin the verified state, else (None, why)."""
    mf = calc.mf
    if not calc.mol.symmetry or calc.mol.groupname == "C1":
        return None, "the run had no symmetry"
    chans = spin_channels(mf)
    syms = [orbital_symmetries(mf, c) for c, _, _ in chans]
    if any(s is None for s in syms):
        return None, "the MOs could not be labelled by symmetry block"
    per_spin = [o / 2.0 for _, o, _ in chans] if len(chans) == 1 else [o for _, o, _ in chans]  # 0/1 per MO
    if not block_aufbau_reaches(syms, per_spin, [e for _, _, e in chans]):
        return None, "the verified state is not the lowest filling of its symmetry blocks"
    counts = [irrep_counts(s, o) for s, (_, o, _) in zip(syms, chans)]
    irreps = [str(ir) for ir in sorted(set().union(*counts), key=list(calc.mol.irrep_name).index)]
    if len(chans) == 1:
        return {ir: int(round(counts[0].get(ir, 0))) for ir in irreps}, "electrons per symmetry block"
    return ({ir: [int(round(counts[0].get(ir, 0))), int(round(counts[1].get(ir, 0)))] for ir in irreps},
            "electrons per symmetry block and spin")


def occupied_groups(mf) -> list[list[tuple[np.ndarray, float]]]:
    """Per spin channel the occupied MOs grouped by occupation: RHF [(C₂, 2)], ROHF [(C₂, 2), (C₁, 1)],
    UHF [(Cα, 1)], [(Cβ, 1)]."""
    occ = np.asarray(mf.mo_occ)
    coeff = np.asarray(mf.mo_coeff)
    if occ.ndim == 2:
        return [[(coeff[s][:, occ[s] > 0.5], 1.0)] for s in (0, 1)]
    out = [(coeff[:, np.isclose(occ, n)], float(n)) for n in (2.0, 1.0)]
    return [[(c, n) for c, n in out if c.shape[1]]]


def scf_recipe(calc: Calculation, hold: str = "auto") -> ScfRecipe:
    """The recipe of ``calc``'s converged ground SCF (see the module docstring).

    ``hold``: 'auto' (block counts when they pin the state, else maximum overlap) or
    'maximum-overlap' (always carry the occupied orbitals).
    """
    if hold not in ("auto", "maximum-overlap"):
        raise ValueError(f"hold must be 'auto' or 'maximum-overlap', not {hold!r}")
    mol, mf, st = calc.mol, calc.mf, calc.setup
    blocks, why = block_state(calc) if hold == "auto" else (None, "maximum overlap asked for")
    groups = None if blocks is not None else occupied_groups(mf)
    sub = getattr(mol, "symmetry_subgroup", None)
    return ScfRecipe(
        atoms=[(mol.atom_symbol(i), tuple(float(v) for v in mol.atom_coord(i))) for i in range(mol.natm)],
        charge=int(mol.charge), spin=int(mol.spin), basis=st.basis, ecp=st.ecp, symmetry=bool(mol.symmetry),
        symmetry_subgroup=sub, group=str(mol.groupname if mol.symmetry else "C1"), reference=reference_name(mf),
        xc=None if st.is_hf else str(mf.xc), grid_level=None if st.is_hf else int(mf.grids.level),
        auxbasis=_auxbasis(mf), point_charges=_point_charges(mf), pcm=_pcm(mf), conv_tol=float(mf.conv_tol),
        max_cycle=int(mf.max_cycle), energy_hartree=calc.energy_hartree,
        state_by="irrep_nelec" if blocks is not None else "maximum-overlap", irrep_nelec=blocks,
        start_groups=groups, nelec=tuple(int(n) for n in mol.nelec), nao=int(mol.nao_nr()),
        notes=[why])
