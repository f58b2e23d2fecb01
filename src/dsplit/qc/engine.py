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
from pathlib import Path

import numpy as np

from dsplit.complex import Complex
from dsplit.errors import InputError
from dsplit.models.filling import spin_contamination
from dsplit.qc.dcharacter import SetPick, align_manifold_to_frame, d_weights, orthogonal_projector, pick_d_based, \
    spin_resolved_target
from dsplit.qc.ladder import Progress, RungRecord, lowest_hessian_eigenvalue, run_ladder
from dsplit.qc.records import Calculation, spin_channels
from dsplit.qc.resources import pyscf_threads, pyscf_warnings_to_notes
from dsplit.qc.setup import MethodSetup, build_mole, make_mean_field, memory_estimate_mb
from dsplit.qc.targeting import irrep_counts, maximum_overlap, orbital_symmetries, target_occupation

MAX_STABILITY_FOLLOWS = 2
#: cycles plain DIIS and the level shift get in a ground-state ladder before the next rung (oscillating
#: runs otherwise used their whole cycle budget before the Newton rung; see benchmarks/compute_overhead.py)
GROUND_CYCLE_CAPS = {"diis": 50, "level-shift": 50}
IMPLAUSIBLE_STEER_RISE = 0.5  # Eh (~13.6 eV): a steered ground configuration this far up is not a d state


def check_configuration(mf, cx: Complex, projector: np.ndarray, target_alpha: list[int],
                        target_beta: list[int]) -> tuple[bool, list[list[SetPick]], str]:
    """Compare the d-based MO occupations with the target, per spin."""
    chans = spin_channels(mf)
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
    chans = spin_channels(mf)
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

    chans, closed, occs = _target_occupations(mf, picks, target_alpha, target_beta)
    if not closed and np.asarray(mf.mo_occ).ndim == 1:
        notes.append("restricted-open run: maximum-overlap steering is not available")
        return None
    if getattr(mf, "irrep_nelec", None):
        mf.irrep_nelec = {}
    mo0 = chans[0][0] if closed else np.array([chans[0][0], chans[1][0]])
    occ0 = occs[0] if closed else np.array([occs[0], occs[1]])
    mf = maximum_overlap(mf, mo0, occ0)
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


def run_calculation(cx: Complex, setup: MethodSetup, out_dir: Path | None = None, **kwargs) -> Calculation:
    """Run, stabilise and verify one SCF of ``cx`` (see module docstring).

    Keyword arguments: ``multiplicity``, ``target_occupations`` (electrons per d set),
    ``progress`` (callback), ``start_from`` (a checkpoint), ``use_symmetry``,
    ``stability``, ``tag`` (file stem of the log and checkpoint).  PySCF's own
    terminal output (stdout and its stderr warnings) goes to the log only.
    """
    with pyscf_threads(setup.threads), pyscf_warnings_to_notes() as caught:
        calc = _run_calculation(cx, setup, out_dir, **kwargs)
    calc.notes.extend(caught)
    return calc


def _run_calculation(cx: Complex, setup: MethodSetup, out_dir: Path | None = None, *,
                     multiplicity: int | None = None, target_occupations: list[int] | None = None,
                     progress: Progress | None = None, start_from: Path | None = None,
                     use_symmetry: bool = True, stability: bool = True, tag: str = "scf") -> Calculation:
    from dsplit.chem.counting import configuration_occupations

    timings: dict[str, float] = {}
    t_wall, t_cpu = time.perf_counter(), time.process_time()
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
    if verified:  # degenerate d MOs onto the frame orbitals (density unchanged; see dcharacter)
        align_manifold_to_frame(mf, picks, cx.d_sets, projector)
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
        exact, _, contaminated = spin_contamination(ss, mult)
        if contaminated:
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
