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
restricted-open (``dsplit.qc.excited.run_delta_scf``).

This module is pure: the calculations (restricted-open ground, ΔSCF, TDA) are run by
``dsplit.qc.excited`` and handed in as records; here the transition is chosen and the
records are turned into estimates.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from dsplit.qc.records import Calculation, DeltaScfRecord, TdaRecord, Transition
from dsplit.units import cm1_to_nm, hartree_to_cm1, hartree_to_ev, hartree_to_kjmol

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
#: ground terms that are orbitally non-degenerate, (family, spin) → {dⁿ: irrep} (Tanabe–Sugano diagrams,
#: Lever 1984, from memory); for them the band's excitation operator has the symmetry ground ⊗ upper state
#: (A2g ⊗ T2g = T1g for Oh d3 and d8), which a TDA root of the band must carry
NONDEGENERATE_GROUND = {("octahedral", "high"): {3: "A2g", 8: "A2g"}, ("octahedral", "low"): {6: "A1g", 3: "A2g",
                                                                                                8: "A2g"},
                        ("tetrahedral", "high"): {2: "A2", 7: "A2"}}
#: a component is chosen only when every manifold MO is this much one frame d orbital (share of its
#: d weight); else (e.g. cis-[CrCl2(NH3)4]+, whose t2g MOs are xy ± xz, 0.5 each) the highest lower-set
#: MO → the lowest upper-set MO, as ties between mixed MOs picked hole and particle arbitrarily
PURE_SHARE = 0.75
ROOT_DEGENERACY_EV = 0.02  # roots closer than this count as one band
D_D_THRESHOLD = 0.5  # weight of manifold→manifold pairs in a root for it to count as d–d
BAND_SYMMETRY_MIN_WEIGHT = 0.05  # below this lower→upper weight a root's band-operator symmetry is not shown


def energy_block(delta_hartree: float | None) -> dict[str, float | None]:
    if delta_hartree is None:
        return {"delta_eV": None, "delta_cm1": None, "delta_kJmol": None}
    return {"delta_eV": hartree_to_ev(delta_hartree), "delta_cm1": hartree_to_cm1(delta_hartree),
            "delta_kJmol": hartree_to_kjmol(delta_hartree)}


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
    occ = calc.channels[ch][1]
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
    chans = calc.channels
    occupied: list[set[str]] = []
    shares = []
    for s_ in (0, 1):
        ch = 0 if len(chans) == 1 else s_
        w = calc.d_weights(ch)
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


def choose_transition(calc: Calculation) -> Transition | None:
    """The first d–d excitation in one spin: highest filled lower set → lowest set with room.

    The calculation stage has aligned degenerate d MOs with the frame orbitals
    (``qc.dcharacter.align_manifold_to_frame``), so the pure-component rule sees z² and
    x²−y², not a mix.
    """
    cx = calc.complex
    sets = cx.d_sets
    per_spin = [calc.target_alpha, calc.target_beta]
    chans = calc.channels
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
    chans = calc.channels
    ch = 0 if len(chans) == 1 else tr.spin
    c, occ, e = chans[ch]
    occ_spin = occ / 2.0 if len(chans) == 1 else occ
    manifold = {m for pick in calc.picks[ch] for m in pick.mo_indices}
    syms = calc.abelian_labels(ch)
    return [m for m in range(len(e)) if occ_spin[m] > 0.5 and m not in manifold and e[m] > e[tr.hole]
            and (syms is None or syms[m] == syms[tr.hole])]


