"""dsplit command line: click commands only (parse, call the API, print, exit codes).

One module per command family; what they share (spec and resource flags, error handling,
progress) is in :mod:`dsplit.cli.options`.  Exit codes are listed there.
"""

from __future__ import annotations

import click

from dsplit.cli import archive, build, compute, spin, terms


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
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
