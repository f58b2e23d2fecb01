"""The multiplet calculation: every dⁿ state at once, from a verified ground state.

State-averaged CASSCF with the n d electrons in the five d-based MOs (equal weights over all
states of the chosen multiplicities that arise from dⁿ), then strongly contracted NEVPT2 per
state (Angeli, Cimiraglia, Evangelisti, Leininger & Malrieu, J. Chem. Phys. 114, 10252 (2001);
``pyscf.mrpt.NEVPT``).  This is the electronic-structure half of the ab initio ligand-field
route (Atanasov, Ganyushin, Sivalingam & Neese, Struct. Bond. 143, 149 (2012)); the fit of the
dⁿ ligand-field Hamiltonian to the states is pure and lives in ``models``.

- Start orbitals: a restricted ground (RKS/ROKS/RHF/ROHF) gives its own orbitals; an
  unrestricted one gives natural orbitals of its total density (Löwdin, Phys. Rev. 97, 1474
  (1955)), each occupation block (≈2, ≈1, ≈0) canonicalised by the spin-averaged Fock matrix so
  that the empty d-based orbitals are ordinary low virtuals.  The five active orbitals are the
  d-based picks of ``qc.dcharacter`` (valence-d weight per d set), the core is every other
  doubly occupied orbital.
- The CI in the five orbitals is exact per multiplicity (``qc.active_ci``): every state has
  pure spin by construction and no root can be missed.
- Continuum solvent: the ground state's PCM is kept.  During the orbital optimisation the
  reaction field follows the state-averaged density (PySCF's CASSCF–solvent coupling,
  ``pyscf.solvent.PCM(mc)``; the field is added to the one-electron Hamiltonian); it is then
  frozen for every state's CASCI and NEVPT2, and each state's energy is the free energy in that
  one field, E_i = ⟨H + V⟩_i − tr(V D_SA) + E_PCM[D_SA].  The average over all states of one
  spin of dⁿ puts n/5 electrons in each active orbital whatever the orbitals (that set of states
  is invariant under rotations of the five orbitals), so D_SA has the complex's symmetry.  The
  ground state's own density is not used: an unrestricted determinant of an orbitally
  degenerate ground term (d¹ Oh) is not symmetric, and its frozen field split the ²T2g level of
  [TiF6]3− (B3LYP/3-21G) by 39 cm⁻¹ and ²Eg by 65 cm⁻¹ (exactly degenerate in the gas phase).
- Density fitting: the ground state's DF integrals serve the CASSCF (``mcscf.df``) and the
  NEVPT2 (PySCF's DF-NEVPT2 path when its memory test allows it; otherwise exact integrals,
  said in the notes).
- Verification: the CASSCF converged, every active orbital keeps valence-d weight ≥
  ``ACTIVE_D_WEIGHT_MIN`` (a rotation onto ligand orbitals or onto the outer "double-shell"
  d functions drops it), each multiplicity has its state count, and the CASCI energies in the
  final orbitals reproduce the state-averaged CASSCF ones.  Otherwise no state is returned.
"""

from __future__ import annotations

import copy
import time
from dataclasses import dataclass, replace
from math import comb
from pathlib import Path

import numpy as np

from dsplit.errors import InputError
from dsplit.qc.ladder import Progress
from dsplit.qc.setup import make_mean_field
from dsplit.qc.solvents import Solvent

N_ACTIVE = 5
#: an active orbital must stay at least half valence-metal-d (common practice: "d-based" = majority d).
#: Measured valence-d weights of the final active orbitals (t2g / eg, PCM water): [TiF6]3− (3-21G) 0.97 /
#: 0.88, [CrF6]3− (STO-3G) 0.99 / 0.89, [MoCl6]3− (def2-SVP) 0.92 / 0.78; the most d-like ligand MOs of
#: [MoCl6]3− carry 0.27–0.30 and its outer-d virtuals ≤ 0.08, so 0.5 separates them with room either side
ACTIVE_D_WEIGHT_MIN = 0.5
CASSCF_CONV_TOL = 1e-8  # Eh; state energies are read to 1e-6 Eh (0.2 cm⁻¹)
CASSCF_CONV_TOL_GRAD = 1e-4
CASSCF_MAX_MACRO = 50
#: CASCI energies in the final orbitals must reproduce the SA-CASSCF state energies to this (Eh)
ENERGY_CONSISTENCY_EH = 1e-6
#: states closer than this (Eh) count as one degenerate level (symmetry-exact degeneracies are ≪ 1e-6)
DEGENERATE_EH = 1e-5
OCCUPATION_BLOCKS = (1.5, 0.5)  # natural occupations above 1.5: doubly, below 0.5: empty


