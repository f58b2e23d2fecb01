"""The Calculation stage: a converged, configuration-verified PySCF run of a Complex.

Flow: Mole (symmetry with fallbacks) → mean field → SCF ladder → internal
stability (follow instabilities) → configuration check of the d-based MOs →
if the SCF landed in another d configuration, steer it (``irrep_nelec`` per
symmetry block, else maximum overlap) and check again.  A run that does not
converge, or whose configuration cannot be verified, comes back marked so; the
caller withholds every splitting number and exits 3.
"""

from __future__ import annotations

import os
import platform
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from dsplit.complex import Complex
from dsplit.errors import InputError
from dsplit.qc.dcharacter import SetPick, d_weights, orthogonal_projector, pick_d_based, spin_resolved_target
from dsplit.qc.ladder import Progress, RungRecord, lowest_hessian_eigenvalue, run_ladder
from dsplit.qc.setup import MethodSetup, build_mole, make_mean_field, memory_estimate_mb
from dsplit.qc.targeting import irrep_counts, orbital_symmetries, target_occupation

MAX_STABILITY_FOLLOWS = 2
SPIN_CONTAMINATION_TOL = 0.1  # |⟨S²⟩ − S(S+1)| above 10 % (or 0.1 for S ≤ 1/2): flagged (common practice)
EXCITED_CONV_TOL = 1e-7  # Eh; the energy error is of this order, below the 1e-5 eV (4e-7 Eh) that ΔSCF values are read to
#: rungs of an excited-configuration SCF (maximum-overlap occupations hold in all three), with the
#: cycles plain DIIS and the level shift get before the next rung takes over.  Measured: on
#: cis-[CrCl2(NH3)4]+ (B3LYP/def2-SVP) a maximum-overlap DIIS that had not settled by 40 cycles went on
#: oscillating to the 100-cycle limit; on [Cr(NH3)6]3+ (B3LYP/3-21G) DIIS and level shift both flipped
#: between two occupations for 100 cycles each, and the Newton solver then converged in 3 macro steps
EXCITED_RUNGS: tuple[str, ...] = ("diis", "level-shift", "newton")
#: the Newton rung is capped too (macro steps, each up to ~20 Fock builds): converging excited runs took
#: 3; on cis-[CrCl2(NH3)4]+ (UKS, def2-SVP) it was still at |g| 0.08 after 2 macro steps (8 min, one core)
EXCITED_CYCLE_CAPS = {"diis": 30, "level-shift": 30, "newton": 4}
#: cycles plain DIIS and the level shift get in a ground-state ladder before the next rung: measured on
#: [Fe(H2O)6]2+ quintet (UKS PBE/3-21G, PCM) DIIS and the level shift each ran out their 100 cycles
#: oscillating before the Newton rung was reached; 50 is well above the 10–40 cycles converging runs take
GROUND_CYCLE_CAPS = {"diis": 50, "level-shift": 50}
IMPLAUSIBLE_STEER_RISE = 0.5  # Eh (~13.6 eV): a steered ground configuration this far up is not a d state


@dataclass
class Calculation:
    """A finished run (converged or not) with everything later stages read."""

    complex: Complex
    setup: MethodSetup
    mol: object
    mf: object
    multiplicity: int
    target_occupations: list[int]
    target_alpha: list[int]
    target_beta: list[int]
    converged: bool
    configuration_verified: bool
    configuration_found: str
    picks: list[list[SetPick]]  # per spin channel (1 for restricted closed shell)
    rungs: list[RungRecord]
    stability_lowest: float | None
    stability_followed: int
    targeting: str | None  # None, "irrep_nelec" or "maximum-overlap"
    symmetry_group: str  # PySCF's group used in the SCF ("C1" without symmetry)
    timings: dict[str, float]
    notes: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    log_path: Path | None = None
    chk_path: Path | None = None

    @property
    def ok(self) -> bool:
        return self.converged and self.configuration_verified

    @property
    def energy_hartree(self) -> float:
        return float(self.mf.e_tot)

    @property
    def unrestricted(self) -> bool:
        return np.asarray(self.mf.mo_occ).ndim == 2

    def spin_square(self) -> tuple[float, float]:
        """(⟨S²⟩, 2S+1) from PySCF."""
        if not self.unrestricted:
            s = (self.multiplicity - 1) / 2
            return s * (s + 1), float(self.multiplicity)
        ss, m = self.mf.spin_square()
        return float(ss), float(m)


