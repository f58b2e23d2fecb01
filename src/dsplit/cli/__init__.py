"""dsplit command line: click commands only (parse, call the API, print, exit codes).

One module per command family; what they share (spec and resource flags, error handling,
progress) is in :mod:`dsplit.cli.options`.  Exit codes are listed there.
"""

from __future__ import annotations

import sys

import click

from dsplit.cli import archive, build, compute, spin, terms


class OneLineErrors(click.Group):
    """click's usage errors (a bad flag value, a missing argument) as one line, exit 2, like ours."""

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True, **extra):
        if not standalone_mode:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        try:
            code = super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        except click.UsageError as exc:
            where = f" (see: {exc.ctx.command_path} --help)" if exc.ctx is not None else ""
            click.echo(f"dsplit: error: {exc.format_message()}{where}", err=True)
            sys.exit(exc.exit_code)
        except click.ClickException as exc:
            click.echo(f"dsplit: error: {exc.format_message()}", err=True)
            sys.exit(exc.exit_code)
        except click.exceptions.Abort:
            click.echo("dsplit: aborted", err=True)
            sys.exit(1)
        sys.exit(code if isinstance(code, int) else 0)


@click.group(cls=OneLineErrors, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="dsplit")
def main() -> None:
    """d-orbital splitting of transition-metal complexes.

    Build an ideal complex, compute it with PySCF (CPU), label its orbitals in
    the full point group and hold the splitting against ligand-field theory.
    """


for _command in (build.ligands_cmd, build.build_cmd, compute.compute_cmd, spin.spin_states_cmd,
                 spin.optimize_cmd, terms.terms_cmd, archive.study_cmd, archive.archive_group):
    main.add_command(_command)


if __name__ == "__main__":  # pragma: no cover
    main()