def state_estimate(calc: Calculation, record: DeltaScfRecord) -> dict[str, Any]:
    """The state estimator's numbers from its ΔSCF record (closed shells: spin-purified singlet)."""
    tr, run, ground = record.transition, record.excited, record.ground
    notes = list(record.notes)
    buried = hole_under_filled_ligands(calc, tr) if calc.unrestricted and not record.closed_shell else []
    if buried:
        e = calc.channels[tr.spin][2]  # unrestricted: one channel per spin
        notes.append(f"caution: the unrestricted hole lies under {len(buried)} filled same-block ligand "
                     f"orbital(s) (up to {hartree_to_ev(max(e[m] for m in buried) - e[tr.hole]):.2f} eV above it); "
                     "the excited SCF can mix hole and ligand orbitals, and its value depends on the route")
    labels = [s.label for s in calc.complex.d_sets]
    exc_a, exc_b = list(calc.target_alpha), list(calc.target_beta)
    moved = [exc_a, exc_b]
    moved[tr.spin][tr.lower] -= 1
    moved[tr.spin][tr.upper] += 1
    out: dict[str, Any] = {"excited_configuration": " ".join(f"{lab}^{a + b}" for lab, a, b in zip(labels, *moved)),
                           "transition": f"{labels[tr.lower]} → {labels[tr.upper]} ({'αβ'[tr.spin]})",
                           "component": tr.component, "method": record.route,
                           "energy_ground_hartree": ground.energy_hartree,
                           "converged": run.converged, "configuration_verified": run.configuration_verified,
                           "notes": notes}
    delta = run.energy_hartree - ground.energy_hartree if run.ok else None
    trip = record.triplet
    if trip is not None:
        out["energy_mixed_hartree"] = run.energy_hartree
        out["triplet"] = {"converged": trip.converged, "configuration_verified": trip.configuration_verified,
                          **energy_block(trip.energy_hartree - calc.energy_hartree if trip.ok else None)}
        if trip.ok:
            delta = 2 * run.energy_hartree - trip.energy_hartree - calc.energy_hartree
            out["spin_purification"] = "E(singlet) = 2E(mixed) − E(triplet)"
        else:
            delta = None
            out["notes"].append("triplet ΔSCF not verified: singlet not purified, no value")
    out["energy_excited_hartree"] = run.energy_hartree if run.ok else None
    out.update(energy_block(delta))
    out["seconds"] = record.seconds
    return out


def _root_analysis(xs, calc: Calculation, table, tr: Transition | None
                   ) -> tuple[float, float, list[tuple[int, int, int, float]], list[np.ndarray]]:
    """(manifold→manifold weight, lower-set→upper-set weight, dominant pairs, band operators) of a root.

    ``xs``: the root's X amplitudes per spin (occupied × virtual), as in :class:`TdaRecord`.

    The band weight counts only pairs from the transition's lower d set to its upper one
    (t2g → eg in Oh): excitations inside a set split by a lower-symmetry density (t2g → t2g
    of an open t2g shell) are d–d too, but they are not the ligand-field band.  The band
    operators (one 5×5 matrix per spin, over the frame d orbitals) are the root's lower →
    upper amplitudes M = Σ_ia X_ia f_i f_aᵀ with f the MOs' frame-d amplitudes.
    """
    chans = calc.channels
    total, dd, band, pairs, operators = 0.0, 0.0, 0.0, [], []
    for spin, xm in enumerate(xs):
        xm = np.asarray(xm)
        ch = min(spin, len(chans) - 1)
        occ = chans[ch][1]
        occ_idx = np.where(occ > 0)[0]
        vir_idx = np.where(occ == 0)[0]
        man = set(table.channels[min(spin, len(table.channels) - 1)].manifold.indices)
        lower: list[int] = []
        upper: list[int] = []
        if tr is not None and calc.picks and len(calc.picks) > ch:
            lower = [m for m in calc.picks[ch][tr.lower].mo_indices if m in set(occ_idx)]
            upper = [m for m in calc.picks[ch][tr.upper].mo_indices if m in set(vir_idx)]
        w = xm ** 2
        total += w.sum()
        for i_loc, a_loc in zip(*np.nonzero(w > 1e-3)):
            i, a = int(occ_idx[i_loc]), int(vir_idx[a_loc])
            pairs.append((spin, i, a, float(w[i_loc, a_loc])))
            if i in man and a in man:
                dd += float(w[i_loc, a_loc])
            if i in lower and a in upper:
                band += float(w[i_loc, a_loc])
        if lower and upper:
            rows = np.searchsorted(occ_idx, lower)
            cols = np.searchsorted(vir_idx, upper)
            block = xm[np.ix_(rows, cols)]
            operators.append(calc.d_amplitudes(ch, lower) @ block @ calc.d_amplitudes(ch, upper).T)
    pairs.sort(key=lambda p: -p[3])
    if total <= 0:
        return 0.0, 0.0, pairs[:3], operators
    return dd / total, band / total, pairs[:3], operators


