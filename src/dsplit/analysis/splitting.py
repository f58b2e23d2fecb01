"""The Splitting stage: Δ measured three ways from a verified ground state.

- ``orbital``: gaps between the manifold's d sets from orbital energies; for open
  shells from restricted-open (ROKS/ROHF) orbitals, with α and β gaps beside it
  and always a warning (they are not the splitting).
- ``state``: ΔSCF — one electron moved from the lower to the upper d set in the
  same spin, converged with fixed block occupations or maximum overlap (Gilbert,
  Besley & Gill, J. Phys. Chem. A 112, 13164 (2008)), minus the ground state.
  Closed shells: the open-shell singlet by the spin-purification sum rule
  E(S) = 2E(M_S=0 determinant) − E(T) (Ziegler, Rauk & Baerends, Theor. Chim.
  Acta 43, 261 (1977)).
- ``excitation``: the lowest TDA roots (CIS for HF; Hirata & Head-Gordon, Chem.
  Phys. Lett. 314, 291 (1999)) in the symmetry block of the d–d transition,
  kept when hole and particle lie in the lower and the upper d set of the band
  (t2g → eg in Oh; excitations inside one split set are listed, not used).

Components of the ΔSCF hole and particle are chosen so that the excited determinant is a
pure component of the band's upper state.  The symmetry of a determinant over frame d
orbitals in D4h ⊂ Oh (D2d ⊂ Td) is the product of its occupied orbitals' irreps per spin
(z² A1, x²−y² B1, xy B2, the xz+yz pair A2; xz or yz alone spans E and is not used).  Only
B2 is pure T2 (T2 → B2 + E, T1 → A2 + E); A1 and B1 are E components (Eg → A1g + B1g) and
A2 is pure T1 — correlation tables, e.g. Atkins, Child & Phillips, Tables for Group Theory
(from memory).  Example, Oh d3: |xy xz yz| (B1g, ⁴A2g) → |xz yz x²−y²| is B2g ⊂ ⁴T2g,
while → |xz yz z²| is A2g, a ⁴T1g component.  When the MOs mix the frame's d orbitals
(lower symmetry) or no single move reaches the upper state, the highest MO of the lower set
→ the lowest of the upper set instead.  An unrestricted ΔSCF that fails is redone
restricted-open (see ``state_estimator``).
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any

import numpy as np

from dsplit.models.units import cm1_to_nm, ev_to_cm1, hartree_to_cm1, hartree_to_ev, hartree_to_kjmol
from dsplit.qc.dcharacter import d_weights, orthogonal_projector
from dsplit.qc.engine import Calculation, _channels, run_excited
from dsplit.qc.targeting import orbital_symmetries

#: frame d orbitals as (B1-like, B2-like) bits of D4h ⊂ Oh and D2d ⊂ Td: A1 00, B1 10, B2 01, A2 11
FRAME_BITS = {"z2": (0, 0), "x2-y2": (1, 0), "xy": (0, 1)}
_SUBGROUP_IRREP = {(0, 0): "A1", (1, 0): "B1", (0, 1): "B2", (1, 1): "A2"}
#: pure components of the band's upper state in that subgroup (see module docstring)
PURE_COMPONENTS = {"T2": {(0, 1)}, "T1": {(1, 1)}, "E": {(0, 0), (1, 0)}}
#: upper state of the first spin-allowed band, (family, spin) → {dⁿ: Oh/Td irrep}; Tanabe–Sugano
#: diagrams as in models.bands (Lever 1984, from memory); low-spin d4, d5, d7 are not targeted
UPPER_STATE = {("octahedral", "high"): {1: "E", 2: "T2", 3: "T2", 4: "T2", 6: "E", 7: "T2", 8: "T2", 9: "T2"},
               ("octahedral", "low"): {6: "T1", 1: "E", 2: "T2", 3: "T2", 8: "T2", 9: "T2"},
               ("tetrahedral", "high"): {1: "T2", 2: "T2", 3: "T2", 4: "E", 6: "T2", 7: "T2", 8: "T2", 9: "E"}}
#: a component is chosen only when every manifold MO is this much one frame d orbital (share of its
#: d weight); else (e.g. cis-[CrCl2(NH3)4]+, whose t2g MOs are xy ± xz, 0.5 each) the highest lower-set
#: MO → the lowest upper-set MO, as ties between mixed MOs picked hole and particle arbitrarily
PURE_SHARE = 0.75
ROOT_DEGENERACY_EV = 0.02  # roots closer than this count as one band
D_D_THRESHOLD = 0.5  # weight of manifold→manifold pairs in a root for it to count as d–d
#: Davidson tolerance of the TDA roots (PySCF's default is 1e-5): measured on [TiF6]3− B3LYP/3-21G PCM,
#: the same three roots to 1e-4 eV in 0.53× the time
TDA_CONV_TOL = 1e-4
#: energy tolerance of the restricted-open SCF behind the orbital estimator: its orbital gradient
#: (PySCF: √tol ≈ 3e-4 Eh) bounds the orbital-energy error to about 0.01 eV, below what that estimator means
RESTRICTED_OPEN_CONV_TOL = 1e-7


def energy_block(delta_hartree: float | None) -> dict[str, float | None]:
    if delta_hartree is None:
        return {"delta_eV": None, "delta_cm1": None, "delta_kJmol": None}
    return {"delta_eV": hartree_to_ev(delta_hartree), "delta_cm1": hartree_to_cm1(delta_hartree),
            "delta_kJmol": hartree_to_kjmol(delta_hartree)}


@dataclass
class Transition:
    spin: int  # 0 α, 1 β
    lower: int  # index of the lower d set
    upper: int
    hole: int  # MO index
    particle: int
    component: str | None = None  # e.g. "B2g ⊂ T2g (D4h)" when a pure component was chosen


def determinant_bits(alpha: set[str], beta: set[str]) -> tuple[int, int] | None:
    """D4h/D2d symmetry bits of a determinant from its occupied frame d orbitals per spin (None: E)."""
    bits = [0, 0]
    for occupied in (alpha, beta):
        pair = {"xz", "yz"} & occupied
        if len(pair) == 1:
            return None
        for orb in occupied:
            b = FRAME_BITS.get(orb, (1, 1) if orb == "xz" else (0, 0))  # the xz+yz pair counts once, as A2
            bits = [bits[0] ^ b[0], bits[1] ^ b[1]]
    return bits[0], bits[1]


def _frame_orbital(share: np.ndarray, m: int) -> str | None:
    """The frame d orbital MO ``m`` is ≥ PURE_SHARE of (share: d weights normalised per MO), else None."""
    from dsplit.models.aom import D_ORBITALS

    k = int(np.argmax(share[:, m]))
    return D_ORBITALS[k] if share[k, m] >= PURE_SHARE else None


def _frame_orbitals(w: np.ndarray, mos) -> dict[int, str] | None:
    """MO → its frame d orbital when every MO is ≥ PURE_SHARE one of them, else None."""
    share = w / np.maximum(w.sum(axis=0), 1e-12)
    out = {int(m): _frame_orbital(share, int(m)) for m in mos}
    return None if any(v is None for v in out.values()) else out


def _occupied_frames(calc: Calculation, ch: int, limit: float, share: np.ndarray) -> set[str] | None:
    """Frame d orbitals occupied in one spin of the ground determinant (None: not decidable).

    A d set that is full or empty in this spin is taken whole, so MOs that mix its frame
    orbitals (z² and x²−y² share one block of D2h and D2) do not matter there; a partly
    filled set needs each of its MOs to be one frame orbital.
    """
    occ = _channels(calc.mf)[ch][1]
    out: set[str] = set()
    for dset, pick in zip(calc.complex.d_sets, calc.picks[ch]):
        filled = [m for m in pick.mo_indices if occ[m] > limit]
        if len(filled) == len(pick.mo_indices):
            out |= set(dset.orbitals)
        elif filled:
            frames = [_frame_orbital(share, m) for m in filled]
            if None in frames or any(_frame_orbital(share, m) is None for m in pick.mo_indices):
                return None
            out |= set(frames)
    return out


def _pure_component_pair(calc: Calculation, spin: int, holes: list[int], parts: list[int],
                         target: str) -> tuple[int, int, str] | None:
    """(hole, particle, component) whose excited determinant is a pure component of ``target``.

    Only hole and particle MOs that are each one frame d orbital are tried.
    """
    chans = _channels(calc.mf)
    projector = orthogonal_projector(calc.mol)
    occupied: list[set[str]] = []
    shares = []
    for s_ in (0, 1):
        ch = 0 if len(chans) == 1 else s_
        w = d_weights(calc.mol, chans[ch][0], projector)
        share = w / np.maximum(w.sum(axis=0), 1e-12)
        limit = (0.5 if s_ == 0 else 1.5) if len(chans) == 1 else 0.5
        frames = _occupied_frames(calc, ch, limit, share)
        if frames is None:
            return None
        occupied.append(frames)
        shares.append(share)
    e = chans[0 if len(chans) == 1 else spin][2]
    allowed = PURE_COMPONENTS[target]
    found = []
    for h in holes:
        for p in parts:
            fh, fp = _frame_orbital(shares[spin], h), _frame_orbital(shares[spin], p)
            if fh is None or fp is None or fh not in occupied[spin]:
                continue
            moved = [set(o) for o in occupied]
            moved[spin] = (moved[spin] - {fh}) | {fp}
            bits = determinant_bits(*moved)
            if bits in allowed:
                found.append((-e[h], e[p], h, p, bits))
    if not found:
        return None
    _, _, h, p, bits = min(found)
    return h, p, _SUBGROUP_IRREP[bits]


def geometry_family(cx) -> str:
    return {"octahedral": "octahedral", "tetrahedral": "tetrahedral"}.get(cx.geometry, cx.geometry)


def _spin_kind(calc: Calculation) -> str:
    """'high' when the state has the most unpaired electrons dⁿ allows, else 'low'."""
    return "high" if calc.multiplicity == calc.complex.counts.multiplicities[-1] else "low"


def align_manifold_to_frame(calc: Calculation) -> None:
    """Rotate each degenerate d level's MOs onto the frame d orbitals, in place (see dcharacter)."""
    from dsplit.qc.dcharacter import align_degenerate_to_frame

    projector = orthogonal_projector(calc.mol)
    full_occ = np.asarray(calc.mf.mo_occ)
    for ch, (c, occ, e) in enumerate(_channels(calc.mf)):
        align_degenerate_to_frame(calc.mol, c, e, occ if full_occ.ndim == 2 else full_occ, calc.picks[ch],
                                  calc.complex.d_sets, projector, orbital_symmetries(calc.mf, c))


