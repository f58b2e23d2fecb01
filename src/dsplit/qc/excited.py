"""Calculations behind the splitting estimators, each returning a record.

- ``restricted_open_ground``: ROKS/ROHF ground state converged from the UKS/UHF density
  (the orbital estimator's one-electron levels; the ΔSCF fallback).
- ``run_excited``: one excited d configuration by ΔSCF with fixed electrons per symmetry
  block or the maximum-overlap method (Gilbert, Besley & Gill, J. Phys. Chem. A 112,
  13164 (2008); ``pyscf.scf.addons.mom_occ``).
- ``run_delta_scf``: the state estimator's calculations for one chosen transition: the
  excited determinant; for closed shells also its M_S = 1 triplet partner (the singlet
  then follows from E(S) = 2E(mixed) − E(T), Ziegler, Rauk & Baerends, Theor. Chim. Acta
  43, 261 (1977)); an unrestricted excited SCF that fails is redone restricted-open.
- ``run_tda``: TDA roots (CIS for HF; Hirata & Head-Gordon, Chem. Phys. Lett. 314, 291
  (1999)) in the symmetry block of a chosen d–d transition.

Which transition to run is chosen by ``dsplit.analysis.splitting`` from the ground state's
orbitals; what the energies mean is worked out there too.  Nothing here changes the
ground calculation it starts from.
"""

from __future__ import annotations

import time
from dataclasses import replace
from pathlib import Path

import numpy as np

from dsplit.qc.dcharacter import align_manifold_to_frame, orthogonal_projector
from dsplit.qc.engine import check_configuration
from dsplit.qc.ladder import Progress, run_ladder
from dsplit.qc.records import Calculation, DeltaScfRecord, TdaRecord, Transition, spin_channels
from dsplit.qc.resources import pyscf_threads, pyscf_warnings_to_notes
from dsplit.qc.setup import make_mean_field
from dsplit.qc.targeting import irrep_counts, maximum_overlap, orbital_symmetries

EXCITED_CONV_TOL = 1e-7  # Eh; the energy error is of this order, below the 1e-5 eV (4e-7 Eh) that ΔSCF values are read to
#: rungs of an excited-configuration SCF (maximum-overlap occupations hold in all three): a DIIS that
#: has not settled by its cap tends to oscillate to the cycle limit, and the Newton solver then
#: converges in a few macro steps (measurements: benchmarks/compute_overhead.py docstring)
EXCITED_RUNGS: tuple[str, ...] = ("diis", "level-shift", "newton")
#: cycle caps per rung (Newton: macro steps, each up to ~20 Fock builds)
EXCITED_CYCLE_CAPS = {"diis": 30, "level-shift": 30, "newton": 4}
#: energy tolerance of the restricted-open ground: its orbital gradient (PySCF: √tol ≈ 3e-4 Eh) bounds
#: the orbital-energy error to about 0.01 eV, below what the orbital estimator means
RESTRICTED_OPEN_CONV_TOL = 1e-7
#: Davidson tolerance of the TDA roots (PySCF's default is 1e-5); the band energies agree to 1e-4 eV
TDA_CONV_TOL = 1e-4


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
    with pyscf_threads(ground.setup.threads), pyscf_warnings_to_notes():
        return _run_excited(ground, occupations, target_alpha, target_beta, multiplicity, out_dir, tag, progress)


def _run_excited(ground, occupations, target_alpha, target_beta, multiplicity, out_dir, tag, progress):

    t0, c0 = time.perf_counter(), time.process_time()
    cx, setup = ground.complex, ground.setup
    mult = multiplicity or ground.multiplicity
    mol = ground.mol
    if mult != ground.multiplicity:
        mol = mol.copy()
        mol.spin = mult - 1
        mol.build(False, False)
    # a restricted-open ground (ROKS/ROHF: one orbital set, α and β occupations) gives a restricted-open excited SCF
    restricted_open = not ground.unrestricted and len(spin_channels(ground.mf)) == 2 and len(occupations) == 2
    unrestricted = len(occupations) == 2 and not restricted_open
    mf = make_mean_field(mol, cx, setup, restricted=not unrestricted, template=ground.mf)
    mf.conv_tol = EXCITED_CONV_TOL
    if out_dir is not None:
        mf.chkfile = str(out_dir / f"{tag}.chk")
    chans = spin_channels(ground.mf)
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
        mf = maximum_overlap(mf, mo_arr, mom_occ)
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
        mf = maximum_overlap(mf, mo_arr, mom_occ)
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


