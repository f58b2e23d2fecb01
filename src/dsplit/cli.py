"""dsplit command line: click commands only (parse, call the API, print, exit codes).

Exit codes: 0 success; 2 bad input (one line naming the field); 3 a calculation
that did not converge or could not be verified.  Heavy modules (numpy, ASE,
PySCF) are imported inside the commands so that ``dsplit --help`` starts fast.
"""

from __future__ import annotations

import functools
import sys

import click


def _fail(message: str, code: int) -> None:
    click.echo(f"dsplit: error: {message}", err=True)
    sys.exit(code)


def handles_errors(func):
    """Turn InputError into one line + exit 2, CalculationError into exit 3."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        from dsplit.errors import CalculationError, InputError

        try:
            return func(*args, **kwargs)
        except InputError as exc:
            _fail(str(exc), exc.exit_code)
        except CalculationError as exc:
            _fail(str(exc), exc.exit_code)

    return wrapper


class LazyGroup(click.Group):
    """A click group whose commands from other modules load on first use.

    Those modules import from this one (shared options, error handling), so they cannot
    be imported while this module loads.
    """

    LAZY = {
        "spin-states": ("dsplit.cli_spin", "spin_states_cmd"),
        "optimize": ("dsplit.cli_spin", "optimize_cmd"),
        "study": ("dsplit.cli_archive", "study_cmd"),
        "archive": ("dsplit.cli_archive", "archive_group"),
    }

    def list_commands(self, ctx):
        return sorted(set(super().list_commands(ctx)) | set(self.LAZY))

    def get_command(self, ctx, name):
        if name in self.LAZY and name not in self.commands:
            import importlib

            module, attr = self.LAZY[name]
            self.add_command(getattr(importlib.import_module(module), attr), name)
        return super().get_command(ctx, name)


@click.group(cls=LazyGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="dsplit")
def main() -> None:
    """d-orbital splitting of transition-metal complexes.

    Build an ideal complex, compute it with PySCF (CPU), label its orbitals in
    the full point group and hold the splitting against ligand-field theory.
    """


@main.command("ligands")
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


def _parse_ligand_flag(text: str | None) -> dict | None:
    from dsplit.errors import InputError

    if text is None:
        return None
    out: dict[str, int] = {}
    for part in text.split(","):
        key, sep, count = part.strip().partition("=")
        if not sep or not count.strip().isdigit():
            raise InputError("--ligands", f"cannot read '{part}'; write e.g. aqua=6 or chlorido=4,ammine=2")
        out[key.strip()] = int(count)
    return out


def complex_options(func):
    """Flags shared by every command that builds a complex."""
    opts = [
        click.option("--metal", help="Metal symbol, e.g. Fe."),
        click.option("--oxidation-state", type=int, help="Metal oxidation state."),
        click.option("--geometry", help="octahedral, tetrahedral, square-planar, trigonal-bipyramidal, "
                                        "square-pyramidal, trigonal-prismatic or linear."),
        click.option("--ligands", "ligands_text", help="Ligand counts, e.g. aqua=6 or chlorido=4,ammine=2."),
        click.option("--isomer", help="cis, trans, fac, mer, axial, equatorial, … (see --isomers)."),
        click.option("--bond-length", type=float, help="Metal–ligand distance in Å (all ligands)."),
        click.option("--multiplicity", type=int, help="Spin multiplicity 2S+1."),
    ]
    for opt in reversed(opts):
        func = opt(func)
    return func


def _overrides(metal, oxidation_state, geometry, ligands_text, isomer, bond_length, multiplicity) -> dict:
    return {"metal": metal, "oxidation_state": oxidation_state, "geometry": geometry,
            "ligands": _parse_ligand_flag(ligands_text), "isomer": isomer, "bond_length": bond_length,
            "multiplicity": multiplicity}


@main.command("build")
@click.argument("spec", required=False, type=click.Path(dir_okay=False))
@complex_options
@click.option("-o", "--output", type=click.Path(dir_okay=False),
              help="Geometry file; format from the extension (any ase.io format). Default: NAME.xyz (extended XYZ).")
@click.option("--isomers", "list_isomers", is_flag=True, help="List the isomers of the ligand set and stop.")
@click.option("--json", "as_json", is_flag=True, help="Print a machine-readable summary.")
@handles_errors
def build_cmd(spec, metal, oxidation_state, geometry, ligands_text, isomer, bond_length, multiplicity,
              output, list_isomers, as_json) -> None:
    """Build an ideal complex from SPEC (TOML) and/or flags; write its geometry."""
    from dsplit.build_api import build_summary, isomer_table, write_geometry
    from dsplit.geometry.build import build_complex

    s = load_full_spec(spec, _overrides(metal, oxidation_state, geometry, ligands_text, isomer, bond_length,
                                        multiplicity), {})
    if list_isomers:
        rows = isomer_table(s.complex)
        if as_json:
            import json

            click.echo(json.dumps(rows, indent=2, ensure_ascii=False))
        else:
            for row in rows:
                click.echo(f"{row['isomer']:<18} {row['exact_point_group']:<6} {' '.join(row['sites'])}")
        return
    cx = build_complex(s.complex)
    path = write_geometry(cx, output or f"{s.name}.xyz")
    summary = build_summary(cx)
    summary["output"] = str(path)
    if as_json:
        import json

        click.echo(json.dumps(summary, indent=2, ensure_ascii=False))
    else:
        from dsplit.build_api import print_summary

        print_summary(summary)


def method_options(func):
    """Flags that override the spec's [method] table."""
    opts = [
        click.option("--theory", help="HF or a functional PySCF knows (B3LYP, PBE0, PBE, TPSSh, …)."),
        click.option("--basis", help="Basis set name (default def2-SVP)."),
        click.option("--solvent", help="none, a solvent name (water, acetonitrile, …) or a dielectric constant."),
        click.option("--density-fitting/--no-density-fitting", default=None, help="Density fitting (default on)."),
        click.option("--open-shell", type=click.Choice(["unrestricted", "restricted"]), default=None,
                     help="Reference for open shells (default unrestricted)."),
        click.option("--threads", type=int, help="CPU threads (default: all cores)."),
        click.option("--memory", "memory_mb", type=int, help="Memory limit in MB."),
    ]
    for opt in reversed(opts):
        func = opt(func)
    return func