def choose_transition(calc: Calculation) -> Transition | None:
    """The first d–d excitation in one spin: highest filled lower set → lowest set with room.

    Degenerate d MOs are first aligned with the frame orbitals (:func:`align_manifold_to_frame`;
    density and energies unchanged), so the pure-component rule sees z² and x²−y², not a mix.
    """
    align_manifold_to_frame(calc)
    cx = calc.complex
    sets = cx.d_sets
    per_spin = [calc.target_alpha, calc.target_beta]
    chans = _channels(calc.mf)
    for spin in (0, 1):
        counts = per_spin[spin]
        for upper in range(len(sets)):
            if counts[upper] >= sets[upper].degeneracy:
                continue
            lowers = [i for i in range(upper) if counts[i] > 0]
            if not lowers:
                continue
            lower = lowers[-1]
            ch = 0 if len(chans) == 1 else spin
            c, occ, e = chans[ch]
            occ_spin = occ / 2.0 if len(chans) == 1 else occ
            picks = calc.picks[ch]
            holes = [m for m in picks[lower].mo_indices if occ_spin[m] > 0.5]
            parts = [m for m in picks[upper].mo_indices if occ_spin[m] < 0.5]
            if not holes or not parts:
                continue
            hole = particle = component = None
            target = UPPER_STATE.get((geometry_family(cx), _spin_kind(calc)), {}).get(cx.d_count)
            if target is not None:
                pure = _pure_component_pair(calc, spin, holes, parts, target)
                if pure is not None:
                    hole, particle, irrep = pure
                    sub = "D4h" if geometry_family(cx) == "octahedral" else "D2d"
                    g = "g" if sub == "D4h" else ""
                    component = f"{irrep}{g} ⊂ {target}{g} ({sub})"
            if hole is None:
                hole = max(holes, key=lambda m: e[m])
                particle = min(parts, key=lambda m: e[m])
            return Transition(spin, lower, upper, int(hole), int(particle), component)
    return None


