"""Synthetic result.json documents for the report tests (no tests here; no SCF is run).

Keys follow /tmp/interfaces.md (schema dsplit.result v1 plus the splitting, models,
checks, level_diagram, measured, spin_states and optimization sections).  Energies are
invented but internally consistent: every eV / cm⁻¹ / kJ mol⁻¹ triple is converted with
dsplit.units, as the pipeline does.
"""

from __future__ import annotations

import copy
from typing import Any

from dsplit.units import ev_to_cm1, ev_to_hartree, hartree_to_kjmol

# Oh orbitals → D2h labels (t2g → b1g+b2g+b3g, eg → ag+ag, t1u → b1u+b2u+b3u; correlation
# table in Cotton, Chemical Applications of Group Theory, 3rd ed., Appendix — from memory).
_D2H = {"a1g": ["Ag"], "t1u": ["B1u", "B2u", "B3u"], "eg": ["Ag", "Ag"], "t1g": ["B1g", "B2g", "B3g"],
        "t2g": ["B1g", "B2g", "B3g"]}
# (irrep, energy / eV, metal d share, ligand share, in the d manifold)
_LEVELS = [("a1g", -22.0, 0.02, 0.90, False), ("t1u", -20.5, 0.0, 0.95, False), ("eg", -19.8, 0.22, 0.76, False),
           ("t1g", -17.2, 0.0, 1.0, False), ("t2g", -12.0, 0.85, 0.15, True), ("eg", -8.5, 0.70, 0.30, True),
           ("a1g", -5.0, 0.0, 0.3, False), ("t1u", -4.2, 0.0, 0.2, False)]


def orbital_rows(spin: str, n_occupied: int, shift: float = 0.0, occ: float = 2.0) -> list[dict[str, Any]]:
    """One spin channel: the levels above, lowest ``n_occupied`` orbitals occupied."""
    rows: list[dict[str, Any]] = []
    for irrep, e, d, lig, man in _LEVELS:
        for sub in _D2H[irrep]:
            i = len(rows)
            rows.append({"index": i, "spin": spin, "energy_eV": e + shift + 1e-6 * i,
                         "occupation": occ if i < n_occupied else 0.0, "irrep_d2h": sub, "irrep_subgroup": sub,
                         "irrep": irrep, "irrep_weight": 1.0, "donor_irrep": None, "metal_d": d, "metal_s": 0.0,
                         "metal_p": 0.0, "ligand": lig, "other": 1.0 - d - lig, "per_ligand": [lig / 6] * 6,
                         "in_manifold": man})
    return rows


def _delta(ev: float, measures: str, **extra: Any) -> dict[str, Any]:
    return {"delta_eV": ev, "delta_cm1": ev_to_cm1(ev), "delta_kJmol": hartree_to_kjmol(ev_to_hartree(ev)),
            "measures": measures, **extra}


def _manifold(spin: str, rows: list[dict[str, Any]]) -> list[dict[str, Any]]:
    out = []
    for irrep in ("t2g", "eg"):
        sel = [o for o in rows if o["in_manifold"] and o["irrep"] == irrep]
        out.append({"spin": spin, "irrep": irrep, "degeneracy": len(sel), "energy_eV": sel[0]["energy_eV"],
                    "occupation": sum(o["occupation"] for o in sel), "metal_d": sel[0]["metal_d"],
                    "orbitals": [o["index"] for o in sel]})
    return out


