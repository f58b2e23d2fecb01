"""The dⁿ ligand-field multiplet model: every state of dⁿ from a 5×5 ligand-field matrix + Racah B, C.

The Hamiltonian over the determinants of :mod:`.determinants` is

    H = Σ_pq h_pq E_pq + ½ Σ (pq|rs)(E_pq E_rs − δ_qr E_ps),   (pq|rs) = B T_B + C T_C (+ A T_A)

with h any real symmetric 5×5 one-electron ligand-field matrix over aom.D_ORBITALS (from Δ for
a geometry, the AOM or point charges) and the spherical repulsion of :mod:`.racah` (Griffith,
The Theory of Transition-Metal Ions, 1961, ch. 9; the strong- and weak-field limits of Tanabe &
Sugano, J. Phys. Soc. Jpn. 9, 753 (1954) — from memory).  A only shifts every state of dⁿ by
A·n(n−1)/2 and is left out.  Spin–orbit coupling is NOT included: states are pure spin
multiplets and spatial irreps of the point group (no double group, no J).

Each multiplicity 2S+1 is solved in the M_S = S block: the S = S eigenspace of S² there is
exactly the spin-S states.  When a point group is given (the operations in the frame of the d
orbitals; h must be invariant under them) the space is split further by the projectors
P_Γ = Σ_g (d_Γ/|G|) χ_Γ(g) R(g), where R(g) acts on determinants by the minors of the d-orbital
representation D(g)_ij = ⟨Q_i, g Q_j gᵀ⟩/⟨Q_i, Q_i⟩ (d_i(r) = rᵀ Q_i r, models.aom.QUADRATIC_FORMS; the
d orbitals are even, so improper operations act through their quadratic forms); each eigenvalue
in a Γ block then occurs d_Γ times and is one term ²ˢ⁺¹Γ (Cotton, Chemical Applications of Group
Theory, 3rd ed., 1990, ch. 4 and 9 — from memory).

The Hamiltonian is also a LINEAR combination of fixed matrices (:func:`hamiltonian_basis`): one
per unique element of h (15), one for B, one for C and the identity, so fits are linear least
squares.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

import numpy as np

from dsplit.models.aom import D_ORBITALS, QUADRATIC_FORMS
from dsplit.models.determinants import (configuration_of, sector_operators, spin_counts, spin_squared,
                                        string_minors, strings, two_body_matrix)
from dsplit.models.racah import racah_eri_basis

#: Upper-triangle index pairs (p ≤ q) of the 15 unique elements of h, row by row.
H_INDEX: tuple[tuple[int, int], ...] = tuple((p, q) for p in range(5) for q in range(p, 5))

#: C/B held when the data do not fix C: between the ratios of the Tanabe–Sugano diagrams (4.4–4.8;
#: Tanabe & Sugano, J. Phys. Soc. Jpn. 9, 753 (1954) — from memory)
DEFAULT_C_OVER_B = 4.5

SUPERSCRIPT = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")


def allowed_multiplicities(d_count: int) -> tuple[int, ...]:
    """2S+1 for dⁿ, ascending (S from (n mod 2)/2 to min(n, 10−n)/2)."""
    if not 1 <= d_count <= 9:
        raise ValueError(f"d^{d_count}: the multiplet model covers d1 … d9")
    return tuple(range(d_count % 2 + 1, min(d_count, 10 - d_count) + 2, 2))


# ----------------------------------------------------------------------------- Hamiltonian
@dataclass(frozen=True)
class HamiltonianBasis:
    """Fixed matrices of one (n_α, n_β) block: H = Σ_k h_k one_body[k] + B·b + C·c + A·a + E0·identity."""

    n_alpha: int
    n_beta: int
    one_body: np.ndarray  # (15, N, N): E_pp for p = q, E_pq + E_qp for p < q (H_INDEX order)
    b: np.ndarray
    c: np.ndarray
    a: np.ndarray  # = n(n−1)/2 · identity
    identity: np.ndarray

    def matrix(self, h: np.ndarray, b: float, c: float, a: float = 0.0) -> np.ndarray:
        h = np.asarray(h, dtype=float)
        coeffs = np.array([h[p, q] for p, q in H_INDEX])
        return np.tensordot(coeffs, self.one_body, axes=(0, 0)) + b * self.b + c * self.c + a * self.a


@lru_cache(maxsize=None)
def hamiltonian_basis(n_alpha: int, n_beta: int) -> HamiltonianBasis:
    """The fixed matrices of the (n_α, n_β) block (cached; module docstring)."""
    e = sector_operators(n_alpha, n_beta)
    one = np.array([e[p, p] if p == q else e[p, q] + e[q, p] for p, q in H_INDEX])
    t_a, t_b, t_c = racah_eri_basis()
    mats = [two_body_matrix(t, n_alpha, n_beta) for t in (t_a, t_b, t_c)]
    basis = HamiltonianBasis(n_alpha, n_beta, one, mats[1], mats[2], mats[0], np.eye(e.shape[2]))
    for arr in (basis.one_body, basis.b, basis.c, basis.a, basis.identity):
        arr.setflags(write=False)
    return basis


def hamiltonian(h: np.ndarray, b: float, c: float, d_count: int, ms2: int, a: float = 0.0) -> np.ndarray:
    """H of dⁿ on the 2M_S = ms2 determinant block (h, B, C, A in one energy unit)."""
    n_alpha, n_beta = spin_counts(d_count, ms2)
    return hamiltonian_basis(n_alpha, n_beta).matrix(_symmetric(h), b, c, a)


def _symmetric(h: np.ndarray) -> np.ndarray:
    h = np.asarray(h, dtype=float)
    if h.shape != (5, 5) or not np.allclose(h, h.T, atol=1e-10 * max(1.0, float(np.max(np.abs(h))))):
        raise ValueError("the ligand-field matrix must be a real symmetric 5×5 matrix")
    return 0.5 * (h + h.T)


# ----------------------------------------------------------------------------- symmetry
def d_representation(ops: np.ndarray) -> np.ndarray:
    """D(g) (|G|, 5, 5) of the real d orbitals: D_ij = ⟨Q_i, g Q_j gᵀ⟩ / ⟨Q_i, Q_i⟩."""
    ops = np.asarray(ops, dtype=float).reshape(-1, 3, 3)
    moved = np.einsum("gab,jbc,gdc->gjad", ops, QUADRATIC_FORMS, ops, optimize=True)
    return np.einsum("iad,gjad->gij", QUADRATIC_FORMS, moved) / np.einsum("iad,iad->i", QUADRATIC_FORMS, QUADRATIC_FORMS)[None, :, None]


@dataclass(frozen=True)
class FrameSymmetry:
    """A point group with its operations written in the frame of the d orbitals.

    ``group`` is a dsplit.symmetry PointGroup (characters, labels); ``ops[k]`` is its
    operation ``group.ops[k]`` in the d-orbital frame (the same matrices for the builder's
    ideal polyhedra).  ``linear`` marks the D∞h proxy (labels through linear_label).
    """

    group: Any
    ops: np.ndarray
    linear: bool = False

    @property
    def name(self) -> str:
        return "Dooh" if self.linear else self.group.name

    def label(self, irrep: str) -> str:
        if self.linear:
            from dsplit.symmetry import linear_label

            return linear_label(irrep)
        return irrep


def frame_symmetry(name: str) -> FrameSymmetry:
    """The point group ``name`` in its standard frame (the builder's frame); 'Dinfh' = 'Dooh'."""
    from dsplit.symmetry import point_group

    key = "Dooh" if name in ("Dinfh", "Dooh") else name
    group = point_group(key)
    return FrameSymmetry(group, group.ops, linear=key == "Dooh")


def is_invariant(h: np.ndarray, symmetry: FrameSymmetry, tol: float = 1e-8) -> bool:
    """True when D(g) h D(g)ᵀ = h for every operation (h a one-electron matrix over D_ORBITALS)."""
    d = d_representation(symmetry.ops)
    h = np.asarray(h, dtype=float)
    scale = max(1.0, float(np.max(np.abs(h))))
    return bool(np.allclose(np.einsum("gij,jk,glk->gil", d, h, d), h[None], atol=tol * scale))


def orbital_irreps(vectors: np.ndarray, symmetry: FrameSymmetry) -> dict[str, float]:
    """Irreps spanned by the d-orbital combinations ``vectors`` (5×k columns, orthonormal)."""
    d = d_representation(symmetry.ops)
    v = np.asarray(vectors, dtype=float).reshape(5, -1)
    chars = np.einsum("ik,gij,jk->g", v, d, v)
    return {k: x for k, x in symmetry.group.decompose(chars).items() if abs(x) > 1e-6}


@dataclass(frozen=True)
class _Block:
    multiplicity: int
    irrep: str  # state label (capitalised), e.g. 'T1g'
    dim: int  # spatial degeneracy of one term
    basis: np.ndarray  # (N, m) orthonormal, inside the M_S = S block


_BLOCK_CACHE: dict[tuple, tuple[_Block, ...]] = {}


def _spin_basis(n_alpha: int, n_beta: int, spin: float) -> np.ndarray:
    w, v = np.linalg.eigh(spin_squared(n_alpha, n_beta))
    return v[:, np.abs(w - spin * (spin + 1.0)) < 1e-6]


def _state_label(symmetry: FrameSymmetry | None, irrep: str) -> str:
    text = symmetry.label(irrep) if symmetry is not None else irrep
    return text[:1].upper() + text[1:]


def symmetry_blocks(d_count: int, multiplicity: int, symmetry: FrameSymmetry | None) -> tuple[_Block, ...]:
    """Orthonormal bases of each (2S+1, Γ) block at M_S = S (cached per group and frame)."""
    key = (d_count, multiplicity, None if symmetry is None else (symmetry.name, symmetry.ops.tobytes()))
    if key in _BLOCK_CACHE:
        return _BLOCK_CACHE[key]
    n_alpha, n_beta = spin_counts(d_count, multiplicity - 1)
    spin = _spin_basis(n_alpha, n_beta, 0.5 * (multiplicity - 1))
    if symmetry is None:
        blocks: tuple[_Block, ...] = (_Block(multiplicity, "A", 1, spin),)
    else:
        reps = determinant_representation(symmetry, d_count, multiplicity - 1)
        inside = spin.T[None] @ reps @ spin[None]
        found = []
        for irrep in symmetry.group.irreps:
            p = np.tensordot(symmetry.group.projector_weights(irrep.label), inside, axes=(0, 0))
            w, v = np.linalg.eigh(0.5 * (p + p.T))
            keep = w > 0.5
            if keep.any():
                found.append(_Block(multiplicity, _state_label(symmetry, irrep.label), irrep.dim,
                                    spin @ v[:, keep]))
        if sum(b.basis.shape[1] for b in found) != spin.shape[1]:
            raise AssertionError("the irrep projectors do not cover the spin space")
        blocks = tuple(found)
    _BLOCK_CACHE[key] = blocks
    return blocks


# ----------------------------------------------------------------------------- states
@dataclass(frozen=True)
class Term:
    """One ligand-field term: a degenerate set of states of one multiplicity and irrep."""

    energy: float  # above the ground term (unit of the input)
    absolute_energy: float  # eigenvalue of H without A
    multiplicity: int
    irrep: str  # 'T1g', 'A2', … ('A' without a point group)
    degeneracy: int  # spatial (the spin adds 2S+1)
    spin_allowed: bool  # same multiplicity as the ground term
    configurations: tuple[tuple[str, float], ...]  # leading d-set configurations, weight ≥ 0.05
    vectors: np.ndarray  # (degeneracy, N_α, N_β): CI vectors at M_S = S over the frame d orbitals

    @property
    def label(self) -> str:
        """e.g. '⁴T1g'."""
        return f"{str(self.multiplicity).translate(SUPERSCRIPT)}{self.irrep}"

    @property
    def leading_configuration(self) -> str:
        return self.configurations[0][0] if self.configurations else ""


@dataclass(frozen=True)
class TermSpectrum:
    """All terms of dⁿ for one (h, B, C), ascending in energy."""

    d_count: int
    point_group: str | None
    terms: tuple[Term, ...]
    b: float
    c: float

    @property
    def ground(self) -> Term:
        return self.terms[0]

    def of_multiplicity(self, multiplicity: int) -> tuple[Term, ...]:
        return tuple(t for t in self.terms if t.multiplicity == multiplicity)

    def spin_allowed_bands(self) -> tuple[Term, ...]:
        """Excited terms of the ground term's multiplicity, ascending."""
        return tuple(t for t in self.terms[1:] if t.spin_allowed)

    @property
    def state_count(self) -> int:
        """Σ (2S+1)·degeneracy = C(10, n) for a complete dⁿ."""
        return sum(t.multiplicity * t.degeneracy for t in self.terms)


def set_pairs(d_sets: Sequence | None) -> list[tuple[str, tuple[str, ...]]] | None:
    """(label, orbitals) from DSet-like objects (.label, .orbitals) or (label, orbitals) pairs."""
    if d_sets is None:
        return None
    out = []
    for s in d_sets:
        label, orbs = (s.label, s.orbitals) if hasattr(s, "orbitals") else (s[0], s[1])
        out.append((str(label), tuple(orbs)))
    return out


def assign_to_sets(vectors: np.ndarray, d_sets: Sequence) -> list[int]:
    """Set index for each column of ``vectors`` (over D_ORBITALS): most weight, each set filled to its size.

    Weight of set s in vector v = Σ_{i∈s} v_i²; the assignment maximises the total weight with
    as many vectors per set as the set has orbitals (scipy's linear_sum_assignment).
    """
    from scipy.optimize import linear_sum_assignment

    pairs = set_pairs(d_sets) or []
    slots = [k for k, (_, orbs) in enumerate(pairs) for _ in orbs]
    v = np.asarray(vectors, dtype=float)
    weight = np.array([[sum(v[D_ORBITALS.index(o), j] ** 2 for o in pairs[k][1]) for k in slots]
                       for j in range(v.shape[1])])
    rows, cols = linear_sum_assignment(-weight)
    out = [0] * v.shape[1]
    for r, c in zip(rows, cols):
        out[r] = slots[c]
    return out


def _orbital_frame(h: np.ndarray, d_sets: Sequence | None,
                   symmetry: FrameSymmetry | None) -> tuple[np.ndarray, tuple[int, ...], list[str]]:
    """Orbitals for configuration labels: (V 5×5 columns over D_ORBITALS, set of each column, labels)."""
    pairs = set_pairs(d_sets)
    if pairs is not None:
        index = {o: k for k, (_, orbs) in enumerate(pairs) for o in orbs}
        if sorted(index) != sorted(D_ORBITALS):
            raise ValueError("the d sets must hold each of the five d orbitals once")
        member = np.array([index[o] for o in D_ORBITALS])
        if np.allclose(h[member[:, None] != member[None, :]], 0.0, atol=1e-9 * max(1.0, np.abs(h).max())):
            return np.eye(5), tuple(int(m) for m in member), [lab for lab, _ in pairs]
        w, v = np.linalg.eigh(h)
        return v, tuple(assign_to_sets(v, pairs)), [lab for lab, _ in pairs]
    from dsplit.models.levels import group_levels

    w, v = np.linalg.eigh(h)
    groups = group_levels(w)
    member = [0] * 5
    labels, seen = [], {}
    for k, g in enumerate(groups):
        for i in g.indices:
            member[i] = k
        irreps = orbital_irreps(v[:, list(g.indices)], symmetry) if symmetry else {"a": 1.0}
        name = symmetry.label(next(iter(irreps))) if symmetry and len(irreps) == 1 else "+".join(irreps)
        seen[name] = seen.get(name, 0) + 1
        labels.append(f"{seen[name]}{name}")
    return v, tuple(member), labels


class _ConfigurationCounter:
    """Weights of the d-set configurations of CI vectors, in the orbital frame of _orbital_frame."""

    def __init__(self, frame: tuple, d_count: int):
        self.v, self.member, self.labels = frame
        self.d_count = d_count
        self._cache: dict[int, tuple] = {}

    def _setup(self, ms2: int) -> tuple:
        if ms2 not in self._cache:
            n_alpha, n_beta = spin_counts(self.d_count, ms2)
            keys = [configuration_of(a, b, self.member, len(self.labels))
                    for a in strings(n_alpha) for b in strings(n_beta)]
            distinct = sorted(set(keys), key=keys.index)
            index = np.array([distinct.index(k) for k in keys])
            minors = (string_minors(self.v.T, n_alpha), string_minors(self.v.T, n_beta))
            self._cache[ms2] = (distinct, index, minors)
        return self._cache[ms2]

    def __call__(self, vectors: np.ndarray, ms2: int) -> tuple[tuple[str, float], ...]:
        distinct, index, (ma, mb) = self._setup(ms2)
        weights = np.zeros(len(distinct))
        for vec in vectors:
            c = ma @ vec @ mb.T  # rotate_ci with U = Vᵀ (frame d → the orbitals of the sets)
            weights += np.bincount(index, weights=c.ravel() ** 2, minlength=len(distinct)) / len(vectors)
        order = np.argsort(-weights, kind="stable")
        return tuple((" ".join(f"{lab}^{n}" for lab, n in zip(self.labels, distinct[k])), round(float(weights[k]), 4))
                     for k in order if weights[k] >= 0.05)


def configuration_weights(vectors: np.ndarray, d_count: int, ms2: int,
                          d_sets: Sequence) -> tuple[tuple[str, float], ...]:
    """d-set configurations (weight ≥ 0.05, largest first) of CI vectors over the frame d determinants.

    ``vectors``: (k, N_α, N_β) components of one state or term (weights averaged); ``d_sets``:
    DSet-like objects or (label, orbitals) pairs holding the five frame d orbitals.
    """
    frame = _orbital_frame(np.zeros((5, 5)), d_sets, None)
    vecs = np.asarray(vectors, dtype=float)
    n_alpha, n_beta = spin_counts(d_count, ms2)
    vecs = vecs.reshape(-1, len(strings(n_alpha)), len(strings(n_beta)))
    return _ConfigurationCounter(frame, d_count)(vecs, ms2)


def determinant_representation(symmetry: FrameSymmetry, d_count: int, ms2: int) -> np.ndarray:
    """R(g) (|G|, N, N) on the (n_α, n_β) determinants: kron of the string minors of D(g)."""
    n_alpha, n_beta = spin_counts(d_count, ms2)
    return np.array([np.kron(string_minors(d, n_alpha), string_minors(d, n_beta))
                     for d in d_representation(symmetry.ops)])


def solve_blocks(h: np.ndarray, b: float, c: float, d_count: int, multiplicity: int,
                 symmetry: FrameSymmetry | None) -> list[tuple[float, _Block, np.ndarray]]:
    """(energy, block, vectors (dim, N)) for every term of one multiplicity (no A)."""
    n_alpha, n_beta = spin_counts(d_count, multiplicity - 1)
    full = hamiltonian_basis(n_alpha, n_beta).matrix(h, b, c)
    out = []
    for block in symmetry_blocks(d_count, multiplicity, symmetry):
        w, v = np.linalg.eigh(block.basis.T @ full @ block.basis)
        vecs = block.basis @ v
        for k in range(0, len(w), block.dim):
            out.append((float(np.mean(w[k:k + block.dim])), block, vecs[:, k:k + block.dim].T))
    return out


def multiplet_states(h: np.ndarray, b: float, c: float, d_count: int, *,
                     symmetry: FrameSymmetry | None = None, d_sets: Sequence | None = None,
                     multiplicities: Sequence[int] | None = None) -> TermSpectrum:
    """Every term of dⁿ for ligand-field matrix h and Racah B, C (one energy unit, e.g. cm⁻¹).

    ``symmetry``: the point group in the d-orbital frame (h must be invariant under it), else
    each state is its own term labelled 'A'.  ``d_sets``: (label, orbitals) pairs or
    chem.counting.DSet objects naming the configurations (default: the levels of h, numbered
    per irrep, e.g. '1a1').  ``multiplicities``: which 2S+1 to solve (default all of dⁿ).
    """
    h = _symmetric(h)
    if symmetry is not None and not is_invariant(h, symmetry):
        raise ValueError(f"the ligand-field matrix is not invariant under {symmetry.name}; "
                         "give its actual point group or none")
    mults = tuple(multiplicities) if multiplicities is not None else allowed_multiplicities(d_count)
    bad = set(mults) - set(allowed_multiplicities(d_count))
    if bad:
        raise ValueError(f"multiplicities {sorted(bad)} do not occur for d^{d_count}")
    count = _ConfigurationCounter(_orbital_frame(h, d_sets, symmetry), d_count)
    found = []
    for m in mults:
        for energy, block, vecs in solve_blocks(h, b, c, d_count, m, symmetry):
            n_alpha, n_beta = spin_counts(d_count, m - 1)
            found.append((energy, block, vecs.reshape(block.dim, len(strings(n_alpha)), len(strings(n_beta)))))
    found.sort(key=lambda t: (round(t[0], 9), -t[1].multiplicity))
    e0, ground = found[0][0], found[0][1].multiplicity
    terms = tuple(Term(energy=e - e0, absolute_energy=e, multiplicity=blk.multiplicity, irrep=blk.irrep,
                       degeneracy=blk.dim, spin_allowed=blk.multiplicity == ground,
                       configurations=count(vecs, blk.multiplicity - 1), vectors=vecs)
                  for e, blk, vecs in found)
    return TermSpectrum(d_count, None if symmetry is None else symmetry.name, terms, float(b), float(c))