def hole_under_filled_ligands(calc: Calculation, tr: Transition) -> list[int]:
    """Filled MOs of the hole's spin and symmetry block, outside the d manifold, above the hole.

    In an unrestricted SCF the emptied d orbital then lies below filled ligand levels it can
    mix with, and the excited SCF tends to swap the hole with them (measured on
    cis-[CrCl2(NH3)4]+, B3LYP/def2-SVP: α t2g at −12.5 eV under three same-block Cl 3p levels up
    to −9.9 eV; none of the other demo complexes has one).
    """
    chans = _channels(calc.mf)
    ch = 0 if len(chans) == 1 else tr.spin
    c, occ, e = chans[ch]
    occ_spin = occ / 2.0 if len(chans) == 1 else occ
    manifold = {m for pick in calc.picks[ch] for m in pick.mo_indices}
    syms = orbital_symmetries(calc.mf, c)
    return [m for m in range(len(e)) if occ_spin[m] > 0.5 and m not in manifold and e[m] > e[tr.hole]
            and (syms is None or syms[m] == syms[tr.hole])]


def _excited_occupations(calc: Calculation, tr: Transition, triplet_flip: bool = False):
    """Per-spin occupation vectors (α, β) over the ground MOs with the electron moved."""
    chans = _channels(calc.mf)
    if len(chans) == 1:
        occ_a = chans[0][1] / 2.0
        occ_b = occ_a.copy()
    else:
        occ_a, occ_b = chans[0][1].copy(), chans[1][1].copy()
    occ = [occ_a.copy(), occ_b.copy()]
    if triplet_flip:  # closed shell → M_S = 1 triplet: β hole, α particle
        occ[1][tr.hole] = 0.0
        occ[0][tr.particle] = 1.0
    else:
        occ[tr.spin][tr.hole] = 0.0
        occ[tr.spin][tr.particle] = 1.0
    return occ


