"""Studies with real (tiny) SCF runs: SIGKILL mid-run then --resume; the Dask executor.

Runs are [TiF6]2− at HF/STO-3G in the gas phase with different Ti–F distances
(d0, closed shell, about a second each).
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from dsplit.archive import index
from dsplit.archive.paths import TMP_RE, run_folders
from dsplit.archive.verify import verify_archive
from dsplit.cli.archive import study_cmd

STUDY = """
name = "{name}"
[base]
name = "tif6"
[base.complex]
metal = "Ti"
oxidation_state = 4
geometry = "octahedral"
ligands = {{ fluorido = 6 }}
[base.method]
theory = "HF"
basis = "{basis}"
solvent = "none"
[vary]
bond_lengths = {lengths}
"""

RUN_STUDY = "import sys; from dsplit.cli.archive import study_cmd; study_cmd.main(sys.argv[1:], prog_name='study')"


def write_study(tmp_path: Path, name: str, lengths: list[float], basis: str = "sto-3g") -> Path:
    """A study of [TiF6]2− (HF, gas phase) over Ti–F distances."""
    p = tmp_path / f"{name}.toml"
    p.write_text(STUDY.format(name=name, lengths=json.dumps(lengths), basis=basis))
    return p


def _finished(root: Path) -> list[Path]:
    return [p for _, _, p in run_folders(root) if (p / "manifest.json").is_file()]


def _unfinished(root: Path) -> list[Path]:
    return [e for d in root.iterdir() if d.is_dir() for e in d.iterdir() if TMP_RE.search(e.name)]


def test_killed_study_resumes_without_redoing(tmp_path):
    root = tmp_path / "arch"
    path = write_study(tmp_path, "kill", [1.84, 1.86, 1.88, 1.90])
    env = {**os.environ, "OMP_NUM_THREADS": "1"}
    proc = subprocess.Popen([sys.executable, "-c", RUN_STUDY, str(path), "--archive", str(root), "--workers", "1",
                             "--threads", "1", "--quiet"], env=env, start_new_session=True,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.monotonic() + 150
    try:
        while time.monotonic() < deadline and proc.poll() is None:
            if root.is_dir() and _finished(root) and _unfinished(root):
                break  # one run done, the next one half-written
            time.sleep(0.02)
        assert proc.poll() is None, "the study ended before it could be killed"
        os.killpg(proc.pid, signal.SIGKILL)
    finally:
        proc.wait(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    done_before = {p.name: (p / "manifest.json").read_bytes() for p in _finished(root)}
    assert 1 <= len(done_before) < 4 and _unfinished(root)
    listed = {r["run_id"] for r in index.iter_rows_kv(index.select(root))}
    assert listed <= set(done_before)  # nothing half-written is listed
    assert verify_archive(root).ok

    r = CliRunner().invoke(study_cmd, [str(path), "--archive", str(root), "--resume", "--workers", "2",
                                       "--threads", "1", "--json"])
    assert r.exit_code == 0, r.output
    states = {row["run_id"]: row["state"] for row in json.loads(r.stdout)["runs"]}
    assert len(states) == 4
    assert {rid for rid, s in states.items() if s == "cached"} == set(done_before)
    assert all(s == "computed" for rid, s in states.items() if rid not in done_before)
    for rid, manifest in done_before.items():  # finished runs were not redone
        assert next(p for p in _finished(root) if p.name == rid).joinpath("manifest.json").read_bytes() == manifest
    assert len(_finished(root)) == 4 and not _unfinished(root)
    assert len(index.select(root)) == 4
    assert verify_archive(root).ok
    status = json.loads((root / "_studies" / "kill" / "status.json").read_text())
    assert status["state"] == "finished"


def test_dask_local_cluster_two_tasks(tmp_path):
    pytest.importorskip("distributed", reason="optional extra 'dask' (dask, distributed) is not installed")
    from dsplit.api.compute import compute_archived
    from dsplit.study.api import plan_study, run_study

    root = tmp_path / "arch"
    root.mkdir()
    plan = plan_study(write_study(tmp_path, "dask", [1.85, 1.89]), root)
    out = run_study(plan, root, compute=compute_archived, workers=2, threads=1, executor="dask", quiet=True)
    assert out.exit_code == 0
    assert sorted(o["state"] for o in out.outcomes) == ["computed", "computed"]
    assert {p.name for p in _finished(root)} == {t.run_id for t in plan.tasks}
    assert len(index.select(root)) == 2
    again = run_study(plan, root, compute=compute_archived, executor="dask", quiet=True)  # everything cached: no task is sent
    assert again.outcomes == [] and sorted(again.cached_before) == sorted(t.run_id for t in plan.tasks)


def test_unreachable_scheduler_is_input_error():
    pytest.importorskip("distributed", reason="optional extra 'dask' (dask, distributed) is not installed")
    from dsplit.errors import InputError
    from dsplit.study.runner import dask_client

    with pytest.raises(InputError, match="cannot reach"):  # port 9 (discard) has no scheduler
        dask_client("tcp://127.0.0.1:9", 1, timeout="1s")
