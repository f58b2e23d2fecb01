"""Continuum solvents: named dielectric constants and the default rule.

Static dielectric constants at 25 °C from the CRC Handbook of Chemistry and
Physics ("Permittivity (dielectric constant) of liquids"), from memory to the
digits given.  Default rule of this project: PCM water when |charge| ≥ 2 (a
highly charged complex in the gas phase has unbound, positive-energy orbitals),
no solvent otherwise.
"""

from __future__ import annotations

from dataclasses import dataclass

from dsplit.errors import InputError

DIELECTRIC: dict[str, float] = {
    "water": 78.36,
    "dmso": 46.83,
    "dmf": 37.22,
    "acetonitrile": 35.69,
    "methanol": 32.61,
    "ethanol": 24.85,
    "acetone": 20.49,
    "dichloromethane": 8.93,
    "thf": 7.43,
    "chloroform": 4.71,
    "toluene": 2.37,
    "benzene": 2.27,
    "hexane": 1.88,
}
ALIASES = {"h2o": "water", "dimethylsulfoxide": "dmso", "mecn": "acetonitrile", "meoh": "methanol",
           "etoh": "ethanol", "dcm": "dichloromethane", "ch2cl2": "dichloromethane",
           "tetrahydrofuran": "thf", "chcl3": "chloroform"}


@dataclass(frozen=True)
class Solvent:
    name: str  # "none", a table name, or "eps=…"
    epsilon: float | None
    reason: str

    @property
    def is_gas_phase(self) -> bool:
        return self.epsilon is None


def resolve_solvent(value: str | float | None, charge: int) -> Solvent:
    """The solvent for a run: spec value, or the default rule for ``None``."""
    if value is None:
        if abs(charge) >= 2:
            return Solvent("water", DIELECTRIC["water"], f"default: PCM water because |charge| = {abs(charge)} ≥ 2")
        return Solvent("none", None, "default: gas phase because |charge| < 2")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        if value < 1.0:
            raise InputError("method.solvent", f"a dielectric constant must be ≥ 1, got {value}")
        return Solvent(f"eps={float(value):g}", float(value), "spec: dielectric constant")
    name = str(value).strip().lower()
    if name in ("none", "gas", "vacuum"):
        return Solvent("none", None, "spec: gas phase")
    name = ALIASES.get(name, name)
    if name not in DIELECTRIC:
        raise InputError("method.solvent", f"unknown solvent '{value}'; known: none, {', '.join(DIELECTRIC)}, "
                                           "or a dielectric constant")
    return Solvent(name, DIELECTRIC[name], "spec")