@dataclass(frozen=True)
class MultipletState:
    multiplicity: int  # 2S+1
    ms2: int  # 2·M_S of the CI vector (M_S = S)
    energy_casscf_hartree: float
    energy_nevpt2_hartree: float | None
    ci: np.ndarray  # (n_alpha_strings, n_beta_strings) over the 5 active orbitals, PySCF fci string order


@dataclass(frozen=True)
class MultipletRecord:
    n_electrons: int  # active electrons = dⁿ
    active_d_projection: np.ndarray  # (5, 5) orthogonal; column a = active orbital a over the frame d orbitals
    active_d_weight: tuple[float, ...]  # valence metal-d weight of each active orbital
    states: tuple[MultipletState, ...]
    converged: bool  # CASSCF converged and every NEVPT2 asked for finished
    verified: bool  # active orbitals stayed d-based, the state count and spins are right
    method: str
    solvent: str
    timings: dict[str, float]
    notes: tuple[str, ...]
    warnings: tuple[str, ...]


def state_count(n_d: int, multiplicity: int) -> int:
    """Number of dⁿ states of spin S = (multiplicity − 1)/2 (each counted once, at M_S = S).

    The determinants with M_S = S hold every state of spin ≥ S once, so the count is
    N(M_S = S) − N(M_S = S + 1) with N = C(5, n_α)·C(5, n_β) (common practice, branching rule).
    """
    def n_det(ms2: int) -> int:
        if (n_d + ms2) % 2 or abs(ms2) > n_d:
            return 0
        na, nb = (n_d + ms2) // 2, (n_d - ms2) // 2
        return comb(N_ACTIVE, na) * comb(N_ACTIVE, nb) if na <= N_ACTIVE and nb <= N_ACTIVE else 0

    return n_det(multiplicity - 1) - n_det(multiplicity + 1)


def multiplicities_for(n_d: int, ground_multiplicity: int, extra: tuple[int, ...] = ()) -> tuple[int, ...]:
    """The multiplicities to compute: the ground one, the ``extra`` ones, and for a ground
    multiplicity with a single state (high-spin d5, ⁶S) the next lower one, which holds the bands."""
    for m in (ground_multiplicity, *extra):
        if state_count(n_d, m) < 1:
            allowed = [k for k in range(1, 7) if state_count(n_d, k) > 0]
            raise InputError("extra_multiplicities", f"d{n_d} has no states of multiplicity {m}; "
                                                     f"choose from {allowed}")
    out = [ground_multiplicity, *[m for m in extra if m != ground_multiplicity]]
    if state_count(n_d, ground_multiplicity) == 1 and ground_multiplicity - 2 not in out \
            and state_count(n_d, ground_multiplicity - 2) > 0:
        out.append(ground_multiplicity - 2)
    return tuple(dict.fromkeys(out))


@dataclass
class _Start:
    mo_coeff: np.ndarray
    occupation: np.ndarray  # 2/1/0
    energy: np.ndarray
    source: str