def _method_overrides(theory, basis, solvent, density_fitting, open_shell) -> dict:
    out = {"theory": theory, "basis": basis, "density_fitting": density_fitting, "open_shell": open_shell}
    if solvent is not None:
        try:
            out["solvent"] = float(solvent)
        except ValueError:
            out["solvent"] = solvent
    return out


def load_full_spec(spec_path, complex_over: dict, method_over: dict):
    """Spec from a file and/or flags, with both [complex] and [method] overrides applied."""
    from dsplit.errors import InputError
    from dsplit.spec import load_spec, parse_toml_text, spec_from_dict

    if spec_path is None:
        data: dict = {"complex": {}}
    else:
        load_spec(spec_path)
        with open(spec_path, encoding="utf-8") as fh:
            data = parse_toml_text(fh.read(), spec_path)
    cx = data.setdefault("complex", {})
    cx.update({k: v for k, v in complex_over.items() if v is not None})
    md = data.setdefault("method", {})
    md.update({k: v for k, v in method_over.items() if v is not None})
    if spec_path is None and not cx:
        raise InputError("SPEC", "give a spec file or --metal/--geometry/--ligands flags")
    from pathlib import Path

    return spec_from_dict(data, default_name=Path(spec_path).stem if spec_path else "complex")


class ProgressLine:
    """A one-line live status on stderr: rung, SCF cycle, energy change."""

    def __init__(self, quiet: bool) -> None:
        self.status = None
        if not quiet and sys.stderr.isatty():
            from rich.console import Console

            self.status = Console(stderr=True).status("starting …")

    def __enter__(self):
        if self.status is not None:
            self.status.__enter__()
        return self

    def __exit__(self, *exc):
        if self.status is not None:
            self.status.__exit__(*exc)

    def __call__(self, rung: str, cycle: int, energy: float, delta: float) -> None:
        if self.status is not None:
            self.status.update(f"SCF [{rung}] cycle {cycle:3d}  E = {energy:.8f} Eh  ΔE = {delta:+.2e}")

    def stage(self, text: str) -> None:
        if self.status is not None:
            self.status.update(text)


