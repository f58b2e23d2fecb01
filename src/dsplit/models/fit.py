"""Least-squares fit of AOM eσ, eπ (one pair per ligand type) to computed d levels.

The model matrix is V(p) = Σ_t (eσ_t Σ_{L∈t} Fσ Fσᵀ + eπ_t Σ_{L∈t} (Fπx Fπxᵀ + Fπy Fπyᵀ))
(+ c·1 with a fitted shift; Schäffer & Jørgensen, Mol. Phys. 9, 401 (1965)).
Two targets:

* levels only: the k-th eigenvalue of V (ascending) is matched to the k-th
  computed level, both relative to their mean, their lowest level, or as given
  ("absolute").  Σ_k (λ_k − y_k)² is minimised with scipy.optimize.least_squares
  from several starts, ∂λ_k/∂p = c_kᵀ (∂V/∂p) c_k (Hellmann–Feynman).  Sorted
  order cannot tell which orbital is which, so distinct parameter sets can fit
  equally well; those found are reported as alternatives.
* levels + d vectors (columns over aom.D_ORBITALS, Löwdin-orthonormalised):
  the target matrix H = C diag(y) Cᵀ is fitted linearly, ‖V(p) − H‖_F
  (traceless parts unless "absolute").

Only the parameter combinations spanned by the Jacobian's rows are fixed by the
data; its numerical rank tells whether eσ and eπ are separable (in Oh only
Δo = 3eσ − 4eπ is).  The rank test is common practice.  rms = ‖r‖/√5.
"""

from __future__ import annotations

from collections.abc import Hashable, Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import least_squares

from dsplit.models.aom import aom_matrix

REFERENCES = ("mean", "lowest", "absolute")
_N_RANDOM = 24  # random starts of the levels-only fit (besides 5 fixed ones)
_IU = np.triu_indices(5)
_W = np.where(_IU[0] == _IU[1], 1.0, np.sqrt(2.0))  # Frobenius weights of the upper triangle


@dataclass
class AOMFit:
    """Result of fit_aom (energies in the unit of the input levels)."""

    e_sigma: dict[Hashable, float]
    e_pi: dict[Hashable, float]
    shift: float | None
    fixed: dict[str, float]  # parameter name → value held fixed
    target: np.ndarray  # computed levels, ascending, after the reference
    predicted: np.ndarray  # fitted model levels, same reference
    rms: float
    separable: bool
    determined: list[tuple[dict[str, float], float]] = field(default_factory=list)
    alternatives: list[dict[str, float]] = field(default_factory=list)
    note: str = ""
    n_data: int = 0  # independent numbers in the target (distinct levels, or matrix elements, after the reference)
    rank: int = 0  # parameter combinations the final fit determines

    @property
    def overdetermined(self) -> bool:
        """Whether the data could disagree with the model: more independent numbers than fitted combinations.

        When not, the residual is zero by construction and says nothing (one Δ fixes one
        combination of eσ and eπ in Oh).
        """
        return self.n_data > self.rank

    @property
    def residuals(self) -> np.ndarray:
        """predicted − target (levels)."""
        return self.predicted - self.target


def _refer(levels: np.ndarray, reference: str) -> np.ndarray:
    if reference == "mean":
        return levels - levels.mean(axis=0)
    if reference == "lowest":
        return levels - levels[0]
    return levels.copy()


def _traceless(m: np.ndarray) -> np.ndarray:
    return m - np.trace(m) / 5.0 * np.eye(5)