def excited_occupations(calc: Calculation, tr: Transition, triplet_flip: bool = False) -> list[np.ndarray]:
    """Per-spin occupation vectors (α, β) over the ground MOs with the electron moved.

    ``triplet_flip``: from a closed shell to the M_S = 1 triplet (β hole, α particle).
    """
    chans = calc.channels
    if len(chans) == 1:
        occ_a = chans[0][1] / 2.0
        occ_b = occ_a.copy()
    else:
        occ_a, occ_b = chans[0][1].copy(), chans[1][1].copy()
    occ = [occ_a.copy(), occ_b.copy()]
    if triplet_flip:
        occ[1][tr.hole] = 0.0
        occ[0][tr.particle] = 1.0
    else:
        occ[tr.spin][tr.hole] = 0.0
        occ[tr.spin][tr.particle] = 1.0
    return occ


def _moved_targets(calc: Calculation, tr: Transition, triplet_flip: bool = False) -> tuple[list[int], list[int]]:
    """α and β electrons per d set after the move."""
    ta, tb = list(calc.target_alpha), list(calc.target_beta)
    if triplet_flip:
        tb[tr.lower] -= 1
        ta[tr.upper] += 1
    else:
        exc = [ta, tb]
        exc[tr.spin][tr.lower] -= 1
        exc[tr.spin][tr.upper] += 1
    return ta, tb


def run_delta_scf(calc: Calculation, tr: Transition, folder: Path | None = None, progress: Progress | None = None,
                  restricted_open: Calculation | None = None,
                  restricted_open_transition: Transition | None = None) -> DeltaScfRecord:
    """The excited SCF(s) of the state estimator for ``tr`` (see module docstring).

    When the unrestricted excited SCF fails and a verified restricted-open ground (with the
    same transition chosen on it) is given, the ΔSCF is redone restricted-open and measured
    from that ground.  Why: with UKS the emptied α d orbital can lie below filled ligand
    levels and the maximum-overlap occupations then flip between hole and ligand orbitals;
    in ROKS the singly occupied d levels lie above the ligand pairs and the excited SCF
    converges (measured on cis-[CrCl2(NH3)4]+, see analysis.splitting.hole_under_filled_ligands).
    """
    t0 = time.perf_counter()
    exc_a, exc_b = _moved_targets(calc, tr)
    closed = len(calc.channels) == 1 and calc.multiplicity == 1
    run = run_excited(calc, excited_occupations(calc, tr), exc_a, exc_b, out_dir=folder,
                      tag="state-mixed" if closed else "state", progress=progress)
    ground, route, notes = calc, str(run.targeting), list(run.notes + run.warnings)
    ro, ro_tr = restricted_open, restricted_open_transition
    if not run.ok and not closed and calc.unrestricted and ro is not None:
        same = ro_tr is not None and (ro_tr.spin, ro_tr.lower, ro_tr.upper) == (tr.spin, tr.lower, tr.upper)
        ro_run = None
        if same:
            ro_run = run_excited(ro, excited_occupations(ro, ro_tr), exc_a, exc_b, out_dir=folder,
                                 tag="state-restricted-open", progress=progress)
            ro_notes = ro_run.notes + ro_run.warnings
        else:
            ro_notes = ["restricted-open ground has no matching transition"]
        verified = ro_run is not None and ro_run.ok
        notes.append(f"unrestricted ΔSCF not verified; redone restricted-open ({type(ro.mf).__name__}): "
                     "Δ = E(excited) − E(ground), both restricted-open" + ("" if verified else " — not verified"))
        notes += ro_notes
        if verified:
            run, ground, route = ro_run, ro, f"{ro_run.targeting} (restricted open)"
    triplet = None
    if closed and run.ok:
        ta3, tb3 = _moved_targets(calc, tr, triplet_flip=True)
        triplet = run_excited(calc, excited_occupations(calc, tr, triplet_flip=True), ta3, tb3, multiplicity=3,
                              out_dir=folder, tag="state-triplet", progress=progress)
    return DeltaScfRecord(tr, run, ground, route, triplet, tuple(notes), time.perf_counter() - t0)