def full_doc(name: str = "coating-sample-2") -> dict[str, Any]:
    """A converged, verified closed-shell Oh d6 run with every optional section."""
    rows = orbital_rows("restricted", 12)  # d6 low spin: a1g t1u eg t1g t2g filled
    roots = [{"energy_eV": 2.61, "energy_cm1": ev_to_cm1(2.61), "oscillator_strength": 0.0, "symmetry": "T1g",
              "d_d": True},
             {"energy_eV": 3.40, "energy_cm1": ev_to_cm1(3.40), "oscillator_strength": 1.2e-4, "symmetry": "T2g",
              "d_d": True}]
    return {
        "schema": "dsplit.result", "schema_version": 1, "name": name, "spec_hash": "ab12",
        "spec": {"experiment": {"measured_bands_cm1": [21000.0], "source": "handbook, from memory"}},
        "complex": {"formula": "[Co(NH3)6]3+", "metal": "Co", "oxidation_state": 3, "charge": 3, "d_electrons": 6,
                    "geometry": "octahedral", "isomer": "only", "point_group": "Oh", "exact_point_group": "D3d",
                    "multiplicity": 1, "multiplicity_source": "ligand-field default (strong field: low spin)",
                    "multiplicities": [1, 3, 5], "configuration_target": "t2g^6 eg^0",
                    "configuration_source": "ligand-field ground configuration",
                    "high_spin_configuration": "t2g^4 eg^2", "low_spin_configuration": "t2g^6 eg^0",
                    "d_sets": [{"label": "t2g", "orbitals": ["xy", "yz", "xz"]},
                               {"label": "eg", "orbitals": ["z2", "x2-y2"]}],
                    "metal_ligand_distances": {"ammine": 1.97},
                    "ligands": [{"ligand": "ammine", "site": k, "distance": 1.97, "direction": [0, 0, 1]}
                                for k in range(6)], "atoms": [], "notes": ["a start distance"]},
        "method": {"theory": "B3LYP", "exact_exchange": 0.2, "basis": "def2-SVP", "ecp": None, "density_fitting": True,
                   "auxbasis": "def2-svp-jkfit", "solvent": {"name": "water", "epsilon": 78.36, "model": "PCM",
                                                             "reason": "charge 3"},
                   "reference": "RKS", "grid_level": 3, "threads": 2, "nao": 200, "symmetry_group_scf": "D2h"},
        "converged": True, "configuration_verified": True, "configuration": "t2g^6 eg^0",
        "configuration_target": "t2g^6 eg^0", "multiplicity": 1, "energy_hartree": -1700.123456789,
        "spin_square": 0.0, "spin_square_expected": 0.0,
        "scf": {"rung": "diis", "iterations": 14, "gradient_norm": 2e-6,
                "rungs": [{"rung": "diis", "converged": True, "cycles": 14, "energy_hartree": -1700.1,
                           "gradient_norm": 2e-6, "seconds": 3.0}],
                "stability": {"lowest_hessian_eigenvalue": 0.2, "instabilities_followed": 0, "stable": True},
                "targeting": None},
        "orbitals": rows,
        "point_group": {"labels": "D3d", "donor_set": "Oh", "scf_subgroup": "D2h"},
        "manifold": _manifold("restricted", rows), "manifold_warnings": [], "salcs": None, "label_disagreements": [],
        "splitting": {
            "orbital": _delta(3.5, "t2g→eg orbital-energy gap (not a state energy)", gap="eg − t2g", notes=[],
                              per_spin={"restricted": _delta(3.5, "")}),
            "state": _delta(2.85, "first spin-allowed band ≈ Δo − C", excited_configuration="t2g^5 eg^1",
                            energy_ground_hartree=-1700.1, energy_excited_hartree=-1700.0, method="ΔSCF (MOM)",
                            triplet={"converged": True, "configuration_verified": True, "delta_eV": 2.5},
                            notes=["singlet purified from the triplet"]),
            "excitation": _delta(2.61, "lowest d–d root", roots=roots, warning="TDA, 6 roots"),
        },
        "models": {"aom_fit": {"e_sigma": {"ammine": 7200.0}, "e_pi": {"ammine": 0.0}, "rms": 12.5, "unit": "cm-1",
                               "note": "e_pi fixed"},
                   "predictions": {"set_order": ["t2g", "eg"], "degeneracies": [3, 2], "delta_t_over_delta_o": 4 / 9,
                                   "cfse": {"HS": {"configuration": "t2g^4 eg^2", "cfse_delta_units": -0.4,
                                                   "unpaired": 4, "spin_only_moment_muB": 4.899},
                                            "LS": {"configuration": "t2g^6 eg^0", "cfse_delta_units": -2.4,
                                                   "unpaired": 0, "spin_only_moment_muB": 0.0}},
                                   "expected_ground_multiplicity": 1}},
        "band_meaning": {"text": "¹A1g → ¹T1g: ν1 ≈ Δo − C", "measures_delta_directly": False},
        "checks": [{"name": "set order", "verdict": "agrees", "numbers": {"predicted": ["t2g", "eg"]},
                    "detail": "same"},
                   {"name": "estimators agree", "verdict": "differs", "numbers": {"relative_spread": 0.29},
                    "detail": ""},
                   {"name": "Δt/Δo = 4/9", "verdict": "not applicable", "numbers": {}, "detail": "no Td run"}],
        "level_diagram": {"metal": [{"label": "Co 3d", "energy_eV": -10.5}, {"label": "Co 4s", "energy_eV": -6.0}],
                          "ligand": [{"label": "σ (a1g+eg+t1u)", "energy_eV": -19.5}, {"label": "lone pairs",
                                                                                        "energy_eV": -16.0}]},
        "spin_states": [
            {"multiplicity": 1, "configuration": "t2g^6 eg^0", "energy_hartree": -1700.1, "relative_kJmol": 0.0,
             "relative_kcalmol": 0.0, "relative_cm1": 0.0, "relative_eV": 0.0, "spin_square": 0.0,
             "distances": {"ammine": 1.97}, "converged": True, "configuration_verified": True},
            {"multiplicity": 5, "configuration": "t2g^4 eg^2", "energy_hartree": -1700.05, "relative_kJmol": 131.3,
             "relative_kcalmol": 31.4, "relative_cm1": 10975.0, "relative_eV": 1.361, "spin_square": 6.02,
             "distances": {"ammine": 2.17}, "converged": True, "configuration_verified": True},
            {"multiplicity": 3, "configuration": "t2g^5 eg^1", "energy_hartree": None, "relative_kJmol": None,
             "spin_square": None, "converged": False, "configuration_verified": False}],
        "ground_multiplicity": 1,
        "functional_spread": [{"theory": "HF", "exact_exchange": 1.0, "delta_hs_ls_kJmol": -60.0},
                              {"theory": "PBE", "exact_exchange": 0.0, "delta_hs_ls_kJmol": 180.0},
                              {"theory": "B3LYP", "exact_exchange": 0.2, "delta_hs_ls_kJmol": 131.3}],
        "optimization": {"mode": "symmetric", "steps": 4, "final_gradient": 3e-5, "gradient_threshold": 1e-4,
                         "distances": {"ammine": 1.97}, "converged": True,
                         "history": [{"step": 0, "energy_hartree": -1700.0}, {"step": 1, "energy_hartree": -1700.1}]},
        "provenance": {"versions": {"dsplit": "0.1.0"}, "machine": {"cores": 2},
                       "timings": {"calculation": {"scf": 3.0}, "analysis": None}},
        "notes": ["a note"], "warnings": ["a warning"],
        "cautions": ["Computed values are approximations.", "Confirm by experiment.", "Follow local safety rules."],
    }


