"""``dsplit ligands`` and ``dsplit build``: the ligand library and ideal geometries (no quantum chemistry)."""

from __future__ import annotations

from typing import Any

import click

from dsplit.cli.options import handles_errors, print_json, spec_options


@click.command("ligands")
@click.option("--json", "as_json", is_flag=True, help="Print the library as JSON.")
def ligands_cmd(as_json: bool) -> None:
    """List the ligand library (names, formulas, donors, charges, roles)."""
    from dsplit.chem.ligands import library

    libs = list(library().values())
    if as_json:
        import json

        click.echo(json.dumps([{"key": lg.key, "formula": lg.formula, "aliases": list(lg.aliases),
                                "donor": lg.donor, "charge": lg.charge, "role": lg.role,
                                "atoms": list(lg.atoms), "geometry_source": lg.geometry_source}
                               for lg in libs], indent=2, ensure_ascii=False))
        return
    from rich.table import Table

    from dsplit.console import output_console

    table = Table(title="dsplit ligand library")
    for col in ("name", "formula", "also", "donor", "charge", "role", "geometry from"):
        table.add_column(col)
    for lg in libs:
        table.add_row(lg.key, lg.formula, ", ".join(lg.aliases), lg.donor, f"{lg.charge:+d}" if lg.charge else "0",
                      lg.role, lg.geometry_source)
    output_console().print(table)


@click.command("build")
@handles_errors
@spec_options(with_method=False)
@click.option("-o", "--output", type=click.Path(),
              help="Geometry file; format from the extension (any ase.io format). Default: NAME.xyz (extended XYZ).")
@click.option("--isomers", "list_isomers", is_flag=True, help="List the isomers of the ligand set and stop.")
@click.option("--json", "as_json", is_flag=True, help="Print a machine-readable summary.")
def build_cmd(spec, output, list_isomers, as_json) -> None:
    """Build an ideal complex from SPEC (TOML) and/or flags; write its geometry."""
    from dsplit.api.build import build_summary, isomer_table, write_geometry
    from dsplit.geometry.build import build_complex

    if list_isomers:
        rows = isomer_table(spec.complex)
        if as_json:
            print_json(rows)
        else:
            for row in rows:
                click.echo(f"{row['isomer']:<18} {row['exact_point_group']:<6} {' '.join(row['sites'])}")
        return
    cx = build_complex(spec.complex)
    path = write_geometry(cx, output or f"{spec.name}.xyz")
    summary = build_summary(cx)
    summary["output"] = str(path)
    if as_json:
        print_json(summary)
    else:
        print_summary(summary)


def print_summary(summary: dict[str, Any]) -> None:
    """Human summary table (rich)."""
    from rich.table import Table

    from dsplit.console import output_console

    t = Table(title=f"{summary['name']}: {summary['formula']}", show_header=False)
    t.add_column("what", style="bold")
    t.add_column("value")
    dist = ", ".join(f"{k} {v:.3f} Å" for k, v in summary["metal_ligand_distances"].items())
    rows = [
        ("metal", f"{summary['metal']}({summary['oxidation_state']:+d}), d^{summary['d_electrons']}"),
        ("charge", f"{summary['charge']:+d}"),
        ("electrons", f"{summary['total_electrons']} total; ionic valence count {summary['ionic_valence_electrons']}"),
        ("geometry", f"{summary['geometry']} ({summary['isomer']})"),
        ("donor-set group", summary["point_group"]),
        ("exact group", summary["exact_point_group"]),
        ("d sets (low → high)", " < ".join(s["label"] for s in summary["d_sets"])),
        ("multiplicities", ", ".join(map(str, summary["multiplicities"]))),
        ("multiplicity", f"{summary['multiplicity']} — {summary['multiplicity_source']}"),
        ("configuration", summary["configuration"]),
        ("high / low spin", f"{summary['high_spin_configuration']} / {summary['low_spin_configuration']}"),
        ("M–L", dist),
        ("written", summary["output"]),
    ]
    for k, v in rows:
        t.add_row(k, str(v))
    c = output_console()
    c.print(t)
    for note in summary["notes"]:
        c.print(f"note: {note}")
