"""What every dsplit command shares: the spec flags, resource flags, error handling, progress.

Exit codes: 0 success; 1 an unexpected failure (one line, the traceback in a log file);
2 bad input (one line naming the field); 3 a calculation that did not converge or could
not be verified; 130 interrupted.  Only click is imported here: heavy modules (numpy,
ASE, PySCF) are imported inside the commands so that ``dsplit --help`` starts fast.
"""

from __future__ import annotations

import datetime as _dt
import functools
import os
import sys
import tempfile
import traceback
from pathlib import Path
from typing import Any, Callable

import click

#: where the traceback of an unexpected failure is written (set by a command that knows its folder)
_error_log_dir: list[Path] = []


def error_log_here(folder: str | Path | None) -> None:
    """Write the traceback of an unexpected failure into ``folder`` (archive or run folder) if writable."""
    if folder is not None:
        _error_log_dir[:] = [Path(folder).expanduser().absolute()]


def _write_traceback() -> Path:
    stamp = _dt.datetime.now().strftime("%Y%m%d-%H%M%S")
    text = traceback.format_exc()
    candidates = [*_error_log_dir, Path(tempfile.gettempdir())]
    for folder in candidates:
        while not folder.exists():
            folder = folder.parent
        if not os.access(folder, os.W_OK):
            continue
        path = folder / f"dsplit-error-{stamp}-{os.getpid()}.log"
        try:
            path.write_text(text, encoding="utf-8")
            return path
        except OSError:
            continue
    return Path("(not written)")


def fail(message: str, code: int) -> None:
    click.echo(f"dsplit: error: {message}", err=True)
    sys.exit(code)


def handles_errors(func: Callable) -> Callable:
    """InputError → one line + exit 2; CalculationError → exit 3; anything unexpected → exit 1.

    An unexpected exception prints one line and where its full traceback was written:
    a user never sees a Python traceback.
    """

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        from dsplit.errors import CalculationError, InputError

        _error_log_dir.clear()
        try:
            return func(*args, **kwargs)
        except InputError as exc:
            fail(str(exc), exc.exit_code)
        except CalculationError as exc:
            fail(str(exc), exc.exit_code)
        except KeyboardInterrupt:
            fail("interrupted; nothing unfinished was kept", 130)
        except (click.exceptions.Exit, click.exceptions.Abort, click.ClickException):
            raise
        except Exception as exc:
            log = _write_traceback()
            fail(f"unexpected failure ({type(exc).__name__}: {exc}); full traceback in {log}", 1)

    return wrapper


def _ligand_counts(text: str | None) -> dict[str, int] | None:
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


def _solvent(text: str | None) -> str | float | None:
    if text is None:
        return None
    try:
        return float(text)
    except ValueError:
        return text


#: (python name, click option) of the [complex] and [method] overrides, in help order
_COMPLEX_FLAGS = (
    ("metal", click.option("--metal", help="Metal symbol, e.g. Fe.")),
    ("oxidation_state", click.option("--oxidation-state", type=int, help="Metal oxidation state.")),
    ("geometry", click.option("--geometry", help="octahedral, tetrahedral, square-planar, trigonal-bipyramidal, "
                                                 "square-pyramidal, trigonal-prismatic or linear.")),
    ("ligands", click.option("--ligands", help="Ligand counts, e.g. aqua=6 or chlorido=4,ammine=2.")),
    ("isomer", click.option("--isomer", help="cis, trans, fac, mer, axial, equatorial, … (see build --isomers).")),
    ("bond_length", click.option("--bond-length", type=float, help="Metal–ligand distance in Å (all ligands).")),
    ("multiplicity", click.option("--multiplicity", type=int, help="Spin multiplicity 2S+1.")),
)
_METHOD_FLAGS = (
    ("theory", click.option("--theory", help="HF or a functional PySCF knows (B3LYP, PBE0, PBE, TPSSh, …).")),
    ("basis", click.option("--basis", help="Basis set name (default def2-SVP).")),
    ("solvent", click.option("--solvent", help="none, a solvent name (water, acetonitrile, …) or a dielectric "
                                               "constant.")),
    ("density_fitting", click.option("--density-fitting/--no-density-fitting", default=None,
                                     help="Density fitting (default on).")),
    ("open_shell", click.option("--open-shell", type=click.Choice(["unrestricted", "restricted"]), default=None,
                                help="Reference for open shells (default unrestricted).")),
)


def spec_options(with_method: bool = True) -> Callable:
    """SPEC argument plus the [complex] (and [method]) flags, handed to the command as ``spec``.

    The command receives one argument ``spec``: the Spec read once from the file with the
    flags applied (dsplit.spec.load_spec).  Reading happens inside the error handler, so a
    bad file or flag is one line and exit 2.
    """
    flags = _COMPLEX_FLAGS + (_METHOD_FLAGS if with_method else ())

    def decorate(func: Callable) -> Callable:
        @functools.wraps(func)
        def wrapper(*args, **kwargs):
            from dsplit.spec import load_spec

            path = kwargs.pop("spec_path")
            values = {name: kwargs.pop(name) for name, _ in flags}
            values["ligands"] = _ligand_counts(values["ligands"])
            if "solvent" in values:
                values["solvent"] = _solvent(values["solvent"])
            complex_over = {name: values[name] for name, _ in _COMPLEX_FLAGS}
            method_over = {name: values[name] for name, _ in _METHOD_FLAGS} if with_method else {}
            return func(*args, spec=load_spec(path, complex_over, method_over), **kwargs)

        for _, opt in reversed(flags):
            wrapper = opt(wrapper)
        return click.argument("spec_path", metavar="SPEC", required=False, type=click.Path(dir_okay=False))(wrapper)

    return decorate


def resource_options(func: Callable) -> Callable:
    """``--threads`` and ``--memory`` (checked by qc.setup.check_resources before anything runs)."""
    func = click.option("--memory", "memory_mb", type=int, help="Memory limit in MB.")(func)
    return click.option("--threads", type=int, help="CPU threads (default: $OMP_NUM_THREADS, else all cores).")(func)


def archive_options(func: Callable) -> Callable:
    """``--archive DIR`` and ``--recompute`` for commands that archive their runs."""
    func = click.option("--recompute", is_flag=True, help="Compute again even if the archive holds this run.")(func)
    return click.option("--archive", "archive_dir", type=click.Path(), default=None, help=ARCHIVE_HELP)(func)


ARCHIVE_HELP = "Archive folder (default: $DSPLIT_ARCHIVE, else ./dsplit-archive)."


def print_json(doc: Any) -> None:
    import json

    click.echo(json.dumps(doc, indent=2, ensure_ascii=False, default=str))


class ProgressLine:
    """A one-line live status on stderr: rung, SCF cycle, energy change."""

    def __init__(self, quiet: bool) -> None:
        self.status = None
        if not quiet and sys.stderr.isatty():
            from rich.console import Console

            self.status = Console(stderr=True).status("starting …")

    def __enter__(self) -> "ProgressLine":
        if self.status is not None:
            self.status.__enter__()
        return self

    def __exit__(self, *exc) -> None:
        if self.status is not None:
            self.status.__exit__(*exc)

    def __call__(self, rung: str, cycle: int, energy: float, delta: float) -> None:
        if self.status is not None:
            self.status.update(f"SCF [{rung}] cycle {cycle:3d}  E = {energy:.8f} Eh  ΔE = {delta:+.2e}")

    def stage(self, text: str) -> None:
        if self.status is not None:
            self.status.update(text)