def operator_irrep_weights(operators: list[np.ndarray], group, ops: np.ndarray) -> dict[str, float]:
    """Share of each irrep of ``group`` in one-electron excitation operators over the frame d orbitals.

    M transforms as M → D(g) M D(g)ᵀ (D the real-d representation, models.multiplet);
    the weight of Γ is ⟨M, P_Γ M⟩ / ⟨M, M⟩ with the character projector P_Γ (projection
    operators, e.g. Cotton, Chemical Applications of Group Theory, ch. 6 — from memory),
    summed over spins.
    """
    from dsplit.models.multiplet import d_representation

    d = d_representation(ops)
    overlap = np.zeros(len(ops))
    norm = 0.0
    for m in operators:
        overlap += np.einsum("ij,gik,gjl,kl->g", m, d, d, m)
        norm += float(np.sum(m * m))
    if norm <= 1e-12:
        return {}
    return {r.label: float(group.projector_weights(r.label) @ overlap / norm) for r in group.irreps}


def band_operator_irrep(calc: Calculation) -> tuple[str, object] | None:
    """(irrep label, point group) the band's excitation operator must carry, or None when not decidable.

    Decidable for the idealised donor sets (the complex's exact group is the polyhedron's)
    with an orbitally non-degenerate ground term (:data:`NONDEGENERATE_GROUND`).
    """
    from dsplit.symmetry import point_group

    cx = calc.complex
    key = (geometry_family(cx), _spin_kind(calc))
    ground = NONDEGENERATE_GROUND.get(key, {}).get(cx.d_count)
    upper = UPPER_STATE.get(key, {}).get(cx.d_count)
    if ground is None or upper is None or cx.exact_point_group != cx.point_group:
        return None
    group = point_group(cx.point_group)
    parity = "g" if any(r.label.endswith("g") for r in group.irreps) else ""
    chi = group.op_chars(ground.lower()) * group.op_chars(upper.lower() + parity)
    found = [lab for lab, n in group.decompose(chi).items() if n > 0.5]
    return (found[0], group) if len(found) == 1 else None


#: roots asked for, in turn, until one belongs to the ligand-field band: charge-transfer roots of the same
#: block can lie below it (cis-[CrCl2(NH3)4]+: Cl → Cr roots under the t2g → eg ones); two first, since each
#: Davidson vector costs a response build (benchmarks/report_cost.py)
ROOT_COUNTS = (2, 6, 12)


def tda_roots(record: TdaRecord, calc: Calculation, table, tr: Transition | None) -> list[dict[str, Any]]:
    """The converged roots of a TDA record, each with its d–d and band weights and leading pairs.

    A root counts as the ligand-field band when most of it is lower → upper d-set pairs and,
    where the band's symmetry is decidable (:func:`band_operator_irrep`), when its lower →
    upper part has that symmetry more than any other (a ³T1g root of Oh d8 is t2g → eg as
    well, but it is the second band).
    """
    wanted = band_operator_irrep(calc) if tr is not None else None
    roots = []
    for k, e in enumerate(record.energies_hartree):
        if not record.converged[k]:
            continue
        frac, band_frac, pairs, operators = _root_analysis(record.amplitudes[k], calc, table, tr)
        labs = []
        for spin, i, a, w in pairs[:2]:
            ch = table.channels[min(spin, len(table.channels) - 1)]
            hl = ch.donor_irreps.get(i, ch.irreps[i])
            pl = ch.donor_irreps.get(a, ch.irreps[a])
            labs.append(f"{hl}→{pl}{'αβ'[spin] if len(table.channels) == 2 else ''} ({w:.2f})")
        e_cm1 = hartree_to_cm1(float(e))
        f_osc = record.oscillator_strengths[k]
        is_band = band_frac >= D_D_THRESHOLD
        root = {"energy_eV": hartree_to_ev(float(e)), "energy_cm1": e_cm1, "wavelength_nm": cm1_to_nm(e_cm1),
                "oscillator_strength": f_osc, "symmetry": record.symmetry_block or "",
                "d_d": frac >= D_D_THRESHOLD, "d_d_weight": frac, "band_weight": band_frac}
        if wanted is not None and operators and band_frac > BAND_SYMMETRY_MIN_WEIGHT:
            label, group = wanted
            weights = operator_irrep_weights(operators, group, group.ops)
            best = max(weights, key=weights.get) if weights else None
            root["operator_symmetry"] = best
            root["operator_symmetry_weight"] = weights.get(best) if best else None
            root["band_operator_symmetry"] = label
            is_band = is_band and best == label
        root["ligand_field_band"] = is_band
        root["pairs"] = labs
        roots.append(root)
    return roots