def _channels(mf) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """(mo_coeff, mo_occ, mo_energy) per spin channel; ROHF split into α/β occupations."""
    occ = np.asarray(mf.mo_occ)
    if occ.ndim == 2:
        return [(mf.mo_coeff[s], occ[s], mf.mo_energy[s]) for s in (0, 1)]
    if (occ == 1).any():  # restricted open shell: same orbitals, α = occ > 0, β = occ == 2
        return [(mf.mo_coeff, (occ > 0).astype(float), mf.mo_energy),
                (mf.mo_coeff, (occ > 1).astype(float), mf.mo_energy)]
    return [(mf.mo_coeff, occ, mf.mo_energy)]


def check_configuration(mf, cx: Complex, projector: np.ndarray, target_alpha: list[int],
                        target_beta: list[int]) -> tuple[bool, list[list[SetPick]], str]:
    """Compare the d-based MO occupations with the target, per spin."""
    chans = _channels(mf)
    picks = [pick_d_based(d_weights(mf.mol, c, projector), o, cx.d_sets, e) for c, o, e in chans]
    if len(chans) == 1:
        found = [round(p.occupation) for p in picks[0]]
        ok = found == [a + b for a, b in zip(target_alpha, target_beta)]
    else:
        fa = [round(p.occupation) for p in picks[0]]
        fb = [round(p.occupation) for p in picks[1]]
        found = [a + b for a, b in zip(fa, fb)]
        ok = fa == target_alpha and fb == target_beta
    text = " ".join(f"{s.label}^{n}" for s, n in zip(cx.d_sets, found))
    return ok, picks, text


def _initial_density(mf, start_from: Path | None, notes: list[str]):
    if start_from is not None and Path(start_from).is_file():
        try:
            dm = mf.from_chk(str(start_from))
            if abs(_electron_count(dm, mf.get_ovlp()) - mf.mol.nelectron) < 1e-3:
                notes.append(f"started from checkpoint {start_from}")
                return dm
            dm = reorthonormalised_density(mf, start_from)
            if dm is not None:
                notes.append(f"started from checkpoint {start_from} (orbitals projected onto this geometry "
                             "and re-orthonormalised)")
                return dm
            notes.append(f"checkpoint {start_from} did not fit (electron count); started from atoms")
        except Exception as exc:  # a checkpoint of another molecule does not fit
            notes.append(f"checkpoint {start_from} did not fit ({type(exc).__name__}); started from atoms")
    return mf.get_init_guess(key="atom")


def start_block_counts(mf, start_from: Path | None) -> dict | None:
    """Electrons per symmetry block (PySCF ``irrep_nelec`` form) of a start checkpoint's state.

    None unless the checkpoint has this run's basis size and electrons per spin and the
    molecule has symmetry.  Holding these counts keeps a restart (next geometry step,
    next functional) in the state it came from: measured on [Fe(H2O)6]2+ singlet (PBE/
    3-21G, PCM), a block-steered t2g^6 state restarted at a new geometry without them
    went from −1712.59 to −1702.5 Eh in the first DIIS cycle (|Δρ| 9) and needed 100 cycles,
    a Newton solve and another steering per geometry step.
    """
    from pyscf import scf
    from pyscf.scf import chkfile as scf_chkfile

    mol = mf.mol
    if start_from is None or not Path(start_from).is_file() or not mol.symmetry or mol.groupname == "C1":
        return None
    try:
        chk_mol, rec = scf_chkfile.load_scf(str(start_from))
    except Exception:
        return None
    if chk_mol.nao_nr() != mol.nao_nr():
        return None
    mo, occ = np.asarray(rec["mo_coeff"]), np.asarray(rec["mo_occ"])
    if mo.ndim == 2:  # restricted (closed or open shell): α = occupied, β = doubly occupied
        mo, occ = np.array([mo, mo]), np.array([(occ > 0).astype(float), (occ > 1).astype(float)])
    syms = [orbital_symmetries(mf, c) for c in mo]
    if any(x is None for x in syms):
        return None
    counts = [irrep_counts(x, o) for x, o in zip(syms, occ)]
    n_alpha, n_beta = mol.nelec
    if round(sum(counts[0].values())) != n_alpha or round(sum(counts[1].values())) != n_beta:
        return None
    irreps = sorted(set(counts[0]) | set(counts[1]))
    if not isinstance(mf, (scf.uhf.UHF, scf.rohf.ROHF)):  # restricted closed shell: electrons per block
        return {ir: int(round(counts[0].get(ir, 0) + counts[1].get(ir, 0))) for ir in irreps}
    return {ir: (int(round(counts[0].get(ir, 0))), int(round(counts[1].get(ir, 0)))) for ir in irreps}