def open_shell_doc() -> dict[str, Any]:
    """An unrestricted d3 variant (α and β channels, per-spin orbital estimator)."""
    doc = full_doc("open-shell")
    a = orbital_rows("alpha", 12, occ=1.0)
    b = orbital_rows("beta", 9, shift=1.5, occ=1.0)
    doc.update(orbitals=a + b, multiplicity=4, configuration="t2g^3 eg^0", manifold=_manifold("alpha", a)
               + _manifold("beta", b), spin_square=3.76, spin_square_expected=3.75)
    doc["splitting"]["orbital"]["per_spin"] = {"alpha": _delta(3.4, "α gap"), "beta": _delta(3.6, "β gap")}
    doc["spec"] = {}
    doc["measured"] = [{"band_cm1": 17400.0, "source": "invented"}]
    return doc


#: numbers that only a splitting, model or check section could show
LEFTOVER_CM1 = 12345.678
LEFTOVER_EV = 9.87654


def failed_doc() -> dict[str, Any]:
    """An unconverged run that (wrongly) still carries splitting, manifold, model and check numbers."""
    doc = copy.deepcopy(full_doc("failed-run"))
    for o in doc["orbitals"]:
        for k in ("irrep", "donor_irrep", "metal_d", "ligand", "in_manifold", "metal_s", "metal_p", "other"):
            o.pop(k, None)
    doc.update(converged=False, configuration_verified=False, configuration="t2g^5 eg^1", energy_hartree=None,
               splitting_withheld="the calculation did not converge or its configuration was not verified",
               splitting={"state": {"delta_eV": LEFTOVER_EV, "delta_cm1": LEFTOVER_CM1, "delta_kJmol": 1.0}},
               manifold=[{"spin": "restricted", "irrep": "eg", "degeneracy": 2, "energy_eV": LEFTOVER_EV,
                          "occupation": 0, "metal_d": 0.7, "orbitals": [12, 13]}],
               models={"aom_fit": {"e_sigma": {"ammine": LEFTOVER_CM1}}},
               checks=[{"name": "estimators agree", "verdict": "agrees", "numbers": {"x": LEFTOVER_CM1}}])
    doc["scf"].update(rung="newton", iterations=150)
    for k in ("spin_states", "functional_spread", "optimization", "ground_multiplicity"):
        doc.pop(k)
    return doc