def state_estimator(calc: Calculation, tr: Transition, folder, progress=None,
                    restricted_open: tuple[Calculation | None, str] | None = None) -> dict[str, Any]:
    """ΔSCF for the chosen transition (see module docstring).

    When the unrestricted excited SCF fails and a restricted-open ground state is given,
    the ΔSCF is redone restricted-open: E_RO(excited) − E_RO(ground).  Why: with UKS the
    emptied α d orbital can lie below filled ligand levels (measured on cis-[CrCl2(NH3)4]+,
    B3LYP/def2-SVP: α t2g at −0.46 Eh under Cl 3p at −0.36 Eh), and the maximum-overlap
    occupations then flip between hole and ligand orbitals; in ROKS the singly occupied d
    levels lie above the ligand pairs (−0.32 against −0.36 Eh) and the excited SCF converges.
    Such a buried hole (:func:`hole_under_filled_ligands`) is noted with the result: even a
    converged unrestricted ΔSCF then depends on the route (same complex, B3LYP/STO-3G, both
    verified: unrestricted 2.55 eV, restricted-open 1.77 eV), so neither goes first by rule.
    """
    t0 = time.perf_counter()
    ta, tb = list(calc.target_alpha), list(calc.target_beta)
    exc = [ta, tb]
    exc[tr.spin][tr.lower] -= 1
    exc[tr.spin][tr.upper] += 1
    closed = len(_channels(calc.mf)) == 1 and calc.multiplicity == 1
    run = run_excited(calc, _excited_occupations(calc, tr), exc[0], exc[1], out_dir=folder, tag="state-mixed"
                      if closed else "state", progress=progress)
    ground, method, notes = calc, run.targeting, run.notes + run.warnings
    buried = hole_under_filled_ligands(calc, tr) if calc.unrestricted and not closed else []
    if buried:
        e = _channels(calc.mf)[tr.spin][2]  # unrestricted: one channel per spin
        notes.append(f"caution: the unrestricted hole lies under {len(buried)} filled same-block ligand "
                     f"orbital(s) (up to {hartree_to_ev(max(e[m] for m in buried) - e[tr.hole]):.2f} eV above it); "
                     "the excited SCF can mix hole and ligand orbitals, and its value depends on the route")
    if not run.ok and not closed and calc.unrestricted and restricted_open is not None and restricted_open[0]:
        ro = restricted_open[0]
        ro_run, ro_notes = _restricted_open_state(ro, tr, exc, folder, progress)
        notes.append(f"unrestricted ΔSCF not verified; redone restricted-open ({restricted_open[1]}): "
                     f"Δ = E(excited) − E(ground), both restricted-open"
                     + ("" if ro_run is not None else " — not verified"))
        notes += ro_notes
        if ro_run is not None:
            run, ground, method = ro_run, ro, f"{ro_run.targeting} (restricted open)"
    labels = [s.label for s in calc.complex.d_sets]
    out: dict[str, Any] = {"excited_configuration": " ".join(f"{l}^{a + b}" for l, a, b in zip(labels, *exc)),
                           "transition": f"{labels[tr.lower]} → {labels[tr.upper]} ({'αβ'[tr.spin]})",
                           "component": tr.component,
                           "method": method, "energy_ground_hartree": ground.energy_hartree,
                           "converged": run.converged, "configuration_verified": run.configuration_verified,
                           "notes": notes}
    ok = run.ok
    delta = run.energy_hartree - ground.energy_hartree if ok else None
    if closed and ok:
        ta3, tb3 = list(calc.target_alpha), list(calc.target_beta)
        tb3[tr.lower] -= 1
        ta3[tr.upper] += 1
        trip = run_excited(calc, _excited_occupations(calc, tr, triplet_flip=True), ta3, tb3, multiplicity=3,
                           out_dir=folder, tag="state-triplet", progress=progress)
        out["energy_mixed_hartree"] = run.energy_hartree
        out["triplet"] = {"converged": trip.converged, "configuration_verified": trip.configuration_verified,
                          **energy_block(trip.energy_hartree - calc.energy_hartree if trip.ok else None)}
        if trip.ok:
            delta = 2 * run.energy_hartree - trip.energy_hartree - calc.energy_hartree
            out["spin_purification"] = "E(singlet) = 2E(mixed) − E(triplet)"
        else:
            delta = None
            out["notes"].append("triplet ΔSCF not verified: singlet not purified, no value")
    out["energy_excited_hartree"] = run.energy_hartree if ok else None
    out.update(energy_block(delta))
    out["seconds"] = time.perf_counter() - t0
    return out


