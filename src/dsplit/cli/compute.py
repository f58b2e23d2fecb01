"""``dsplit compute``: a verified SCF, full-group labels, the splitting estimators, checks and reports."""

from __future__ import annotations

import sys

import click

from dsplit.cli.options import ARCHIVE_HELP, ProgressLine, error_log_here, handles_errors, print_json, \
    resource_options, spec_options


@click.command("compute")
@handles_errors
@spec_options()
@resource_options
@click.option("--out", "out_dir", type=click.Path(), help="A plain folder for the run instead of the archive "
                                                           "(new, empty, or an earlier dsplit run folder).")
@click.option("--start-from", type=click.Path(exists=True, dir_okay=False),
              help="A checkpoint (.chk) of the same complex to start the SCF from.")
@click.option("--archive", "archive_dir", type=click.Path(), default=None, help=ARCHIVE_HELP)
@click.option("--recompute", is_flag=True, help="Compute again even if the archive holds this run.")
@click.option("--cubes", is_flag=True, default=None,
              help="Also write Gaussian cube files: d orbitals, spin density, excited − ground density.")
@click.option("--cube-spacing", type=float, default=None, help="Cube grid spacing in Å (default 0.15).")
@click.option("--quiet", is_flag=True, help="No progress line, no tables.")
@click.option("--json", "as_json", is_flag=True, help="Print result.json to stdout as well.")
def compute_cmd(spec, threads, memory_mb, out_dir, start_from, archive_dir, recompute, cubes, cube_spacing, quiet,
                as_json) -> None:
    """Compute SPEC: verified SCF, full-group orbital labels, splitting, checks, report.

    The run lands in the archive (cache hit when the same request is there) unless
    --out names a plain folder.
    """
    from dataclasses import replace
    from pathlib import Path

    from dsplit.api.compute import compute
    from dsplit.archive.paths import default_archive_root

    error_log_here(archive_dir or (Path(out_dir).parent if out_dir else default_archive_root()))
    start = Path(start_from) if start_from else None
    if cubes:
        spec = replace(spec, method=replace(spec.method, cubes=True))
    with ProgressLine(quiet or as_json) as line:
        run = compute(spec, out_dir, archive=archive_dir, recompute=recompute,
                      threads=threads, memory_mb=memory_mb, progress=line, start_from=start, cube_spacing=cube_spacing,
                      on_wait=lambda: line.stage("waiting: another process is computing this run"))
    if run.cached and not (quiet or as_json):
        click.echo(f"from the archive: {run.out_dir}", err=True)
    if as_json:
        print_json(run.result)
    elif not quiet:
        from dsplit.report.terminal import print_run

        print_run(run.result, run.out_dir)
    if run.exit_code:
        click.echo("dsplit: calculation not verified: " + "; ".join(run.result.get("warnings", [])), err=True)
    sys.exit(run.exit_code)