def start_orbitals(calc) -> _Start:
    """One orbital set for the CASSCF (see the module docstring)."""
    from scipy.linalg import eigh

    mf = calc.mf
    if not calc.unrestricted:
        return _Start(np.asarray(mf.mo_coeff), np.asarray(mf.mo_occ, dtype=float), np.asarray(mf.mo_energy),
                      "orbitals of the restricted ground state" + (" (open shell)" if (mf.mo_occ == 1).any() else ""))
    s = mf.get_ovlp()
    dm = np.asarray(mf.make_rdm1())
    n, c = eigh(s @ (dm[0] + dm[1]) @ s, s)
    n, c = n[::-1], c[:, ::-1]
    # the converged Fock matrices from their own eigenpairs, F_σ = S C_σ ε_σ C_σᵀ S (C_σᵀ S C_σ = 1):
    # no new Fock build (measured 14 s of XC and PCM work on [V(H2O)6]3+ def2-SVP)
    f_avg = sum(s @ (np.asarray(mf.mo_coeff[k]) * np.asarray(mf.mo_energy[k])) @ np.asarray(mf.mo_coeff[k]).T @ s
                for k in (0, 1)) / 2
    occ = np.where(n > OCCUPATION_BLOCKS[0], 2.0, np.where(n > OCCUPATION_BLOCKS[1], 1.0, 0.0))
    mo, energy = np.empty_like(c), np.empty(len(n))
    for value in (2.0, 1.0, 0.0):
        idx = np.where(occ == value)[0]
        if len(idx):
            e, u = np.linalg.eigh(c[:, idx].T @ f_avg @ c[:, idx])
            mo[:, idx], energy[idx] = c[:, idx] @ u, e
    order = np.argsort(energy, kind="stable")
    return _Start(mo[:, order], occ[order], energy[order],
                  "natural orbitals of the unrestricted ground density, canonicalised per occupation block")


def _solvent_model(mf):
    """A copy of the ground state's solvent object (its cached integrals shared, its state not), or None."""
    solvent = getattr(mf, "with_solvent", None)
    if solvent is None:
        return None
    own = copy.copy(solvent)
    own._intermediates = dict(solvent._intermediates or {})
    own.frozen = False
    return own


def _solvent_words(solvent) -> str:
    if solvent is None:
        return "gas phase, as the ground state"
    return (f"PCM (ε = {solvent.eps:g}): the reaction field follows the state-averaged CASSCF density during "
            "the orbital optimisation, then is frozen for every state's CASCI and NEVPT2 (the solvent does not "
            "repolarise state by state)")


def _integral_mean_field(calc, reaction_field: np.ndarray | None):
    """A restricted HF object that only supplies integrals: DF tensor and point charges of the
    ground state, no solvent wrapper (the frozen reaction field goes into get_hcore)."""
    setup = replace(calc.setup, theory="HF", is_hf=True,
                    solvent=Solvent("none", None, "frozen reaction field added to the one-electron Hamiltonian"))
    mf = make_mean_field(calc.mol, calc.complex, setup, restricted=True, template=calc.mf)
    if reaction_field is not None:
        bare = mf.get_hcore

        def get_hcore(mol=None):
            return bare(mol) + reaction_field

        mf.get_hcore = get_hcore
    return mf


def _density_fitted(mc, calc):
    from pyscf.mcscf import df as mcscf_df

    with_df = getattr(calc.mf, "with_df", None)
    if not calc.setup.density_fitting or with_df is None:
        return mc
    return mcscf_df.density_fit(mc, with_df=with_df)


def _active_picks(calc, start: _Start, projector) -> tuple[np.ndarray, np.ndarray]:
    """(core, active) MO indices of the start orbitals, or raise ValueError with the reason."""
    from dsplit.qc.dcharacter import d_weights, pick_d_based

    cx = calc.complex
    weights = d_weights(calc.mol, start.mo_coeff, projector)
    picks = pick_d_based(weights, start.occupation, cx.d_sets, start.energy)
    active = sorted(m for p in picks for m in p.mo_indices)
    electrons = float(np.sum(start.occupation[active]))
    if len(active) != N_ACTIVE or round(electrons) != cx.d_count:
        raise ValueError(f"the d-based start orbitals hold {electrons:g} electrons, not d{cx.d_count}")
    rest = np.setdiff1d(np.arange(len(start.occupation)), active)
    open_rest = rest[start.occupation[rest] == 1.0]
    if len(open_rest):
        raise ValueError(f"{len(open_rest)} singly occupied orbital(s) outside the d-based set")
    core = rest[start.occupation[rest] == 2.0]
    return core, np.array(active)