def _restricted_open_state(ro: Calculation, tr: Transition, exc: list[list[int]], folder,
                           progress=None) -> tuple[Calculation | None, list[str]]:
    """(verified restricted-open excited SCF or None, notes) for the same transition as ``tr``."""
    ro_tr = choose_transition(ro)
    if ro_tr is None or (ro_tr.spin, ro_tr.lower, ro_tr.upper) != (tr.spin, tr.lower, tr.upper):
        return None, ["restricted-open ground has no matching transition"]
    run = run_excited(ro, _excited_occupations(ro, ro_tr), exc[0], exc[1], out_dir=folder,
                      tag="state-restricted-open", progress=progress)
    return (run if run.ok else None), run.notes + run.warnings


def _root_analysis(td, calc: Calculation, table, k: int,
                   tr: Transition | None) -> tuple[float, float, list[tuple[int, int, int, float]]]:
    """(weight of manifold→manifold pairs, weight of lower-set→upper-set pairs, dominant pairs) of root k.

    The band weight counts only pairs from the transition's lower d set to its upper one
    (t2g → eg in Oh): excitations inside a set split by a lower-symmetry density (t2g → t2g
    of an open t2g shell) are d–d too, but they are not the ligand-field band.
    """
    x = td.xy[k][0]
    xs = x if isinstance(x, (tuple, list)) else (x,)
    chans = _channels(calc.mf)
    total, dd, band, pairs = 0.0, 0.0, 0.0, []
    for spin, xm in enumerate(xs):
        xm = np.asarray(xm)
        ch = min(spin, len(chans) - 1)
        occ = chans[ch][1]
        occ_idx = np.where(occ > 0)[0]
        vir_idx = np.where(occ == 0)[0]
        man = set(table.channels[min(spin, len(table.channels) - 1)].manifold.indices)
        lower = upper = set()
        if tr is not None and calc.picks and len(calc.picks) > ch:
            lower = set(calc.picks[ch][tr.lower].mo_indices)
            upper = set(calc.picks[ch][tr.upper].mo_indices)
        w = xm ** 2
        total += w.sum()
        for i_loc, a_loc in zip(*np.nonzero(w > 1e-3)):
            i, a = int(occ_idx[i_loc]), int(vir_idx[a_loc])
            pairs.append((spin, i, a, float(w[i_loc, a_loc])))
            if i in man and a in man:
                dd += float(w[i_loc, a_loc])
            if i in lower and a in upper:
                band += float(w[i_loc, a_loc])
    pairs.sort(key=lambda p: -p[3])
    if total <= 0:
        return 0.0, 0.0, pairs[:3]
    return dd / total, band / total, pairs[:3]


