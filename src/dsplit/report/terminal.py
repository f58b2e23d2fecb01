"""Terminal output of ``dsplit compute``: the run summary and the frontier-orbital table."""

from __future__ import annotations

from pathlib import Path
from typing import Any

FRONTIER_ROWS = 6  # orbitals shown below the HOMO and above the LUMO, per spin


def frontier_rows(result: dict[str, Any], spin: str, around: int = FRONTIER_ROWS) -> list[dict[str, Any]]:
    """Orbitals of one spin from HOMO−around to LUMO+around (in result.json form)."""
    rows = [o for o in result["orbitals"] if o["spin"] == spin]
    occ = [i for i, o in enumerate(rows) if o["occupation"] > 1e-6]
    homo = max(occ) if occ else -1
    lo, hi = max(0, homo - around + 1), min(len(rows), homo + around + 1)
    return rows[lo:hi]


def print_run(result: dict[str, Any], out_dir: Path) -> None:
    from rich.table import Table

    from dsplit.console import output_console

    c = output_console()
    cx = result["complex"]
    m = result["method"]
    ok = result["converged"] and result["configuration_verified"]
    c.print(f"[bold]{result['name']}[/bold]: {cx['formula']}  {cx['geometry']} ({cx['exact_point_group']}), "
            f"d^{cx['d_electrons']}, 2S+1 = {result['multiplicity']}")
    c.print(f"{m['theory']}/{m['basis']}  {m['reference']}  solvent: {m['solvent']['name']} "
            f"({m['solvent']['reason']})")
    state = "[green]converged and verified[/green]" if ok else "[red]NOT a result[/red]"
    c.print(f"SCF: {state}; configuration {result['configuration']} (target {result['configuration_target']}); "
            f"rung {result['scf']['rung']}, {result['scf']['iterations']} cycles")
    if result.get("energy_hartree") is not None:
        c.print(f"E = {result['energy_hartree']:.8f} Eh   ⟨S²⟩ = {result['spin_square']:.4f} "
                f"(expected {result['spin_square_expected']:.4f})")
    spins = sorted({o["spin"] for o in result["orbitals"]}, key=["restricted", "alpha", "beta"].index)
    for spin in spins:
        t = Table(title=f"frontier orbitals ({spin})")
        for col in ("#", "E / eV", "occ", "irrep", "PySCF", "metal d %", "ligand %", "LF"):
            t.add_column(col, justify="right")
        for o in reversed(frontier_rows(result, spin)):
            t.add_row(str(o["index"]), f"{o['energy_eV']:.3f}", f"{o['occupation']:.0f}",
                      str(o.get("donor_irrep") or o.get("irrep", "")), str(o.get("irrep_subgroup") or ""),
                      f"{100 * o['metal_d']:.0f}" if "metal_d" in o else "",
                      f"{100 * o['ligand']:.0f}" if "ligand" in o else "",
                      "●" if o.get("in_manifold") else "")
        c.print(t)
    split = result.get("splitting")
    if split:
        t = Table(title="ligand-field splitting")
        for col in ("estimator", "Δ / eV", "Δ / cm⁻¹", "measures"):
            t.add_column(col)
        for name, est in split.items():
            if isinstance(est, dict) and est.get("delta_eV") is not None:
                t.add_row(name, f"{est['delta_eV']:.3f}", f"{est['delta_cm1']:.0f}", str(est.get("measures", "")))
        c.print(t)
    for w in result.get("warnings", []):
        c.print(f"[yellow]warning:[/yellow] {w}")
    c.print(f"written: {out_dir}/result.json")
    c.print("[dim]" + " ".join(result.get("cautions", [])) + "[/dim]")