def _electron_count(dm, overlap) -> float:
    dm = np.asarray(dm)
    return float(np.trace(np.sum(dm.reshape(-1, *dm.shape[-2:]), axis=0) @ overlap))


def reorthonormalised_density(mf, chk_path: Path):
    """Density from a checkpoint of the same atoms at another geometry, or None.

    The stored orbitals are expanded in the new AOs with the same coefficients (same
    atoms, basis and order), then each spin's occupied set is Löwdin-orthonormalised in
    the new overlap S: C → C (CᵀSC)^(−1/2) (Löwdin, J. Chem. Phys. 18, 365 (1950)), so
    the electron count is exact again.  Returns None when atoms or basis size differ.
    """
    from pyscf.lo.orth import vec_lowdin
    from pyscf.scf import chkfile as scf_chkfile

    chk_mol, rec = scf_chkfile.load_scf(str(chk_path))
    mol = mf.mol
    if chk_mol.natm != mol.natm or chk_mol.nao_nr() != mol.nao_nr() or \
            [chk_mol.atom_symbol(i) for i in range(chk_mol.natm)] != [mol.atom_symbol(i) for i in range(mol.natm)]:
        return None
    s = mol.intor_symmetric("int1e_ovlp")
    mo, occ = np.asarray(rec["mo_coeff"]), np.asarray(rec["mo_occ"])
    if mo.ndim == 2:  # restricted: two spins share the orbitals
        mo, occ = np.array([mo, mo]), np.array([np.minimum(occ, 1.0), np.maximum(occ - 1.0, 0.0)])
    dms = []
    for c, n in zip(mo, occ):
        c_occ = vec_lowdin(c[:, n > 0], s)
        dms.append((c_occ * n[n > 0]) @ c_occ.T)
    dm = np.array(dms)
    if abs(_electron_count(dm, s) - mol.nelectron) > 1e-3:
        return None
    from pyscf import scf

    if not isinstance(mf, scf.uhf.UHF):  # RHF/RKS want the total density; ROHF takes both spins
        return dm if isinstance(mf, scf.rohf.ROHF) else dm[0] + dm[1]
    return dm


def _target_occupations(mf, picks, target_alpha, target_beta):
    chans = _channels(mf)
    closed = len(chans) == 1
    targets = [[a + b for a, b in zip(target_alpha, target_beta)]] if closed else [target_alpha, target_beta]
    nelec = [mf.mol.nelectron] if closed else list(mf.mol.nelec)
    occs = [target_occupation(e, o, p, t, n, per_orbital=2.0 if closed else 1.0)
            for (c, o, e), p, t, n in zip(chans, picks, targets, nelec)]
    return chans, closed, occs


def _steer_by_blocks(mf, picks, target_alpha, target_beta, progress, notes):
    """Fix electrons per symmetry block (irrep_nelec) to the target's counts; None if it cannot help."""
    chans, closed, occs = _target_occupations(mf, picks, target_alpha, target_beta)
    syms = [orbital_symmetries(mf, c) for c, _, _ in chans]
    if any(s is None for s in syms) or mf.mol.groupname == "C1":
        return None
    counts = [irrep_counts(s, o) for s, o in zip(syms, occs)]
    now = [irrep_counts(s, c[1]) for s, c in zip(syms, chans)]
    if counts == now:
        return None
    irreps = sorted(set().union(*counts, *now))
    if closed:
        mf.irrep_nelec = {ir: int(round(counts[0].get(ir, 0))) for ir in irreps}
    else:
        mf.irrep_nelec = {ir: (int(round(counts[0].get(ir, 0))), int(round(counts[1].get(ir, 0))))
                          for ir in irreps}
    notes.append("configuration steered with fixed electrons per symmetry block (irrep_nelec)")
    return run_ladder(mf, mf.make_rdm1(), progress, rungs=("diis", "level-shift"))


