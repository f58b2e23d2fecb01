"""Nothing lost, no tracebacks: every way in and out of the command line.

The rules checked here are the project's own (issue text): a folder dsplit did not make is
never removed or emptied; user error or a broken archive is one line and exit 2 before any
SCF; an unexpected failure is one line, exit 1, with the traceback in a log file.
The complex is [TiF4] (Ti(IV), d0, closed shell) at HF/STO-3G in the gas phase: the
cheapest complete run (about 2 s of CPU).
"""

from __future__ import annotations

import json
import os
import shutil
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from dsplit.cli import main

TIF4 = ('name = "{name}"\n[complex]\nmetal = "Ti"\noxidation_state = 4\ngeometry = "tetrahedral"\n'
        'ligands = {{ fluorido = 4 }}\n[method]\ntheory = "HF"\nbasis = "sto-3g"\nsolvent = "{solvent}"\n'
        '{extra}')


def _spec(folder: Path, name: str = "tif4", solvent: str = "none", extra: str = "", file: str = "tif4.toml") -> str:
    path = folder / file
    path.write_text(TIF4.format(name=name, solvent=solvent, extra=extra), encoding="utf-8")
    return str(path)


def _run(args: list[str], cwd: Path | None = None):
    """The CLI in-process; the result has .exit_code and .output (stdout and stderr)."""
    old = Path.cwd()
    if cwd is not None:
        os.chdir(cwd)
    try:
        return CliRunner().invoke(main, args)
    finally:
        os.chdir(old)


def _one_error_line(result, *words: str) -> str:
    assert "Traceback" not in result.output
    lines = [ln for ln in result.output.strip().splitlines() if ln.strip()]
    assert len(lines) == 1, result.output
    for w in words:
        assert w in lines[0], lines[0]
    return lines[0]


def _study(folder: Path) -> Path:
    """A one-run study over the TiF4 spec."""
    _spec(folder)
    path = folder / "s.toml"
    path.write_text('name = "s"\nbase = "tif4.toml"\n[vary]\nmethods = ["HF/sto-3g"]\n')
    return path


@pytest.fixture
def no_scf(monkeypatch):
    """Fail loudly if an SCF starts: the checks below must all come before it."""
    def refuse(*a, **k):
        raise AssertionError("an SCF started although the input was bad")

    monkeypatch.setattr("dsplit.qc.engine.run_calculation", refuse)


# --- data loss ---------------------------------------------------------------------------------

def test_out_folder_with_other_files_is_refused_and_kept(tmp_path, no_scf):
    keep = tmp_path / "keep"
    keep.mkdir()
    (keep / "notes.txt").write_text("x")
    res = _run(["compute", _spec(tmp_path), "--out", str(keep), "--quiet"])
    assert res.exit_code == 2
    _one_error_line(res, "--out", "holds other files; choose an empty or new folder")
    assert sorted(p.name for p in keep.iterdir()) == ["notes.txt"] and (keep / "notes.txt").read_text() == "x"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep", "tif4.toml"]


def test_out_dot_and_rerun_keep_the_users_files(tmp_path):
    work = tmp_path / "work"
    work.mkdir()
    spec = _spec(tmp_path)
    res = _run(["compute", spec, "--out", ".", "--quiet", "--threads", "1"], cwd=work)
    assert res.exit_code == 0, res.output
    assert json.loads((work / "result.json").read_text())["name"] == "tif4"
    mine = work / "my-notes.txt"
    mine.write_text("keep me")
    before = json.loads((work / "manifest.json").read_text())["files"]
    res = _run(["compute", spec, "--out", str(work), "--quiet", "--threads", "1"])  # --out "$PWD" form
    assert res.exit_code == 0, res.output
    assert mine.read_text() == "keep me"  # not ours: never removed
    after = json.loads((work / "manifest.json").read_text())["files"]
    assert set(after) == set(before) and "my-notes.txt" not in after
    assert not [p for p in work.iterdir() if ".staging-" in p.name]
    assert (work / "geometry.xyz").stat().st_mode & 0o777 == (work / "result.json").stat().st_mode & 0o777