def restricted_open_ground(calc: Calculation, folder: Path | None = None,
                           progress: Progress | None = None) -> tuple[Calculation | None, str]:
    """ROKS/ROHF ground state converged from the UKS/UHF density: (calculation, type name) or (None, why)."""
    with pyscf_threads(calc.setup.threads), pyscf_warnings_to_notes():
        mf = make_mean_field(calc.mol, calc.complex, calc.setup, restricted=True, template=calc.mf)
        mf.conv_tol = RESTRICTED_OPEN_CONV_TOL
        if folder is not None:
            mf.chkfile = str(Path(folder) / "restricted-open.chk")
        mf, rungs = run_ladder(mf, calc.mf.make_rdm1(), progress, rungs=("diis", "level-shift"))
        if not mf.converged:
            return None, "did not converge: no value"
        projector = orthogonal_projector(calc.mol)
        ok, picks, found = check_configuration(mf, calc.complex, projector, calc.target_alpha, calc.target_beta)
        if not ok:
            return None, f"landed in {found}: no value"
        align_manifold_to_frame(mf, picks, calc.complex.d_sets, projector)
    ro = replace(calc, mf=mf, picks=picks, rungs=rungs, converged=True, configuration_verified=True,
                 configuration_found=found, stability_lowest=None, stability_followed=0, targeting=None,
                 notes=[], warnings=[])
    return ro, type(mf).__name__


def tda_block(calc: Calculation, tr: Transition | None) -> str | None:
    """PySCF's irrep name of the d–d transition's symmetry block (hole ⊗ particle), or None."""
    if tr is None or not calc.mol.symmetry:
        return None
    ch = 0 if len(calc.channels) == 1 else tr.spin
    syms = calc.abelian_labels(ch)
    if syms is None:
        return None
    from pyscf import symm

    group = calc.mol.groupname
    return symm.irrep_id2name(group, symm.irrep_name2id(group, syms[tr.hole]) ^ symm.irrep_name2id(group,
                                                                                                syms[tr.particle]))


def run_tda(calc: Calculation, n_roots: int, block: str | None = None) -> TdaRecord:
    """``n_roots`` TDA roots (CIS for HF) of the ground state, in symmetry ``block`` when given."""
    t0 = time.perf_counter()
    method = "CIS" if calc.setup.is_hf else "TDA"
    with pyscf_threads(calc.setup.threads), pyscf_warnings_to_notes():
        try:
            td = calc.mf.TDA()
        except Exception as exc:
            return TdaRecord(method, n_roots, block, error=f"TDA not available for this reference ({exc})")
        td.nstates = n_roots
        td.conv_tol = TDA_CONV_TOL
        td.verbose = 0
        notes: list[str] = []
        if block is not None:
            td.wfnsym = block
            notes.append(f"roots asked in the {block} block of {calc.mol.groupname} (the d–d transition's)")
        try:
            td.kernel()
        except Exception as exc:  # e.g. a solvent model without a response kernel
            return TdaRecord(method, n_roots, block, error=f"TDA failed ({type(exc).__name__}: {exc})",
                             seconds=time.perf_counter() - t0)
        converged = tuple(bool(c) for c in np.atleast_1d(td.converged))
        if not all(converged):
            notes.append("not every TDA root converged; unconverged roots dropped")
        try:
            f_osc = tuple(float(f) for f in td.oscillator_strength())
        except Exception:
            f_osc = (None,) * len(td.e)
    amplitudes = tuple(tuple(np.asarray(x) for x in (xy[0] if isinstance(xy[0], (tuple, list)) else (xy[0],)))
                       for xy in td.xy)
    return TdaRecord(method, n_roots, block, tuple(float(e) for e in td.e), converged, amplitudes, f_osc,
                     tuple(notes), None, time.perf_counter() - t0)
