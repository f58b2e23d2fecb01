"""dⁿ electron filling of split d levels, CFSE, pairing, ground spin state, μ_spin-only.

For n d electrons with m unpaired (m ≡ n mod 2, m ≤ min(n, 10 − n)) the lowest
configuration puts n_α = (n + m)/2 electrons in the n_α lowest orbitals and
n_β = (n − m)/2 in the n_β lowest, so there are n_β pairs.  With ε̄ = Σ g_i ε_i / 5
the barycentre,

    CFSE = Σ_i n_i (ε_i − ε̄)
    E    = CFSE + (pairs − pairs_free ion) · P

where the free ion is high spin (Hund), pairs_free = (n − min(n, 10 − n))/2, and P
is the mean pairing energy (Figgis & Hitchman, Ligand Field Theory and Its
Applications, 2000, ch. 1; the same bookkeeping as the CFSE tables of Shriver &
Atkins, Inorganic Chemistry — from memory).  Spin-only moment
μ = √(m(m + 2)) μB (same sources).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class SpinConfiguration:
    """One dⁿ configuration over ordered d sets."""

    d_count: int
    unpaired: int
    occupations: tuple[int, ...]  # electrons per set, same order as the input sets
    alpha: tuple[int, ...]
    beta: tuple[int, ...]
    cfse: float  # Σ n_i (ε_i − ε̄), energy unit of the input
    pairs: int
    extra_pairs: int  # pairs − free-ion pairs

    @property
    def multiplicity(self) -> int:
        """2S + 1 = unpaired + 1."""
        return self.unpaired + 1

    def energy(self, pairing_energy: float) -> float:
        """CFSE + extra_pairs · P."""
        return self.cfse + self.extra_pairs * pairing_energy


def _check(energies: np.ndarray, degeneracies: np.ndarray, d_count: int) -> None:
    if len(energies) != len(degeneracies):
        raise ValueError("energies and degeneracies differ in length")
    if int(np.sum(degeneracies)) != 5 or np.any(degeneracies < 1):
        raise ValueError(f"degeneracies must be positive and sum to 5 (got {list(degeneracies)})")
    if not 0 <= d_count <= 10:
        raise ValueError(f"d_count must be 0..10 (got {d_count})")


def _fill(count: int, order: np.ndarray, degeneracies: np.ndarray) -> np.ndarray:
    """Put one electron of a spin into each of the ``count`` lowest orbitals."""
    out = np.zeros(len(degeneracies), dtype=int)
    for i in order:
        take = min(count, int(degeneracies[i]))
        out[i] = take
        count -= take
    return out


def configuration(
    energies: np.ndarray, degeneracies: np.ndarray, d_count: int, unpaired: int
) -> SpinConfiguration:
    """The lowest configuration of dⁿ with the given number of unpaired electrons."""
    e = np.asarray(energies, dtype=float)
    g = np.asarray(degeneracies, dtype=int)
    _check(e, g, d_count)
    if unpaired % 2 != d_count % 2 or not 0 <= unpaired <= min(d_count, 10 - d_count):
        raise ValueError(f"d{d_count} cannot have {unpaired} unpaired electrons")
    order = np.argsort(e, kind="stable")
    n_a, n_b = (d_count + unpaired) // 2, (d_count - unpaired) // 2
    a, b = _fill(n_a, order, g), _fill(n_b, order, g)
    occ = a + b
    bary = float(np.dot(g, e)) / 5.0
    free_pairs = (d_count - min(d_count, 10 - d_count)) // 2
    return SpinConfiguration(
        d_count=d_count,
        unpaired=unpaired,
        occupations=tuple(int(x) for x in occ),
        alpha=tuple(int(x) for x in a),
        beta=tuple(int(x) for x in b),
        cfse=float(np.dot(occ, e - bary)),
        pairs=n_b,
        extra_pairs=n_b - free_pairs,
    )


def configurations(
    energies: np.ndarray, degeneracies: np.ndarray, d_count: int
) -> list[SpinConfiguration]:
    """Every spin state of dⁿ, most unpaired electrons first."""
    _check(np.asarray(energies, dtype=float), np.asarray(degeneracies, dtype=int), d_count)
    top = min(d_count, 10 - d_count)
    return [configuration(energies, degeneracies, d_count, m) for m in range(top, -1, -2)]


def high_spin(energies: np.ndarray, degeneracies: np.ndarray, d_count: int) -> SpinConfiguration:
    """Weak-field limit: the most unpaired electrons."""
    return configurations(energies, degeneracies, d_count)[0]


def _lowest(confs: list[SpinConfiguration], energy: list[float], scale: float) -> SpinConfiguration:
    """Lowest energy; within 1e-9·scale of it, the most unpaired electrons (Hund)."""
    e_min = min(energy)
    near = [c for c, e in zip(confs, energy) if e <= e_min + 1e-9 * scale]
    return max(near, key=lambda c: c.unpaired)


def low_spin(energies: np.ndarray, degeneracies: np.ndarray, d_count: int) -> SpinConfiguration:
    """Strong-field limit (P → 0⁺): lowest CFSE; among equal CFSE, the most unpaired."""
    confs = configurations(energies, degeneracies, d_count)
    scale = float(np.max(np.abs(energies))) or 1.0
    return _lowest(confs, [c.cfse for c in confs], scale)


def ground_spin_state(
    energies: np.ndarray, degeneracies: np.ndarray, d_count: int, pairing_energy: float
) -> SpinConfiguration:
    """Configuration of lowest CFSE + extra_pairs·P; a tie goes to the higher spin."""
    confs = configurations(energies, degeneracies, d_count)
    scale = max(float(np.max(np.abs(energies))), abs(pairing_energy)) or 1.0
    return _lowest(confs, [c.energy(pairing_energy) for c in confs], scale)


def spin_only_moment(unpaired: int) -> float:
    """μ_spin-only / μB = √(n(n + 2)) for n unpaired electrons."""
    if unpaired < 0:
        raise ValueError("unpaired must be ≥ 0")
    return float(np.sqrt(unpaired * (unpaired + 2)))


#: spin contamination flagged above 10 % of S(S+1), or 0.1 absolute for S = 0 and ½ (common practice)
CONTAMINATION_RELATIVE = 0.10
CONTAMINATION_FLOOR = 0.10
CONTAMINATION_RULE = (f"|⟨S²⟩ − S(S+1)| > max({CONTAMINATION_FLOOR}, {CONTAMINATION_RELATIVE:.0%} of S(S+1))")


def spin_contamination(spin_square: float, multiplicity: int) -> tuple[float, float, bool]:
    """(S(S+1), ⟨S²⟩ − S(S+1), flagged) for a state of 2S+1 = ``multiplicity`` (rule above)."""
    s = (multiplicity - 1) / 2
    expected = s * (s + 1)
    dev = spin_square - expected
    return expected, dev, abs(dev) > max(CONTAMINATION_FLOOR, CONTAMINATION_RELATIVE * expected)