@main.command("compute")
@click.argument("spec", required=False, type=click.Path(dir_okay=False))
@complex_options
@method_options
@click.option("--out", "out_dir", type=click.Path(file_okay=False), help="Folder for the run (default: ./NAME).")
@click.option("--start-from", type=click.Path(exists=True, dir_okay=False),
              help="A checkpoint (.chk) of the same complex to start the SCF from.")
@click.option("--archive", "archive_dir", type=click.Path(), default=None,
              help="Archive folder (default: $DSPLIT_ARCHIVE, else ./dsplit-archive).")
@click.option("--recompute", is_flag=True, help="Compute again even if the archive holds this run.")
@click.option("--cubes", is_flag=True, default=None,
              help="Also write Gaussian cube files: d orbitals, spin density, excited − ground density.")
@click.option("--cube-spacing", type=float, default=None, help="Cube grid spacing in Å (default 0.15).")
@click.option("--quiet", is_flag=True, help="No progress line, no tables.")
@click.option("--json", "as_json", is_flag=True, help="Print result.json to stdout as well.")
@handles_errors
def compute_cmd(spec, metal, oxidation_state, geometry, ligands_text, isomer, bond_length, multiplicity,
                theory, basis, solvent, density_fitting, open_shell, threads, memory_mb, out_dir, start_from,
                archive_dir, recompute, cubes, cube_spacing, quiet, as_json) -> None:
    """Compute SPEC: verified SCF, full-group orbital labels, splitting, checks, report.

    The run lands in the archive (cache hit when the same request is there) unless
    --out names a plain folder.
    """
    from pathlib import Path

    from dsplit.compute_api import compute
    from dsplit.errors import InputError

    if out_dir and archive_dir:
        raise InputError("--out", "give --out DIR (a plain folder) or --archive DIR, not both")
    s = load_full_spec(spec, _overrides(metal, oxidation_state, geometry, ligands_text, isomer, bond_length,
                                        multiplicity),
                       dict(_method_overrides(theory, basis, solvent, density_fitting, open_shell), cubes=cubes))
    start = Path(start_from) if start_from else None
    with ProgressLine(quiet or as_json) as line:
        if out_dir:
            run = compute(s, Path(out_dir), threads=threads, memory_mb=memory_mb, progress=line, start_from=start,
                          cube_spacing=cube_spacing)
        else:
            from dsplit.archive.store import compute_archived

            run = compute_archived(s, archive_dir, recompute=recompute, threads=threads, memory_mb=memory_mb,
                                   progress=line, start_from=start, cube_spacing=cube_spacing,
                                   on_wait=lambda: line.stage("waiting: another process is computing this run"))
            if run.cached and not (quiet or as_json):
                click.echo(f"from the archive: {run.out_dir}", err=True)
    if as_json:
        import json

        click.echo(json.dumps(run.result, indent=2, ensure_ascii=False))
    elif not quiet:
        from dsplit.report.terminal import print_run

        print_run(run.result, run.out_dir)
    if run.exit_code:
        click.echo("dsplit: calculation not verified: " + "; ".join(run.result.get("warnings", [])), err=True)
    sys.exit(run.exit_code)


if __name__ == "__main__":  # pragma: no cover  (python -m dsplit.cli: run the importable module's group)
    from dsplit.cli import main as _main

    _main()
