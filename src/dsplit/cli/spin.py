"""``dsplit spin-states`` and ``dsplit optimize``.

Thin shells over dsplit.api.spin: parse, call, print, exit codes (0 fine, 2 bad input
before any SCF, 3 a state or an optimisation that did not converge / verify).
Heavy modules are imported inside the commands.
"""

from __future__ import annotations

import sys

import click

from dsplit.cli.options import ProgressLine, error_log_here, handles_errors, print_json, resource_options, \
    spec_options


def _fmt(x, digits: int) -> str:
    return "—" if x is None else f"{x:.{digits}f}"


def _print_ladder(doc: dict, out_dir) -> None:
    from rich.table import Table

    from dsplit.console import output_console

    c = output_console()
    multi = len({s["theory"] for s in doc["spin_states"]}) > 1
    t = Table(title=f"{doc['name']}: {doc['complex']['formula']} spin states")
    for col in (["theory"] if multi else []) + ["2S+1", "configuration", "ΔE kJ/mol", "kcal/mol", "cm⁻¹", "eV",
                                                 "⟨S²⟩ (S(S+1))", "M–L / Å", "status"]:
        t.add_column(col)
    for s in doc["spin_states"]:
        status = "verified" if s["verified"] else "NOT verified"
        if s.get("spin_contaminated"):
            status += ", spin-contaminated"
        dist = ", ".join(f"{k} {v:.3f}" for k, v in (s["distances"] or {}).items())
        ss = f"{_fmt(s['spin_square'], 3)} ({s['spin_square_expected']:.2f})"
        t.add_row(*([s["theory"]] if multi else []), str(s["multiplicity"]), s["configuration"],
                  _fmt(s["relative_kJmol"], 1), _fmt(s["relative_kcalmol"], 1), _fmt(s["relative_cm1"], 0),
                  _fmt(s["relative_eV"], 3), ss, dist, status)
    c.print(t)
    g = doc["ground_multiplicity"]
    c.print(f"ground state ({doc['ground_theory']}): " + (f"2S+1 = {g}" if g is not None else
                                                         f"withheld — {doc.get('ground_withheld')}"))
    chk = doc["checks"][0]
    c.print(f"ligand-field expectation: 2S+1 = {doc['spin_prediction']['multiplicity']} "
            f"({doc['spin_prediction']['reason']}) — {chk['verdict']}")
    for row in doc["functional_spread"]:
        c.print(f"  {row['theory']:<8} exact exchange {row['exact_exchange']:.0%}  "
                f"ΔE(HS−LS) = {_fmt(row['delta_hs_ls_kJmol'], 1)} kJ/mol")
    c.print(f"written: {out_dir}")


@click.command("spin-states")
@handles_errors
@spec_options()
@resource_options
@click.option("--multiplicities", help="Comma-separated 2S+1 values (default: every one allowed for dⁿ).")
@click.option("--functionals", help="Comma-separated functionals for a spread, e.g. HF,PBE,B3LYP,TPSSh.")
@click.option("--optimize", "optimize_states", is_flag=True, help="Optimise the metal–ligand distances per state.")
@click.option("--no-reuse", is_flag=True, help="Start every SCF from atoms instead of a neighbour's checkpoint.")
@click.option("--out", "out_dir", type=click.Path(), help="Run folder (default ./NAME-spin-states).")
@click.option("--quiet", is_flag=True, help="No progress line, no table.")
@click.option("--json", "as_json", is_flag=True, help="Print result.json to stdout.")
def spin_states_cmd(spec, threads, memory_mb, multiplicities, functionals, optimize_states, no_reuse, out_dir,
                    quiet, as_json) -> None:
    """Spin-state ladder of SPEC: every allowed 2S+1, relative energies, ⟨S²⟩, ground state vs ligand field."""
    from pathlib import Path

    from dsplit.api.spin import spin_states

    out = Path(out_dir) if out_dir else Path(f"{spec.name}-spin-states")
    error_log_here(out.absolute().parent)
    with ProgressLine(quiet or as_json) as line:
        run = spin_states(spec, out, multiplicities=multiplicities, functionals=functionals, optimize=optimize_states,
                          reuse=not no_reuse, threads=threads, memory_mb=memory_mb, progress=line)
    _emit(run, as_json, quiet, _print_ladder)