# --- paths that cannot be written -------------------------------------------------------------

def test_out_below_a_file(tmp_path, no_scf):
    (tmp_path / "f").write_text("")
    res = _run(["compute", _spec(tmp_path), "--out", str(tmp_path / "f" / "sub"), "--quiet"])
    assert res.exit_code == 2
    _one_error_line(res, "--out", "is a file")


def _deny_writes_below(monkeypatch, folder: Path) -> None:
    """Make ``folder`` unwritable: chmod for ordinary users; root ignores permission bits, so then
    the permission test itself (os.access) is told the truth an ordinary user would get."""
    folder.chmod(0o555)
    if os.geteuid() == 0:
        real = os.access

        def access(path, mode, *a, **k):
            if mode & os.W_OK and Path(os.path.abspath(path)).is_relative_to(folder):
                return False
            return real(path, mode, *a, **k)

        monkeypatch.setattr(os, "access", access)


def test_out_and_archive_in_a_folder_without_write_permission(tmp_path, monkeypatch, no_scf):
    spec = _spec(tmp_path)
    locked = tmp_path / "locked"
    locked.mkdir()
    _deny_writes_below(monkeypatch, locked)
    try:
        res = _run(["compute", spec, "--out", str(locked / "run"), "--quiet"])
        assert res.exit_code == 2
        _one_error_line(res, "--out", "cannot write")
        res = _run(["compute", spec, "--archive", str(locked / "archive"), "--quiet"])
        assert res.exit_code == 2
        _one_error_line(res, "--archive", "cannot write")
    finally:
        locked.chmod(0o755)
    assert list(locked.iterdir()) == []


@pytest.fixture(scope="module")
def archive_with_run(tmp_path_factory):
    root = tmp_path_factory.mktemp("arch")
    spec = _spec(root.parent, name="tif4-archived", file="archived.toml")
    res = _run(["compute", spec, "--archive", str(root / "a"), "--quiet", "--threads", "1"])
    assert res.exit_code == 0, res.output
    return spec, root / "a"


def _read_only_copy(src: Path, dest: Path):
    """``dest`` as a read-only file system holding a copy of ``src`` (tmpfs; needs root), or None."""
    dest.mkdir()
    if os.geteuid() != 0 or subprocess.run(["mount", "-t", "tmpfs", "-o", "size=64m", "tmpfs", str(dest)],
                                           capture_output=True).returncode != 0:
        return None
    shutil.copytree(src, dest, dirs_exist_ok=True)
    subprocess.run(["mount", "-o", "remount,ro", str(dest)], check=True)
    return dest


def test_read_only_archive(tmp_path, archive_with_run, monkeypatch):
    spec, root = archive_with_run
    ro = _read_only_copy(root, tmp_path / "ro")
    simulated = ro is None
    if simulated:  # no tmpfs here: an ordinary copy whose folders deny writes
        ro = tmp_path / "ro"
        shutil.copytree(root, ro, dirs_exist_ok=True)
    try:
        if simulated:
            _deny_writes_below(monkeypatch, ro)
        # a cache hit whose index row is missing: answered, the index is left alone
        if not simulated:
            subprocess.run(["mount", "-o", "remount,rw", str(ro)], check=True)
        con = sqlite3.connect(ro / "index.db")
        con.execute("DELETE FROM systems")
        con.commit()
        con.close()
        if not simulated:
            subprocess.run(["mount", "-o", "remount,ro", str(ro)], check=True)
        res = _run(["compute", spec, "--archive", str(ro), "--quiet"])
        assert res.exit_code == 0 and "Traceback" not in res.output, res.output
        # rebuilding the index and any new request: one line, exit 2, before any SCF
        res = _run(["archive", "rebuild-index", "--archive", str(ro)])
        assert res.exit_code == 2
        _one_error_line(res, "--archive", "cannot write")
        monkeypatch.setattr("dsplit.qc.engine.run_calculation", lambda *a, **k: pytest.fail("SCF started"))
        new = _spec(tmp_path, name="tif4-new", solvent="water")
        res = _run(["compute", new, "--archive", str(ro), "--quiet"])
        assert res.exit_code == 2
        _one_error_line(res, "--archive", "cannot write")
    finally:
        if not simulated:
            subprocess.run(["umount", str(ro)], check=False)