def _steer_by_overlap(mf, picks, target_alpha, target_beta, progress, notes):
    """Maximum-overlap occupations built on the current orbitals; None if not possible."""
    from pyscf import scf

    chans, closed, occs = _target_occupations(mf, picks, target_alpha, target_beta)
    if not closed and np.asarray(mf.mo_occ).ndim == 1:
        notes.append("restricted-open run: maximum-overlap steering is not available")
        return None
    if getattr(mf, "irrep_nelec", None):
        mf.irrep_nelec = {}
    mo0 = chans[0][0] if closed else np.array([chans[0][0], chans[1][0]])
    occ0 = occs[0] if closed else np.array([occs[0], occs[1]])
    mf = scf.addons.mom_occ(mf, mo0, occ0)
    notes.append("configuration steered with maximum-overlap occupations (MOM)")
    return run_ladder(mf, mf.make_rdm1(mo0, occ0), progress, rungs=("diis", "level-shift"))


def _steer(mf, cx, projector, picks, target_alpha, target_beta, progress, notes):
    """Try block occupations, then maximum overlap, until the target is verified."""
    records: list[RungRecord] = []
    method = None
    verified, found = False, ""
    for name, step in (("irrep_nelec", _steer_by_blocks), ("maximum-overlap", _steer_by_overlap)):
        out = step(mf, picks, target_alpha, target_beta, progress, notes)
        if out is None:
            continue
        mf, more = out
        records += more
        method = name
        if mf.converged:
            verified, picks, found = check_configuration(mf, cx, projector, target_alpha, target_beta)
            if verified:
                break
            notes.append(f"after {name}: {found}")
    return mf, method, records, verified, picks, found


def provenance_versions() -> dict[str, str]:
    import ase
    import pyscf
    import scipy

    import dsplit

    return {"dsplit": dsplit.__version__, "pyscf": pyscf.__version__, "numpy": np.__version__,
            "scipy": scipy.__version__, "ase": ase.__version__, "python": platform.python_version()}


def quiet_pyscf():
    """Context: PySCF's stdout and its stderr warnings go nowhere (they are in the run's log)."""
    import contextlib
    import io

    stack = contextlib.ExitStack()
    stack.enter_context(contextlib.redirect_stdout(io.StringIO()))
    stack.enter_context(contextlib.redirect_stderr(io.StringIO()))
    return stack


def run_calculation(cx: Complex, setup: MethodSetup, out_dir: Path | None = None, **kwargs) -> Calculation:
    """Run, stabilise and verify one SCF of ``cx`` (see module docstring).

    Keyword arguments: ``multiplicity``, ``target_occupations`` (electrons per d set),
    ``progress`` (callback), ``start_from`` (a checkpoint), ``use_symmetry``,
    ``stability``, ``tag`` (file stem of the log and checkpoint).  PySCF's own
    terminal output (stdout and its stderr warnings) goes to the log only.
    """
    # PySCF writes warnings to stderr as well as to its log: keep them in the log only
    with quiet_pyscf():
        return _run_calculation(cx, setup, out_dir, **kwargs)