def active_d_projection(mol, active_mo: np.ndarray, projector: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(P, w): P (5, 5) orthogonal, column a = active orbital a over the frame real d orbitals
    (rows in D_ORBITALS order), from the valence-d amplitudes Löwdin-orthonormalised (the closest
    orthogonal matrix, U Vᵀ of their SVD); w = valence metal-d weight of each active orbital."""
    from dsplit.models.aom import D_ORBITALS
    from dsplit.qc.dcharacter import metal_d_indices

    amp = projector @ active_mo
    idx = metal_d_indices(mol, valence_only=True)
    rows = []
    for k in D_ORBITALS:
        block = amp[idx[k]]  # (valence shells, 5): one shell for every basis the project uses
        u, _, _ = np.linalg.svd(block, full_matrices=False)
        rows.append(u[:, 0] @ block * np.sign(u[:, 0].sum() or 1.0))
    a = np.array(rows)
    u, _, vt = np.linalg.svd(a)
    weight = np.array([sum(float(np.sum(amp[idx[k], j] ** 2)) for k in D_ORBITALS) for j in range(amp.shape[1])])
    return u @ vt, weight


def _levels(energies: list[float]) -> list[list[int]]:
    """Indices grouped into degenerate levels (energy order)."""
    order = np.argsort(energies, kind="stable")
    groups: list[list[int]] = []
    for i in order:
        if groups and abs(energies[i] - energies[groups[-1][0]]) < DEGENERATE_EH:
            groups[-1].append(int(i))
        else:
            groups.append([int(i)])
    return groups


def run_multiplet(calc, *, extra_multiplicities: tuple[int, ...] = (), nevpt2: bool = True,
                  nevpt2_states: str | int | None = None, folder: Path | None = None,
                  progress: Progress | None = None) -> MultipletRecord:
    """SA-CASSCF(n, 5) over the dⁿ states, then NEVPT2 per state, from a verified ground ``calc``.

    ``extra_multiplicities``: states of other spins to include (the ground multiplicity is always
    in; a single-state ground multiplicity brings the next lower one).  ``nevpt2_states``:
    ``None`` (default, see ``DEFAULT_NEVPT2``), ``"levels"`` (one state per degenerate level of
    every computed multiplicity; its partners take the same correction), ``"all"``, or an int N
    (the N lowest levels of each multiplicity).  PySCF's output goes to ``folder/multiplet.log``.
    """
    import contextlib

    from dsplit.qc.resources import pyscf_threads, pyscf_warnings_to_notes

    if not calc.ok:
        raise ValueError("the multiplet calculation starts from a converged, verified ground state only")
    if calc.complex.d_count in (0, 10):
        raise ValueError(f"d{calc.complex.d_count} has no d–d states")
    selection = _selection(nevpt2_states)  # bad arguments fail before anything is written
    multiplicities_for(calc.complex.d_count, calc.multiplicity, tuple(extra_multiplicities))
    with pyscf_threads(calc.setup.threads), pyscf_warnings_to_notes(), (open(folder / "multiplet.log", "w") if folder is not None
                         else contextlib.nullcontext()) as log:
        return _run_multiplet(calc, tuple(extra_multiplicities), nevpt2, selection, log, progress)


#: default NEVPT2 selection (measured cost, see benchmarks/multiplet_cost.py)
DEFAULT_NEVPT2 = "levels"


def _run_multiplet(calc, extra, nevpt2, nevpt2_states, log, progress) -> MultipletRecord:
    from pyscf import lib
    from pyscf.mcscf import addons, mc1step

    from dsplit.qc.active_ci import SpinAdaptedCI, spin_multiplicity
    from dsplit.qc.dcharacter import orthogonal_projector

    n_d = calc.complex.d_count
    t_all = _now()
    timings: dict[str, float] = {}
    notes: list[str] = []
    warnings: list[str] = []
    lib.num_threads(calc.setup.threads)
    mults = multiplicities_for(n_d, calc.multiplicity, extra)
    counts = {m: state_count(n_d, m) for m in mults}
    if len(mults) > 1 and mults[-1] not in extra and counts[calc.multiplicity] == 1:
        notes.append(f"2S+1 = {calc.multiplicity} has one d{n_d} state; the {counts[mults[-1]]} states of "
                     f"2S+1 = {mults[-1]} are included (they hold the bands)")
    method = f"SA-CASSCF({n_d},5)" + ("/NEVPT2" if nevpt2 else "")

    def finish(states, converged, verified, proj, dweight, solvent_words):
        _lap(timings, "total", t_all)
        return MultipletRecord(n_electrons=n_d, active_d_projection=proj, active_d_weight=tuple(dweight),
                               states=tuple(states), converged=converged, verified=verified, method=method,
                               solvent=solvent_words, timings=timings, notes=tuple(notes),
                               warnings=tuple(warnings))

    t0 = _now()
    projector = orthogonal_projector(calc.mol)
    start = start_orbitals(calc)
    notes.append(f"start orbitals: {start.source}")
    empty = np.full((N_ACTIVE, N_ACTIVE), np.nan)
    try:
        core, active = _active_picks(calc, start, projector)
    except ValueError as exc:
        warnings.append(f"no active space: {exc}")
        _lap(timings, "start_orbitals", t0)
        return finish([], False, False, empty, [float("nan")] * N_ACTIVE, "not run")
    rest = np.setdiff1d(np.arange(start.mo_coeff.shape[1]), np.concatenate([core, active]))
    mo0 = np.hstack([start.mo_coeff[:, core], start.mo_coeff[:, active], start.mo_coeff[:, rest]])
    ncore = len(core)
    solvent = _solvent_model(calc.mf)
    if solvent is not None:  # the copy would print to the ground state's (closed) stream or the terminal
        _attach_log(solvent, log)
    solvent_words = _solvent_words(solvent)
    _lap(timings, "start_orbitals", t0)

    # --- state-averaged CASSCF ---
    t0 = _now()
    n_states = sum(counts.values())
    solvers = [SpinAdaptedCI(calc.mol, m, counts[m]) for m in mults]
    mc = _density_fitted(mc1step.CASSCF(_integral_mean_field(calc, None), N_ACTIVE, n_d), calc)
    mc = addons.state_average_mix_(mc, solvers, [1.0 / n_states] * n_states)
    if solvent is not None:
        # the field follows the state-averaged density; it starts from that of the start orbitals.  Measured
        # on [TiF6]3− (B3LYP/3-21G, PCM): 4 macro iterations, 21 JK builds, against 3 and 20 with the start
        # field frozen throughout — following it costs nothing worth saving
        from pyscf import solvent as pyscf_solvent

        c_core, c_act = mo0[:, :ncore], mo0[:, ncore:ncore + N_ACTIVE]
        solvent.kernel(2.0 * c_core @ c_core.T + n_d / N_ACTIVE * c_act @ c_act.T)
        mc = pyscf_solvent.PCM(mc, solvent_obj=solvent)
    mc.conv_tol, mc.conv_tol_grad, mc.max_cycle_macro = CASSCF_CONV_TOL, CASSCF_CONV_TOL_GRAD, CASSCF_MAX_MACRO
    mc.natorb = False
    _attach_log(mc, log)
    if progress is not None:
        last = [0.0]

        def callback(envs):
            e = float(envs.get("e_tot", 0.0))
            progress("multiplet CASSCF", int(envs.get("imacro", 0)), e, e - last[0])
            last[0] = e

        mc.callback = callback
    mc.kernel(mo0)
    _lap(timings, "casscf", t0)
    notes.append(f"SA-CASSCF over {n_states} states (" + ", ".join(f"{counts[m]} of 2S+1 = {m}" for m in mults)
                 + f"), equal weights; {ncore} doubly occupied core orbitals")
    proj, dweight = active_d_projection(calc.mol, mc.mo_coeff[:, ncore:ncore + N_ACTIVE], projector)
    if not mc.converged:
        warnings.append("SA-CASSCF did not converge: no states")
        return finish([], False, False, proj, dweight, solvent_words)

    verified = True
    low = [a for a, w in enumerate(dweight) if w < ACTIVE_D_WEIGHT_MIN]
    if low:
        verified = False
        warnings.append("active space rotated away from the metal d orbitals: valence-d weight "
                        + ", ".join(f"{dweight[a]:.2f}" for a in low) + f" < {ACTIVE_D_WEIGHT_MIN}")
    reaction_field, solvent_shift = None, 0.0
    if solvent is not None:  # freeze the field of the final state-averaged density
        c_core, c_act = mc.mo_coeff[:, :ncore], mc.mo_coeff[:, ncore:ncore + N_ACTIVE]
        d_sa = 2.0 * c_core @ c_core.T + n_d / N_ACTIVE * c_act @ c_act.T
        e_pcm, reaction_field = solvent.kernel(d_sa)
        solvent_shift = float(e_pcm) - float(np.einsum("ij,ji->", reaction_field, d_sa))
    mf_int = _integral_mean_field(calc, reaction_field)

    # --- per multiplicity: CASCI in the final orbitals (CI vectors, state energies), then NEVPT2 ---
    t0 = _now()
    cases = []
    sa_energies = list(np.ravel(mc.e_states))
    p0 = 0
    for m in mults:
        ci_solver = SpinAdaptedCI(calc.mol, m, counts[m])
        nelecas = ((n_d + m - 1) // 2, (n_d - m + 1) // 2)
        mc_ci = _density_fitted(_casci(mf_int, nelecas), calc)
        mc_ci.fcisolver = ci_solver
        mc_ci.canonicalization = False
        _attach_log(mc_ci, log)
        mc_ci.kernel(mc.mo_coeff)
        e_ci = np.atleast_1d(mc_ci.e_tot).astype(float)
        ci = mc_ci.ci if counts[m] > 1 else [mc_ci.ci]
        ci = [np.array(c, copy=True) for c in ci]
        if len(ci) != counts[m]:
            verified = False
            warnings.append(f"2S+1 = {m}: {len(ci)} states found, {counts[m]} expected")
        spins = [spin_multiplicity(c, N_ACTIVE, nelecas) for c in ci]
        if any(abs(s - m) > 1e-4 for s in spins):
            verified = False
            warnings.append(f"2S+1 = {m}: CI vectors of spin {sorted(set(round(s, 3) for s in spins))}")
        sa = np.sort(sa_energies[p0:p0 + counts[m]])
        if len(sa) == len(e_ci) and np.max(np.abs(np.sort(e_ci) - sa)) > ENERGY_CONSISTENCY_EH:
            verified = False
            warnings.append(f"2S+1 = {m}: CASCI energies differ from the SA-CASSCF ones by "
                            f"{np.max(np.abs(np.sort(e_ci) - sa)):.1e} Eh")
        p0 += counts[m]
        cases.append((m, nelecas, mc_ci, e_ci, ci))
    _lap(timings, "casci", t0)
    if not verified:
        return finish([], True, False, proj, dweight, solvent_words)

    t0 = _now()
    finished = True
    states: list[MultipletState] = []
    n_nevpt2 = 0
    for m, nelecas, mc_ci, e_ci, ci in cases:
        corrections: dict[int, float] = {}
        if nevpt2:
            for level in _nevpt2_levels(list(e_ci), nevpt2_states):
                root = level[0]
                try:
                    corr = _nevpt2_correction(mc_ci, ci, root, log)
                except Exception as exc:  # a failed perturbation step withholds NEVPT2, never the CASSCF states
                    finished = False
                    warnings.append(f"NEVPT2 of 2S+1 = {m} state {root} failed ({type(exc).__name__}: {exc})")
                    continue
                n_nevpt2 += 1
                if progress is not None:
                    progress("multiplet NEVPT2", n_nevpt2, float(e_ci[root] + corr + solvent_shift), 0.0)
                for k in (level if _share_levels(nevpt2_states) else [root]):
                    corrections[k] = corr
        for k in range(len(ci)):
            e_nev = float(e_ci[k] + corrections[k] + solvent_shift) if k in corrections else None
            states.append(MultipletState(multiplicity=m, ms2=m - 1,
                                         energy_casscf_hartree=float(e_ci[k] + solvent_shift),
                                         energy_nevpt2_hartree=e_nev, ci=ci[k]))
    _lap(timings, "nevpt2", t0)
    if n_nevpt2:
        timings["nevpt2_per_state"] = timings["nevpt2"] / n_nevpt2
        timings["nevpt2_per_state_cpu"] = timings["nevpt2_cpu"] / n_nevpt2
        timings["nevpt2_states"] = float(n_nevpt2)
        notes.append(f"NEVPT2 (strongly contracted) for {n_nevpt2} state(s): " + _nevpt2_words(nevpt2_states))
        notes.append(_nevpt2_integrals_note(mc_ci if cases else None, calc))
    states.sort(key=lambda s: s.energy_casscf_hartree)
    return finish(states, finished, True, proj, dweight, solvent_words)


def _now() -> tuple[float, float]:
    return time.perf_counter(), time.process_time()


def _lap(timings: dict[str, float], key: str, start: tuple[float, float]) -> None:
    """Wall seconds under ``key``, CPU seconds (all threads) under ``key + '_cpu'``."""
    timings[key] = time.perf_counter() - start[0]
    timings[key + "_cpu"] = time.process_time() - start[1]


def _attach_log(obj, log) -> None:
    if log is not None:
        obj.stdout, obj.verbose = log, 4
    else:
        obj.verbose = 0


def _casci(mf, nelecas):
    from pyscf.mcscf import casci

    return casci.CASCI(mf, N_ACTIVE, nelecas)


def _selection(nevpt2_states) -> str | int:
    sel = DEFAULT_NEVPT2 if nevpt2_states is None else nevpt2_states
    if sel not in ("levels", "all") and not (isinstance(sel, int) and not isinstance(sel, bool) and sel > 0):
        raise InputError("nevpt2_states", f"use 'levels', 'all' or a positive number of levels, not {sel!r}")
    return sel


def _share_levels(nevpt2_states) -> bool:
    return _selection(nevpt2_states) != "all"


def _nevpt2_levels(energies: list[float], nevpt2_states) -> list[list[int]]:
    sel = _selection(nevpt2_states)
    levels = _levels(energies)
    if sel == "all":
        return [[i] for group in levels for i in group]
    return levels if sel == "levels" else levels[:sel]


def _nevpt2_words(nevpt2_states) -> str:
    sel = _selection(nevpt2_states)
    if sel == "all":
        return "every state"
    which = "every degenerate level" if sel == "levels" else f"each of the {sel} lowest levels per multiplicity"
    return f"one state of {which}; its degenerate partners take the same correction"


def _nevpt2_correction(mc_ci, ci: list[np.ndarray], root: int, log) -> float:
    """SC-NEVPT2 correlation energy of one CASCI root (PySCF canonicalises per root)."""
    from pyscf import mrpt

    mc_ci.ci = [c.copy() for c in ci] if len(ci) > 1 else ci[0].copy()  # NEVPT rewrites the root it treats
    pt = mrpt.NEVPT(mc_ci, root=root)
    _attach_log(pt, log)
    return float(pt.kernel())


def _nevpt2_integrals_note(mc_ci, calc) -> str:
    """Which integrals PySCF's NEVPT2 used (its own test: DF only when its estimate fits current memory)."""
    from pyscf import lib
    from pyscf.mcscf.df import _DFCAS
    from pyscf.mrpt import dfnevpt2

    if mc_ci is None or not isinstance(mc_ci, _DFCAS):
        return "NEVPT2 with exact (not density-fitted) integrals: the ground state ran without DF"
    # PySCF 2.14 passes n_core + n_active as the orbital count to its estimate; the same here
    incore, outcore = dfnevpt2._mem_usage(mc_ci.ncore, N_ACTIVE, mc_ci.ncore + N_ACTIVE)
    now = lib.current_memory()[0]
    if incore < 0.9 * now or outcore < 0.9 * now:
        return "NEVPT2 with the ground state's density-fitting integrals"
    return "NEVPT2 with exact integrals (PySCF's memory test refused the density-fitted path)"