def has_band_root(record: TdaRecord, calc: Calculation, table, tr: Transition | None) -> bool:
    """Whether the record holds a root of the lower → upper d-set band (ask for more roots if not)."""
    return record.error is None and any(r["ligand_field_band"] for r in tda_roots(record, calc, table, tr))


def excitation_estimate(records: list[TdaRecord], calc: Calculation, table, tr: Transition | None) -> dict[str, Any]:
    """Lowest lower → upper d-set band root of the last TDA record (CIS for HF); d–d roots listed.

    ``records``: the TDA requests in the order they ran (more roots each time no band root
    was among them, :data:`ROOT_COUNTS`).
    """
    notes: list[str] = []
    last = records[-1]
    if last.error is not None:
        return {**energy_block(None), "notes": [last.error]}
    roots = tda_roots(last, calc, table, tr)
    notes += list(last.notes)
    if len(records) > 1:
        notes.append(f"no band root among the first {records[0].n_roots}; {last.n_roots} roots asked")
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
    return {**energy_block(first), "method": last.method, "roots": roots, "notes": notes,
            "seconds": sum(r.seconds for r in records)}


def _set_gap(sets, lower_label: str, upper_label: str) -> float | None:
    lo = [s for s in sets if s.irrep == lower_label]
    hi = [s for s in sets if s.irrep == upper_label]
    if not lo or not hi:
        return None
    return (np.mean([s.energy for s in hi]) - np.mean([s.energy for s in lo]))


def orbital_estimate(calc: Calculation, table, tr: Transition | None,
                     restricted_open: tuple[Calculation | None, str] | None = None) -> dict[str, Any]:
    """Orbital-energy gaps of the manifold (ROKS/ROHF for open shells; α, β beside).

    ``restricted_open``: the (calculation, note) of ``qc.excited.restricted_open_ground``
    (open shells only).
    """
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
    ro, why = restricted_open if restricted_open is not None else (None, "not computed")
    out.update(_restricted_open_gap(ro, why, lower, upper))
    return out


def _restricted_open_gap(ro: Calculation | None, why: str, lower: str, upper: str) -> dict[str, Any]:
    """Gap from the ROKS/ROHF orbitals."""
    if ro is None:
        return {**energy_block(None), "restricted_open": why}
    e = np.asarray(ro.mf.mo_energy)
    by_label = {p.label: p.mo_indices for p in ro.picks[0]}
    if lower not in by_label or upper not in by_label:
        return {**energy_block(None), "restricted_open": "sets not found"}
    gap = float(np.mean(e[by_label[upper]]) - np.mean(e[by_label[lower]]))
    sets = [{"label": p.label, "degeneracy": len(p.mo_indices),
             "energy_eV": hartree_to_ev(float(np.mean(e[p.mo_indices])))} for p in ro.picks[0]]
    return {**energy_block(gap), "restricted_open": why, "restricted_open_sets": sets}


def band_meaning_doc(calc: Calculation, tr: Transition | None) -> dict[str, Any]:
    """What the first spin-allowed band of this dⁿ, geometry and spin state measures (models.bands)."""
    from dsplit.models.bands import band_meaning

    cx = calc.complex
    spin = "high" if calc.multiplicity == cx.counts.multiplicities[-1] else "low"
    try:
        m = band_meaning(cx.d_count, geometry_family(cx), spin)
        return {"measures_delta_directly": m.measures_delta_directly, "text": m.text,
                "racah_b_enters": m.racah_b_enters, "has_spin_allowed_band": m.has_spin_allowed_band}
    except (ValueError, KeyError) as exc:
        return {"measures_delta_directly": False, "text": f"no rule for {geometry_family(cx)} ({exc})",
                "racah_b_enters": True, "has_spin_allowed_band": tr is not None}


def no_band_estimate(calc: Calculation) -> dict[str, Any]:
    """The value of an estimator that has no spin-allowed d–d excitation to measure."""
    return {**energy_block(None),
            "notes": [f"d^{calc.complex.d_count} at 2S+1 = {calc.multiplicity}: no spin-allowed d–d excitation"]}