def _run_calculation(cx: Complex, setup: MethodSetup, out_dir: Path | None = None, *,
                     multiplicity: int | None = None, target_occupations: list[int] | None = None,
                     progress: Progress | None = None, start_from: Path | None = None,
                     use_symmetry: bool = True, stability: bool = True, tag: str = "scf") -> Calculation:
    from pyscf import lib

    from dsplit.chem.counting import configuration_occupations

    timings: dict[str, float] = {}
    t_wall, t_cpu = time.perf_counter(), time.process_time()
    lib.num_threads(setup.threads)
    mult = multiplicity or cx.multiplicity
    if target_occupations is None:
        target_occupations = (configuration_occupations(cx.d_sets, cx.d_count, mult) if multiplicity
                              else _spec_occupations(cx))
    try:
        t_alpha, t_beta = spin_resolved_target(cx.d_sets, target_occupations, mult)
    except ValueError:
        raise InputError("complex.configuration", f"the configuration cannot have multiplicity {mult}") from None

    log_path = chk_path = None
    if out_dir is not None:
        out_dir.mkdir(parents=True, exist_ok=True)
        log_path, chk_path = out_dir / f"{tag}.log", out_dir / f"{tag}.chk"
    mol, sym_note = build_mole(cx, setup, mult, log_path, use_symmetry=use_symmetry)
    notes = list(setup.notes)
    if sym_note:
        notes.append(sym_note)
    need = memory_estimate_mb(mol, setup)
    if setup.memory_mb is not None and need > setup.memory_mb:
        raise InputError("--memory", f"{setup.memory_mb} MB is too small for this run (about {need:.0f} MB "
                                     "needed); raise --memory or use density fitting")
    restricted = mult == 1 or setup.open_shell == "restricted"
    mf = make_mean_field(mol, cx, setup, restricted=restricted)
    if chk_path is not None:
        mf.chkfile = str(chk_path)
    dm0 = _initial_density(mf, start_from, notes)
    timings["setup"] = time.perf_counter() - t_wall

    t0 = time.perf_counter()
    held = start_block_counts(mf, start_from)
    if held:
        mf.irrep_nelec = held
    mf, rungs = run_ladder(mf, dm0, progress, cycle_caps=GROUND_CYCLE_CAPS)
    if held and mf.converged:
        notes.append("electrons per symmetry block held as in the start checkpoint's state")
    elif held:  # the start state's blocks do not converge here: free them
        mf.irrep_nelec = {}
        notes.append("the start checkpoint's electrons per symmetry block did not converge here; freed")
        mf, more = run_ladder(mf, dm0, progress, cycle_caps=GROUND_CYCLE_CAPS)
        rungs += more
    timings["scf"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    lowest, followed = None, 0
    if mf.converged and stability:
        for _ in range(MAX_STABILITY_FOLLOWS + 1):
            lowest, rotated = lowest_hessian_eigenvalue(mf)
            if rotated is None or followed == MAX_STABILITY_FOLLOWS:
                break
            followed += 1
            notes.append(f"internal instability (lowest Hessian eigenvalue {lowest:.2e}) followed")
            mf, more = run_ladder(mf, mf.make_rdm1(rotated, mf.mo_occ), progress, cycle_caps=GROUND_CYCLE_CAPS)
            rungs += more
            if not mf.converged:
                break
    timings["stability"] = time.perf_counter() - t0

    t0 = time.perf_counter()
    projector = orthogonal_projector(mol)
    verified, picks, found = (False, [], "not checked")
    targeting = None
    if mf.converged:
        verified, picks, found = check_configuration(mf, cx, projector, t_alpha, t_beta)
        if not verified:
            landed_energy, landed = float(mf.e_tot), found
            notes.append(f"SCF landed in {found}; steering to the target")
            mf, targeting, more, verified, new_picks, new_found = _steer(mf, cx, projector, picks, t_alpha, t_beta,
                                                                         progress, notes)
            rungs += more
            if targeting is not None and mf.converged:
                picks, found = new_picks, new_found
                if verified and mf.e_tot - landed_energy > IMPLAUSIBLE_STEER_RISE:
                    verified = False
                    warnings_steer = (f"the steered state lies {mf.e_tot - landed_energy:.2f} Eh above the SCF's own "
                                      "solution: implausible for a d configuration, not accepted")
                    notes.append(warnings_steer)
                elif verified and landed_energy < mf.e_tot - 1e-6:
                    notes.append(f"the SCF first found {landed} {(mf.e_tot - landed_energy) * 627.5094740631:.1f} "
                                 "kcal/mol below the target configuration: the target may not be the ground state")
    timings["configuration"] = time.perf_counter() - t0
    timings["wall"] = time.perf_counter() - t_wall
    timings["cpu"] = time.process_time() - t_cpu
    warnings = []
    from dsplit.qc.ladder import STABILITY_TOL

    if lowest is not None and lowest < -STABILITY_TOL:
        notes.append(f"still unstable after {followed} follow(s) (lowest Hessian eigenvalue {lowest:.2e} Eh): "
                     "an orbitally degenerate state (Jahn–Teller) or a lower solution of another symmetry")
    if mf.converged and np.asarray(mf.mo_occ).ndim == 2:
        ss = float(mf.spin_square()[0])
        exact = (mult - 1) / 2 * ((mult - 1) / 2 + 1)
        if abs(ss - exact) > SPIN_CONTAMINATION_TOL * max(1.0, exact):
            warnings.append(f"spin contamination: ⟨S²⟩ = {ss:.3f} against S(S+1) = {exact:.3f}")
    if not mf.converged:
        warnings.append("SCF did not converge on any rung: no result")
    elif not verified:
        warnings.append(f"configuration not verified: found {found}, wanted "
                        + " ".join(f"{s.label}^{n}" for s, n in zip(cx.d_sets, target_occupations)))
    return Calculation(
        complex=cx, setup=setup, mol=mol, mf=mf, multiplicity=mult, target_occupations=list(target_occupations),
        target_alpha=t_alpha, target_beta=t_beta, converged=bool(mf.converged), configuration_verified=verified,
        configuration_found=found, picks=picks, rungs=rungs, stability_lowest=lowest,
        stability_followed=followed, targeting=targeting, symmetry_group=str(mol.groupname if mol.symmetry else "C1"),
        timings=timings, notes=notes, warnings=warnings, log_path=log_path, chk_path=chk_path,
    )


def _spec_occupations(cx: Complex) -> list[int]:
    from dsplit.chem.counting import parse_configuration

    return parse_configuration(cx.configuration, cx.d_sets, cx.d_count)


def machine_info() -> dict[str, object]:
    return {"platform": platform.platform(), "processor": platform.machine(), "cores": os.cpu_count(),
            "python_executable": sys.executable}


def block_aufbau_reaches(syms, occupations, energies) -> bool:
    """True when filling each symmetry block in energy order gives exactly the wanted orbitals.

    Fixing electron counts per block (``irrep_nelec``) still fills each block by
    aufbau; if a lower orbital of the particle's block is empty in the wanted
    configuration (e.g. metal 4s in a1g below the eg particle), block occupations
    would land there, so the maximum-overlap method is the right tool instead.
    """
    for sym, occ, e in zip(syms, occupations, energies):
        sym, occ, e = np.asarray(sym), np.asarray(occ), np.asarray(e)
        for ir in set(sym.tolist()):
            idx = np.where(sym == ir)[0]
            n = int(round(float(occ[idx].sum())))
            by_energy = idx[np.argsort(e[idx], kind="stable")]
            if set(by_energy[:n].tolist()) != set(idx[occ[idx] > 0.5].tolist()):
                return False
    return True


def run_excited(ground: Calculation, occupations: list[np.ndarray], target_alpha: list[int],
                target_beta: list[int], multiplicity: int | None = None, out_dir: Path | None = None,
                tag: str = "excited", progress: Progress | None = None) -> Calculation:
    """ΔSCF: converge an excited d configuration from the ground state's orbitals.

    ``occupations`` are occupation vectors over the ground MOs (one per spin channel;
    α and β for unrestricted).  Electrons are fixed per symmetry block when the
    blocks tell the configurations apart, else the maximum-overlap method keeps
    the chosen orbitals occupied.  The result is checked against the target like
    any ground state; no stability analysis (an excited state is a saddle point).
    """
    with quiet_pyscf():
        return _run_excited(ground, occupations, target_alpha, target_beta, multiplicity, out_dir, tag, progress)


def _run_excited(ground, occupations, target_alpha, target_beta, multiplicity, out_dir, tag, progress):
    from pyscf import scf

    from dsplit.qc.setup import make_mean_field

    t0, c0 = time.perf_counter(), time.process_time()
    cx, setup = ground.complex, ground.setup
    mult = multiplicity or ground.multiplicity
    mol = ground.mol
    if mult != ground.multiplicity:
        mol = mol.copy()
        mol.spin = mult - 1
        mol.build(False, False)
    # a restricted-open ground (ROKS/ROHF: one orbital set, α and β occupations) gives a restricted-open excited SCF
    restricted_open = not ground.unrestricted and len(_channels(ground.mf)) == 2 and len(occupations) == 2
    unrestricted = len(occupations) == 2 and not restricted_open
    mf = make_mean_field(mol, cx, setup, restricted=not unrestricted, template=ground.mf)
    mf.conv_tol = EXCITED_CONV_TOL
    if out_dir is not None:
        mf.chkfile = str(out_dir / f"{tag}.chk")
    chans = _channels(ground.mf)
    mo = [c for c, _, _ in chans]
    if unrestricted and len(mo) == 1:
        mo = [mo[0], mo[0]]
    notes: list[str] = []
    method = None
    syms = [orbital_symmetries(ground.mf, c) for c in mo]
    mo_arr = np.array(mo) if unrestricted else mo[0]
    occ_arr = np.array(occupations) if unrestricted else occupations[0]
    mom_occ = np.array(occupations) if restricted_open else occ_arr  # PySCF's ROHF MOM takes (α, β) occupations
    if restricted_open:
        occ_arr = occupations[0] + occupations[1]  # 2/1/0 for the ROHF density
    blocks_differ = False
    if all(s is not None for s in syms) and mol.groupname != "C1":
        new = [irrep_counts(s, o) for s, o in zip(syms, occupations)]
        ground_occ = [c[1] for c in chans]
        if unrestricted and len(chans) == 1:  # closed-shell ground seen as two spin channels
            ground_occ = [chans[0][1] / 2.0, chans[0][1] / 2.0]
        old = [irrep_counts(s, o) for s, o in zip(syms, ground_occ)]
        blocks_differ = new != old
        energies = [e for _, _, e in chans] * (2 if unrestricted and len(chans) == 1 else 1)
        if blocks_differ and not block_aufbau_reaches(syms, occupations, energies):
            notes.append("block-fixed occupations would fill a lower orbital of the particle's block; "
                         "maximum overlap used")
            blocks_differ = False
        if blocks_differ:
            irreps = sorted(set().union(*new))
            mf.irrep_nelec = ({ir: int(round(new[0].get(ir, 0))) for ir in irreps} if len(new) == 1 else
                              {ir: (int(round(new[0].get(ir, 0))), int(round(new[1].get(ir, 0)))) for ir in irreps})
            method = "irrep_nelec"
    if method is None:
        mf = scf.addons.mom_occ(mf, mo_arr, mom_occ)
        method = "maximum-overlap"
    dm = mf.make_rdm1(mo_arr, occ_arr)
    mf, rungs = run_ladder(mf, dm, progress, rungs=EXCITED_RUNGS, cycle_caps=EXCITED_CYCLE_CAPS)
    projector = orthogonal_projector(mol)
    verified, picks, found = (False, [], "not checked")
    if mf.converged:
        verified, picks, found = check_configuration(mf, cx, projector, target_alpha, target_beta)
    if method == "irrep_nelec" and not (mf.converged and verified):
        # the block may hold a lower non-d orbital (e.g. metal 4s in a1g beside eg): keep the d orbital
        notes.append("block-fixed excited SCF " + ("landed in " + found if mf.converged else "did not converge")
                     + "; retried with maximum overlap")
        mf = make_mean_field(mol, cx, setup, restricted=not unrestricted, template=ground.mf)
        mf.conv_tol = EXCITED_CONV_TOL
        mf = scf.addons.mom_occ(mf, mo_arr, mom_occ)
        method = "maximum-overlap"
        mf, more = run_ladder(mf, mf.make_rdm1(mo_arr, occ_arr), progress, rungs=EXCITED_RUNGS,
                              cycle_caps=EXCITED_CYCLE_CAPS)
        rungs += more
        verified, picks, found = (False, [], "not checked")
        if mf.converged:
            verified, picks, found = check_configuration(mf, cx, projector, target_alpha, target_beta)
    occ_total = [a + b for a, b in zip(target_alpha, target_beta)]
    warnings = [] if (mf.converged and verified) else [
        "excited configuration did not converge" if not mf.converged else f"excited SCF landed in {found}"]
    return Calculation(
        complex=cx, setup=setup, mol=mol, mf=mf, multiplicity=mult, target_occupations=occ_total,
        target_alpha=list(target_alpha), target_beta=list(target_beta), converged=bool(mf.converged),
        configuration_verified=verified, configuration_found=found, picks=picks, rungs=rungs,
        stability_lowest=None, stability_followed=0, targeting=method,
        symmetry_group=ground.symmetry_group,
        timings={"wall": time.perf_counter() - t0, "cpu": time.process_time() - c0}, notes=notes,
        warnings=warnings)