def _print_optimization(doc: dict, out_dir) -> None:
    from dsplit.console import output_console

    o = doc["optimization"]
    c = output_console()
    c.print(f"[bold]{doc['name']}[/bold]: {doc['complex']['formula']}  {o['mode']} optimisation, "
            f"{'converged' if o['converged'] else 'NOT converged'} in {o['steps']} steps")
    c.print(f"final gradient {_fmt(o['final_gradient'], 6)} Eh/Å (threshold {o['threshold']:.1e}: "
            f"{o['threshold_meaning']})")
    for k, v in (o["distances"] or {}).items():
        r0 = (o["initial_distances"] or {}).get(k)
        c.print(f"  {k}: {_fmt(r0, 4)} → {v:.4f} Å")
    c.print(f"energy change {_fmt(o['energy_change_kJmol'], 2)} kJ/mol; point group {o['start_point_group']} → "
            f"{o['final_point_group']} ({'kept' if o['symmetry_kept'] else 'NOT kept'})")
    if o["failure"]:
        c.print(f"[red]{o['failure']}[/red]")
    c.print(f"written: {out_dir} (trajectory {o['trajectory']})")


def _emit(run, as_json: bool, quiet: bool, printer) -> None:
    if as_json:
        print_json(run.result)
    elif not quiet:
        printer(run.result, run.out_dir)
    if run.exit_code:
        msgs = run.result.get("warnings", []) + [run.result.get("ground_withheld") or ""]
        opt = run.result.get("optimization") or {}
        msgs.append(opt.get("failure") or "")
        click.echo("dsplit: not verified: " + "; ".join(m for m in msgs if m), err=True)
    sys.exit(run.exit_code)


@click.command("optimize")
@handles_errors
@spec_options()
@resource_options
@click.option("--full", is_flag=True, help="Unconstrained optimisation (ASE BFGS) instead of symmetric distances.")
@click.option("--gradient-threshold", type=float, help="Convergence threshold in Hartree/Å (default 5e-4).")
@click.option("--max-steps", type=int, help="Step limit (default 25).")
@click.option("--start-from", type=click.Path(exists=True, dir_okay=False), help="A checkpoint (.chk) to start from.")
@click.option("--out", "out_dir", type=click.Path(), help="Run folder (default ./NAME-optimize).")
@click.option("--quiet", is_flag=True, help="No progress line, no summary.")
@click.option("--json", "as_json", is_flag=True, help="Print result.json to stdout.")
def optimize_cmd(spec, threads, memory_mb, full, gradient_threshold, max_steps, start_from, out_dir, quiet,
                 as_json) -> None:
    """Optimise SPEC's geometry: M–L distances keeping the point group (default) or every atom (--full)."""
    from pathlib import Path

    from dsplit.api.spin import optimize_geometry
    from dsplit.errors import InputError

    if gradient_threshold is not None and gradient_threshold <= 0:
        raise InputError("--gradient-threshold", "must be > 0 (Hartree/Å)")
    if max_steps is not None and max_steps < 1:
        raise InputError("--max-steps", "must be ≥ 1")
    out = Path(out_dir) if out_dir else Path(f"{spec.name}-optimize")
    error_log_here(out.absolute().parent)
    with ProgressLine(quiet or as_json) as line:
        run = optimize_geometry(spec, out, full=full, threshold=gradient_threshold, max_steps=max_steps,
                                threads=threads, memory_mb=memory_mb, progress=line,
                                start_from=Path(start_from) if start_from else None)
    _emit(run, as_json, quiet, _print_optimization)
