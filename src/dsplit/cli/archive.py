"""``dsplit archive …`` (list, show, compare, verify, page, rebuild-index) and ``dsplit study``.

Heavy modules are imported inside the commands.
"""

from __future__ import annotations

import sys

import click

from dsplit.cli.options import ARCHIVE_HELP, error_log_here, handles_errors

FORMATS = ("text", "csv", "markdown", "html", "json")


_archive_dir = click.option("--archive", "archive_dir", type=click.Path(), default=None, help=ARCHIVE_HELP)
_format = click.option("--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True,
                       help="Output format.")


def _root(archive_dir):
    """An existing archive (InputError when the folder holds no dsplit archive)."""
    from dsplit.archive.paths import existing_archive

    root = existing_archive(archive_dir)
    error_log_here(root)
    return root


def _emit(text: str, output: str | None) -> None:
    if output:
        from pathlib import Path

        Path(output).parent.mkdir(parents=True, exist_ok=True)
        Path(output).write_text(text + "\n", encoding="utf-8")
        click.echo(f"wrote {output}", err=True)
    else:
        click.echo(text)


@click.group("archive")
def archive_group() -> None:
    """Browse, compare and check the run archive (one folder per run + index.db).

    index.db is an ase.db database: `ase db index.db metal=Fe` works on it too.
    """


@archive_group.command("list")
@click.argument("selection", nargs=-1)
@_archive_dir
@click.option("--sort", help="Sort by any key (prefix '-' for descending), e.g. -delta_orbital_eV.")
@click.option("--limit", type=int, help="At most this many rows.")
@click.option("--columns", help="Comma-separated keys to show (default: a summary set).")
@_format
@handles_errors
def list_cmd(selection, archive_dir, sort, limit, columns, fmt) -> None:
    """List runs; SELECTION filters by any key (ase.db syntax: metal=Fe multiplicity>1 Fe)."""
    from dsplit.archive.query import LIST_COLUMNS, select_rows
    from dsplit.archive.tables import render

    root = _root(archive_dir)
    cols = [(c.strip(), c.strip()) for c in columns.split(",")] if columns else LIST_COLUMNS
    rows = select_rows(root, ",".join(selection) or None, sort=sort, limit=limit,
                       need_formula=any(k == "formula" for k, _ in cols))
    click.echo(render(rows, cols, fmt))
    if fmt == "text":
        click.echo(f"{len(rows)} run(s)", err=True)


@archive_group.command("show")
@click.argument("run")
@_archive_dir
@click.option("--json", "as_json", is_flag=True, help="Print the run's result.json.")
@handles_errors
def show_cmd(run, archive_dir, as_json) -> None:
    """Show one RUN (NAME/RUN-ID, a run-id or its first characters, or a NAME)."""
    from dsplit.archive.query import resolve_run, show_text

    folder = resolve_run(_root(archive_dir), run)
    if as_json:
        from dsplit.archive.manifest import read_json
        from dsplit.errors import InputError

        try:
            doc = read_json(folder / "result.json")
        except ValueError as exc:
            raise InputError("RUN", f"{folder}: {exc}; run 'dsplit archive verify'") from None
        import json

        click.echo(json.dumps(doc, indent=2, ensure_ascii=False))
    else:
        click.echo(show_text(folder))


@archive_group.command("compare")
@click.argument("runs", nargs=-1)
@_archive_dir
@click.option("--where", "selection", help="Compare the runs matching this selection (ase.db syntax).")
@click.option("--by", default="ligands", show_default=True, help="Key that labels each run in the figure.")
@click.option("--sort", help="Sort key without RUNs (default: the --by key; prefix '-' for descending).")
@_format
@click.option("-o", "--output", type=click.Path(dir_okay=False), help="Write the table to this file.")
@click.option("--figure", type=click.Path(dir_okay=False), help="Also draw Δ across the runs (.png, .svg, .pdf).")
@handles_errors
def compare_cmd(runs, archive_dir, selection, by, sort, fmt, output, figure) -> None:
    """A table of Δ (every estimator) and verdicts across RUNs or a --where selection."""
    from pathlib import Path

    from dsplit.archive.query import COMPARE_COLUMNS, compare_figure, compare_rows
    from dsplit.archive.tables import render

    root = _root(archive_dir)
    rows = compare_rows(root, list(runs), selection, sort or (None if runs else by))
    _emit(render(rows, COMPARE_COLUMNS, fmt, title="Δ across runs"), output)
    if figure:
        click.echo(f"wrote {compare_figure(rows, by, Path(figure))}", err=True)


@archive_group.command("verify")
@_archive_dir
@handles_errors
def verify_cmd(archive_dir) -> None:
    """Check every run folder against its manifest (SHA-256) and the index against the folders.

    Exit 0: intact; exit 1: damage found (listed).
    """
    from dsplit.archive.verify import verify_archive

    rep = verify_archive(_root(archive_dir))
    for line in rep.lines():
        click.echo(line)
    sys.exit(0 if rep.ok else 1)


@archive_group.command("page")
@_archive_dir
@handles_errors
def page_cmd(archive_dir) -> None:
    """Write ARCHIVE/index.html: every run in one sortable, filterable page, with views across runs.

    The page is also rewritten after every run committed to the archive.
    """
    from dsplit.archive.page import write_page

    path, n = write_page(_root(archive_dir))
    click.echo(f"wrote {path} ({n} run(s))")


