"""Label MOs by the irreps of the molecule's full point group (one spin at a time).

For orbitals C (columns, AO basis with overlap S) and operations R(g) from
:mod:`.aorep`, let M_g = Cᵀ S R(g) C.  For a set of n orbitals:

* weights  w_Γ = tr(Cᵀ S P_Γ C)/n with the character projector
  P_Γ = (d_Γ/|G|) Σ_g χ_Γ(g)* R(g)  (the projection operator of Cotton,
  *Chemical Applications of Group Theory*, 3rd ed., ch. 6 — from memory);
  Σ_Γ w_Γ = 1 for orbitals inside the AO span;
* set character χ_set(g) = tr M_g and multiplicities n_Γ from it;
* closure leak = max_g (1 − ‖M_g‖²_F / n): 0 when the span of the set is
  invariant under the group, i.e. when the set holds complete irreps.

Procedure: orbitals are grouped by energy (consecutive gaps ≤ ``degen_tol``
Hartree, default 1 mHa).  A set that is not closed has lost a degenerate
partner across the tolerance: it is merged with the next sets while the gap is
≤ ``merge_tol`` (default 10 × ``degen_tol``) until it closes (if it never closes
the merge is undone and only that set is 'mixed').  A closed set whose
best weight is ≥ ``threshold`` (default 0.9) gets that irrep.  A closed set
holding several irreps (accidental near-degeneracy) is split by each orbital's
own best irrep when every orbital is itself ≥ ``threshold`` pure and every part
closes; otherwise it stays 'mixed'.  A set that never closes is 'mixed' too
(note says so).  Nothing is forced.

Public API
----------
label_orbitals(mol, mo_coeff, mo_energy, symmetry=None, *, degen_tol=1e-3,
               merge_tol=None, threshold=0.9, close_tol=1e-2, tol=1e-3) -> OrbitalLabels
OrbitalLabels.group, .labels (per orbital, 'mixed' if unlabelled), .weights,
    .sets (list[OrbitalSet]), .symmetry, .label_of(i)
OrbitalSet(indices, energy, label, weight, weights, multiplicity, leak, note)
display_label(result, i) -> str      σ/π/δ names for linear molecules ('pi_u')
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .aorep import ao_representation, mol_symmetry
from .detect import Symmetry
from .groups import linear_label

__all__ = ["OrbitalSet", "OrbitalLabels", "label_orbitals", "display_label", "MIXED"]

MIXED = "mixed"


@dataclass
class OrbitalSet:
    """One (near-)degenerate set; ``weights`` per irrep, ``leak`` the closure defect."""

    indices: list[int]
    energy: float
    label: str
    weight: float
    weights: dict[str, float]
    multiplicity: float
    leak: float
    note: str = ""


@dataclass
class OrbitalLabels:
    """Result of :func:`label_orbitals` (labels use the full group of ``symmetry``)."""

    group: str
    labels: list[str]
    weights: list[float]
    sets: list[OrbitalSet]
    symmetry: Symmetry = field(repr=False)

    def label_of(self, i: int) -> str:
        return self.labels[i]


class _Analyser:
    def __init__(self, sym: Symmetry, m: np.ndarray, energy: np.ndarray, threshold: float,
                 close_tol: float):
        self.sym, self.m, self.e = sym, m, energy
        self.threshold, self.close_tol = threshold, close_tol
        g = sym.group
        self.coef = np.array([g.projector_weights(lab) for lab in g.labels])  # (nirr, |G|)
        diag = np.einsum("gii->ig", m)
        self.orb_w = diag @ self.coef.T  # (nmo, nirr)

    def evaluate(self, idx: list[int]) -> OrbitalSet:
        g = self.sym.group
        blk = self.m[:, idx][:, :, idx]
        n = len(idx)
        chi = np.einsum("gii->g", blk)
        w = self.coef @ chi / n
        leak = float(np.max(1.0 - np.einsum("gij,gij->g", blk, blk) / n))
        mult = g.decompose(chi)
        best = int(np.argmax(w))
        lab = g.labels[best]
        weights = {k: float(v) for k, v in zip(g.labels, w)}
        es = OrbitalSet(list(idx), float(np.mean(self.e[idx])), lab, float(w[best]), weights,
                        float(mult[lab]), leak)
        if leak > self.close_tol:
            es.label, es.note = MIXED, "not closed under the group (a partner is missing)"
        elif w[best] < self.threshold:
            parts = [f"{k}" for k, v in mult.items() if v > 0.5]
            es.label, es.note = MIXED, "closed set of " + "+".join(parts)
        return es

    def split(self, es: OrbitalSet) -> list[OrbitalSet]:
        """Split a closed mixed set by each orbital's own irrep (all parts must close)."""
        ow = self.orb_w[es.indices]
        if np.any(ow.max(axis=1) < self.threshold):
            return [es]
        best = ow.argmax(axis=1)
        parts = [self.evaluate([i for i, b in zip(es.indices, best) if b == k])
                 for k in sorted(set(best))]
        if any(p.label == MIXED for p in parts):
            return [es]
        for p in parts:
            p.note = "split from an accidentally near-degenerate set"
        return parts


