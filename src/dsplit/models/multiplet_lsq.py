"""Fit the dⁿ ligand-field Hamiltonian (h, B, C) to states given as energies and CI vectors.

The published ab initio ligand-field route (Atanasov, Ganyushin, Sivalingam & Neese, Struct.
Bond. 143, 149 (2012)): the computed states Ψ_k (CI vectors over the frame d determinants) of
one (2S+1, M_S) block are Löwdin-orthonormalised, Ψ̃ = Ψ (ΨᵀΨ)^(−1/2), and define the effective
Hamiltonian H_eff = Σ_k |Ψ̃_k⟩ E_k ⟨Ψ̃_k|.  The model H(p) = Σ_i p_i M_i is linear in the
parameters (multiplet.hamiltonian_basis), so ‖Ψ̃ᵀ H(p) Ψ̃ − diag(E)‖_F — the same as
‖P H(p) P − H_eff‖_F with P the projector on the computed states — summed over the blocks is a
linear least-squares problem.

Parameters: the traceless h (10 off-diagonal elements, 4 traceless diagonal combinations), B,
C and ONE constant shared by every block.  The trace of h and Racah A only add a constant to
every state of dⁿ, so they are folded into it; h is reported traceless (barycentre 0).  The
constant is shared, not per block: a single model operator has a single zero of energy, and it is
the energies of one multiplicity against another that fix C (with a constant per block they
would carry no information).  This needs the blocks on one energy scale (one calculation with
common orbitals, as in a state-averaged CASSCF over all multiplicities).

What the states fix is read from the rank of the design matrix (common practice): the highest
multiplicity of d², d³, d⁷, d⁸ fixes B but not C (its terms hold no C), that of d¹, d⁴, d⁶, d⁹
neither (one term), and high-spin d⁵ alone not even h.  Unfixed C is held at C = (C/B)·B;
unfixed B is reported as not determined (it then only shifts the constant) unless a value is
given to hold.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from dsplit.models.determinants import spin_counts
from dsplit.models.multiplet import DEFAULT_C_OVER_B, H_INDEX, hamiltonian_basis, solve_blocks

_OFF = [k for k, (p, q) in enumerate(H_INDEX) if p != q]
_DIAG = [k for k, (p, q) in enumerate(H_INDEX) if p == q]
# orthonormal basis of traceless diagonals (columns): the complement of (1,1,1,1,1)/√5
_TRACELESS = np.linalg.qr(np.column_stack([np.ones(5), np.eye(5)[:, :4]]))[0][:, 1:]


class UnderdeterminedFit(ValueError):
    """The states do not fix the one-electron ligand-field matrix (the message says why)."""


@dataclass(frozen=True)
class StateBlock:
    """Computed states of one (2S+1, 2M_S) block: CI vectors over the frame d determinants."""

    multiplicity: int
    ms2: int
    vectors: np.ndarray  # (k, N_α, N_β) or (k, N)
    energies: np.ndarray  # (k,) one energy unit (e.g. cm⁻¹)


@dataclass(frozen=True)
class HamiltonianFit:
    """Fitted model: traceless h, B, C (None when not determined), the shared constant."""

    h: np.ndarray
    b: float | None
    c: float | None
    constant: float
    fitted: tuple[str, ...]  # 'h', 'B', 'C'
    held: dict[str, str] = field(default_factory=dict)
    residual: float = 0.0  # RMS over states: model eigenvalues (lowest k of each multiplicity) − input
    matrix_residual: float = 0.0  # RMS over the fitted matrix elements
    n_states: int = 0


def _orthonormal(vectors: np.ndarray) -> np.ndarray:
    """Columns Ψ (ΨᵀΨ)^(−1/2) (Löwdin)."""
    w, u = np.linalg.eigh(vectors.T @ vectors)
    if w.min() < 1e-10 * w.max():
        raise UnderdeterminedFit("two computed states are linearly dependent in the d determinant space")
    return vectors @ (u / np.sqrt(w)) @ u.T


def _design(block: StateBlock, d_count: int) -> tuple[np.ndarray, np.ndarray]:
    """Rows (upper-triangle matrix elements, √2 on off-diagonals) for [h(14), B, C, 1] and the target."""
    n_alpha, n_beta = spin_counts(d_count, block.ms2)
    basis = hamiltonian_basis(n_alpha, n_beta)
    k = len(block.energies)
    v = _orthonormal(np.asarray(block.vectors, dtype=float).reshape(k, -1).T)
    mats = list(basis.one_body[_OFF])
    mats += list(np.tensordot(_TRACELESS.T, basis.one_body[_DIAG], axes=(1, 0)))
    mats += [basis.b, basis.c, basis.identity]
    iu = np.triu_indices(k)
    weight = np.where(iu[0] == iu[1], 1.0, np.sqrt(2.0))
    cols = np.array([(v.T @ m @ v)[iu] * weight for m in mats]).T
    target = np.diag(np.asarray(block.energies, dtype=float))[iu] * weight
    return cols, target


def _full_rank(a: np.ndarray) -> bool:
    scale = np.linalg.norm(a, axis=0)
    if np.any(scale <= 1e-10 * scale.max()) or a.shape[0] < a.shape[1]:
        return False
    s = np.linalg.svd(a / scale, compute_uv=False)
    return bool(s[-1] > 1e-8 * s[0])


def _h_from(params: np.ndarray) -> np.ndarray:
    h = np.zeros((5, 5))
    for value, k in zip(params[:10], _OFF):
        p, q = H_INDEX[k]
        h[p, q] = h[q, p] = value
    h[np.diag_indices(5)] = _TRACELESS @ params[10:14]
    return h


def fit_effective_hamiltonian(blocks: Sequence[StateBlock], d_count: int, c_over_b: float | None = None,
                              held_b: float | None = None) -> HamiltonianFit:
    """Least-squares h, B, C from computed states (module docstring).

    ``c_over_b``: None fits C when the states fix it and otherwise holds C/B at
    multiplet.DEFAULT_C_OVER_B; a number always holds C = (C/B)·B.  ``held_b``: the B to hold
    when the states do not fix it (otherwise B is reported as None).
    """
    parts = [_design(b, d_count) for b in blocks]
    a = np.vstack([p[0] for p in parts])
    y = np.concatenate([p[1] for p in parts])
    h_cols, b_col, c_col, one = a[:, :14], a[:, 14], a[:, 15], a[:, 16:]
    ratio = DEFAULT_C_OVER_B if c_over_b is None else float(c_over_b)
    held: dict[str, str] = {}
    if c_over_b is None and _full_rank(a):
        names, cols, rhs = ("h", "B", "C"), a, y
    elif _full_rank(np.column_stack([h_cols, b_col + ratio * c_col, one])):
        names, cols, rhs = ("h", "B"), np.column_stack([h_cols, b_col + ratio * c_col, one]), y
        held["C"] = f"C/B = {ratio:g}" + ("" if c_over_b is not None else " (these states do not fix C)")
    elif _full_rank(np.column_stack([h_cols, one])):
        names, cols = ("h",), np.column_stack([h_cols, one])
        rhs = y if held_b is None else y - held_b * (b_col + ratio * c_col)
        held["B"] = "not determined by these states" if held_b is None else f"held at {held_b:g}"
        held["C"] = "not determined" if held_b is None else f"C/B = {ratio:g}"
    else:
        s = np.linalg.svd(h_cols / np.maximum(np.linalg.norm(h_cols, axis=0), 1e-300), compute_uv=False)
        raise UnderdeterminedFit(f"the {len(y)} matrix elements of {sum(len(b.energies) for b in blocks)} states "
                                 f"fix only {int(np.sum(s > 1e-8 * s[0]))} of the 14 traceless ligand-field "
                                 "parameters; add states of another multiplicity")
    x, *_ = np.linalg.lstsq(cols, rhs, rcond=None)
    h = _h_from(x)
    if names == ("h", "B", "C"):
        b, c = float(x[14]), float(x[15])
    elif names == ("h", "B"):
        b, c = float(x[14]), ratio * float(x[14])
    else:
        b, c = (None, None) if held_b is None else (float(held_b), ratio * float(held_b))
    constant = float(x[-1])
    fit_rows = cols @ x - rhs
    model_err = []
    for block in blocks:
        k = len(block.energies)
        terms = solve_blocks(h, b or 0.0, c or 0.0, d_count, block.multiplicity, None)
        model = np.sort([t[0] for t in terms])[:k] + constant
        model_err.extend(model - np.sort(block.energies))
    return HamiltonianFit(h=h, b=b, c=c, constant=constant, fitted=names, held=held,
                          residual=float(np.sqrt(np.mean(np.square(model_err)))),
                          matrix_residual=float(np.sqrt(np.mean(np.square(fit_rows)))),
                          n_states=sum(len(bl.energies) for bl in blocks))