@archive_group.command("rebuild-index")
@_archive_dir
@handles_errors
def rebuild_index_cmd(archive_dir) -> None:
    """Rewrite index.db from the run folders (damaged runs are left out and listed)."""
    from dsplit.archive.index import rebuild
    from dsplit.archive.store import check_writable_archive

    root = _root(archive_dir)
    check_writable_archive(root, check_index=False)
    n, skipped = rebuild(root)
    for folder, why in skipped:
        click.echo(f"skipped {folder}: {why}", err=True)
    click.echo(f"index.db: {n} run(s)")


def _print_plan(plan, cached: set[str]) -> None:
    from dsplit.archive.tables import render
    from dsplit.study.api import plan_rows

    rows = plan_rows(plan, cached)
    axes = [k for k in rows[0] if k not in ("n", "name", "run_id", "status")] if rows else []
    cols = [("n", "#"), ("name", "name")] + [(a, a) for a in axes] + [("run_id", "run"), ("status", "status")]
    click.echo(render(rows, cols, "text", title=f"study {plan.study}: {len(plan.tasks)} run(s), "
                                               f"{len(cached)} already in the archive"))
    if plan.dropped:
        click.echo(f"\n{len(plan.dropped)} combination(s) dropped:")
        for d in plan.dropped:
            click.echo("  " + ", ".join(f"{k}={v}" for k, v in d.axes.items()) + f": {d.reason}")


@click.command("study")
@click.argument("study_file", type=click.Path(dir_okay=False))
@_archive_dir
@click.option("--dry-run", is_flag=True, help="Show the plan (and the dropped combinations) and stop.")
@click.option("--resume", is_flag=True, help="Finish the recorded plan of an interrupted run of this study.")
@click.option("--workers", type=int, help="Worker processes (default: fit the machine's cores).")
@click.option("--threads", type=int, help="Threads per worker (default: the cores left per worker).")
@click.option("--executor", type=click.Choice(["local", "dask"]), default=None,
              help="local (default): processes on this machine; dask: a Dask cluster.")
@click.option("--scheduler", help="Dask scheduler address (with --executor dask); none: a local cluster.")
@click.option("--quiet", is_flag=True, help="No progress, only the final line.")
@click.option("--json", "as_json", is_flag=True, help="Print the plan (--dry-run) or the outcome as JSON.")
@handles_errors
def study_cmd(study_file, archive_dir, dry_run, resume, workers, threads, executor, scheduler, quiet,
              as_json) -> None:
    """Run a batch STUDY_FILE (TOML): a base spec and axes to vary, into the archive."""
    import json

    from dsplit.api.compute import compute_archived
    from dsplit.archive.paths import archive_root
    from dsplit.archive.store import check_writable_archive
    from dsplit.qc.setup import check_resources
    from dsplit.study.api import cached_tasks, plan_study, run_study, summary_rows
    from dsplit.study.studyfile import load_study

    if workers is not None and workers < 1:
        from dsplit.errors import InputError

        raise InputError("--workers", f"must be a whole number ≥ 1, got {workers}; leave it out to fit the machine")
    check_resources(threads, None)
    defaults = load_study(study_file).run  # a missing or bad study file fails before any folder is made
    root = archive_root(archive_dir, create=False, must_exist=False)
    plan = plan_study(study_file, root, resume=resume)
    if not dry_run:
        root = check_writable_archive(root)
        error_log_here(root)
    cached = {t.run_id for t in cached_tasks(plan, root, reindex=not dry_run)} if root.is_dir() else set()
    if dry_run:
        if as_json:
            click.echo(json.dumps({**plan.to_dict(), "in_archive": sorted(cached)}, indent=2, ensure_ascii=False))
        else:
            _print_plan(plan, cached)
        return
    if not quiet and not as_json:
        _print_plan(plan, cached)
    out = run_study(plan, root, compute=compute_archived, workers=workers or defaults.get("workers"), threads=threads or defaults.get("threads"),
                    executor=executor or defaults.get("executor", "local"),
                    scheduler=scheduler or defaults.get("scheduler"), quiet=quiet or as_json)
    rows = summary_rows(out)
    if as_json:
        click.echo(json.dumps({"study": plan.study, "archive": str(root), "exit_code": out.exit_code,
                               "runs": rows}, indent=2, ensure_ascii=False, default=str))
    elif not quiet:
        from dsplit.archive.tables import render

        click.echo(render(rows, [("name", "name"), ("run_id", "run"), ("multiplicity", "2S+1"),
                                 ("theory", "theory"), ("basis", "basis"), ("delta_orbital_eV", "Δ orbital/eV"),
                                 ("delta_state_eV", "Δ state/eV"), ("delta_excitation_eV", "Δ excitation/eV"),
                                 ("state", "state")], "text", title="\nsummary"))
    n_done = sum(r["state"] in ("computed", "cached", "not verified", "in archive") for r in rows)
    if out.interrupted:
        again = f" --archive {archive_dir}" if archive_dir else ""
        click.echo(f"dsplit: study interrupted: {n_done} of {len(rows)} run(s) finished; "
                   f"finish with: dsplit study {study_file}{again} --resume", err=True)
    else:
        click.echo(f"study {plan.study}: {n_done} of {len(rows)} run(s) in {root}", err=True)
        for r in rows:
            if r["state"] == "failed":
                click.echo(f"dsplit: {r['name']}: {r['error']}", err=True)
    sys.exit(out.exit_code)