#: roots asked for, in turn, until one belongs to the ligand-field band: charge-transfer roots of the same
#: block can lie below it (cis-[CrCl2(NH3)4]+: Cl → Cr roots under the t2g → eg ones).  Two first: each
#: Davidson vector costs a response build ([TiF6]3− B3LYP/def2-SVP: 18.0 s for 2 roots, 26.4 s for 3,
#: the same band root, second of the two)
ROOT_COUNTS = (2, 6, 12)


def excitation_estimator(calc: Calculation, table, tr: Transition | None,
                         root_counts: tuple[int, ...] = ROOT_COUNTS) -> dict[str, Any]:
    """Lowest TDA (CIS for HF) roots in the d–d symmetry block; d–d roots kept.

    Asks for ``root_counts[0]`` roots and for the next count only when none of them is a
    ligand-field band root, so a band above charge-transfer roots is still found.
    """
    t0 = time.perf_counter()
    notes: list[str] = []
    roots: list[dict[str, Any]] = []
    for n in root_counts:
        run = _tda_roots(calc, table, tr, n)
        if "error" in run:
            return {**energy_block(None), "notes": notes + [run["error"]]}
        roots, run_notes = run["roots"], run["notes"]
        if any(r["ligand_field_band"] for r in roots) or tr is None:
            break
    notes += run_notes
    if len(roots) > root_counts[0]:
        notes.append(f"no band root among the first {root_counts[0]}; {len(roots)} roots asked")
    dd = [r for r in roots if r["ligand_field_band"]]
    if any(r["d_d"] and not r["ligand_field_band"] for r in roots):
        notes.append("d–d roots inside one d set (a set split by the state's lower symmetry) are listed "
                     "but are not the ligand-field band")
    first = None
    if dd:
        e0 = dd[0]["energy_eV"]
        band = [r["energy_eV"] for r in dd if r["energy_eV"] - e0 < ROOT_DEGENERACY_EV]
        first = float(np.mean(band)) / hartree_to_ev(1.0)
    else:
        notes.append("no root of the lower → upper d-set band among the roots computed: no value")
    return {**energy_block(first), "method": "CIS" if calc.setup.is_hf else "TDA", "roots": roots, "notes": notes,
            "seconds": time.perf_counter() - t0}