class _Problem:
    """Parameters → residuals and Jacobian, for the levels-only or the matrix target."""

    def __init__(
        self,
        directions: np.ndarray,
        types: list[Hashable],
        fit_shift: bool,
        y_raw: np.ndarray,
        reference: str,
        vectors: np.ndarray | None,
    ):
        self.labels = list(dict.fromkeys(types))
        self.names: list[str] = []
        basis: list[np.ndarray] = []
        for lab in self.labels:
            mask = np.array([t == lab for t in types])
            basis += [aom_matrix(directions[mask], 1.0, 0.0), aom_matrix(directions[mask], 0.0, 1.0)]
            self.names += [f"e_sigma[{lab}]", f"e_pi[{lab}]"]
        if fit_shift:
            basis.append(np.eye(5))
            self.names.append("shift")
        self.basis = np.array(basis)
        self.reference = reference
        self.y = _refer(y_raw, reference)
        self.matrix_mode = vectors is not None
        if self.matrix_mode:
            c = np.asarray(vectors, dtype=float)
            s_w, s_v = np.linalg.eigh(c.T @ c)
            c = c @ s_v @ np.diag(s_w**-0.5) @ s_v.T
            h = c @ np.diag(y_raw) @ c.T
            proj = (lambda m: m) if reference == "absolute" else _traceless
            self.a = np.array([proj(b)[_IU] * _W for b in self.basis]).T
            self.b = proj(h)[_IU] * _W

    def levels(self, p: np.ndarray) -> np.ndarray:
        return _refer(np.linalg.eigvalsh(np.tensordot(p, self.basis, axes=1)), self.reference)

    def residual_and_jac(self, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        if self.matrix_mode:
            return self.a @ p - self.b, self.a
        w, c = np.linalg.eigh(np.tensordot(p, self.basis, axes=1))
        jac = np.einsum("ik,pij,jk->kp", c, self.basis, c)
        return _refer(w, self.reference) - self.y, _refer(jac, self.reference)


def _starts(n_types: int, scale: float, fit_shift: bool) -> list[np.ndarray]:
    base = [(1 / 3, 0.0), (1 / 3, 1 / 12), (1 / 3, -1 / 12), (-1 / 3, 0.0), (0.1, 0.3)]
    starts = [np.tile(np.array(s) * scale, n_types) for s in base]
    rng = np.random.default_rng(0)
    lo, hi = np.tile([0.0, -1 / 3], n_types) * scale, np.tile([1.0, 1 / 3], n_types) * scale
    starts += [rng.uniform(lo, hi) for _ in range(_N_RANDOM)]
    return [np.append(s, 0.0) for s in starts] if fit_shift else starts


def _rank_and_rowspace(jac: np.ndarray, tol: float = 1e-6) -> tuple[int, np.ndarray]:
    if jac.shape[1] == 0:
        return 0, np.zeros((0, 0))
    _, s, vt = np.linalg.svd(jac, full_matrices=False)
    rank = int(np.sum(s > tol * max(s[0], 1e-300)))
    return rank, vt[:rank]


def _solve(
    prob: _Problem, fixed: dict[int, float], scale: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray, list[int], list[np.ndarray]]:
    """Best fit over several starts: (p, residual, free-parameter Jacobian, free, other equal fits)."""
    free = [i for i in range(len(prob.names)) if i not in fixed]
    base = np.zeros(len(prob.names))
    base[list(fixed)] = list(fixed.values())

    def expand(x: np.ndarray) -> np.ndarray:
        p = base.copy()
        p[free] = x
        return p

    def fun(x: np.ndarray) -> np.ndarray:
        return prob.residual_and_jac(expand(x))[0]

    def jac(x: np.ndarray) -> np.ndarray:
        return prob.residual_and_jac(expand(x))[1][:, free]

    starts = _starts(len(prob.labels), scale, "shift" in prob.names)
    if prob.matrix_mode or not free:
        starts = starts[:1]
    found = []
    for s in starts:
        x0 = s[free]
        if free:
            n_res = len(fun(x0))
            x0 = least_squares(fun, x0, jac=jac, method="lm" if len(free) <= n_res else "trf").x
        found.append((float(np.sum(fun(x0) ** 2)), expand(x0)))
    found.sort(key=lambda t: t[0])
    cost, p = found[0]
    r, j = prob.residual_and_jac(p)
    same_cost = [q for c, q in found if c <= cost + 1e-6 * cost + 1e-12 * scale**2]
    others: list[np.ndarray] = []
    for q in same_cost:
        if all(np.max(np.abs(q - o)) > 1e-5 * scale for o in [p, *others]):
            others.append(q)
    return p, r, j[:, free], free, others


def _fixed_indices(labels: list[Hashable], fix_e_pi: float | Mapping[Hashable, float] | None) -> dict[int, float]:
    if fix_e_pi is None:
        return {}
    if isinstance(fix_e_pi, Mapping):
        return {2 * k + 1: float(fix_e_pi[lab]) for k, lab in enumerate(labels) if lab in fix_e_pi}
    return {2 * k + 1: float(fix_e_pi) for k in range(len(labels))}


def _describe(rows: np.ndarray, names: list[str], x: np.ndarray) -> list[tuple[dict[str, float], float]]:
    out = []
    for row in rows:
        row = row * np.sign(row[np.argmax(np.abs(row))])
        out.append(({n: float(c) for n, c in zip(names, row) if abs(c) > 1e-9}, float(row @ x)))
    return out


def fit_aom(
    directions: np.ndarray,
    levels: Sequence[float],
    ligand_types: Sequence[Hashable] | None = None,
    reference: str = "mean",
    fit_shift: bool = False,
    fix_e_pi: float | Mapping[Hashable, float] | None = None,
    fallback_e_pi: float = 0.0,
    vectors: np.ndarray | None = None,
) -> AOMFit:
    """Fit eσ, eπ per ligand type to the five d levels (degenerate ones repeated).

    ``ligand_types``: a type label per direction (default: one type).
    ``fix_e_pi``: hold eπ fixed (one value, or per type).  ``vectors``: optional
    5×5 d composition of each level (column k belongs to ``levels[k]``) in the
    frame of ``directions``.  If the data cannot separate the free parameters,
    the determined combinations are reported and, unless ``fix_e_pi`` was given,
    the fit is repeated with every eπ at ``fallback_e_pi``.
    """
    dirs = np.atleast_2d(np.asarray(directions, dtype=float))
    y_in = np.asarray(levels, dtype=float)
    if len(y_in) != 5:
        raise ValueError(f"need the 5 d levels (degenerate ones repeated), got {len(y_in)}")
    if reference not in REFERENCES:
        raise ValueError(f"reference must be one of {REFERENCES}")
    types = list(ligand_types) if ligand_types is not None else [0] * len(dirs)
    if len(types) != len(dirs):
        raise ValueError("one ligand type per direction")
    order = np.argsort(y_in, kind="stable")
    vecs = None if vectors is None else np.asarray(vectors, dtype=float)[:, order]
    prob = _Problem(dirs, types, fit_shift, y_in[order], reference, vecs)
    scale = max(float(np.ptp(y_in)), 1e-12)

    fixed = _fixed_indices(prob.labels, fix_e_pi)
    p, res, jac, free, others = _solve(prob, fixed, scale)
    rank, rows = _rank_and_rowspace(jac)
    separable = rank == len(free)
    determined: list[tuple[dict[str, float], float]] = []
    note = ""
    if not separable:
        determined = _describe(rows, [prob.names[i] for i in free], p[free])
        text = "; ".join(" + ".join(f"{c:.4g}·{n}" for n, c in d.items()) + f" = {v:.6g}" for d, v in determined)
        note = f"data fix only {rank} combination(s) of {len(free)} parameters: {text}."
        if fix_e_pi is None:
            fixed = _fixed_indices(prob.labels, fallback_e_pi)
            p, res, jac, free, others = _solve(prob, fixed, scale)
            full = _rank_and_rowspace(jac)[0] == len(free)
            note += f" Values below hold every eπ at {fallback_e_pi:g} (eσ is then an effective parameter)"
            note += "." if full else "; even so they are not unique."
        else:
            note += " The values below are one solution among many."
    final_rank = _rank_and_rowspace(jac)[0]
    shifted = 0 if reference == "absolute" else 1
    if vecs is None:
        distinct = 1 + int(np.sum(np.diff(prob.y) > 1e-6 * scale))
        n_data = distinct - shifted
    else:
        n_data = 15 - shifted  # the symmetric 5×5 target matrix
    alternatives = []
    if others and final_rank == len(free):
        alternatives = [dict(zip(prob.names, map(float, q))) for q in others]
        note += (" " if note else "") + (
            f"{len(alternatives)} other parameter set(s) fit the sorted levels as well "
            "(level assignment ambiguous; give vectors to decide)."
        )
    return AOMFit(
        e_sigma={lab: float(p[2 * k]) for k, lab in enumerate(prob.labels)},
        e_pi={lab: float(p[2 * k + 1]) for k, lab in enumerate(prob.labels)},
        shift=float(p[-1]) if fit_shift else None,
        fixed={prob.names[i]: float(v) for i, v in fixed.items()},
        target=prob.y,
        predicted=prob.levels(p),
        rms=float(np.sqrt(np.sum(res**2) / 5.0)),
        separable=separable,
        determined=determined,
        alternatives=alternatives,
        note=note,
        n_data=n_data,
        rank=final_rank,
    )


def expand_sets(energies: Sequence[float], degeneracies: Sequence[int]) -> np.ndarray:
    """Set energies with degeneracies → the five levels (each repeated)."""
    return np.repeat(np.asarray(energies, dtype=float), np.asarray(degeneracies, dtype=int))
