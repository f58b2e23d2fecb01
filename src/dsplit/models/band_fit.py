"""Fit Δ and Racah B (and C) of the dⁿ multiplet model to measured spin-allowed d–d bands.

The measured bands ν_1 < ν_2 < … (cm⁻¹) are assigned in ascending order to the excited terms
of the ground multiplicity, E_k(Δ, B, C) − E_0, of the multiplet model on the field shape Δ·ĥ
(models.field_shape), and Σ_k (E_k − ν_k)² is minimised with scipy.optimize.least_squares.
The term energies are homogeneous of degree one in (Δ, B, C), so a scan over Δ/B with the
best B for each ratio in closed form (B = Σ f_k ν_k / Σ f_k², f_k = E_k(Δ/B, 1, C/B)) gives the
start.  C is held at C = (C/B)·B (default 4.5, between the ratios used for the Tanabe–Sugano
diagrams, Tanabe & Sugano, J. Phys. Soc. Jpn. 9, 753 (1954) — from memory) unless three or
more bands are given and the bands depend on C independently (never for the highest
multiplicity of d², d³, d⁷, d⁸, whose terms hold no C); B is not fitted when the bands do not
depend on it (d¹, d⁹, high-spin d⁴ and d⁶: one ⁵D or ²D term).  Which parameters the bands fix is
read from the rank of the Jacobian (common practice).

The ground multiplicity is not known beforehand for d⁴–d⁷: each allowed multiplicity is tried
and a fit is kept only when its ground term really has that multiplicity at the fitted
parameters (untestable, and assumed, when B is not fixed); of those the smallest residual wins.
When none is consistent the bands are refused (InputError).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.optimize import least_squares

from dsplit.errors import InputError
from dsplit.models.field_shape import FieldShape, polyhedron_shape
from dsplit.models.free_ion import nephelauxetic_ratio
from dsplit.models.multiplet import DEFAULT_C_OVER_B, SUPERSCRIPT, allowed_multiplicities, solve_blocks

#: B and C/B of 3d complexes fall in these ranges (common practice); outside them the fit is flagged
PLAUSIBLE_B_CM1 = (200.0, 1300.0)
PLAUSIBLE_C_OVER_B = (3.0, 6.5)
_SCAN = np.concatenate([np.linspace(0.25, 10.0, 40), np.geomspace(10.5, 120.0, 60)])  # Δ/B start values


@dataclass(frozen=True)
class BandFit:
    """Δ, B, C fitted to measured bands (cm⁻¹); ``held`` names what was held and at what."""

    delta_cm1: float
    b_cm1: float | None
    c_cm1: float | None
    beta: float | None
    residual_cm1: float  # RMS over the bands, model − measured
    multiplicity: int  # ground multiplicity the bands were assigned to
    bands_cm1: tuple[float, ...]
    model_cm1: tuple[float, ...]  # model energies of the assigned terms
    assigned: tuple[str, ...]  # term labels, e.g. '⁴T2g'
    fitted: tuple[str, ...]  # among 'delta', 'B', 'C'
    held: dict[str, str] = field(default_factory=dict)
    notes: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"delta_cm1": self.delta_cm1, "B_cm1": self.b_cm1, "C_cm1": self.c_cm1, "beta": self.beta,
                "residual_cm1": self.residual_cm1}


def _terms(shape: FieldShape, d_count: int, multiplicity: int, delta: float, b: float, c: float):
    found = solve_blocks(shape.matrix(delta), b, c, d_count, multiplicity, shape.symmetry)
    return sorted(found, key=lambda t: t[0])


def excited_terms(shape: FieldShape, d_count: int, multiplicity: int, delta: float, b: float,
                  c: float) -> np.ndarray:
    """E_k − E_0 of the terms of one multiplicity (k ≥ 1), ascending."""
    e = np.array([t[0] for t in _terms(shape, d_count, multiplicity, delta, b, c)])
    return e[1:] - e[0]


def _lowest(shape: FieldShape, d_count: int, delta: float, b: float, c: float) -> dict[int, float]:
    return {m: _terms(shape, d_count, m, delta, b, c)[0][0] for m in allowed_multiplicities(d_count)}


def _rank(jac: np.ndarray) -> int:
    s = np.linalg.svd(jac, compute_uv=False)
    return int(np.sum(s > 1e-7 * max(s[0], 1e-300)))


@dataclass
class _Trial:
    params: np.ndarray  # (Δ, B, C)
    cost: float
    fitted: tuple[str, ...]


def _fit_one(shape: FieldShape, d_count: int, m: int, nu: np.ndarray, c_over_b: float,
             fit_c_allowed: bool, field_name: str) -> _Trial:
    k = len(nu)

    def model(p: np.ndarray) -> np.ndarray:
        return excited_terms(shape, d_count, m, p[0], p[1], p[2])[:k]

    # start: scan Δ/B with the best B in closed form
    best = None
    for x in _SCAN:
        f = model(np.array([x, 1.0, c_over_b]))
        ff = float(f @ f)
        b = float(f @ nu) / ff if ff > 0 else float(np.mean(nu)) / max(x, 1e-9)
        cost = float(np.sum((b * f - nu) ** 2))
        if best is None or cost < best[0]:
            best = (cost, x * b, b)
    start = np.array([best[1], best[2], c_over_b * best[2]])
    # which parameters do the bands fix?  (finite differences, relative steps)
    step = 1e-4 * np.maximum(np.abs(start), 1.0)
    jac = np.array([(model(start + dp) - model(start - dp)) / (2 * dp[i])
                    for i, dp in enumerate(np.diag(step))]).T
    names = ["delta"]
    if _rank(jac[:, :1]) < 1:
        raise InputError(field_name, "the bands do not depend on Δ")
    if _rank(np.column_stack([jac[:, 0], jac[:, 1] + c_over_b * jac[:, 2]])) == 2:
        names.append("B")
        if fit_c_allowed and _rank(jac) == 3:
            names.append("C")

    def unpack(q: np.ndarray) -> np.ndarray:
        delta = q[0]
        b = q[1] if "B" in names else start[1]
        c = q[2] if "C" in names else c_over_b * b
        return np.array([delta, b, c])

    q0 = start[: len(names)]
    res = least_squares(lambda q: model(unpack(q)) - nu, q0, bounds=(np.zeros(len(names)), np.inf),
                        x_scale=np.maximum(np.abs(q0), 1.0), xtol=1e-12, ftol=1e-12, gtol=1e-12)
    p = unpack(res.x)
    return _Trial(p, float(np.sum((model(p) - nu) ** 2)), tuple(names))


def fit_bands(d_count: int, geometry: FieldShape | Any, bands_cm1: Sequence[float],
              c_over_b: float = DEFAULT_C_OVER_B, metal: str | None = None, oxidation_state: int | None = None,
              field_name: str = "bands") -> BandFit:
    """Δ, B (and C) from measured spin-allowed bands (cm⁻¹) — see the module docstring.

    ``geometry``: a FieldShape, or a polyhedron (geometry.polyhedra.polyhedron(name)), whose
    σ-only AOM shape is then used.  ``metal``/``oxidation_state`` are needed only for β.  Bad
    bands raise InputError(field_name).
    """
    shape = geometry if isinstance(geometry, FieldShape) else polyhedron_shape(geometry)
    nu = np.sort(np.asarray([float(x) for x in bands_cm1]))
    if len(nu) == 0:
        raise InputError(field_name, "give at least one band in cm⁻¹")
    if np.any(nu <= 0) or not np.all(np.isfinite(nu)):
        raise InputError(field_name, "bands must be positive wavenumbers in cm⁻¹")
    if c_over_b <= 0:
        raise InputError("C/B", f"{c_over_b} is not a positive ratio C/B")
    trials = []
    for m in reversed(allowed_multiplicities(d_count)):
        available = len(excited_terms(shape, d_count, m, 10.0, 1.0, c_over_b))
        if available < len(nu):
            continue
        trial = _fit_one(shape, d_count, m, nu, c_over_b, len(nu) >= 3, field_name)
        lowest = _lowest(shape, d_count, *trial.params)
        # without a fitted B the ground multiplicity cannot be checked: the assignment is then assumed
        consistent = "B" not in trial.fitted or min(lowest, key=lambda mm: (round(lowest[mm], 6), -mm)) == m
        if consistent:
            trials.append((trial.cost, m, trial))
    if not trials:
        most = max(len(excited_terms(shape, d_count, m, 10.0, 1.0, c_over_b)) for m in allowed_multiplicities(d_count))
        if most < len(nu):
            raise InputError(field_name, f"{len(nu)} bands given but d^{d_count} has at most {most} spin-allowed "
                                         "excited terms in this geometry")
        raise InputError(field_name, f"no consistent fit: for every ground multiplicity of d^{d_count} tried, the "
                                     "fitted Δ and B put another multiplicity lowest; check that these are "
                                     "spin-allowed d–d bands of one ion")
    _, m, trial = min(trials, key=lambda t: t[0])
    delta, b, c = (float(x) for x in trial.params)
    terms = _terms(shape, d_count, m, delta, b, c)
    model = np.array([t[0] for t in terms[1:len(nu) + 1]]) - terms[0][0]
    labels = tuple(f"{str(m).translate(SUPERSCRIPT)}{t[1].irrep}" for t in terms[1:len(nu) + 1])
    held: dict[str, str] = {}
    notes: list[str] = []
    if "B" not in trial.fitted:
        held["B"] = "not determined: these bands do not depend on B"
    if "C" not in trial.fitted:
        held["C"] = (f"C/B = {c_over_b:g}" if "B" in trial.fitted else "not determined")
    if "B" not in trial.fitted and len(allowed_multiplicities(d_count)) > 1:
        notes.append(f"ground 2S+1 = {m} assumed: the bands do not fix B, so the spin state is not tested")
    others = [mm for cost, mm, _ in trials if mm != m and cost <= trial.cost + 1.0 * len(nu)]
    if others:
        notes.append("the bands fit equally well with a ground of 2S+1 = " + ", ".join(map(str, others))
                     + "; the magnetic moment or more bands decide")
    if "B" in trial.fitted and not PLAUSIBLE_B_CM1[0] <= b <= PLAUSIBLE_B_CM1[1]:
        notes.append(f"fitted B = {b:.0f} cm⁻¹ is implausible for a complex; the bands may not be the lowest "
                     "spin-allowed ones (e.g. the first band lies in the infrared and was not measured)")
    if "C" in trial.fitted and not PLAUSIBLE_C_OVER_B[0] <= c / b <= PLAUSIBLE_C_OVER_B[1]:
        notes.append(f"fitted C/B = {c / b:.2f} is implausible; one of the bands may not be a d–d band of this ion")
    b_out = b if "B" in trial.fitted else None
    c_out = c if "B" in trial.fitted else None
    return BandFit(delta_cm1=delta, b_cm1=b_out, c_cm1=c_out,
                   beta=nephelauxetic_ratio(b_out, metal, oxidation_state),
                   residual_cm1=float(np.sqrt(np.mean((model - nu) ** 2))), multiplicity=m,
                   bands_cm1=tuple(float(x) for x in nu), model_cm1=tuple(float(x) for x in model),
                   assigned=labels, fitted=trial.fitted, held=held, notes=tuple(notes))