def _tda_roots(calc: Calculation, table, tr: Transition | None, n_roots: int) -> dict[str, Any]:
    """{'roots': [...], 'notes': [...]} of ``n_roots`` TDA roots, or {'error': why}."""
    mf = calc.mf
    notes: list[str] = []
    try:
        td = mf.TDA()
    except Exception as exc:
        return {"error": f"TDA not available for this reference ({exc})"}
    td.nstates = n_roots
    td.conv_tol = TDA_CONV_TOL
    td.verbose = 0
    if tr is not None and calc.mol.symmetry:
        c = _channels(mf)[0 if len(_channels(mf)) == 1 else tr.spin][0]
        syms = orbital_symmetries(mf, c)
        if syms is not None:
            from pyscf import symm

            hole_ir = symm.irrep_name2id(calc.mol.groupname, syms[tr.hole])
            part_ir = symm.irrep_name2id(calc.mol.groupname, syms[tr.particle])
            td.wfnsym = symm.irrep_id2name(calc.mol.groupname, hole_ir ^ part_ir)
            notes.append(f"roots asked in the {td.wfnsym} block of {calc.mol.groupname} (the d–d transition's)")
    try:
        td.kernel()
    except Exception as exc:  # e.g. a solvent model without a response kernel
        return {"error": f"TDA failed ({type(exc).__name__}: {exc})"}
    if not all(np.atleast_1d(td.converged)):
        notes.append("not every TDA root converged; unconverged roots dropped")
    try:
        f_osc = td.oscillator_strength()
    except Exception:
        f_osc = [None] * len(td.e)
    roots = []
    for k, e in enumerate(td.e):
        if not np.atleast_1d(td.converged)[k]:
            continue
        frac, band_frac, pairs = _root_analysis(td, calc, table, k, tr)
        labs = []
        for spin, i, a, w in pairs[:2]:
            ch = table.channels[min(spin, len(table.channels) - 1)]
            hl = ch.donor_irreps.get(i, ch.irreps[i])
            pl = ch.donor_irreps.get(a, ch.irreps[a])
            labs.append(f"{hl}→{pl}{'αβ'[spin] if len(table.channels) == 2 else ''} ({w:.2f})")
        e_cm1 = hartree_to_cm1(float(e))
        roots.append({"energy_eV": hartree_to_ev(float(e)), "energy_cm1": e_cm1, "wavelength_nm": cm1_to_nm(e_cm1),
                      "oscillator_strength": None if f_osc[k] is None else float(f_osc[k]),
                      "symmetry": str(getattr(td, "wfnsym", None) or ""), "d_d": frac >= D_D_THRESHOLD,
                      "d_d_weight": frac, "band_weight": band_frac, "ligand_field_band": band_frac >= D_D_THRESHOLD,
                      "pairs": labs})
    return {"roots": roots, "notes": notes}


def _set_gap(sets, lower_label: str, upper_label: str) -> float | None:
    lo = [s for s in sets if s.irrep == lower_label]
    hi = [s for s in sets if s.irrep == upper_label]
    if not lo or not hi:
        return None
    return (np.mean([s.energy for s in hi]) - np.mean([s.energy for s in lo]))


def orbital_estimator(calc: Calculation, table, tr: Transition | None, folder, progress=None,
                      restricted_open: tuple[Calculation | None, str] | None = None) -> dict[str, Any]:
    """Orbital-energy gaps of the manifold (ROKS/ROHF for open shells; α, β beside).

    ``restricted_open``: the (calculation, note) of :func:`restricted_open_ground` when
    already run; computed here otherwise.
    """
    t0 = time.perf_counter()
    labels = [s.label for s in calc.complex.d_sets]
    if tr is not None:
        lower, upper = labels[tr.lower], labels[tr.upper]
    else:
        lower, upper = labels[0], labels[-1]
    out: dict[str, Any] = {"gap": f"{upper} − {lower}", "notes": []}
    per_spin = {}
    for ch in table.channels:
        g = _set_gap(ch.manifold.sets, lower, upper)
        per_spin[ch.spin] = energy_block(g)
    out["per_spin"] = per_spin
    if len(table.channels) == 1:
        out.update(per_spin["restricted"])
        return out
    out["warning"] = ("open shell: orbital-energy gaps are not the splitting (α and β gaps differ; occupied and "
                      "empty levels feel different exchange); use the state estimator")
    ro, why = restricted_open if restricted_open is not None else restricted_open_ground(calc, folder, progress)
    out.update(_restricted_open_gap(ro, why, lower, upper))
    out["seconds"] = time.perf_counter() - t0
    return out


def restricted_open_ground(calc: Calculation, folder, progress=None) -> tuple[Calculation | None, str]:
    """ROKS/ROHF ground state converged from the UKS/UHF density: (calculation, type name) or (None, why)."""
    from dataclasses import replace

    from dsplit.qc.engine import check_configuration
    from dsplit.qc.ladder import run_ladder
    from dsplit.qc.setup import make_mean_field

    mf = make_mean_field(calc.mol, calc.complex, calc.setup, restricted=True, template=calc.mf)
    mf.conv_tol = RESTRICTED_OPEN_CONV_TOL
    mf.chkfile = str(folder / "restricted-open.chk")
    mf, rungs = run_ladder(mf, calc.mf.make_rdm1(), progress, rungs=("diis", "level-shift"))
    if not mf.converged:
        return None, "did not converge: no value"
    ok, picks, found = check_configuration(mf, calc.complex, orthogonal_projector(calc.mol), calc.target_alpha,
                                           calc.target_beta)
    if not ok:
        return None, f"landed in {found}: no value"
    ro = replace(calc, mf=mf, picks=picks, rungs=rungs, converged=True, configuration_verified=True,
                 configuration_found=found, stability_lowest=None, stability_followed=0, targeting=None,
                 notes=[], warnings=[])
    return ro, type(mf).__name__