def test_damaged_index_fails_before_the_scf_and_keeps_runs(tmp_path, archive_with_run, no_scf):
    spec, root = archive_with_run
    copy = tmp_path / "copy"
    shutil.copytree(root, copy)
    (copy / "index.db").write_bytes(os.urandom(4096))
    res = _run(["compute", spec, "--archive", str(copy), "--quiet"])  # a cache hit needs no index
    assert res.exit_code == 0 and "Traceback" not in res.output, res.output
    new = _spec(tmp_path, name="tif4-other", solvent="water")
    res = _run(["compute", new, "--archive", str(copy), "--quiet"])
    assert res.exit_code == 2
    _one_error_line(res, "index.db is damaged: run `dsplit archive rebuild-index`")
    res = _run(["archive", "list", "--archive", str(copy)])
    assert res.exit_code == 2 and "rebuild-index" in res.output and "Traceback" not in res.output
    res = _run(["archive", "rebuild-index", "--archive", str(copy)])
    assert res.exit_code == 0 and "1 run(s)" in res.output


def test_index_that_breaks_after_the_scf_keeps_the_run(tmp_path, archive_with_run):
    from dsplit.archive import index

    _, root = archive_with_run
    copy = tmp_path / "copy"
    shutil.copytree(root, copy)
    (copy / "index.db").write_bytes(os.urandom(4096))
    folder = next(p for p in (copy / "tif4-archived").iterdir() if p.is_dir())
    result = json.loads((folder / "result.json").read_text())
    manifest = json.loads((folder / "manifest.json").read_text())
    warning = index.add_run_or_warn(copy, folder, result, manifest)
    assert warning and "rebuild-index" in warning and (folder / "result.json").is_file()


def test_unexpected_failure_is_one_line_with_a_log(tmp_path, monkeypatch):
    def boom(*a, **k):
        raise RuntimeError("disk on fire")

    monkeypatch.setattr("dsplit.qc.engine.run_calculation", boom)
    arch = tmp_path / "archive"
    res = _run(["compute", _spec(tmp_path), "--archive", str(arch), "--quiet"])
    assert res.exit_code == 1
    line = _one_error_line(res, "unexpected failure", "RuntimeError: disk on fire", "full traceback in")
    log = Path(line.rsplit("full traceback in ", 1)[1].strip())
    assert log.is_file() and log.parent == arch and "Traceback" in log.read_text()


# --- values that slipped through ---------------------------------------------------------------

@pytest.mark.parametrize("extra,field", [
    ("", "method.solvent"),  # solvent = nan via the template below
    ("[experiment]\nmeasured_bands_cm1 = [nan]\n", "experiment.measured_bands_cm1"),
    ("[experiment]\nmeasured_bands_cm1 = [inf]\n", "experiment.measured_bands_cm1"),
])
def test_non_finite_numbers_are_refused(tmp_path, extra, field):
    text = TIF4.format(name="x", solvent="water", extra=extra)
    if not extra:
        text = text.replace('solvent = "water"', "solvent = nan")
    (tmp_path / "s.toml").write_text(text)
    res = _run(["build", str(tmp_path / "s.toml"), "-o", str(tmp_path / "x.xyz")])
    assert res.exit_code == 2
    _one_error_line(res, field, "not a finite number")
    assert not (tmp_path / "x.xyz").exists()


def test_non_finite_flags_are_refused(tmp_path, no_scf):
    for flag in (["--solvent", "inf"], ["--bond-length", "nan"]):
        res = _run(["compute", _spec(tmp_path), *flag, "--out", str(tmp_path / "o"), "--quiet"])
        assert res.exit_code == 2, (flag, res.output)
        _one_error_line(res, "not a finite number")
    assert not (tmp_path / "o").exists()


