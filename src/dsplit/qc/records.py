"""Records the calculation stage hands on: typed, read-only for every later stage.

- ``Calculation``: a finished SCF (converged or not) with everything later stages read;
- ``Transition``: a chosen d–d excitation (hole, particle, d sets, spin);
- ``DeltaScfRecord``, ``TdaRecord``: the state and excitation estimators' calculations.

Analysis and reporting import records from here, never the runners (qc.engine,
qc.excited, …) that make them.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from dsplit.complex import Complex
from dsplit.qc.dcharacter import SetPick, d_amplitudes, d_weights, orthogonal_projector
from dsplit.qc.ladder import RungRecord
from dsplit.qc.setup import MethodSetup
from dsplit.qc.targeting import orbital_symmetries


def spin_channels(mf) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """(mo_coeff, mo_occ, mo_energy) per spin channel; ROHF split into α/β occupations."""
    occ = np.asarray(mf.mo_occ)
    if occ.ndim == 2:
        return [(mf.mo_coeff[s], occ[s], mf.mo_energy[s]) for s in (0, 1)]
    if (occ == 1).any():  # restricted open shell: same orbitals, α = occ > 0, β = occ == 2
        return [(mf.mo_coeff, (occ > 0).astype(float), mf.mo_energy),
                (mf.mo_coeff, (occ > 1).astype(float), mf.mo_energy)]
    return [(mf.mo_coeff, occ, mf.mo_energy)]


@dataclass
class Calculation:
    """A finished run (converged or not) with everything later stages read."""

    complex: Complex
    setup: MethodSetup
    mol: Any  # pyscf.gto.Mole
    mf: Any  # the PySCF mean-field object (SCF, DFT; with DF, PCM, point charges)
    multiplicity: int
    target_occupations: list[int]
    target_alpha: list[int]
    target_beta: list[int]
    converged: bool
    configuration_verified: bool
    configuration_found: str
    picks: list[list[SetPick]]  # per spin channel (1 for restricted closed shell)
    rungs: list[RungRecord]
    stability_lowest: float | None
    stability_followed: int
    targeting: str | None  # None, "irrep_nelec" or "maximum-overlap"
    symmetry_group: str  # PySCF's group used in the SCF ("C1" without symmetry)
    timings: dict[str, float]
    notes: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    log_path: Path | None = None
    chk_path: Path | None = None
    _cache: dict = field(default_factory=dict, init=False, repr=False, compare=False)

    @property
    def ok(self) -> bool:
        return self.converged and self.configuration_verified

    @property
    def energy_hartree(self) -> float:
        return float(self.mf.e_tot)

    @property
    def unrestricted(self) -> bool:
        return np.asarray(self.mf.mo_occ).ndim == 2

    @property
    def channels(self) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
        """(mo_coeff, mo_occ, mo_energy) per spin channel (see :func:`spin_channels`)."""
        return spin_channels(self.mf)

    def abelian_labels(self, channel: int) -> list[str] | None:
        """PySCF's Abelian-subgroup label of every MO of one channel (None without symmetry)."""
        key = ("abelian", channel)
        if key not in self._cache:
            self._cache[key] = orbital_symmetries(self.mf, self.channels[channel][0])
        return self._cache[key]

    def d_weights(self, channel: int) -> np.ndarray:
        """(5, nmo) metal-d weights of one channel's MOs (qc.dcharacter.d_weights)."""
        key = ("d_weights", channel)
        if key not in self._cache:
            if "projector" not in self._cache:
                self._cache["projector"] = orthogonal_projector(self.mol)
            self._cache[key] = d_weights(self.mol, self.channels[channel][0], self._cache["projector"])
        return self._cache[key]

    def d_amplitudes(self, channel: int, mos: list[int]) -> np.ndarray:
        """(5, len(mos)) signed frame-d amplitudes of MOs of one channel (qc.dcharacter.d_amplitudes)."""
        if "projector" not in self._cache:
            self._cache["projector"] = orthogonal_projector(self.mol)
        return d_amplitudes(self.mol, self.channels[channel][0], self._cache["projector"], mos)

    def spin_square(self) -> tuple[float, float]:
        """(⟨S²⟩, 2S+1) from PySCF."""
        if not self.unrestricted:
            s = (self.multiplicity - 1) / 2
            return s * (s + 1), float(self.multiplicity)
        ss, m = self.mf.spin_square()
        return float(ss), float(m)


@dataclass(frozen=True)
class Transition:
    """One d–d excitation in one spin: the hole and particle MOs and the d sets they belong to."""

    spin: int  # 0 α, 1 β
    lower: int  # index of the lower d set
    upper: int
    hole: int  # MO index
    particle: int
    component: str | None = None  # e.g. "B2g ⊂ T2g (D4h)" when a pure component was chosen


@dataclass(frozen=True)
class DeltaScfRecord:
    """The state estimator's calculations: Δ = E(excited) − E(ground) (closed shells: purified)."""

    transition: Transition
    excited: Calculation  # the excited SCF that counts (converged or not)
    ground: Calculation  # what it is measured from: the SCF ground or the restricted-open one
    route: str  # how the excited SCF was held (block occupations / maximum overlap [, restricted open])
    triplet: Calculation | None = None  # closed shells: the M_S = 1 partner of the mixed determinant
    notes: tuple[str, ...] = ()
    seconds: float = 0.0

    @property
    def closed_shell(self) -> bool:
        return self.triplet is not None


@dataclass(frozen=True)
class TdaRecord:
    """TDA/CIS roots of one request; ``error`` set when PySCF could not run them."""

    method: str  # "TDA" or "CIS"
    n_roots: int
    symmetry_block: str | None
    energies_hartree: tuple[float, ...] = ()
    converged: tuple[bool, ...] = ()
    amplitudes: tuple = ()  # per root: X per spin (occupied × virtual), as PySCF's td.xy[k][0]
    oscillator_strengths: tuple[float | None, ...] = ()
    notes: tuple[str, ...] = ()
    error: str | None = None
    seconds: float = 0.0