def _restricted_open_gap(ro: Calculation | None, why: str, lower: str, upper: str) -> dict[str, Any]:
    """Gap from the ROKS/ROHF orbitals."""
    if ro is None:
        return {**energy_block(None), "restricted_open": why}
    e = np.asarray(ro.mf.mo_energy)
    by_label = {p.label: p.mo_indices for p in ro.picks[0]}
    if lower not in by_label or upper not in by_label:
        return {**energy_block(None), "restricted_open": "sets not found"}
    gap = float(np.mean(e[by_label[upper]]) - np.mean(e[by_label[lower]]))
    sets = [{"label": p.label, "degeneracy": len(p.mo_indices), "energy_eV": hartree_to_ev(float(np.mean(e[p.mo_indices])))}
            for p in ro.picks[0]]
    return {**energy_block(gap), "restricted_open": why, "restricted_open_sets": sets}


def estimate_splitting(spec, cx, calc: Calculation, table, folder, progress=None) -> dict[str, Any]:
    """All three estimators, the ligand-field comparison and the fragment levels (result.json keys)."""
    from dsplit.qc.engine import quiet_pyscf

    with quiet_pyscf():
        return _estimate_splitting(spec, cx, calc, table, folder, progress)


def _estimate_splitting(spec, cx, calc: Calculation, table, folder, progress=None) -> dict[str, Any]:
    from dsplit.analysis.fragments import fragment_levels
    from dsplit.analysis.orbitals import _mol_indices
    from dsplit.models.bands import band_meaning
    from dsplit.models.comparison import compare

    t0 = time.perf_counter()
    tr = choose_transition(calc)
    family = geometry_family(cx)
    spin = "high" if calc.multiplicity == cx.counts.multiplicities[-1] else "low"
    try:
        meaning = band_meaning(cx.d_count, family, spin)
        meaning_doc = {"measures_delta_directly": meaning.measures_delta_directly, "text": meaning.text,
                       "racah_b_enters": meaning.racah_b_enters, "has_spin_allowed_band": meaning.has_spin_allowed_band}
    except Exception as exc:
        meaning_doc = {"measures_delta_directly": False, "text": f"no rule for {family} ({exc})",
                       "racah_b_enters": True, "has_spin_allowed_band": tr is not None}
    # open shell: one restricted-open ground state serves the orbital estimator and, if needed, the state one
    ro = restricted_open_ground(calc, folder, progress) if len(table.channels) == 2 else None
    splitting: dict[str, Any] = {"orbital": orbital_estimator(calc, table, tr, folder, progress, restricted_open=ro)}
    if tr is None:
        reason = f"d^{cx.d_count} at 2S+1 = {calc.multiplicity}: no spin-allowed d–d excitation"
        splitting["state"] = {**energy_block(None), "notes": [reason]}
        splitting["excitation"] = {**energy_block(None), "notes": [reason]}
    else:
        splitting["state"] = state_estimator(calc, tr, folder, progress, restricted_open=ro)
        splitting["excitation"] = excitation_estimator(calc, table, tr)
    measures = meaning_doc["text"]
    for name in ("state", "excitation"):
        splitting[name]["measures"] = measures
    splitting["orbital"]["measures"] = "one-electron gap between the d sets (not a state energy)"
    donors = [pl.atom_indices[0] for pl in cx.ligands if pl.ligand.donor != "X"]
    levels = fragment_levels(calc, _mol_indices(calc, donors),
                             [np.asarray(pl.direction) for pl in cx.ligands if pl.ligand.donor != "X"])
    models, checks = compare(spec, cx, calc, table, splitting)
    return {"splitting": splitting, "band_meaning": meaning_doc, "models": models, "checks": checks,
            "level_diagram": levels, "splitting_seconds": time.perf_counter() - t0}