def test_resource_flags_are_checked_before_the_archive(tmp_path, archive_with_run, no_scf):
    spec, root = archive_with_run
    for flags, field in ((["--threads", "0"], "--threads"), (["--threads", "-1"], "--threads"),
                         (["--memory", "-5"], "--memory")):
        res = _run(["compute", spec, "--archive", str(root), *flags, "--quiet"])  # would be a cache hit
        assert res.exit_code == 2, res.output
        _one_error_line(res, field)


def test_study_worker_and_thread_counts_are_checked(tmp_path, no_scf):
    study = _study(tmp_path)
    for flags, field in ((["--workers", "0"], "--workers"), (["--threads", "0"], "--threads")):
        res = _run(["study", str(study), "--archive", str(tmp_path / "a"), *flags, "--quiet"])
        assert res.exit_code == 2, res.output
        _one_error_line(res, field)
    assert not (tmp_path / "a").exists()


def test_missing_or_bad_study_file_creates_nothing(tmp_path):
    res = _run(["study", str(tmp_path / "nope.toml")], cwd=tmp_path)
    assert res.exit_code == 2 and "Traceback" not in res.output
    (tmp_path / "bad.toml").write_text("name = [")
    res = _run(["study", str(tmp_path / "bad.toml")], cwd=tmp_path)
    assert res.exit_code == 2 and "Traceback" not in res.output
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bad.toml"]


def test_name_from_an_awkward_file_name(tmp_path):
    spec = _spec(tmp_path, file="my spec ü.toml").replace("tif4.toml", "my spec ü.toml")
    text = Path(spec).read_text().replace('name = "tif4"\n', "")
    Path(spec).write_text(text)
    res = _run(["build", spec, "--json", "-o", str(tmp_path / "g.xyz")])
    assert res.exit_code == 0, res.output
    assert json.loads(res.output)["name"] == "my-spec-u"


def test_unknown_basis_names_close_ones(tmp_path, no_scf):
    res = _run(["compute", _spec(tmp_path), "--basis", "STO-3X", "--out", str(tmp_path / "o"), "--quiet"])
    assert res.exit_code == 2
    line = _one_error_line(res, "method.basis", "does not know the basis 'STO-3X'", "close names")
    assert "sto3g" in line


# --- archive honesty ---------------------------------------------------------------------------

def test_list_marks_damaged_and_missing_runs(tmp_path, archive_with_run):
    _, root = archive_with_run
    copy = tmp_path / "copy"
    shutil.copytree(root, copy)
    spec2 = _spec(tmp_path, name="tif4-second")
    assert _run(["compute", spec2, "--archive", str(copy), "--quiet", "--threads", "1"]).exit_code == 0
    first = next(p for p in (copy / "tif4-archived").iterdir() if p.is_dir())
    doc = json.loads((first / "result.json").read_text())
    doc["converged"] = False
    (first / "result.json").write_text(json.dumps(doc))
    shutil.rmtree(copy / "tif4-second")
    res = _run(["archive", "list", "--archive", str(copy), "--format", "json"])
    assert res.exit_code == 0, res.output
    rows = {r["folder"].split("/")[0]: r for r in json.loads(res.output)}
    assert rows["tif4-archived"]["status"].startswith("damaged")
    assert rows["tif4-second"]["status"] == "folder missing"


def test_no_archive_is_said(tmp_path):
    for args in (["archive", "list"], ["archive", "verify"]):
        res = _run([*args, "--archive", str(tmp_path)])
        assert res.exit_code == 2
        _one_error_line(res, "no dsplit archive")


def test_interrupted_study_hint_names_the_archive(tmp_path, monkeypatch):
    study = _study(tmp_path)

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr("dsplit.study.runner.run_tasks", interrupted)
    res = _run(["study", str(study), "--archive", str(tmp_path / "a"), "--quiet"])
    assert res.exit_code == 130
    assert f"--archive {tmp_path / 'a'} --resume" in res.output and "Traceback" not in res.output


def test_console_script_shows_no_traceback(tmp_path):
    proc = subprocess.run([sys.executable, "-m", "dsplit", "compute", _spec(tmp_path), "--out",
                           str(tmp_path / "tif4.toml" / "x")], capture_output=True, text=True)
    assert proc.returncode == 2 and "Traceback" not in proc.stderr + proc.stdout