def _chain(energy: np.ndarray, tol: float) -> list[list[int]]:
    order = np.argsort(energy, kind="stable")
    sets: list[list[int]] = [[int(order[0])]]
    for a, b in zip(order[:-1], order[1:]):
        if energy[b] - energy[a] <= tol:
            sets[-1].append(int(b))
        else:
            sets.append([int(b)])
    return sets


def label_orbitals(mol, mo_coeff: np.ndarray, mo_energy: np.ndarray,
                   symmetry: Symmetry | None = None, *, degen_tol: float = 1e-3,
                   merge_tol: float | None = None, threshold: float = 0.9,
                   close_tol: float = 1e-2, tol: float = 1e-3,
                   ovlp: np.ndarray | None = None) -> OrbitalLabels:
    """Full-group labels for the columns of ``mo_coeff`` (one spin channel)."""
    c = np.asarray(mo_coeff, dtype=float)
    e = np.asarray(mo_energy, dtype=float)
    if c.ndim != 2 or e.shape != (c.shape[1],):
        raise ValueError("pass one spin channel: mo_coeff (nao, nmo), mo_energy (nmo,)")
    sym = symmetry if symmetry is not None else mol_symmetry(mol, tol=tol)
    s = mol.intor_symmetric("int1e_ovlp") if ovlp is None else ovlp
    reps = ao_representation(mol, sym)
    sc = s @ c
    m = np.einsum("ai,gab,bj->gij", sc, reps, c, optimize=True)
    an = _Analyser(sym, m, e, threshold, close_tol)
    merge = 10.0 * degen_tol if merge_tol is None else merge_tol
    raw = _chain(e, degen_tol)
    out: list[OrbitalSet] = []
    k = 0
    while k < len(raw):
        first = an.evaluate(list(raw[k]))
        es, idx, j = first, list(raw[k]), k
        while es.leak > close_tol and j + 1 < len(raw) and \
                e[raw[j + 1]].min() - e[idx].max() <= merge:
            j += 1
            idx += raw[j]
            es = an.evaluate(idx)
            es.note = es.note or "merged across the degeneracy tolerance"
        if es.leak > close_tol:      # never closed: keep only the first set, as 'mixed'
            es, j = first, k
        out += an.split(es) if es.label == MIXED and es.leak <= close_tol else [es]
        k = j + 1
    out.sort(key=lambda x: x.energy)
    labels = [MIXED] * c.shape[1]
    weights = [0.0] * c.shape[1]
    for es in out:
        for i in es.indices:
            labels[i] = es.label
            weights[i] = es.weight
    return OrbitalLabels(sym.name, labels, weights, out, sym)


def display_label(result: OrbitalLabels, i: int) -> str:
    """Label for printing: linear molecules get σ/π/δ names ('pi_u') from the proxy label."""
    lab = result.labels[i]
    return linear_label(lab) if result.symmetry.linear and lab != MIXED else lab
